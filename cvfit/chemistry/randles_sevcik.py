"""The reversible peak current of cyclic voltammetry (Randles–Ševčík).

Kept apart from the simulator so the analysis can use the formula without importing the
simulation kernel (and numba).
"""

from __future__ import annotations

import math

from cvfit.units import FARADAY, GAS_CONSTANT

__all__ = ["RANDLES_SEVCIK_CONSTANT", "randles_sevcik_peak_current_A"]

#: Reversible peak current function (Nicholson & Shain 1964; Randles 1948; Ševčík 1948).
RANDLES_SEVCIK_CONSTANT = 0.4463


def randles_sevcik_peak_current_A(
    *,
    electrons: int,
    concentration_M: float,
    area_cm2: float,
    D_cm2_s: float,
    scan_rate_V_s: float,
    temperature_K: float = 298.15,
) -> float:
    """Reversible peak current 0.4463·nFAC·(nFvD/RT)^½, A (positive).

    Parameters
    ----------
    electrons : int
        n of the couple.
    concentration_M : float
        Bulk concentration of the electroactive species, mol/L.
    area_cm2, D_cm2_s, scan_rate_V_s, temperature_K : float
        Electrode area (cm²), diffusion coefficient (cm²/s), scan rate (V/s) and
        temperature (K).

    References
    ----------
    Randles, J. E. B. Trans. Faraday Soc. 1948, 44, 327. Ševčík, A. Collect. Czech. Chem.
    Commun. 1948, 13, 349. Nicholson, R. S.; Shain, I. Anal. Chem. 1964, 36, 706.
    """
    n = float(electrons)
    C = float(concentration_M) / 1000.0  # mol/cm³
    f = n * FARADAY / (GAS_CONSTANT * float(temperature_K))
    return (
        RANDLES_SEVCIK_CONSTANT
        * n
        * FARADAY
        * float(area_cm2)
        * C
        * math.sqrt(f * float(scan_rate_V_s) * float(D_cm2_s))
    )
