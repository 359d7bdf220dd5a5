"""Locating one peak on an oriented, baseline-corrected sweep, or saying why there is none.

Used by :func:`cvfit.peaks.analyse_peaks` for the forward and the reverse peak: the
largest current away from the ends of the sweep, its height over the noise, the
half-peak potential on its rising side, and the vertex of a cubic fitted around it
(:func:`cvfit._peakfit.peak_vertex`) with the sensitivities of its position.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import _peakfit as pf

__all__ = ["LocatedPeak", "locate_peak"]


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
    vertex = pf.peak_vertex(E, y, k, half_width_V, monotonic=low >= 0.0 or high <= 0.0)
    if vertex is None:
        return None, f"no cubic with a maximum fits the {which} peak near E = {E[k]:.4f} V"
    peak = LocatedPeak(vertex.E_V, vertex.height, E_half_peak, vertex.grad_y, vertex.index)
    return peak, ""
