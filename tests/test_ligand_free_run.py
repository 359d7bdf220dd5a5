"""A run without ligand is a valid run: the couple characterised, no constants, no error.

A manifest whose files are all ligand-free (one solution at several scan rates, and the
cycles of one multi-cycle record listed one by one) gives per-file E½, ΔEp, ipa/ipc and the
scan-rate study, exit status 0. The truth: a reversible couple simulated at E½ = 0.100 V,
Ep − E½ = −1.109 RT/nF for the forward peak (Nicholson & Shain, Anal. Chem. 36 (1964) 706).
"""

from __future__ import annotations

import json

import pytest
from seriesfactory import write_manifest, write_plain_csv

from cvfit.cli import main
from cvfit.simulate.voltammogram import simulate_cv

E_HALF_V = 0.100
RATES = (0.02, 0.05, 0.1, 0.2, 0.5)


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("free")
    entries = []
    for k, v in enumerate(RATES):
        rec = simulate_cv(
            E_half_V=E_HALF_V, start_V=0.4, switch_V=-0.25, scan_rate_V_s=v, step_V=0.001,
            noise_fraction=0.003, seed=40 + k, double_layer_F=2e-6,
        )  # fmt: skip
        write_plain_csv(folder / f"v{k}.csv", rec)
        entries.append({"file": f"v{k}.csv", "ligand_M": 0.0, "scan_rate_V_s": v})
    multi = simulate_cv(
        E_half_V=E_HALF_V, start_V=0.4, switch_V=-0.25, scan_rate_V_s=0.1, step_V=0.001,
        cycles=3, noise_fraction=0.003, seed=60,
    )  # fmt: skip
    write_plain_csv(folder / "multi.csv", multi)
    entries += [{"file": "multi.csv", "ligand_M": 0.0, "cycle": c} for c in (1, 2, 3)]
    manifest = write_manifest(folder / "series.toml", entries, series={"electrons": 1})
    out = folder / "out"
    code = main(["run", str(manifest), "--out", str(out), "--quiet"])
    return code, json.loads((out / "results.json").read_text(encoding="utf-8"))


def test_a_ligand_free_run_exits_0_with_no_constants_and_says_why(run):
    code, data = run
    assert code == 0
    assert data["fit"]["log10_beta_ratio"]["value"] is None
    assert "NO_TITRATION" in [f["code"] for f in data["flags"]]


def test_every_file_gets_its_E_half_and_diagnostics(run):
    _, data = run
    files = data["voltammograms"]
    assert len(files) == len(RATES) + 3
    for f in files:
        assert f["E_half_V"] == pytest.approx(E_HALF_V, abs=1.5e-3)
        assert f["delta_Ep_V"] is not None and f["current_ratio"] is not None
    # the cycles of one record are told apart by name
    names = [f["file"] for f in files[-3:]]
    assert names == ["multi.csv [cycle 1]", "multi.csv [cycle 2]", "multi.csv [cycle 3]"]
    # E½(s) of the couple from the accepted files
    assert data["reference"]["E_half_V"] == pytest.approx(E_HALF_V, abs=1e-3)


def test_the_scan_rate_study_is_made(run):
    _, data = run
    studies = data["scan_rate_studies"]
    assert len(studies) == 1
    assert sorted(studies[0]["scan_rates_V_s"]) == pytest.approx(sorted([*RATES, 0.1, 0.1, 0.1]))


def test_the_same_cycle_listed_twice_is_still_an_error(tmp_path, capsys):
    rec = simulate_cv(E_half_V=0.1, start_V=0.4, switch_V=-0.25, scan_rate_V_s=0.1)
    write_plain_csv(tmp_path / "a.csv", rec)
    manifest = write_manifest(
        tmp_path / "s.toml",
        [{"file": "a.csv", "ligand_M": 0.0}, {"file": "a.csv", "ligand_M": 0.0}],
    )
    assert main(["run", str(manifest), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "listed twice with the same cycle" in err
