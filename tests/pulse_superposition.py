"""Exact pulse and wave responses of a reversible couple, computed independently.

For a reversible couple with equal diffusion coefficients at a planar electrode, the
surface concentrations follow the potential at once (Nernst) and c_O(0) + c_R(0) = C*, so
for a potential held in steps the surface fraction converted is a step function of time
and the current is an exact sum of Cottrell terms:

    i(t) = −nFAC √(D/π) Σ_j (φ_j − φ_{j−1}) / √(t − t_j),   φ = 1/(1 + exp(nf(E − E½)))

(reduction of the bulk oxidised form; φ_{−1} = 0). The steady-state wave of a rotating disc
is i = −i_l/(1 + exp(nf(E − E½))). This module shares no code with the package's simulator
or techniques: it builds its own programs from the same verbal definition (docs/methods.md).

References
----------
Cottrell, F. G. Z. Phys. Chem. 1903, 42, 385.
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import constants

F = constants.physical_constants["Faraday constant"][0]
R = constants.R


def _nf(electrons: int, temperature_K: float) -> float:
    return electrons * F / (R * temperature_K)


def step_currents(levels, durations, *, E_half, electrons=1, temperature_K=298.15,
                  D=1e-5, conc_M=1e-3, area=0.0707):  # fmt: skip
    """Current at the end of each held level of a step program, A (IUPAC sign)."""
    nf = _nf(electrons, temperature_K)
    levels = np.asarray(levels, dtype=float)
    starts = np.concatenate(([0.0], np.cumsum(durations)[:-1]))
    ends = np.cumsum(durations)
    phi = 1.0 / (1.0 + np.exp(nf * (levels - E_half)))
    jumps = np.diff(np.concatenate(([0.0], phi)))
    scale = -electrons * F * area * conc_M * 1e-3 * math.sqrt(D / math.pi)
    # each end sees every jump made before it
    lag = ends[:, None] - starts[None, :]
    mask = lag > 0
    terms = np.where(mask, jumps[None, :] / np.sqrt(np.where(mask, lag, 1.0)), 0.0)
    return scale * terms.sum(axis=1)


def dpv_record(E_half, start, stop, *, step, amplitude, width, period, **couple):
    """(base potentials, difference currents) of a differential-pulse staircase."""
    n = int(round(abs(stop - start) / step)) + 1
    base = start + math.copysign(step, stop - start) * np.arange(n)
    levels = np.empty(2 * n)
    levels[0::2] = base
    levels[1::2] = base + amplitude
    durations = np.empty(2 * n)
    durations[0::2] = period - width
    durations[1::2] = width
    i = step_currents(levels, durations, E_half=E_half, **couple)
    return base, i[1::2] - i[0::2]


def swv_record(E_half, start, stop, *, step, amplitude, frequency, **couple):
    """(base potentials, net, forward, reverse currents) of a square wave on a staircase."""
    n = int(round(abs(stop - start) / step)) + 1
    sign = 1.0 if stop > start else -1.0
    base = start + sign * step * np.arange(n)
    levels = np.empty(2 * n)
    levels[0::2] = base + sign * amplitude
    levels[1::2] = base - sign * amplitude
    durations = np.full(2 * n, 0.5 / frequency)
    i = step_currents(levels, durations, E_half=E_half, **couple)
    return base, i[0::2] - i[1::2], i[0::2], i[1::2]


def steady_wave(E, E_half, *, limiting_A, electrons=1, temperature_K=298.15):
    """A reversible steady-state reduction wave (cathodic current negative)."""
    nf = _nf(electrons, temperature_K)
    return -limiting_A / (1.0 + np.exp(nf * (np.asarray(E, dtype=float) - E_half)))
