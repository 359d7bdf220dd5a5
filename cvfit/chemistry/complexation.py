"""Half-wave potential of a couple whose two forms are complexed (fast, labile limit).

Pure functions on numbers and arrays; the titration model may reuse them.

For O·L_p + n e⁻ ⇌ R·L_q + (p − q) L with all complexation equilibria fast and the ligand
in excess, each oxidation state is distributed over its complexes according to the Leden
function F0([L]) = Σ_j β_j [L]^j (β_0 = 1, overall constants), and the reversible
half-wave potential moves as

    E½(c) = E½(s) − (RT/nF)·ln(F0_ox / F0_red)

(equal diffusion coefficients of free and complexed forms). With one dominant complex on
each side this is Lingane's line, slope −(p − q)·ln(10)·RT/nF per decade of [L].

References
----------
Lingane, J. J. Chem. Rev. 1941, 29, 1.
DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
Leden, I. Z. Phys. Chem. A 1941, 188, 160.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
from numpy.typing import ArrayLike

from cvfit.errors import InputError
from cvfit.units import FARADAY, GAS_CONSTANT, thermal_voltage

__all__ = [
    "leden_F0",
    "log_leden_F0",
    "effective_diffusion_cm2_s",
    "complexed_half_wave_V",
    "complex_standard_potential_V",
    "MIN_TEMPERATURE_K",
]

#: Lowest temperature accepted, K. No electrolyte solution used for voltammetry is liquid
#: below about 200 K (water freezes at 273 K, acetonitrile at 229 K, DMF at 212 K; CRC
#: Handbook of Chemistry and Physics, melting points, from memory), while a Celsius value
#: given as kelvin (25 for 298.15) falls far below it.
MIN_TEMPERATURE_K = 200.0

_SOURCE = "<complexation>"


def _ligand(ligand_M: ArrayLike) -> np.ndarray:
    L = np.array(ligand_M, dtype=float, copy=True)
    if not np.all(np.isfinite(L)) or np.any(L < 0):
        raise InputError(
            "ligand concentrations must be finite and >= 0 mol/L", source=_SOURCE, key="ligand_M"
        )
    return L


def _log_betas(log10_beta: Sequence[float] | np.ndarray, key: str) -> np.ndarray:
    b = np.array(list(log10_beta), dtype=float)
    if b.ndim != 1 or not np.all(np.isfinite(b)):
        raise InputError(
            f"{key} must be a flat list of finite log10 overall constants (j = 1, 2, ...)",
            source=_SOURCE,
            key=key,
        )
    return b


def leden_F0(ligand_M: ArrayLike, log10_beta: Sequence[float] | np.ndarray) -> np.ndarray:
    """Leden function F0 = 1 + Σ_{j=1..N} β_j [L]^j.

    Parameters
    ----------
    ligand_M : float or array
        Free ligand concentration(s), mol/L (>= 0).
    log10_beta : sequence of float
        log10 of the overall constants β_1 … β_N (an empty sequence gives F0 = 1).

    Returns
    -------
    ndarray
        F0 with the shape of ``ligand_M`` (0-d for a scalar).

    References
    ----------
    Leden, I. Z. Phys. Chem. A 1941, 188, 160. DeFord, D. D.; Hume, D. N. J. Am. Chem.
    Soc. 1951, 73, 5321.
    """
    L = _ligand(ligand_M)
    b = _log_betas(log10_beta, "log10_beta")
    F0 = np.ones_like(L)
    for j, lb in enumerate(b, start=1):
        F0 = F0 + 10.0**lb * L**j
    return F0


def log_leden_F0(ligand_M: ArrayLike, log10_beta: Sequence[float] | np.ndarray) -> np.ndarray:
    """Natural logarithm of :func:`leden_F0`, safe for very large β_j[L]^j."""
    L = _ligand(ligand_M)
    b = _log_betas(log10_beta, "log10_beta")
    out = np.zeros_like(L)
    positive = L > 0
    lnL = np.log(np.where(positive, L, 1.0))
    for j, lb in enumerate(b, start=1):
        term = np.where(positive, lb * math.log(10.0) + j * lnL, -np.inf)
        out = np.logaddexp(out, term)
    return out


def effective_diffusion_cm2_s(
    ligand_M: ArrayLike,
    log10_beta: Sequence[float] | np.ndarray,
    *,
    D_free_cm2_s: float,
    D_complexed_cm2_s: float,
) -> np.ndarray:
    """Diffusion coefficient of one oxidation state averaged over its labile complexes.

    With fast exchange the free form (fraction 1/F0) and the complexes (fraction
    (F0 − 1)/F0, all given one D) diffuse as one species with the mole-fraction mean
    D = (D_free + D_complexed·(F0 − 1))/F0.

    References
    ----------
    DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321 (the current ratio
    I_s/I_c that carries the change of D into the half-wave shift).
    """
    D_free = float(D_free_cm2_s)
    D_cplx = float(D_complexed_cm2_s)
    for key, value in (("D_free_cm2_s", D_free), ("D_complexed_cm2_s", D_cplx)):
        if not (math.isfinite(value) and value > 0):
            raise InputError(f"{key} must be positive", source=_SOURCE, key=key)
    free_fraction = np.exp(-log_leden_F0(ligand_M, log10_beta))
    return D_cplx + (D_free - D_cplx) * free_fraction


def complexed_half_wave_V(
    E_half_free_V: float,
    *,
    ligand_M: ArrayLike,
    log10_beta_ox: Sequence[float] = (),
    log10_beta_red: Sequence[float] = (),
    electrons: int = 1,
    temperature_K: float = 298.15,
    D_ox_cm2_s: float | None = None,
    D_ox_complexed_cm2_s: float | None = None,
    D_red_cm2_s: float | None = None,
    D_red_complexed_cm2_s: float | None = None,
) -> float | np.ndarray:
    """Reversible half-wave potential at free ligand concentration ``ligand_M``.

    E½(c) = E½(s) − (RT/nF)·ln(F0_ox([L]) / F0_red([L]))
            + (RT/2nF)·ln[(D_O,s·D_R,c)/(D_R,s·D_O,c)],

    the last term only when complexed diffusion coefficients are given (D_O,c and D_R,c
    from :func:`effective_diffusion_cm2_s`; a form whose complexed D is not given keeps its
    free D).

    Parameters
    ----------
    E_half_free_V : float
        E½ of the uncomplexed couple, V.
    ligand_M : float or array
        Free ligand concentration(s), mol/L.
    log10_beta_ox, log10_beta_red : sequence of float
        log10 overall constants β_1 … β_N of the oxidised and of the reduced form; empty
        when that form is not complexed.
    D_ox_cm2_s, D_red_cm2_s : float, optional
        Diffusion coefficients of the free forms, cm²/s (needed with the complexed ones).
    D_ox_complexed_cm2_s, D_red_complexed_cm2_s : float, optional
        Diffusion coefficient shared by the complexes of each form, cm²/s.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.

    Returns
    -------
    float or ndarray
        A float for a scalar ``ligand_M``, else an array of the same shape.

    References
    ----------
    Lingane, J. J. Chem. Rev. 1941, 29, 1. DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc.
    1951, 73, 5321.
    """
    E0 = float(E_half_free_V)
    if not math.isfinite(E0):
        raise InputError("E_half_free_V must be finite", source=_SOURCE, key="E_half_free_V")
    electrons = _whole_electrons(electrons)
    T = _kelvin(temperature_K)
    _log_betas(log10_beta_ox, "log10_beta_ox")
    _log_betas(log10_beta_red, "log10_beta_red")
    slope = GAS_CONSTANT * T / (int(electrons) * FARADAY)
    E = E0 - slope * (
        log_leden_F0(ligand_M, log10_beta_ox) - log_leden_F0(ligand_M, log10_beta_red)
    )
    for D_free, D_cplx, betas, sign, name in (
        (D_ox_cm2_s, D_ox_complexed_cm2_s, log10_beta_ox, -1.0, "D_ox_cm2_s"),
        (D_red_cm2_s, D_red_complexed_cm2_s, log10_beta_red, 1.0, "D_red_cm2_s"),
    ):
        if D_cplx is None:
            continue
        if D_free is None:
            raise InputError(
                f"{name} (free form) is needed with its complexed diffusion coefficient",
                source=_SOURCE,
                key=name,
            )
        D_eff = effective_diffusion_cm2_s(
            ligand_M, betas, D_free_cm2_s=D_free, D_complexed_cm2_s=D_cplx
        )
        E = E + sign * 0.5 * slope * np.log(D_eff / float(D_free))
    return float(E) if np.ndim(E) == 0 else E


def _whole_electrons(electrons: object) -> int:
    if (
        isinstance(electrons, bool)
        or not isinstance(electrons, (int, np.integer, float))
        or not math.isfinite(electrons)
        or electrons != int(electrons)
        or electrons < 1
    ):
        raise InputError(
            f"electrons must be a whole number >= 1 (electrons transferred by the couple), "
            f"got {electrons!r}",
            source=_SOURCE,
            key="electrons",
        )
    return int(electrons)


def _kelvin(temperature_K: object) -> float:
    try:
        T = float(temperature_K)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise InputError(
            f"temperature_K must be a number, got {temperature_K!r}",
            source=_SOURCE,
            key="temperature_K",
        ) from None
    if not math.isfinite(T) or T < MIN_TEMPERATURE_K:
        hint = f" (did you mean {T + 273.15:.2f} K?)" if -50.0 <= T <= 150.0 else ""
        raise InputError(
            f"temperature_K = {temperature_K!r} is below {MIN_TEMPERATURE_K:.0f} K, where no "
            f"electrolyte solution is liquid: give the temperature in kelvin{hint}",
            source=_SOURCE,
            key="temperature_K",
        )
    return T


def complex_standard_potential_V(
    E_standard_V: float,
    *,
    log10_beta_ox: float = 0.0,
    log10_beta_red: float = 0.0,
    electrons: int = 1,
    temperature_K: float = 298.15,
) -> float:
    """Standard potential of the couple of two complexes from the free couple's (Hess cycle).

    E°(ML_p/ML_q) = E°(M/M) − (RT/nF)·ln(β_p,ox/β_q,red), all species at unit activity
    (unit ligand activity too); a form that is not complexed has log10 β = 0.

    Raises
    ------
    InputError
        When n is not a whole number >= 1 (a fractional n has no meaning for one couple),
        when the temperature is below :data:`MIN_TEMPERATURE_K` (a Celsius value given as
        kelvin) or not finite, or when a potential or constant is not finite.

    References
    ----------
    Lingane, J. J. Chem. Rev. 1941, 29, 1.
    """
    n = _whole_electrons(electrons)
    T = _kelvin(temperature_K)
    values = {"E_standard_V": E_standard_V, "log10_beta_ox": log10_beta_ox}
    values["log10_beta_red"] = log10_beta_red
    for key, value in values.items():
        if not math.isfinite(float(value)):
            raise InputError(f"{key} must be finite, got {value!r}", source=_SOURCE, key=key)
    k = thermal_voltage(T, n)
    return float(E_standard_V) - k * math.log(10.0) * (log10_beta_ox - log10_beta_red)
