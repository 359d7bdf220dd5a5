"""A file in the polarographic convention (cathodic current positive), undeclared: the
missing forward peak gets a hint when the mirrored trace has a clean peak pair."""

from __future__ import annotations

from dataclasses import replace

from seriesfactory import write_manifest

from cvfit.io import load_manifest
from cvfit.pipeline.per_file import analyse_file
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
    msgs = [f.message for f in flipped_result.flags if f.code == "NO_FORWARD_PEAK"]
    assert msgs and "polarographic convention" in msgs[0] and "anodic_current" in msgs[0]
    plain = analyse_file(manifest.voltammograms[1], manifest)
    assert plain.E_half_V is not None and abs(plain.E_half_V) < 2e-3
    assert not any("polarographic" in f.message for f in plain.flags)
