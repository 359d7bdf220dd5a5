"""The exact pulse response of a reversible couple to the program a record was made with.

For a reversible couple at a planar electrode (diffusion coefficients folded into E½), a
potential held in steps sets the fraction of the bulk form converted at the surface,
φ = 1/(1 + exp(±nf(E − E½))), at once after each step, and the current is a sum of
Cottrell terms (superposition, as in Parry & Osteryoung 1965 and Osteryoung & O'Dea 1986):

    i(t) ∝ Σ_j (φ_j − φ_{j−1}) / √(t − t_j).

A pulse technique fits its peak with a symmetric shape (:mod:`cvfit.techniques.pulse_peak`);
the earlier steps of the staircase make the exact reversible peak a little asymmetric and
move it by a fraction of a millivolt. :func:`reversible_record` rebuilds the record a
reversible couple with a given E½ would give under the same program (the record's base
potentials, the technique's timing), so that the technique can fit that record exactly as
it fits the data and read the offset of the fitted peak from E½, its width and its height
— the reversible values for this very program.

Currents are in units of nFAC√(D/π) (A per (A·s^−½)), sign IUPAC: reduction of a bulk
oxidised form negative.

References
----------
Cottrell, F. G. Z. Phys. Chem. 1903, 42, 385.
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

__all__ = ["PulseTiming", "reversible_record", "program_levels"]

#: Rows of the superposition summed at once (bounds the memory of a long record).
_CHUNK = 256


@dataclass(frozen=True)
class PulseTiming:
    """The program around a record's base potentials.

    Attributes
    ----------
    technique : {"dpv", "swv"}
        DPV: base for ``period_s − pulse_width_s``, then base + ``amplitude_V`` (signed)
        for ``pulse_width_s``; point = i(pulse end) − i(just before the pulse). SWV:
        base ± ``amplitude_V`` (forward in the scan's direction, then reverse), each
        ``pulse_width_s`` (= 1/(2f)) long; point = i(forward) − i(reverse).
    amplitude_V : float
    pulse_width_s : float
    period_s : float or None
        DPV: None when not known (then the history of earlier steps is left out).
    quiet_time_s : float
        Time the electrode was held at the first base potential before the program, s.
    """

    technique: Literal["dpv", "swv"]
    amplitude_V: float
    pulse_width_s: float
    period_s: float | None = None
    quiet_time_s: float = 0.0


def program_levels(
    base_V: np.ndarray, timing: PulseTiming
) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(levels, durations, first, second) of the program: the potential of each held
    level, its duration, and the levels whose end currents make each record point."""
    base = np.asarray(base_V, dtype=float)
    n = base.size
    k = np.arange(n)
    if timing.technique == "dpv":
        assert timing.period_s is not None
        levels = np.column_stack([base, base + timing.amplitude_V]).ravel()
        durations = np.tile([timing.period_s - timing.pulse_width_s, timing.pulse_width_s], n)
        first, second = 2 * k + 1, 2 * k
    else:
        sign = 1.0 if base[-1] >= base[0] else -1.0
        amp = sign * abs(timing.amplitude_V)
        levels = np.column_stack([base + amp, base - amp]).ravel()
        durations = np.full(2 * n, timing.pulse_width_s)
        first, second = 2 * k, 2 * k + 1
    if timing.quiet_time_s > 0:
        levels = np.r_[base[0], levels]
        durations = np.r_[timing.quiet_time_s, durations]
        first, second = first + 1, second + 1
    return levels, durations, first, second


def _end_currents(levels, durations, E_half_V, nf, bulk_form) -> np.ndarray:
    """Current at the end of each level (units of nFAC√(D/π))."""
    phi = 1.0 / (1.0 + np.exp(np.clip(nf * (levels - E_half_V), -700.0, 700.0)))
    if bulk_form == "red":
        phi = 1.0 - phi  # the fraction oxidised; the current is anodic
    jumps = np.diff(np.r_[0.0, phi])
    starts = np.r_[0.0, np.cumsum(durations)[:-1]]
    ends = np.cumsum(durations)
    out = np.empty(levels.size)
    for a in range(0, levels.size, _CHUNK):
        lag = ends[a : a + _CHUNK, None] - starts[None, :]
        past = lag > 0
        out[a : a + _CHUNK] = np.where(past, jumps / np.sqrt(np.where(past, lag, 1.0)), 0.0).sum(1)
    return out if bulk_form == "red" else -out


def reversible_record(
    base_V: np.ndarray,
    timing: PulseTiming,
    *,
    E_half_V: float,
    nf: float,
    bulk_form: Literal["ox", "red"] = "ox",
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The reversible (point, first, second) currents of a record at *base_V*.

    A DPV program whose period is not known is taken without history: each point is then
    Parry & Osteryoung's −[φ(E + ΔE) − φ(E)]/√t_p, and the two sampled currents are not
    defined (returned as NaN).
    """
    base = np.asarray(base_V, dtype=float)
    if timing.technique == "dpv" and timing.period_s is None:
        phi = 1.0 / (1.0 + np.exp(np.clip(nf * (base - E_half_V), -700.0, 700.0)))
        phi2 = 1.0 / (
            1.0 + np.exp(np.clip(nf * (base + timing.amplitude_V - E_half_V), -700, 700))
        )
        point = -(phi2 - phi) / math.sqrt(timing.pulse_width_s)
        nan = np.full(base.size, np.nan)
        return point, nan, nan
    levels, durations, first, second = program_levels(base, timing)
    ends = _end_currents(levels, durations, E_half_V, nf, bulk_form)
    return ends[first] - ends[second], ends[first], ends[second]
