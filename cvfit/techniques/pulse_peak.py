"""A pulse voltammetric peak measured by a fit of its reversible shape on a sloping baseline.

The differential-pulse current of a reversible couple, with the history of the earlier
steps left out, is (Parry & Osteryoung 1965, in our notation)

    i(E) = i_p · (1 + cosh a) / (cosh(nf(E − E_c)) + cosh a),   a = nf|ΔE|/2,

a symmetric peak at E_c = E½ − ΔE/2 whose full width at half height is
W½ = (2/nf)·arccosh(2 + cosh a) — 3.52/nf (90.4/n mV at 25 °C) for a small amplitude.
:func:`fit_peak` fits ``b0 + b1·E + H·S(E)`` with ``S`` that shape and the width scaled by
a free factor (1 for the reversible width), by least squares with the linear parameters
projected out, and gives every parameter's standard error from the residual scatter. The
square-wave net peak is fitted with the same shape at a = nf·E_sw (its exact reversible
form differs a little; the technique calibrates the difference on the reversible response
of its own program, :mod:`cvfit.techniques.step_response`).

References
----------
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
Golub, G.; Pereyra, V. SIAM J. Numer. Anal. 1973, 10, 413 (separable least squares).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

__all__ = ["PeakFit", "fit_peak", "reversible_width_V", "WINDOW_WIDTHS"]

#: Half the fitted window, in reversible half-height widths around the peak.
WINDOW_WIDTHS = 2.0
#: Fewest points across a fitted peak.
MIN_PEAK_POINTS = 12
#: A peak (or wave) counts when its height is at least this many standard errors.
SIGNIFICANT = 5.0


def reversible_width_V(a: float, nf: float) -> float:
    """Full width at half height of the reversible shape, V: (2/nf)·arccosh(2 + cosh a)."""
    return 2.0 * math.acosh(2.0 + math.cosh(a)) / nf


@dataclass(frozen=True)
class PeakFit:
    """One fitted peak.

    Attributes
    ----------
    E_peak_V, E_peak_stderr_V : float
        Peak potential and its standard error, V.
    height_A, height_stderr_A : float
        Peak height above the baseline, A, signed (cathodic negative).
    width_V, width_stderr_V : float
        Full width at half height of the fitted shape, V.
    asymmetry, asymmetry_stderr : float or None
        (W_left − W_right)/(W_left + W_right) of the half-height crossings of the data
        (baseline removed) on each side of the peak; None when a side has no crossing.
    baseline : (float, float)
        Intercept (A, at the window's mean potential) and slope (A/V) of the baseline.
    noise_A : float
        Standard deviation of the residuals, A.
    window_V : (float, float)
        The potential range fitted, V.
    mean_V : float
        The mean potential of the window's points, where the baseline intercept lies, V.
    n_points : int
        Points fitted.
    """

    E_peak_V: float
    E_peak_stderr_V: float
    height_A: float
    height_stderr_A: float
    width_V: float
    width_stderr_V: float
    asymmetry: float | None
    asymmetry_stderr: float | None
    baseline: tuple[float, float]
    noise_A: float
    window_V: tuple[float, float]
    mean_V: float
    n_points: int


def _shape(E: np.ndarray, Ec: float, scale: float, a: float, nf: float) -> np.ndarray:
    u = np.clip(scale * nf * (E - Ec), -700.0, 700.0)
    return (1.0 + math.cosh(a)) / (np.cosh(u) + math.cosh(a))


def _design(E, Ec, scale, a, nf, mid) -> np.ndarray:
    return np.column_stack([np.ones_like(E), E - mid, _shape(E, Ec, scale, a, nf)])


def _first_guess(E: np.ndarray, i: np.ndarray) -> tuple[int, float]:
    """Index of the largest excursion from the line through the record's two ends, and its
    sign."""
    k = max(2, E.size // 10)
    ends = np.r_[0:k, E.size - k : E.size]
    line = np.polyval(np.polyfit(E[ends], i[ends], 1), E)
    dev = i - line
    j = int(np.argmax(np.abs(dev)))
    return j, float(np.sign(dev[j]) or 1.0)


#: The solver's parameters are offsets from this value (V, and log of the width factor):
#: its finite-difference step is relative to each parameter, so a parameter at (or a
#: rounding error from) zero would get no step and the fit would stay at its start.
_PIVOT = 1.0


def _fit_window(E, i, Ec0, a, nf, half_V) -> tuple[np.ndarray, np.ndarray, float, float] | None:
    """Least squares over E within Ec0 ± half_V: (params, covariance, noise, mid)."""
    keep = np.abs(E - Ec0) <= half_V
    x, y = E[keep], i[keep]
    if x.size < MIN_PEAK_POINTS:
        return None
    mid = float(np.mean(x))

    def resid(p: np.ndarray) -> np.ndarray:
        X = _design(x, Ec0 + p[0] - _PIVOT, math.exp(p[1] - _PIVOT), a, nf, mid)
        beta, *_ = np.linalg.lstsq(X, y, rcond=None)
        return y - X @ beta

    sol = least_squares(resid, [_PIVOT, _PIVOT], x_scale=[0.01, 0.1], method="lm")
    Ec, scale = Ec0 + float(sol.x[0]) - _PIVOT, math.exp(float(sol.x[1]) - _PIVOT)
    X = _design(x, Ec, scale, a, nf, mid)
    beta, *_ = np.linalg.lstsq(X, y, rcond=None)
    r = y - X @ beta
    dof = max(1, x.size - 5)
    noise = math.sqrt(float(r @ r) / dof)
    # full Jacobian in (b0, b1, H, Ec, scale)
    u = scale * nf * (x - Ec)
    c = math.cosh(a)
    dS_du = -(1.0 + c) * np.sinh(u) / (np.cosh(u) + c) ** 2
    J = np.column_stack([X, beta[2] * dS_du * (-scale * nf), beta[2] * dS_du * nf * (x - Ec)])
    try:
        cov = noise**2 * np.linalg.inv(J.T @ J)
    except np.linalg.LinAlgError:
        return None
    return np.r_[beta, Ec, scale], cov, noise, mid


def _crossings(E: np.ndarray, z: np.ndarray, Ec: float) -> tuple[float | None, float | None]:
    """Potentials where z (the peak scaled to 1 at its top) falls to ½ nearest Ec, on the
    low and the high side."""
    order = np.argsort(E)
    E, z = E[order], z[order]
    k = int(np.clip(np.searchsorted(E, Ec), 1, E.size - 1))
    top = k if z[k] >= z[k - 1] else k - 1

    def walk(step: int) -> float | None:
        j = top
        while 0 <= j + step < E.size:
            if z[j + step] < 0.5 <= z[j]:
                t = (z[j] - 0.5) / (z[j] - z[j + step])
                return float(E[j] + t * (E[j + step] - E[j]))
            j += step
        return None

    return walk(-1), walk(1)


def fit_peak(E_V: np.ndarray, current_A: np.ndarray, *, a: float, nf: float) -> PeakFit | str:
    """Fit the largest peak of a pulse record (module docstring); a reason when none can be.

    Parameters
    ----------
    E_V, current_A : ndarray
        Base potential and difference (or net) current, A.
    a : float
        Shape parameter: nf|ΔE|/2 (DPV) or nf·E_sw (SWV).
    nf : float
        nF/RT, 1/V.
    """
    E = np.asarray(E_V, dtype=float)
    i = np.asarray(current_A, dtype=float)
    W = reversible_width_V(a, nf)
    j, _ = _first_guess(E, i)
    Ec = float(E[j])
    got = None
    for _ in range(3):
        got = _fit_window(E, i, Ec, a, nf, WINDOW_WIDTHS * W)
        if got is None:
            return "too few points across the peak (widen the record or use a smaller step)"
        params, cov, noise, mid = got
        if abs(params[3] - Ec) < 1e-4:
            Ec = float(params[3])
            break
        Ec = float(params[3])
    assert got is not None
    params, cov, noise, mid = got
    b0, b1, H, Ec, scale = (float(p) for p in params)
    lo, hi = float(np.min(E)), float(np.max(E))
    if not (lo + 0.5 * W <= Ec <= hi - 0.5 * W) or not scale > 0 or H == 0.0:
        return "the peak lies at the end of the record (or none was found); widen the range"
    sd = np.sqrt(np.clip(np.diag(cov), 0.0, None))
    if not abs(H) >= max(SIGNIFICANT * sd[2], 1e-6 * float(np.ptp(i))):
        return "no peak stands out of the noise (height below five standard errors)"
    width = W / scale
    keep = np.abs(E - Ec) <= WINDOW_WIDTHS * W
    z = (i[keep] - (b0 + b1 * (E[keep] - mid))) / H
    left, right = _crossings(E[keep], z, Ec)
    asym = asym_sd = None
    if left is not None and right is not None and left < Ec < right:
        wl, wr = Ec - left, right - Ec
        asym = (wl - wr) / (wl + wr)
        # a crossing moves by noise/|slope|, the slope of the shape at half height
        c = math.cosh(a)
        slope = abs(H) * scale * nf * math.sqrt((2.0 + c) ** 2 - 1.0) / (4.0 * (1.0 + c))
        asym_sd = math.sqrt(2.0) * (noise / slope) / (wl + wr)
    return PeakFit(
        E_peak_V=Ec,
        E_peak_stderr_V=float(sd[3]),
        height_A=H,
        height_stderr_A=float(sd[2]),
        width_V=width,
        width_stderr_V=float(width * sd[4] / scale),
        asymmetry=asym,
        asymmetry_stderr=asym_sd,
        baseline=(b0, b1),
        noise_A=noise,
        window_V=(float(np.min(E[keep])), float(np.max(E[keep]))),
        mean_V=mid,
        n_points=int(keep.sum()),
    )
