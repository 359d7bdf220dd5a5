"""Activity coefficients by the Davies equation and thermodynamic stability constants.

An approximation: the Davies equation is fair up to an ionic strength of about
0.1–0.5 mol/L and knows nothing of specific ion interactions.

The Debye–Hückel A depends on temperature through (ε_r T)^(-3/2);
:func:`debye_huckel_A` gives it from the relative permittivity of water (0–100 °C).

References
----------
Davies, C. W. Ion Association; Butterworths: London, 1962; p 41.
Malmberg, C. G.; Maryott, A. A. J. Res. Natl. Bur. Stand. 1956, 56, 1 (permittivity of
water, 0–100 °C).
Robinson, R. A.; Stokes, R. H. Electrolyte Solutions, 2nd ed.; Butterworths: London, 1959
(A = 1.8246e6 (ε_r T)^(-3/2) (mol/L)^(-1/2)).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from scipy import constants as sc

__all__ = [
    "DAVIES_A_25C",
    "WATER_PERMITTIVITY_RANGE_K",
    "davies_log10_gamma",
    "debye_huckel_A",
    "thermodynamic_log10_beta",
    "water_relative_permittivity",
]

#: Celsius zero and 25 °C, K (scipy.constants).
_T25_K = sc.zero_Celsius + 25.0


#: Temperatures (K) over which the permittivity fit of water holds (0–100 °C).
WATER_PERMITTIVITY_RANGE_K = (273.15, 373.15)


def water_relative_permittivity(temperature_K: float) -> float:
    """Relative permittivity of water, ε_r = 87.740 − 0.40008 t + 9.398e-4 t² − 1.410e-6 t³.

    t in °C, valid 0–100 °C (ValueError outside).

    References
    ----------
    Malmberg, C. G.; Maryott, A. A. J. Res. Natl. Bur. Stand. 1956, 56, 1.
    """
    T = float(temperature_K)
    lo, hi = WATER_PERMITTIVITY_RANGE_K
    if not (lo <= T <= hi):
        raise ValueError(f"the permittivity of water is tabulated for 0–100 °C, got {T:g} K")
    t = T - sc.zero_Celsius
    return 87.740 - 0.40008 * t + 9.398e-4 * t**2 - 1.410e-6 * t**3


def debye_huckel_A(temperature_K: float) -> float:
    """Debye–Hückel A of water on the molar scale, (mol/L)^-1/2, at *temperature_K*.

    A = (2π N_A · 1000 L/m³)^½ ℓ_B^{3/2} / ln 10, with the Bjerrum length
    ℓ_B = e²/(4π ε_0 ε_r k T) and ε_r of water from :func:`water_relative_permittivity`;
    numerically 1.8246e6 (ε_r T)^(-3/2). 0.5116 at 25 °C (0.509, Davies' value, goes with
    the older ε_r = 78.54).

    References
    ----------
    Robinson, R. A.; Stokes, R. H. Electrolyte Solutions, 2nd ed.; Butterworths: London,
    1959. Malmberg, C. G.; Maryott, A. A. J. Res. Natl. Bur. Stand. 1956, 56, 1.
    """
    T = float(temperature_K)
    eps = water_relative_permittivity(T)
    bjerrum_m = sc.e**2 / (4 * math.pi * sc.epsilon_0 * eps * sc.k * T)
    return math.sqrt(2 * math.pi * sc.N_A * 1000.0) * bjerrum_m**1.5 / math.log(10.0)


#: Debye–Hückel A for water at 25 °C, (mol/L)^-1/2: :func:`debye_huckel_A` there (0.5116).
#: Davies (1962) used 0.509, which goes with the older ε_r = 78.54; cvfit uses one value
#: from one function everywhere, the Python API and ``cvfit run`` alike.
DAVIES_A_25C = debye_huckel_A(_T25_K)


def _A_at(A: float | None, temperature_K: float) -> float:
    return debye_huckel_A(temperature_K) if A is None else float(A)


def davies_log10_gamma(
    charge: int,
    ionic_strength_M: float,
    *,
    A: float | None = None,
    temperature_K: float = _T25_K,
) -> float:
    """log10 γ = −A z² [√I/(1 + √I) − 0.3 I] (Davies equation; an approximation).

    Parameters
    ----------
    charge : int
        Charge number z of the ion.
    ionic_strength_M : float
        Ionic strength I, mol/L (>= 0).
    A : float or None
        Debye–Hückel constant, (mol/L)^-1/2; None (the default): :func:`debye_huckel_A` at
        ``temperature_K`` (0.5116 at 25 °C).
    temperature_K : float
        Temperature, K, for the default A (25 °C).

    References
    ----------
    Davies, C. W. Ion Association; Butterworths: London, 1962; p 41.
    """
    A = _A_at(A, temperature_K)
    I = float(ionic_strength_M)  # noqa: E741 - the conventional symbol
    if not (math.isfinite(I) and I >= 0):
        raise ValueError(f"ionic strength must be >= 0 mol/L, got {ionic_strength_M!r}")
    r = math.sqrt(I)
    return -float(A) * int(charge) ** 2 * (r / (1.0 + r) - 0.3 * I)


def thermodynamic_log10_beta(
    log10_beta: Sequence[float],
    *,
    metal_charge: int,
    ligand_charge: int,
    ionic_strength_M: float,
    A: float | None = None,
    temperature_K: float = _T25_K,
) -> list[float]:
    """Constants at I → 0 from concentration constants at ionic strength I (Davies).

    β°_j = β_j · γ(ML_j) / (γ(M) γ(L)^j), with z(ML_j) = z_M + j z_L. A defaults to
    :func:`debye_huckel_A` at ``temperature_K`` (0.5116 at 25 °C), as in ``cvfit run``.

    References
    ----------
    Davies, C. W. Ion Association; Butterworths: London, 1962; p 41.
    """
    A = _A_at(A, temperature_K)
    gM = davies_log10_gamma(metal_charge, ionic_strength_M, A=A)
    gL = davies_log10_gamma(ligand_charge, ionic_strength_M, A=A)
    out = []
    for j, b in enumerate(log10_beta, start=1):
        gC = davies_log10_gamma(metal_charge + j * ligand_charge, ionic_strength_M, A=A)
        out.append(float(b) + gC - gM - j * gL)
    return out
