"""Noisy titration series recorded by DPV, SWV and as steady-state waves (0.2–1 % noise and
a sloping background): the constants lie inside their 95 % intervals, and a stepwise DPV
series recovers its β_j. The coverage over many series is measured by
scripts/pulse_coverage.py."""

from __future__ import annotations

import json

import numpy as np
import pytest
from pulse_coverage import LOG_BETA, manifest, noisy_series

from cvfit.cli import main
from cvfit.pipeline.series import analyse_series
from cvfit.simulate.program_series import simulate_technique_series


@pytest.mark.parametrize("technique", ["dpv", "swv", "wave"])
def test_noisy_series_hold_the_constants_in_their_intervals(technique):
    rng = np.random.default_rng(11)
    m = manifest(technique)
    misses = 0
    for _ in range(3):
        result = analyse_series(m, records=noisy_series(technique, rng))
        assert all(f.reversible is True for f in result.files)
        fit = result.fit.to_dict()
        ratio, delta = fit["log10_beta_ratio"], fit["delta_ligands"]
        # the simulated truth (log10(β_ox/β_red) = 5, p − q = 1) inside the 95 % intervals:
        # of 6 intervals at most one misses (2 or more: 3 % at a true coverage of 95 %,
        # 58 % at 70 %), and the intervals no wider than the noise calls for
        misses += not ratio["ci95"][0] <= LOG_BETA <= ratio["ci95"][1]
        misses += not delta["ci95"][0] <= 1.0 <= delta["ci95"][1]
        assert ratio["value"] == pytest.approx(LOG_BETA, abs=0.05)
        assert ratio["ci95"][1] - ratio["ci95"][0] < 0.2 and delta["stderr"] < 0.02
    assert misses <= 1


#: An invented couple whose oxidised form binds two ligands (overall log β_1, log β_2).
STEPWISE = (2.5, 4.4)


def test_stepwise_series_by_dpv_recovers_its_beta(tmp_path, capsys):
    free = [0.0, *np.logspace(-3.0, -0.3, 7)]
    path = simulate_technique_series(
        tmp_path / "s", technique="dpv", ligand_M=free, E_half_free_V=0.0,
        log10_beta_ox=STEPWISE, log10_beta_red=(), window_V=(0.2, -0.5),
        program={"step_V": 0.008},
        noise_fraction=0.005, seed=4, background_slope_A_per_V=2e-7,
    )  # fmt: skip
    with path.open("a", encoding="utf-8") as fh:
        fh.write('\n[fit]\nmodel = "stepwise"\nmax_complexes = 3\n')
    assert main(["run", str(path), "--out", str(tmp_path / "o"), "--quiet"]) == 0
    capsys.readouterr()
    fit = json.loads((tmp_path / "o" / "results.json").read_text(encoding="utf-8"))["fit"]
    assert fit["model"] == "stepwise" and fit["n_complexes"] == 2
    for got, truth in zip(fit["log10_beta"], STEPWISE, strict=True):
        # DeFord & Hume, J. Am. Chem. Soc. 1951, 73, 5321: the simulated constants
        assert got["determined"] and got["ci95"][0] <= truth <= got["ci95"][1], got
        assert got["value"] == pytest.approx(truth, abs=0.05)
