"""Half-wave potential of a couple whose two forms take up protons (fast proton transfer).

Pure functions of pH and acidity constants; the pH model, the simulator, the planner and
the figures share them.

Each oxidation state X (ox or red) may carry j = 0 … m protons. ``pKa[j − 1]`` is the acid
dissociation constant of H_jX ⇌ H_{j−1}X + H⁺ (j counted from the unprotonated form, so for
successive protonations usually pKa_1 > pKa_2); the overall protonation constants are
β_j = 10^(pKa_1 + … + pKa_j) and the binding polynomial is P(h) = Σ_j β_j h^j (β_0 = 1) with
h = 10^−pH, the activity of H⁺ (a pH meter reads an activity; the constants are then mixed
constants, on activities of H⁺ and concentrations of the rest). With proton transfer fast
and equal diffusion coefficients of all forms of one state,

    E½(pH) = E° + (RT/nF)·ln[P_red(h) / P_ox(h)],

E° the potential of the unprotonated couple. Where the reduced form carries m_red protons
and the oxidised form m_ox, E½ falls by (m_red − m_ox)·ln(10)·RT/nF per pH unit
(59.16·m/n mV at 25 °C).

References
----------
Clark, W. M. Oxidation-Reduction Potentials of Organic Systems; Williams & Wilkins:
Baltimore, 1960 (E against pH of proton-coupled couples, from memory).
Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley: New York, 2001
(the Nernst equation with coupled proton equilibria, from memory).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
from numpy.typing import ArrayLike

from cvfit.units import thermal_voltage

__all__ = [
    "log10_protonation_polynomial",
    "protonation_fractions",
    "mean_protons",
    "proton_half_wave_V",
    "proton_regions",
]

LN10 = math.log(10.0)
#: pKa values of one form, pKa_1 … pKa_m (a list or an array).
PKa = Sequence[float] | np.ndarray


def _exponents(pH: ArrayLike, pKa: PKa) -> np.ndarray:
    """log10(β_j h^j) for j = 0 … m, shape (m + 1, *pH.shape)."""
    x = np.asarray(pH, dtype=float)
    cum = np.concatenate([[0.0], np.cumsum(np.asarray(list(pKa), dtype=float))])
    j = np.arange(cum.size, dtype=float)
    return cum.reshape((-1,) + (1,) * x.ndim) - np.multiply.outer(j, x)


def log10_protonation_polynomial(pH: ArrayLike, pKa: PKa) -> np.ndarray:
    """log10 P(h) = log10 Σ_j β_j h^j, computed without overflow (module docstring)."""
    e = _exponents(pH, pKa)
    top = e.max(axis=0)
    return top + np.log10(np.sum(10.0 ** (e - top), axis=0))


def protonation_fractions(pH: ArrayLike, pKa: PKa) -> np.ndarray:
    """Fractions of H_jX, j = 0 … m, against pH: shape (m + 1, *pH.shape), columns sum to 1."""
    e = _exponents(pH, pKa)
    w = 10.0 ** (e - e.max(axis=0))
    return w / w.sum(axis=0)


def mean_protons(pH: ArrayLike, pKa: PKa) -> np.ndarray:
    """Mean number of protons bound, Σ j·α_j (= −d log10 P / d pH)."""
    a = protonation_fractions(pH, pKa)
    j = np.arange(a.shape[0], dtype=float)
    return np.tensordot(j, a, axes=1)


def proton_half_wave_V(
    E0_V: float,
    pH: ArrayLike,
    *,
    pKa_ox: PKa = (),
    pKa_red: PKa = (),
    electrons: int = 1,
    temperature_K: float = 298.15,
) -> np.ndarray:
    """E½ of a proton-coupled couple at each pH (module docstring).

    Parameters
    ----------
    E0_V : float
        Potential of the unprotonated couple, V.
    pH : float or array
        pH (−log10 of the H⁺ activity).
    pKa_ox, pKa_red : sequence of float
        pKa_1 … pKa_m of each form, j counted from the unprotonated form.
    electrons, temperature_K
        n and T.

    References
    ----------
    Clark, W. M. Oxidation-Reduction Potentials of Organic Systems; Williams & Wilkins,
    1960. Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley, 2001.
    """
    k = thermal_voltage(temperature_K, electrons) * LN10
    diff = log10_protonation_polynomial(pH, pKa_red) - log10_protonation_polynomial(pH, pKa_ox)
    return E0_V + k * diff


def proton_regions(
    pKa_ox: PKa, pKa_red: PKa, pH_range: tuple[float, float]
) -> list[tuple[float, float, int]]:
    """The pH regions between successive pKa values inside *pH_range*, each with the
    number of protons m = m_red − m_ox that travel with the electrons there.

    m is read from the mean protons of each form at the region's middle, rounded (the
    integer a chemist assigns to the region; near crossing pKa values the local slope
    is smaller than the ideal −m·ln(10)·RT/nF).

    Returns
    -------
    list of (pH_low, pH_high, m)
    """
    lo, hi = pH_range
    edges = sorted({lo, hi, *(p for p in (*pKa_ox, *pKa_red) if lo < p < hi)})
    out = []
    for a, b in zip(edges, edges[1:], strict=False):
        mid = 0.5 * (a + b)
        m = float(mean_protons(mid, pKa_red)) - float(mean_protons(mid, pKa_ox))
        out.append((a, b, int(round(m))))
    return out
