"""End to end: `cvfit run` with model = "stepwise" on simulated voltammograms.

Truth: ML, ML2, ML3 of the oxidised form (log β = 2.0, 3.7, 4.9), reduced form not
complexed (DeFord & Hume, J. Am. Chem. Soc. 73 (1951) 5321). The files are simulated at
the free-ligand concentration; the manifest lists the analytical ligand concentration
that mass balance and protonation imply, so the pipeline must undo both.
"""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema
import numpy as np
import pytest
from seriesfactory import write_manifest

from cvfit._sim_series import simulate_series
from cvfit.cli import main
from cvfit.speciation import ligand_fraction_unprotonated, mean_ligand_number

TRUTH = (2.0, 3.7, 4.9)
METAL_M = 1.0e-3
PKA = (9.5,)
PH = 8.5
SCHEMAS = Path(__file__).resolve().parents[1] / "schemas"


@pytest.fixture(scope="module")
def stepwise_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("stepwise")
    free = np.array([0.0, *np.logspace(-3.3, -0.3, 11)])
    simulate_series(
        folder,
        ligand_M=free,
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        noise_fraction=0.002,
        seed=5,
        start_V=0.45,
        switch_V=-0.55,
    )
    aL = float(ligand_fraction_unprotonated(PH, PKA))
    total = free / aL + METAL_M * mean_ligand_number(free, TRUTH) * (free > 0)
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": float(t), "scan_rate_V_s": 0.1}
        for k, t in enumerate(total)
    ]
    series = {
        "electrons": 1,
        "title": "stepwise",
        "metal_total_M": METAL_M,
        "ligand_pKa": list(PKA),
        "pH": PH,
        "ionic_strength_M": 0.1,
        "metal_charge": 2,
        "ligand_charge": 0,
    }
    manifest = write_manifest(
        folder / "stepwise.toml",
        entries,
        series=series,
        fit={"model": "stepwise", "max_complexes": 4},
    )
    out = folder / "out"
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 0
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    return data, out, free, aL


def test_stepwise_run_recovers_absolute_constants(stepwise_run):
    data, _, free, _ = stepwise_run
    fit = data["fit"]
    assert fit["model"] == "stepwise" and fit["n_complexes"] == 3
    got = [b["value"] for b in fit["log10_beta"]]
    assert np.all(np.abs(np.array(got) - TRUTH) < 0.05), got
    assert all(b["determined"] for b in fit["log10_beta"])
    # Free ligand per file is the corrected value (mass balance and protonation undone).
    files = [v for v in data["voltammograms"] if v["used_in_fit"]]
    np.testing.assert_allclose([v["free_ligand_M"] for v in files], free[1:], rtol=0.03)
    assert fit["free_ligand_iterations"] > 1
    cond = fit["conditional"][0]
    assert cond["pH"] == PH and cond["log10_alpha_L"] < -0.9
    assert fit["thermodynamic_log10_beta"] is not None


def test_stepwise_results_follow_the_schema_and_figures_exist(stepwise_run):
    data, out, _, _ = stepwise_run
    schema = json.loads((SCHEMAS / "results.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(schema).validate(data)
    for name in ("leden_functions.png", "species_distribution.png"):
        assert (out / name).stat().st_size > 1000


def test_low_ligand_excess_is_flagged_as_corrected(stepwise_run):
    data, _, _, _ = stepwise_run
    low = [
        fl for v in data["voltammograms"] for fl in v["flags"] if fl["code"] == "LOW_LIGAND_EXCESS"
    ]
    assert low and all("corrected" in fl["message"] for fl in low)


def test_pKa_without_pH_is_an_input_error(tmp_path, capsys):
    simulate_series(
        tmp_path,
        ligand_M=[0.0, 0.01, 0.1, 0.3],
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        seed=1,
        start_V=0.45,
        switch_V=-0.55,
    )
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": c} for k, c in enumerate([0, 0.01, 0.1, 0.3])
    ]
    manifest = write_manifest(
        tmp_path / "m.toml",
        entries,
        series={"electrons": 1, "ligand_pKa": [9.0]},
        fit={"model": "stepwise"},
    )
    assert main(["run", str(manifest), "--out", str(tmp_path / "o"), "--quiet"]) == 2
    assert "pH" in capsys.readouterr().err


def test_fixed_constants_of_both_states_are_refused(tmp_path, capsys):
    simulate_series(
        tmp_path,
        ligand_M=[0.0, 0.01, 0.1, 0.3],
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        seed=1,
        start_V=0.45,
        switch_V=-0.55,
    )
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": c} for k, c in enumerate([0, 0.01, 0.1, 0.3])
    ]
    fit = {"model": "stepwise", "fixed_log10_beta_ox": [3.0], "fixed_log10_beta_red": [1.0]}
    manifest = write_manifest(tmp_path / "m.toml", entries, series={"electrons": 1}, fit=fit)
    assert main(["run", str(manifest), "--out", str(tmp_path / "o"), "--quiet"]) == 2
    assert "fixed_log10_beta" in capsys.readouterr().err


def test_bound_ligand_number_leaving_no_free_ligand_is_an_input_error(tmp_path, capsys):
    simulate_series(
        tmp_path,
        ligand_M=[0.0, 0.01, 0.1, 0.3],
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        seed=1,
        start_V=0.45,
        switch_V=-0.55,
    )
    levels = [0, 0.001, 0.1, 0.3]
    entries = [{"file": f"titr_{k:02d}.csv", "ligand_M": c} for k, c in enumerate(levels)]
    series = {"electrons": 1, "metal_total_M": 1e-3, "bound_ligand_number": 2}
    manifest = write_manifest(
        tmp_path / "m.toml", entries, series=series, fit={"model": "stepwise"}
    )
    assert main(["run", str(manifest), "--out", str(tmp_path / "o"), "--quiet"]) == 2
    assert "bound_ligand_number" in capsys.readouterr().err


def test_null_stepwise_record_follows_the_schema():
    from cvfit._stepwise_result import null_stepwise_dict
    from cvfit.flags import Flag

    schema = json.loads((SCHEMAS / "results.schema.json").read_text(encoding="utf-8"))
    sub = {"$defs": schema["$defs"], "$ref": "#/$defs/stepwise_fit"}
    record = null_stepwise_dict(2, [Flag("TOO_FEW_POINTS", "two points", "error")])
    jsonschema.Draft202012Validator(sub).validate(record)
