"""A titration recorded with one fixed switching potential (common bench practice).

E½ moves with the ligand while the switch stays, so the last files switch only ~100 mV
beyond E½, where the reverse peak and the midpoint (Epa + Epc)/2 are pulled furthest out by
the switch. The switching correction of E½ (Nicholson & Shain, Anal. Chem. 36 (1964) 706,
the dependence; its values from the simulated table, checked in tests/test_switching_table.py)
must keep every E½ on the truth and the Lingane slope unbiased.

Truth, computed here from the published relation and not by cvfit: for one complex ML of
the oxidised form with the ligand in excess, E½ = E½(free) − (RT/nF)·ln(1 + β[L]) (DeFord &
Hume, J. Am. Chem. Soc. 73 (1951) 5321; Lingane, Chem. Rev. 29 (1941) 1), and the slope of
E½ against log[L] at high [L] is −(p − q)·ln10·RT/nF, p − q = 1. With the published
Nicholson–Shain values the E½ were 0.04–0.16 mV off (−0.12 mV at the last file, 101 mV past
its E½); with the simulated table within 0.0125 mV (noise-free files, 1 mV steps; the scan
starts 250–550 mV before E½, and the peak location itself reads −0.012 mV at 100 mV then).
"""

from __future__ import annotations

import numpy as np
import pytest

from cvfit.pipeline.series import analyse_manifest_file
from cvfit.simulate.titration_series import simulate_series
from cvfit.units import thermal_voltage

LIGAND_M = [0.0, 1e-3, 2e-3, 5e-3, 1e-2, 3e-2, 1e-1]
LOG_BETA_OX = [6.0]  # β[L] >= 1e3: Lingane's line is straight within 0.03 mV


@pytest.fixture(scope="module")
def series(tmp_path_factory):
    beta = 10.0 ** LOG_BETA_OX[0]
    truth = -thermal_voltage(298.15) * np.log1p(beta * np.array(LIGAND_M))
    switch_V = float(truth[-1]) - 0.101  # fixed for the series: 101 mV beyond the last E½
    manifest = simulate_series(
        tmp_path_factory.mktemp("fixed_switch") / "s", ligand_M=LIGAND_M, E_half_free_V=0.0,
        log10_beta_ox=LOG_BETA_OX, log10_beta_red=[], start_V=0.25, switch_V=switch_V,
        step_V=0.001,
    )  # fmt: skip
    return truth, switch_V, analyse_manifest_file(manifest)


def test_every_E_half_on_the_truth(series):
    truth, switch_V, result = series
    offsets = np.abs(truth - switch_V)
    assert offsets.min() == pytest.approx(0.101) and offsets.max() > 0.39
    for f, E_true in zip(result.files, truth, strict=True):
        assert f.measurement.screen.reversible is True
        assert abs(f.E_half_V - E_true) < 0.015e-3, (f.E_half_V - E_true) * 1e3


def test_lingane_slope_unbiased(series):
    _, _, result = series
    fit = result.fit
    nernst = -np.log(10.0) * thermal_voltage(298.15)  # p − q = 1, n = 1
    lo, hi = fit.slope_V_per_decade.ci95
    assert lo < nernst < hi
    # measured: 59.152 against 59.159 mV/decade (0.007 mV)
    assert fit.slope_V_per_decade.value == pytest.approx(nernst, abs=0.02e-3)
    assert fit.delta_ligands_integer == 1
