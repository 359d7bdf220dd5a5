"""Locating one peak on an oriented, baseline-corrected sweep, or saying why there is none.

Used by :func:`cvfit.peaks.analysis.analyse_peaks` for the forward and the reverse peak: the
largest current away from the ends of the sweep, its height over the noise, the
half-peak potential on its rising side, and the vertex of a cubic fitted around it
(:func:`peak_vertex`) with the sensitivities of its position.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from . import baseline as pf
from . import least_squares as la

__all__ = ["LocatedPeak", "locate_peak", "Vertex", "peak_vertex"]


@dataclass(frozen=True)
class LocatedPeak:
    """A peak found on a sweep: vertex potential and height, half-peak potential."""

    E_V: float
    height_A: float
    E_half_peak_V: float | None
    grad_y: np.ndarray  # ∂E_V/∂y for the points of the vertex window
    index: np.ndarray  # those points' indices in the sweep


def locate_peak(
    E: np.ndarray,
    y: np.ndarray,
    sigma: float,
    which: str,
    *,
    edge: int,
    half_width_V: float | None,
    against_baseline: bool,
    min_height_snr: float,
    window_fraction: float,
) -> tuple[LocatedPeak | None, str]:
    """Find the peak of the oriented, baseline-corrected current ``y``; None with a reason.

    The largest value must lie at least ``edge`` points from both ends. With
    ``against_baseline`` the peak must stand ``min_height_snr`` noise SDs above zero (the
    forward peak over its baseline); otherwise above the lowest current before it (the
    reverse peak, whose zero-faradaic level lies below the still-decaying forward current).
    Without ``half_width_V`` the vertex window is ``window_fraction`` of |Ep − Ep/2|; it is
    never narrower than 3.5 median sampling steps. ``which`` names the peak in messages.
    """
    n = E.size
    k = int(y.argmax())
    if k < edge or k > n - 1 - edge:
        where = "start" if k < edge else "end"
        return None, (
            f"the largest {which} current lies at the {where} of the sweep "
            f"(E = {E[k]:.4f} V), so no peak is inside the sweep"
        )
    if against_baseline:
        rise, what = float(y[k]), "above its baseline"
    else:
        rise, what = float(y[k] - y[:k].min()), "above the current before it"
    if not rise > min_height_snr * sigma:
        return None, (
            f"the {which} peak rises only {rise:.3g} A {what}, "
            f"not more than {min_height_snr:g} times the noise SD {sigma:.3g} A"
        )
    E_half_peak = pf.rising_crossing(E, y, k, 0.5 * y[k])
    if half_width_V is None:
        if E_half_peak is None:
            return None, f"the {which} wave has no rising side below half its height"
        half_width_V = window_fraction * abs(E[k] - E_half_peak)
    steps = E[1:] - E[:-1]
    low, high = (float(steps.min()), float(steps.max())) if steps.size else (0.0, 0.0)
    # the window is at least 3.5 sampling steps (median step); the median cannot exceed
    # the largest step, so it is only needed when the window is narrower than that bound
    if steps.size and half_width_V < 3.5 * max(high, -low):
        moves = np.abs(steps)
        moves = moves[moves > 0]
        half_width_V = max(half_width_V, 3.5 * float(np.median(moves)))
    vertex = peak_vertex(E, y, k, half_width_V, monotonic=low >= 0.0 or high <= 0.0)
    if vertex is None:
        return None, f"no cubic with a maximum fits the {which} peak near E = {E[k]:.4f} V"
    peak = LocatedPeak(vertex.E_V, vertex.height, E_half_peak, vertex.grad_y, vertex.index)
    return peak, ""


class Vertex(NamedTuple):
    """Vertex of a cubic fitted near a peak, with the linear sensitivities of its position."""

    E_V: float
    height: float
    grad_y: np.ndarray  # ∂E_vertex/∂y for the points in the window
    index: np.ndarray  # indices of those points in the sweep


def _cubic_stationary(b: np.ndarray) -> float | None:
    """Root of p'(x) = b1 + 2 b2 x + 3 b3 x² nearest 0 at which p''(x) < 0 (a maximum)."""
    _, b1, b2, b3 = (float(c) for c in b)
    qa, qb, qc = 3.0 * b3, 2.0 * b2, b1
    if abs(qa) * max(abs(qc), 1e-300) < 1e-12 * qb * qb:
        roots = [-qc / qb] if qb != 0 else []
    else:
        disc = qb * qb - 4.0 * qa * qc
        if disc < 0:
            return None
        q = -0.5 * (qb + math.copysign(math.sqrt(disc), qb))
        roots = [r for r in ((q / qa) if qa else math.inf, (qc / q) if q else math.inf)]
    best = None
    for r in roots:
        if (
            math.isfinite(r)
            and 2.0 * b2 + 6.0 * b3 * r < 0
            and (best is None or abs(r) < abs(best))
        ):
            best = r
    return best


def _within(E: np.ndarray, centre: float, half_width_V: float, monotonic: bool) -> np.ndarray:
    """Indices of the points with ``|E − centre| <= half_width_V``."""
    if not monotonic:
        return (np.abs(E - centre) <= half_width_V).nonzero()[0]
    # on a monotonic sweep those points are consecutive: bracket them by bisection, with a
    # margin far above rounding, and apply the exact test to the bracket only
    pad = 1e-9 * (abs(centre) + half_width_V)
    lo_V, hi_V = centre - half_width_V - pad, centre + half_width_V + pad
    if E[0] <= E[-1]:
        a, b = E.searchsorted(lo_V, "left"), E.searchsorted(hi_V, "right")
    else:
        rev = E[::-1]
        n = E.size
        a, b = n - rev.searchsorted(hi_V, "right"), n - rev.searchsorted(lo_V, "left")
    return a + (np.abs(E[a:b] - centre) <= half_width_V).nonzero()[0]


def _vertex_fit(
    E: np.ndarray, y: np.ndarray, centre: float, half_width_V: float, monotonic: bool
) -> Vertex | None:
    if not half_width_V > 0:
        return None
    idx = _within(E, centre, half_width_V, monotonic)
    if idx.size < 7:
        return None
    # a run of consecutive points (always, on a monotonic sweep) is read through a view
    take = slice(idx[0], idx[-1] + 1) if idx[-1] - idx[0] + 1 == idx.size else idx
    A = la.augmented(idx.size, 4)
    x = A[:, 1]
    np.subtract(E[take], centre, out=x)
    x /= half_width_V  # scaled for a well-conditioned design
    A[:, 0] = 1.0
    np.multiply(x, x, out=A[:, 2])
    np.multiply(A[:, 2], x, out=A[:, 3])
    X = np.array(A[:, :4])  # the design, kept: the factorisation overwrites A
    A[:, 4] = y[take]
    # b = pinv(X) y with np.linalg.pinv's cut-off, and pinv(X) = P Xᵀ with P 4 × 4
    R, _ = la.reduce_rows(A)
    b, P = la.solve_pinv(R)
    xv = _cubic_stationary(b)
    if xv is None or abs(xv) > 1.0:
        return None
    # implicit differentiation of p'(xv) = 0: d(xv)/db = -(0, 1, 2 xv, 3 xv^2) / p''(xv)
    curvature = 2.0 * b[2] + 6.0 * b[3] * xv
    dvdb = -np.array([0.0, 1.0, 2.0 * xv, 3.0 * xv * xv]) / curvature
    height = float(b[0] + b[1] * xv + b[2] * xv**2 + b[3] * xv**3)
    return Vertex(centre + half_width_V * xv, height, half_width_V * (X @ (P @ dvdb)), idx)


def peak_vertex(
    E: np.ndarray, y: np.ndarray, k: int, half_width_V: float, *, monotonic: bool = False
) -> Vertex | None:
    """Vertex of a low-order polynomial fitted to the points within ``half_width_V``.

    A cubic is used rather than a parabola because a voltammetric peak is skewed: over
    ±0.35·|Ep − Ep/2| a parabola puts the peak of a reversible wave ~1 mV (n = 1) off and
    a cubic 0.03 mV; over ±0.6·|Ep − Ep/2|, which halves the noise of the position, the
    cubic is 0.3 mV off (the skew of the forward and reverse peaks then largely cancels
    in E½). The first fit is centred on the sampled extremum ``E[k]`` and
    repeated once centred on its vertex, so the window is symmetric about the peak.
    Returns None when the window holds fewer than seven points, there is no maximum, or
    the vertex falls outside the window (no guess is made). ``monotonic`` says that E
    never turns back (the window is then found by bisection; same points).
    """
    first = _vertex_fit(E, y, float(E[k]), half_width_V, monotonic)
    if first is None:
        return None
    second = _vertex_fit(E, y, first.E_V, half_width_V, monotonic)
    return second if second is not None else first
