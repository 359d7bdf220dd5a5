"""A file in the polarographic convention (cathodic current positive), undeclared: the
missing forward peak gets a hint when the mirrored trace has a clean peak pair."""

from __future__ import annotations

import json
from dataclasses import replace
from pathlib import Path

from seriesfactory import (
    LIGAND_M,
    TRUE_DELTA_LIGANDS,
    TRUE_LOG10_RATIO,
    simulate_point,
    write_manifest,
    write_plain_csv,
)

from cvfit.cli.batch import run_series
from cvfit.io import load_manifest
from cvfit.pipeline.per_file import analyse_file
from cvfit.report.headline import headline_lines
from cvfit.simulate.titration_series import write_voltammogram_csv
from cvfit.simulate.voltammogram import simulate_cv


def test_mirrored_file_gets_the_polarographic_hint(tmp_path):
    vg = simulate_cv(E_half_V=0.0, start_V=0.3, switch_V=-0.3, noise_fraction=0.002, seed=2)
    flipped = replace(vg, current_A=-vg.current_A)
    write_voltammogram_csv(flipped, tmp_path / "flipped.csv")
    write_voltammogram_csv(vg, tmp_path / "plain.csv")
    entries = [
        {"file": "flipped.csv", "ligand_M": 0.0, "scan_rate_V_s": 0.1},
        {"file": "plain.csv", "ligand_M": 0.0, "scan_rate_V_s": 0.1},
    ]
    manifest = load_manifest(write_manifest(tmp_path / "m.toml", entries))
    flipped_result = analyse_file(manifest.voltammograms[0], manifest)
    msgs = [f.message for f in flipped_result.flags if f.code == "CURRENT_SIGN_REVERSED"]
    assert msgs and "polarographic convention" in msgs[0] and "anodic_current" in msgs[0]
    plain = analyse_file(manifest.voltammograms[1], manifest)
    assert plain.E_half_V is not None and abs(plain.E_half_V) < 2e-3
    assert not any("polarographic" in f.message for f in plain.flags)


def _flipped_series(folder, anodic_current=None):
    entries = []
    for k, ligand in enumerate(LIGAND_M[:5]):
        v = simulate_point(ligand, seed=40 + k)
        write_plain_csv(folder / f"p{k}.csv", replace(v, current_A=-v.current_A))
        entries.append({"file": f"p{k}.csv", "ligand_M": ligand})
    options = {"anodic_current": anodic_current} if anodic_current else None
    return write_manifest(folder / "series.toml", entries, import_options=options)


def test_a_series_in_the_other_sign_convention_is_told_what_to_set(tmp_path):
    """Every file cathodic-positive and the manifest silent: the headline names the key
    that fixes it, instead of asking for E_half_free_V or claiming the ligand-free file
    gave E½(s); with the key set, the simulation's truth (seriesfactory: log10 ratio 6.0,
    p − q = 1) comes back."""
    manifest = _flipped_series(tmp_path)
    outcome = run_series(manifest, tmp_path / "out")
    data = json.loads((Path(outcome.out_dir) / "results.json").read_text(encoding="utf-8"))
    first, screen = headline_lines(data)[:2]
    assert 'anodic_current = "negative"' in first and "E_half_free_V" not in first
    assert "still gave" not in screen and 'anodic_current = "negative"' in screen
    assert all(
        "CURRENT_SIGN_REVERSED" in {f["code"] for f in v["flags"]} for v in data["voltammograms"]
    )

    (tmp_path / "fixed").mkdir()
    fixed = _flipped_series(tmp_path / "fixed", anodic_current="negative")
    data = json.loads(
        (Path(run_series(fixed, tmp_path / "out2").out_dir) / "results.json").read_text("utf-8")
    )
    ratio, dl = data["fit"]["log10_beta_ratio"], data["fit"]["delta_ligands"]
    assert ratio["ci95"][0] <= TRUE_LOG10_RATIO <= ratio["ci95"][1]
    assert dl["ci95"][0] <= TRUE_DELTA_LIGANDS <= dl["ci95"][1]
    assert not any(
        f["code"] == "CURRENT_SIGN_REVERSED" for v in data["voltammograms"] for f in v["flags"]
    )
