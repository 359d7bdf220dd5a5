"""A titration recorded with one fixed switching potential (common bench practice).

E½ moves with the ligand while the switch stays, so the last files switch only ~100 mV
beyond E½, where the reverse peak and the midpoint (Epa + Epc)/2 are pulled furthest out by
the switch. The switching correction of E½ (Nicholson & Shain, Anal. Chem. 36 (1964) 706;
Bard & Faulkner, Electrochemical Methods 2nd ed. (2001), Table 6.2.1, from memory: n·ΔEp =
60.5, 59.2, 58.3, 57.8, 57.0 mV for a switch 100, 150, 200, 300 mV and ∞ beyond E½) must keep
every E½ on the truth and the Lingane slope unbiased.

Truth: the simulated E½ from cvfit.chemistry.complexation (Lingane, Chem. Rev. 29 (1941) 1:
slope −(p − q)·ln10·RT/nF per decade, here p − q = 1). With the table read from E½ instead
(the switch 71.5 mV beyond E½ taken as its first entry) the last file's E½ was 0.32 mV off
and the slope −59.02 mV/decade, its 95 % interval [−59.08, −58.95] excluding −59.16.
"""

from __future__ import annotations

import numpy as np
import pytest

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.pipeline.series import analyse_manifest_file
from cvfit.simulate.titration_series import simulate_series

LIGAND_M = [0.0, 1e-3, 2e-3, 5e-3, 1e-2, 3e-2, 1e-1]
LOG_BETA_OX = [6.0]  # β[L] >= 1e3: Lingane's line is straight within 0.03 mV


@pytest.fixture(scope="module")
def series(tmp_path_factory):
    truth = complexed_half_wave_V(
        0.0, ligand_M=np.array(LIGAND_M), log10_beta_ox=LOG_BETA_OX, log10_beta_red=[],
        temperature_K=298.15,
    )  # fmt: skip
    switch_V = float(truth[-1]) - 0.101  # fixed for the series: 101 mV beyond the last E½
    manifest = simulate_series(
        tmp_path_factory.mktemp("fixed_switch") / "s", ligand_M=LIGAND_M, E_half_free_V=0.0,
        log10_beta_ox=LOG_BETA_OX, log10_beta_red=[], start_V=0.25, switch_V=switch_V,
        step_V=0.001,
    )  # fmt: skip
    return truth, switch_V, analyse_manifest_file(manifest)


def test_every_E_half_within_0p3_mV_of_truth(series):
    truth, switch_V, result = series
    offsets = np.abs(truth - switch_V)
    assert offsets.min() == pytest.approx(0.101) and offsets.max() > 0.39
    for f, E_true in zip(result.files, truth, strict=True):
        assert f.measurement.screen.reversible is True
        assert abs(f.E_half_V - E_true) < 0.3e-3, (f.E_half_V - E_true) * 1e3


def test_lingane_slope_unbiased(series):
    _, _, result = series
    fit = result.fit
    nernst = -fit.nernst_slope_V_per_decade  # p − q = 1
    lo, hi = fit.slope_V_per_decade.ci95
    assert lo < nernst < hi
    assert fit.slope_V_per_decade.value == pytest.approx(nernst, abs=0.1e-3)
    assert fit.delta_ligands_integer == 1
