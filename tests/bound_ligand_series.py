"""E½ sets of a titration by additions with much of the ligand bound, computed exactly.

Used by tests/test_lingane_bound_ligand.py and scripts/bound_ligand_coverage.py. No
voltammograms: each solution's E½ comes straight from the mass balance with the true
constants, written out here independently of cvfit's chemistry.

Truth: one complex ML_p of the oxidised form (p = 2, log10 β = 10), the reduced form free,
so p − q = 2 and log10(β_ox/β_red) = 10. For that couple (Lingane, Chem. Rev. 29 (1941) 1)

    E½ = E½(s) − (RT/nF)·ln(1 + β[L]^p),

with the free ligand [L] from the mass balance of the bulk (oxidised) form (Bjerrum, Metal
Ammine Formation in Aqueous Solution, Haase 1941)

    c_L = [L] + p·c_M·β[L]^p/(1 + β[L]^p),

solved here by bracketing (scipy.optimize.brentq). The series: 10 mL of metal, 0.100 M
ligand stock added 0.5–5 mL (amounts conserved, volumes additive), the ligand-free start
as the reference E½(s).
"""

from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
from scipy.constants import R, physical_constants
from scipy.optimize import brentq

from cvfit.titration.base import ReferenceHalfWave, TitrationData, TitrationPoint

TRUE_P = 2
TRUE_LOG_BETA = 10.0
E_HALF_FREE_V = -0.2
TEMPERATURE_K = 298.15
START_mL = 10.0
STOCK_M = 0.100
ADDED_mL = (0.5, 0.75, 1.0, 1.5, 2.0, 3.0, 4.0, 5.0)

_F = physical_constants["Faraday constant"][0]


def totals(metal_M: float) -> tuple[np.ndarray, np.ndarray]:
    """Total ligand and total metal of each solution, mol/L."""
    added = np.array(ADDED_mL)
    volume = START_mL + added
    return STOCK_M * added / volume, metal_M * START_mL / volume


def free_ligand(c_L: float, c_M: float) -> float:
    """[L] of the mass balance above, mol/L."""
    beta = 10.0**TRUE_LOG_BETA

    def balance(L: float) -> float:
        bound = beta * L**TRUE_P
        return L + TRUE_P * c_M * bound / (1.0 + bound) - c_L

    return float(brentq(balance, 0.0, c_L, xtol=1e-22, rtol=1e-15))


def exact_half_waves(metal_M: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(c_L, c_M, exact E½ in V) of each solution."""
    c_L, c_M = totals(metal_M)
    free = np.array([free_ligand(a, b) for a, b in zip(c_L, c_M, strict=True)])
    rt_nf = R * TEMPERATURE_K / _F
    e_half = E_HALF_FREE_V - rt_nf * np.log1p(10.0**TRUE_LOG_BETA * free**TRUE_P)
    return c_L, c_M, e_half


def noisy_data(
    metal_M: float, noise_V: float, rng: np.random.Generator, exact=None
) -> TitrationData:
    """One E½ set with Gaussian noise, each point carrying its own metal and stderr."""
    c_L, c_M, e_half = exact if exact is not None else exact_half_waves(metal_M)
    y = e_half + rng.normal(0.0, noise_V, e_half.size)
    points = tuple(
        TitrationPoint(f"s{k}", float(a), float(e), noise_V, "ox", metal_M=float(m))
        for k, (a, m, e) in enumerate(zip(c_L, c_M, y, strict=True))
    )
    e_ref = E_HALF_FREE_V + float(rng.normal(0.0, noise_V))
    reference = ReferenceHalfWave(e_ref, noise_V, "file", files=("s_ref",))
    return TitrationData(points, reference)


def manifest(bound_ligand_number: int | None = None) -> SimpleNamespace:
    """What the Lingane model reads of a manifest (the metal is each point's own)."""
    series = SimpleNamespace(
        electrons=1,
        temperature_K=TEMPERATURE_K,
        metal_total_M=None,
        bound_ligand_number=bound_ligand_number,
    )
    return SimpleNamespace(series=series)


def covered(q, truth: float) -> bool:
    lo, hi = q.ci95
    return bool(lo <= truth <= hi) and math.isfinite(lo)
