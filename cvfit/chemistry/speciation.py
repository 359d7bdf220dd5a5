"""Solution chemistry of a stepwise complex series: Leden functions, species fractions,
mean ligand number, ligand protonation and the free-ligand mass balance.

Pure functions on numbers and arrays. Overall constants are given as log10 β_1 … β_N
(β_0 = 1); concentrations in mol/L.

References
----------
Leden, I. Z. Phys. Chem. A 1941, 188, 160.
DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
Bjerrum, J. Metal Ammine Formation in Aqueous Solution; Haase: Copenhagen, 1941
(mean ligand number n̄ and the mass balance of bound ligand).
Ringbom, A. Complexation in Analytical Chemistry; Interscience: New York, 1963
(side-reaction coefficient α_L and conditional constants).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
from numpy.typing import ArrayLike
from scipy import optimize

from cvfit.chemistry.complexation import log_leden_F0

#: Share of the analytical ligand bound to the metal above which a point is flagged
#: (common practice: a >= 10-fold ligand excess per bound ligand).
BOUND_LIGAND_SHARE_MAX = 0.1

__all__ = [
    "BOUND_LIGAND_SHARE_MAX",
    "leden_F_functions",
    "species_fractions",
    "mean_ligand_number",
    "ligand_fraction_unprotonated",
    "conditional_log10_beta",
    "absolute_log10_beta",
    "free_ligand_M",
    "fraction_peak_ligand_M",
    "ligand_for_fraction_M",
]


def leden_F_functions(
    ligand_M: ArrayLike, F0: ArrayLike, log10_beta: Sequence[float] | np.ndarray, *, order: int
) -> list[np.ndarray]:
    """Leden's functions F_0 … F_order from F0 and the lower constants.

    F_{j+1}([L]) = (F_j([L]) − β_j)/[L], β_0 = 1, so F_j = β_j + β_{j+1}[L] + …

    Parameters
    ----------
    ligand_M : array
        Free ligand concentrations, mol/L (> 0).
    F0 : array
        F0 at those concentrations (measured or modelled).
    log10_beta : sequence of float
        log10 β_1 … used for the subtractions (at least ``order`` values).
    order : int
        Highest F_j returned.

    Returns
    -------
    list of ndarray
        ``[F0, F1, …, F_order]``.

    References
    ----------
    Leden, I. Z. Phys. Chem. A 1941, 188, 160.
    """
    L = np.asarray(ligand_M, dtype=float)
    if np.any(L <= 0):
        raise ValueError("Leden functions need ligand concentrations > 0")
    b = [0.0, *[float(x) for x in log10_beta]]
    if order > len(b) - 1:
        raise ValueError(f"order {order} needs {order} constants, got {len(b) - 1}")
    out = [np.asarray(F0, dtype=float).copy()]
    for j in range(order):
        out.append((out[-1] - 10.0 ** b[j]) / L)
    return out


def species_fractions(ligand_M: ArrayLike, log10_beta: Sequence[float] | np.ndarray) -> np.ndarray:
    """Fraction α_j = β_j [L]^j / F0 of each species M, ML, …, ML_N.

    Returns
    -------
    ndarray
        Shape ``(N + 1,) + shape(ligand_M)``; the fractions sum to 1.

    References
    ----------
    Leden, I. Z. Phys. Chem. A 1941, 188, 160.
    """
    L = np.asarray(ligand_M, dtype=float)
    lnF0 = log_leden_F0(L, log10_beta)
    with np.errstate(divide="ignore"):
        lnL = np.where(L > 0, np.log(np.where(L > 0, L, 1.0)), -np.inf)
    rows = [np.exp(-lnF0)]
    for j, lb in enumerate(log10_beta, start=1):
        term = np.where(L > 0, lb * math.log(10.0) + j * lnL - lnF0, -np.inf)
        rows.append(np.exp(term))
    return np.array(rows)


def mean_ligand_number(
    ligand_M: ArrayLike, log10_beta: Sequence[float] | np.ndarray
) -> np.ndarray:
    """Bjerrum's mean ligand number n̄ = Σ j α_j = d ln F0 / d ln[L].

    References
    ----------
    Bjerrum, J. Metal Ammine Formation in Aqueous Solution; Haase: Copenhagen, 1941.
    DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
    """
    a = species_fractions(ligand_M, log10_beta)
    j = np.arange(a.shape[0]).reshape((-1,) + (1,) * (a.ndim - 1))
    return np.sum(j * a, axis=0)


def ligand_fraction_unprotonated(pH: ArrayLike, pKa: Sequence[float]) -> np.ndarray:
    """α_L = [L]/[L'] : fraction of the unbound ligand that is not protonated.

    With acid dissociation constants pKa (any order; the highest belongs to HL), the
    cumulative protonation constants are log β^H_k = sum of the k highest pKa and
    α_L = 1 / (1 + Σ_k β^H_k [H⁺]^k), [H⁺] = 10^−pH.

    References
    ----------
    Ringbom, A. Complexation in Analytical Chemistry; Interscience: New York, 1963.
    """
    pH_arr = np.asarray(pH, dtype=float)
    ks = sorted((float(p) for p in pKa), reverse=True)
    log_terms = [np.zeros_like(pH_arr)]
    cum = 0.0
    for k, p in enumerate(ks, start=1):
        cum += p
        log_terms.append(cum - k * pH_arr)
    ln10 = math.log(10.0)
    total = np.logaddexp.reduce(np.array(log_terms) * ln10, axis=0)
    return np.exp(-total)


def conditional_log10_beta(
    log10_beta: Sequence[float] | np.ndarray, log10_alpha_L: float
) -> list[float]:
    """log10 β'_j = log10 β_j + j log10 α_L (constants on unbound-ligand concentration).

    References
    ----------
    Ringbom, A. Complexation in Analytical Chemistry; Interscience: New York, 1963.
    """
    return [float(b) + j * float(log10_alpha_L) for j, b in enumerate(log10_beta, start=1)]


def absolute_log10_beta(conditional: Sequence[float], log10_alpha_L: float) -> list[float]:
    """Inverse of :func:`conditional_log10_beta`: log10 β_j = log10 β'_j − j log10 α_L."""
    return [float(b) - j * float(log10_alpha_L) for j, b in enumerate(conditional, start=1)]


def free_ligand_M(
    ligand_total_M: float,
    metal_total_M: float,
    log10_beta: Sequence[float] | np.ndarray,
    *,
    alpha_L: float = 1.0,
) -> float:
    """Free (unprotonated, unbound) ligand from the mass balance.

    Solves  L_T = [L]/α_L + M_T · n̄([L])  for [L] (the left side grows monotonically
    with [L], so the root is unique); the metal is taken to be in the form whose
    constants are given (the bulk form).

    Parameters
    ----------
    ligand_total_M, metal_total_M : float
        Analytical concentrations, mol/L.
    log10_beta : sequence of float
        Overall constants of the bulk form.
    alpha_L : float
        Fraction of unbound ligand that is unprotonated (1 without protonation).

    Returns
    -------
    float
        [L], mol/L (0 for no ligand).

    References
    ----------
    Bjerrum, J. Metal Ammine Formation in Aqueous Solution; Haase: Copenhagen, 1941.
    """
    LT, MT, a = float(ligand_total_M), float(metal_total_M), float(alpha_L)
    if LT <= 0:
        return 0.0
    if not (0 < a <= 1):
        raise ValueError(f"alpha_L must lie in (0, 1], got {a}")

    def balance(log_L: float) -> float:
        L = math.exp(log_L)
        return L / a + MT * float(mean_ligand_number(L, log10_beta)) - LT

    hi = math.log(a * LT)
    if balance(hi) <= 0:
        return a * LT
    lo = hi - 1.0
    while balance(lo) > 0:
        lo -= 2.0
    return math.exp(optimize.brentq(balance, lo, hi, xtol=1e-13, rtol=1e-12))


def fraction_peak_ligand_M(log10_beta: Sequence[float] | np.ndarray, j: int) -> float:
    """Free ligand concentration where the fraction of ML_j is largest (n̄ = j).

    For the highest complex (j = N) the fraction only grows; the concentration returned
    is then where the series is half-way to ML_N, n̄ = N − 1/2.

    References
    ----------
    Bjerrum, J. Metal Ammine Formation in Aqueous Solution; Haase: Copenhagen, 1941.
    """
    N = len(log10_beta)
    if not 1 <= j <= N:
        raise ValueError(f"j must lie in 1..{N}, got {j}")
    target = j if j < N else N - 0.5

    def g(log_L: float) -> float:
        return float(mean_ligand_number(10.0**log_L, log10_beta)) - target

    lo, hi = -30.0, 5.0
    if g(hi) < 0:
        return 10.0**hi
    return 10.0 ** optimize.brentq(g, lo, hi, xtol=1e-10)


def ligand_for_fraction_M(
    log10_beta: Sequence[float] | np.ndarray, j: int, fraction: float = 0.2
) -> float | None:
    """Lowest free ligand concentration at which ML_j makes up ``fraction`` of the metal.

    α_j = β_j[L]^j / F0([L]) (Leden) is followed up the ligand axis (log10 [L] from −30 to
    +5 in steps of 0.01, then refined by root finding). ``None`` when α_j never reaches
    ``fraction`` — an intermediate complex squeezed between its neighbours.

    References
    ----------
    Leden, I. Z. Phys. Chem. A 1941, 188, 160.
    """
    N = len(log10_beta)
    if not 1 <= j <= N:
        raise ValueError(f"j must lie in 1..{N}, got {j}")
    if not 0.0 < fraction < 1.0:
        raise ValueError(f"fraction must lie in (0, 1), got {fraction}")
    log_L = np.arange(-30.0, 5.0 + 1e-9, 0.01)
    alpha = species_fractions(10.0**log_L, log10_beta)[j]
    above = np.nonzero(alpha >= fraction)[0]
    if above.size == 0:
        return None
    k = int(above[0])
    if k == 0:
        return float(10.0 ** log_L[0])

    def g(x: float) -> float:
        return float(species_fractions(10.0**x, log10_beta)[j]) - fraction

    return float(10.0 ** optimize.brentq(g, log_L[k - 1], log_L[k], xtol=1e-10))
