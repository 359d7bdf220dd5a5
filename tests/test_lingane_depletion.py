"""Lingane fit with ligand bound to the metal: [L] = c_L − p·c_M (Lingane, Chem. Rev. 29
(1941) 1; mass balance of bound ligand, Bjerrum 1941).

Simulated truth: one complex ML of the oxidised form, log β1 = 4.0, reduced form free
(p − q = 1); c_M = 2 mM, so the lowest point has 7.5 % of its ligand bound.
"""

from __future__ import annotations

import numpy as np
import pytest
from seriesfactory import write_manifest

from cvfit.pipeline.series import analyse_manifest_file
from cvfit.simulate.titration_series import simulate_series

METAL_M = 2.0e-3
LOG_BETA = 4.0


@pytest.fixture(scope="module")
def depleted(tmp_path_factory):
    folder = tmp_path_factory.mktemp("depleted")
    free = np.array([0.0, *np.geomspace(METAL_M / 0.075 - METAL_M, 0.3, 7)])
    simulate_series(
        folder,
        ligand_M=free,
        E_half_free_V=0.0,
        log10_beta_ox=(LOG_BETA,),
        log10_beta_red=(),
        noise_fraction=0.002,
        seed=21,
        start_V=0.3,
        switch_V=-0.65,
    )
    total = np.where(free > 0, free + METAL_M, 0.0)
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": float(c), "scan_rate_V_s": 0.1}
        for k, c in enumerate(total)
    ]
    runs = {}
    for name, series in (
        ("metal", {"electrons": 1, "metal_total_M": METAL_M}),
        ("none", {"electrons": 1}),
    ):
        m = write_manifest(folder / f"{name}.toml", entries, series=series)
        runs[name] = analyse_manifest_file(m)
    return runs, free, total


def test_depletion_is_corrected_and_the_truth_recovered(depleted):
    runs, free, total = depleted
    assert METAL_M / total[1] == pytest.approx(0.075)
    fit = runs["metal"].fit
    lo, hi = fit.log10_beta_ratio.ci95
    assert lo <= LOG_BETA <= hi, (fit.log10_beta_ratio.value, lo, hi)
    lo, hi = fit.delta_ligands.ci95
    assert lo <= 1.0 <= hi
    used = [f for f in runs["metal"].files if f.used_in_fit]
    np.testing.assert_allclose([f.free_ligand_M for f in used], free[1:], rtol=0.01)


def test_uncorrected_fit_misses_the_truth(depleted):
    """Without metal_total_M total ligand stands for free ligand: the same input then
    excludes the truth from its interval (so the test above can fail)."""
    runs, _, _ = depleted
    lo, hi = runs["none"].fit.delta_ligands.ci95
    assert not lo <= 1.0 <= hi


def test_depletion_beyond_the_noise_is_flagged(depleted):
    runs, _, _ = depleted
    first = next(f for f in runs["metal"].files if f.used_in_fit)
    codes = {f.code for f in first.flags}
    assert "LIGAND_DEPLETION_CORRECTED" in codes
    # 7.5 % bound is within the 10 % share of common practice.
    assert "LOW_LIGAND_EXCESS" not in codes
