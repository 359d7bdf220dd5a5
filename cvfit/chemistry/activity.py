"""Activity coefficients by the Davies equation and thermodynamic stability constants.

An approximation: the Davies equation is fair up to an ionic strength of about
0.1–0.5 mol/L and knows nothing of specific ion interactions.

References
----------
Davies, C. W. Ion Association; Butterworths: London, 1962; p 41.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

__all__ = ["DAVIES_A_25C", "davies_log10_gamma", "thermodynamic_log10_beta"]

#: Debye–Hückel A for water at 25 °C, (mol/L)^-1/2 (Davies 1962).
DAVIES_A_25C = 0.509


def davies_log10_gamma(charge: int, ionic_strength_M: float, *, A: float = DAVIES_A_25C) -> float:
    """log10 γ = −A z² [√I/(1 + √I) − 0.3 I] (Davies equation; an approximation).

    Parameters
    ----------
    charge : int
        Charge number z of the ion.
    ionic_strength_M : float
        Ionic strength I, mol/L (>= 0).
    A : float
        Debye–Hückel constant, 0.509 at 25 °C.

    References
    ----------
    Davies, C. W. Ion Association; Butterworths: London, 1962; p 41.
    """
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
    A: float = DAVIES_A_25C,
) -> list[float]:
    """Constants at I → 0 from concentration constants at ionic strength I (Davies).

    β°_j = β_j · γ(ML_j) / (γ(M) γ(L)^j), with z(ML_j) = z_M + j z_L.

    References
    ----------
    Davies, C. W. Ion Association; Butterworths: London, 1962; p 41.
    """
    gM = davies_log10_gamma(metal_charge, ionic_strength_M, A=A)
    gL = davies_log10_gamma(ligand_charge, ionic_strength_M, A=A)
    out = []
    for j, b in enumerate(log10_beta, start=1):
        gC = davies_log10_gamma(metal_charge + j * ligand_charge, ionic_strength_M, A=A)
        out.append(float(b) + gC - gM - j * gL)
    return out
