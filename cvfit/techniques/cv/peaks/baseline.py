"""Array-level helpers of the peak analysis: noise, baselines, switch step, tail, crossings.

Everything here takes and returns plain arrays or small tuples; nothing knows about
voltammograms, flags or files. :mod:`cvfit.techniques.cv.peaks.analysis` composes these pieces;
the peak vertex
is fitted in :mod:`cvfit.techniques.cv.peaks.location`.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

__all__ = [
    "noise_sd",
    "LineFit",
    "fit_foot",
    "foot_window",
    "switch_step",
    "decay_tail",
    "rising_crossing",
]

#: Consistency constant that turns a median absolute deviation into a normal SD.
_MAD_TO_SD = 1.482602218505602


def noise_sd(*currents: np.ndarray) -> float:
    """Noise SD of the current from its second differences.

    For white noise of SD σ, the second difference has SD σ·√6 while the smooth signal
    contributes almost nothing at the sampling step of a voltammogram; the median absolute
    deviation makes the estimate insensitive to the few large second differences at the
    switching potential and at the start. Each array is differenced separately.

    Returns
    -------
    float
        Estimated SD, same unit as the input (0.0 for a noise-free record).
    """
    arrays = [np.asarray(c, dtype=float) for c in currents if np.size(c) >= 3]
    if not arrays:
        return 0.0
    # second differences as np.diff(c, 2) forms them, written into one new array
    d = np.empty(sum(c.size - 2 for c in arrays))
    at = 0
    for c in arrays:
        first = c[1:] - c[:-1]
        np.subtract(first[1:], first[:-1], out=d[at : at + c.size - 2])
        at += c.size - 2
    mad = float(np.median(np.abs(d - np.median(d))))
    return _MAD_TO_SD * mad / math.sqrt(6.0)


class LineFit(NamedTuple):
    """Least-squares baseline ``i = a + b·(E − E0) [+ c·tail]`` with its covariance.

    ``coef`` is ``(a, b)`` for a line, or ``(a, b, c)`` when the baseline also carries a
    decaying tail term whose values (one per point, e.g. ``(τ − τ0)^−1/2``) are passed as
    ``tail`` wherever the baseline is evaluated.
    """

    E0_V: float
    coef: np.ndarray  # (a, b) or (a, b, c)
    cov: np.ndarray  # 2×2 or 3×3, from the supplied noise SD

    def __call__(self, E: np.ndarray, tail: np.ndarray | None = None) -> np.ndarray:
        # evaluated term by term (no design matrix for a whole sweep), in one new array
        out = np.atleast_1d(np.asarray(E, dtype=float)) - self.E0_V
        np.multiply(out, self.coef[1], out=out)
        np.add(out, self.coef[0], out=out)
        if self.coef.size == 3:
            if tail is None:
                raise ValueError("this baseline has a tail term; pass its values")
            np.add(out, self.coef[2] * np.asarray(tail, dtype=float), out=out)
        return out

    def residual(
        self,
        E: np.ndarray,
        i: np.ndarray,
        sign: int,
        tail: np.ndarray | None = None,
        shift: float = 0.0,
    ) -> np.ndarray:
        """``sign·(i − (baseline(E) + shift))``, the oriented current above the baseline."""
        out = self(E, tail)
        if shift:
            np.add(out, shift, out=out)
        # for sign ±1 that is i − b or b − i exactly: rounding is symmetric in sign
        if sign == 1:
            return np.subtract(i, out, out=out)
        if sign == -1:
            return np.subtract(out, i, out=out)
        return sign * (i - out)

    def design(self, E: np.ndarray, tail: np.ndarray | None = None) -> np.ndarray:
        """Rows ``(1, E − E0[, tail])``: the derivative of the baseline by its coefficients."""
        x = np.atleast_1d(np.asarray(E, dtype=float)) - self.E0_V
        cols = [np.ones_like(x), x]
        if self.coef.size == 3:
            if tail is None:
                raise ValueError("this baseline has a tail term; pass its values")
            cols.append(np.broadcast_to(np.asarray(tail, dtype=float), x.shape))
        return np.column_stack(cols)


def _moving_mean(y: np.ndarray, width: int) -> np.ndarray:
    if width <= 1:
        return y
    kernel = np.full(width, 1.0 / width)
    return np.convolve(y, kernel, mode="same")


def fit_foot(
    E: np.ndarray,
    i: np.ndarray,
    sign: int,
    kappa_per_V: float,
    sigma: float,
    tail: np.ndarray | None = None,
    extra: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
) -> LineFit:
    """Line plus the exponential foot of a Nernstian wave (plus an optional tail term).

    The model is ``a + b·(E − E0) + c·exp(sign·κ·(E − E_end)) [+ d·tail]``.

    The exponential (κ = nF/RT) is the leading term of the reversible current far ahead
    of E½ (the semi-derivative of 1/(1 + θ) ≈ 1/θ), so the foot window can extend to a few
    per cent of the peak height without bending the line; only the line (and the tail
    term, which continues under the wave) is returned, as the baseline to extrapolate.
    When the fitted foot amplitude has the wrong sign (no rising wave in the window) the
    model without the exponential is returned.

    ``extra = (E_x, i_x, tail_x)`` adds points of another sweep that share the slope ``b``
    and the tail amplitude ``d`` but have their own offset (the charging current changes
    sign between sweeps) and no foot term; they lengthen the lever arm of ``d``.
    """
    E0 = float(E.mean())
    m = E.size
    joint_extra = extra if tail is not None else None  # the other sweep, fitted jointly
    p = 3 + (tail is not None) + (joint_extra is not None)
    X = np.zeros((m + (0 if joint_extra is None else joint_extra[0].size), p))
    y = np.empty(X.shape[0])
    X[:m, 0] = 1.0
    X[:m, 1] = E - E0
    X[:m, 2] = np.exp(np.clip(sign * kappa_per_V * (E - E[-1]), -700.0, 0.0))
    if tail is not None:
        X[:m, 3] = tail
    y[:m] = i
    if joint_extra is not None:
        # the other sweep: its own offset (last design column), no foot term
        E_x, i_x, t_x = joint_extra
        X[m:, 1] = E_x - E0
        X[m:, 3] = t_x
        X[m:, 4] = 1.0
        y[m:] = i_x
    coef, gram_inv = _least_squares(X, y)
    if sign * coef[2] <= 0:
        # refit without the foot term; the line and tail columns are then the leading ones
        coef, gram_inv = _least_squares(np.delete(X, 2, axis=1), y)
        q = 2 if tail is None else 3
        return LineFit(E0, coef[:q], sigma**2 * gram_inv[:q, :q])
    if tail is None:
        return LineFit(E0, coef[:2], sigma**2 * gram_inv[:2, :2])
    keep = [0, 1, 3]
    return LineFit(E0, coef[keep], sigma**2 * gram_inv[np.ix_(keep, keep)])


def _least_squares(X: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Coefficients of ``X·c ≈ y`` and the unscaled covariance ``(XᵀX)⁺``."""
    coef = np.linalg.lstsq(X, y, rcond=None)[0]
    return coef, np.linalg.pinv(X.T @ X)


def foot_window(
    E: np.ndarray,
    i: np.ndarray,
    sign: int,
    sigma: float,
    *,
    kappa_per_V: float,
    skip: int,
    min_points: int,
    foot_fraction: float,
    iterations: int = 5,
    span_thermal: tuple[float, float] = (2.5, 3.0),
    tail: np.ndarray | None = None,
    extra: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
) -> tuple[int, int, LineFit, np.ndarray]:
    """Foot of the wave ``[lo, hi)``, the baseline fitted to it and the current above it.

    Starts from the first tenth of the sweep, then repeats: fit the foot model
    (:func:`fit_foot`), find the peak of the corrected current ``sign·(i − line)``, and end
    the window at the last point before the peak where the lightly smoothed corrected
    current is still below ``foot_fraction`` of the peak height (or two noise SDs of the
    smoothed current, whichever is larger). This finds where the current departs from the
    trend of charging current, background and foot without assuming where the wave is.

    The end found that way is then kept between ``span_thermal`` = (2.5, 3.0) thermal
    voltages RT/nF (1/κ) before the half-peak potential of the wave — where a Nernstian
    wave carries about 6 % and 3.5 % of its peak current — so that a noisy first line
    can neither collapse the window to a few points nor let it run into the wave.

    ``tail`` (one value per point, or None) adds a decaying term to the baseline model,
    fitted on the foot and extrapolated under the wave with the line; ``extra`` are
    points of another sweep fitted jointly (see :func:`fit_foot`).

    Returns ``(lo, hi, line, r)`` with ``r = sign·(i − line(E, tail))`` over the whole
    sweep, which the search computes for the returned line anyway.
    """
    n = E.size
    lo = min(skip, max(n - min_points, 0))
    hi = min(n, max(lo + min_points, lo + (n - lo) // 10))
    width = 5

    def fit(lo: int, hi: int) -> LineFit:
        t = None if tail is None else tail[lo:hi]
        return fit_foot(E[lo:hi], i[lo:hi], sign, kappa_per_V, sigma, t, extra)

    line = fit(lo, hi)
    r = line.residual(E, i, sign, tail)
    prev_hi = hi
    for _ in range(iterations):
        kp = int(r.argmax())
        if kp <= lo + min_points:
            break
        level = max(foot_fraction * r[kp], 2.0 * sigma / math.sqrt(width))
        smooth = _moving_mean(r[lo:kp], width)
        last = _last_index(smooth, smooth.size, np.less_equal, level)
        new_hi = lo + last + 1 if last >= 0 else lo + min_points
        hi = _clamp_to_wave(E, r, kp, new_hi, lo + min_points, sign, kappa_per_V, span_thermal)
        if hi == prev_hi:
            break
        prev_hi = hi
        line = fit(lo, hi)
        r = line.residual(E, i, sign, tail)
    return lo, hi, line, r


def _clamp_to_wave(
    E: np.ndarray,
    r: np.ndarray,
    kp: int,
    hi: int,
    floor: int,
    sign: int,
    kappa_per_V: float,
    span_thermal: tuple[float, float],
) -> int:
    """Keep the foot end ``hi`` between the two potentials set by ``span_thermal``."""
    j = _last_index(r, kp, np.less, 0.5 * r[kp])
    if j < 0:
        return max(hi, floor)
    ahead = sign * (E[j] - E[:kp]) * kappa_per_V  # thermal voltages before Ep/2
    near, far = span_thermal
    is_near = ahead <= near
    first_near = int(is_near.argmax())  # argmax of a boolean array: its first True
    upper = first_near if is_near[first_near] else hi
    last_far = _last_index(ahead, kp, np.greater_equal, far)
    lower = last_far + 1 if last_far >= 0 else floor
    return max(min(hi, upper), lower, floor)


def _last_index(y: np.ndarray, stop: int, compare: np.ufunc, level: float) -> int:
    """Largest ``j < stop`` with ``compare(y[j], level)`` true, or -1.

    Searched backwards in blocks that grow fourfold: the index sought usually lies close
    to ``stop`` (the point where a rising wave crosses a level), so most of the prefix is
    never tested.
    """
    hi, width = stop, 256
    while hi > 0:
        lo = max(hi - width, 0)
        hits = compare(y[lo:hi], level).nonzero()[0]
        if hits.size:
            return lo + int(hits[-1])
        hi, width = lo, 4 * width
    return -1


def switch_step(
    E_forward: np.ndarray,
    i_forward: np.ndarray,
    E_reverse: np.ndarray,
    i_reverse: np.ndarray,
    E_switch: float,
    *,
    points: int,
    gap: int = 3,
) -> tuple[float, float, float]:
    """Jump of the current at the switching potential and the forward current there.

    The faradaic current is continuous in time through the switch, while the charging
    current C·dE/dt changes sign, so the jump measures twice the charging current. With
    τ the time from the switch (here the potential distance |E − Eλ|, signed negative
    before the switch), both sides are fitted jointly: a smooth part ``c0 + c1·τ + c2·τ²``
    common to both sides, plus, after the switch only, the jump and the half-integer
    powers ``√τ`` and ``τ^3/2``. Those are what the kink of E(t) adds to the faradaic
    current: the semi-derivative of a slope (or curvature) discontinuity of the surface
    concentration. Sharing the smooth part makes the jump much better determined than two
    separate extrapolations. The ``gap`` points nearest the switch on each side are left
    out: instruments (and finite-difference charging currents) put a transient there that
    belongs to neither sweep.

    Returns
    -------
    jump_A, forward_at_switch_A, jump_sd_unit
        The jump (reverse minus forward, at the switch), the forward current extrapolated
        to the switch, and the SD of the jump per unit noise SD.
    """
    f_sl = slice(-points - gap, -gap)
    r_sl = slice(gap, points + gap)
    tf = -np.abs(E_forward[f_sl] - E_switch)
    tr = np.abs(E_reverse[r_sl] - E_switch)
    scale = float(max(tr.max(), (-tf).max()))
    nf = tf.size
    t = np.concatenate([tf, tr]) / scale
    after = np.arange(t.size) >= nf  # the jump and the half-integer powers act after it
    root = np.sqrt(np.where(after, t, 0.0))
    X = np.column_stack([np.ones_like(t), t, t * t, after, root, root**3])
    y = np.concatenate([i_forward[f_sl], i_reverse[r_sl]])
    coef, gram_inv = _least_squares(X, y)
    var = gram_inv[3, 3]
    return float(coef[3]), float(coef[0]), math.sqrt(var)


def decay_tail(
    E: np.ndarray,
    i: np.ndarray,
    previous: tuple[int, int, int],
    span: tuple[int, int],
    *,
    origin_V: float,
    fit_start_V: float,
    gap: int = 3,
) -> tuple[np.ndarray, tuple[np.ndarray, np.ndarray, np.ndarray]] | None:
    """Cottrell-type tail ``(τ − τ0)^−1/2`` of the sweep ``previous`` over ``span``.

    ``previous = (start, stop, direction)`` indexes the sweep before ``span = (start,
    stop)`` in the record (E, i). τ is the distance travelled along the potential axis,
    V; τ0 lies ``origin_V`` before the peak of the previous sweep (its largest current in
    its own direction, away from its ends). Returns the tail over ``span`` and ``(E, i,
    tail)`` of the previous sweep from ``fit_start_V`` past its peak to ``gap`` points
    before its end, or None when that part is shorter than ten points.
    """
    p0, p1, direction = previous
    tau = np.concatenate(([0.0], np.cumsum(np.abs(np.diff(E)))))
    y = direction * i[p0 : p1 + 1]
    edge = max(gap, y.size // 20)
    if y.size <= 4 * edge:
        return None
    k = p0 + edge + int(y[edge:-edge].argmax())
    tau0 = tau[k] - origin_V
    beyond = (tau[k : p1 + 1] - tau[k] >= fit_start_V).nonzero()[0]
    if beyond.size == 0 or p1 - gap - (k + int(beyond[0])) < 10:
        return None
    seg = slice(k + int(beyond[0]), p1 - gap + 1)
    tail = 1.0 / np.sqrt(tau[span[0] : span[1] + 1] - tau0)
    return tail, (E[seg], i[seg], 1.0 / np.sqrt(tau[seg] - tau0))


def rising_crossing(E: np.ndarray, y: np.ndarray, k: int, level: float) -> float | None:
    """Potential where ``y`` last rises through ``level`` before index ``k`` (interpolated)."""
    j = _last_index(y, k, np.less, level)
    if j < 0:
        return None
    if j + 1 > k:
        return None
    y0, y1 = y[j], y[j + 1]
    if y1 == y0:
        return float(E[j])
    return float(E[j] + (level - y0) * (E[j + 1] - E[j]) / (y1 - y0))


def semi_derivative(f: np.ndarray) -> np.ndarray:
    """Semi-derivative d^½f/dk^½ of samples on a uniform grid (unit step), f = 0 before.

    Grünwald–Letnikov weights ``w_0 = 1, w_j = w_{j−1}(j − 3/2)/j``, summed as one
    convolution. The current of a reversible couple is the semi-derivative (in time) of the
    fraction converted at the surface, whatever the waveform — forward sweep, switch and
    reverse sweep alike — so the semi-derivative of the Nernstian fraction of a wave is
    the shape of that wave's current over a whole record, up to one factor.

    References
    ----------
    Oldham, K. B.; Spanier, J. The Fractional Calculus; Academic Press, 1974 (the
    Grünwald–Letnikov algorithm, semi-integrals in electrochemistry; from memory).
    """
    f = np.asarray(f, dtype=float)
    n = f.size
    if n == 0:
        return f.copy()
    j = np.arange(1, n, dtype=float)
    w = np.concatenate(([1.0], np.cumprod((j - 1.5) / j)))
    return np.convolve(f, w)[:n]


def reversible_wave_shape(
    E: np.ndarray, E_half_V: float, kappa_per_V: float, direction: int
) -> np.ndarray:
    """Current shape of a reversible wave over a record sampled at equal steps of E(t).

    The semi-derivative (:func:`semi_derivative`) of the Nernstian fraction converted,
    ``1/(1 + exp(−direction·κ·(E − E½)))``, less its value at the record's start; the
    amplitude is left to a fit. ``direction`` is +1 for a wave oxidised on a positive-going
    sweep, −1 for one reduced on a negative-going sweep.
    """
    x = np.clip(-direction * kappa_per_V * (np.asarray(E, dtype=float) - E_half_V), -700, 700)
    fraction = 1.0 / (1.0 + np.exp(x))
    return semi_derivative(fraction - fraction[0])
