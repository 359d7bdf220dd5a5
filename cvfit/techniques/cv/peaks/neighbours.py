"""Currents from beyond the analysed wave that continue under it: the decay of the sweep
before a later cycle, and the decay of another wave in the same record.

Used by :func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks` (its docstring, *Later
cycles* and *Two waves*, says why and how well).

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706 (Ep − E½ = 1.109 RT/nF).
Cottrell, F. G. Z. Phys. Chem. 42 (1903) 385 (diffusion-limited decay i ∝ t^−1/2).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from cvfit.techniques.cv.peaks import baseline as pf
from cvfit.voltammogram import Cycle, Sweep, Voltammogram

__all__ = ["Tail", "previous_sweep_tail", "other_wave_decay", "inside", "MIN_POINTS"]

#: Origin of the previous sweep's diffusion tail, RT/nF before its peak.
TAIL_ORIGIN_THERMAL = 0.0
#: The previous sweep's tail is fitted from this many RT/nF past its peak.
TAIL_FIT_START_THERMAL = 3.0
#: The other wave's decay enters the joint baseline fit from this many RT/nF past its peak.
OTHER_WAVE_FIT_START_THERMAL = 2.0
#: Ep − E½ of a reversible peak in RT/nF (Nicholson & Shain 1964), for another wave's E½.
_PEAK_OFFSET_THERMAL = 1.109
#: Fewest points of a foot window; a peak lies at least this many points from the ends.
MIN_POINTS = 8


class Tail(NamedTuple):
    forward: np.ndarray  # (τ − τ0)^−1/2 on the forward sweep
    reverse: np.ndarray | None  # and on the reverse sweep
    previous: tuple[np.ndarray, np.ndarray, np.ndarray] | None  # (E, i, tail) of the sweep before


def inside(E: np.ndarray, low: float, high: float) -> slice:
    """The run of samples of one sweep from its first to its last point inside [low, high]."""
    idx = np.flatnonzero((E >= low) & (E <= high))
    if idx.size == 0:
        return slice(0, 0)
    return slice(int(idx[0]), int(idx[-1]) + 1)


def _other_peak(oriented: np.ndarray, before: int) -> int | None:
    """Index of another wave's peak on a sweep, among the samples before index *before*.

    *oriented* is the sweep's current in its own direction; the peak is its largest value
    at least ``MIN_POINTS`` from the sweep's start and from *before*, and the current must
    fall from it into the window. None when there is no such peak.
    """
    stop = before - MIN_POINTS
    if stop <= MIN_POINTS:
        return None
    k = MIN_POINTS + int(oriented[MIN_POINTS:stop].argmax())
    if oriented[k] <= oriented[before - 1]:
        return None
    return k


def other_wave_decay(
    voltammogram: Voltammogram,
    sweep: Sweep,
    oriented: np.ndarray,
    before: int,
    direction: int,
    other_kappa_per_V: float,
    forward: bool,
) -> tuple[np.ndarray, int] | None:
    """Current shape of another wave that peaks on *sweep* before index *before*.

    The shape is that of a reversible wave over the whole record
    (:func:`cvfit.techniques.cv.peaks.baseline.reversible_wave_shape`), placed at the E½ of the
    other wave from that peak, 1.109 RT/nF beyond E½ in the sweep's direction (Nicholson & Shain
    1964; *forward* says whether *sweep* is the forward sweep, whose direction is
    *direction*, or the reverse one). Returns the shape over the whole record and the index
    on *sweep* ``OTHER_WAVE_FIT_START_THERMAL`` RT/nF past that peak, from which the
    baseline with this shape is fitted (the other wave's own decay, away from its peak);
    None without such a peak or with fewer than ten points between there and *before*.
    """
    k = _other_peak(oriented, before)
    if k is None:
        return None
    E_all = np.asarray(voltammogram.potential_V)
    E_sweep = E_all[sweep.start : sweep.stop + 1]
    rt_nf = 1.0 / other_kappa_per_V
    past = np.abs(E_sweep[:before] - E_sweep[k])
    beyond = np.flatnonzero(past[k:] >= OTHER_WAVE_FIT_START_THERMAL * rt_nf)
    stop = sweep.start + before - 3
    if beyond.size == 0 or stop - (sweep.start + k + int(beyond[0])) < 10:
        return None
    sweep_direction = direction if forward else -direction
    E_half = float(E_sweep[k]) - sweep_direction * _PEAK_OFFSET_THERMAL * rt_nf
    shape = pf.reversible_wave_shape(E_all, E_half, other_kappa_per_V, direction)
    return shape, k + int(beyond[0])


def previous_sweep_tail(
    voltammogram: Voltammogram, cycle: Cycle, *, rt_nf_V: float
) -> Tail | None:
    """Decaying current of the sweep before ``cycle``, continued under both its sweeps.

    A cycle after the first does not start at rest: the current of the sweep before it
    is still decaying when the forward sweep starts. Beyond its peak the current of a
    reversible sweep is diffusion-limited and decays like a Cottrell current, c·(τ −
    τ0)^−1/2 (Cottrell 1903), from an origin τ0 taken at that sweep's peak
    (``TAIL_ORIGIN_THERMAL`` = 0 RT/nF before it: on simulated reversible cycles this
    origin biased E½ and ΔEp least, ≤ 0.1 and ≤ 0.15 mV, against 0.3 mV with the origin
    at E½, 1.109 RT/nF before the peak). τ is the distance travelled along
    the potential axis (V), proportional to time at a constant scan rate, so no time
    column or scan rate is needed. Returned are the tail on the forward and reverse
    sweeps of the cycle and the last part of the sweep before (from
    ``TAIL_FIT_START_THERMAL`` RT/nF past its peak to a few points before its end), which
    the forward foot fit shares: the short foot alone separates the tail from the line
    poorly.

    Returns None for a cycle that starts at rest (no sweep before it) or when the sweep
    before it has no peak to decay from.
    """
    fwd, rev = cycle.forward, cycle.reverse
    if fwd.start == 0:
        return None
    before = [sw for sw in voltammogram.sweeps() if sw.stop == fwd.start]
    if not before:
        return None
    prev = before[0]
    stop = fwd.stop if rev is None else rev.stop
    found = pf.decay_tail(
        np.asarray(voltammogram.potential_V),
        np.asarray(voltammogram.current_A),
        (prev.start, prev.stop, prev.direction),
        (fwd.start, stop),
        origin_V=TAIL_ORIGIN_THERMAL * rt_nf_V,
        fit_start_V=TAIL_FIT_START_THERMAL * rt_nf_V,
    )
    if found is None:
        return None
    tail, previous = found
    n_f = fwd.stop - fwd.start + 1
    return Tail(tail[:n_f], None if rev is None else tail[n_f - 1 :], previous)
