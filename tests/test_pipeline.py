"""End to end: simulated titration series on disk → manifest → results.

Truth (tests/seriesfactory.py): p − q = 1 and log10(β_ox/β_red) = 6.0 in Lingane's
relation E½(c) − E½(s) = −(RT/nF) ln(β_ox/β_red) − (p − q)(RT/nF) ln[L]
(Lingane, Chem. Rev. 29 (1941) 1). Tolerances from the issue: 0.03 in log10, 0.05 in p − q.
"""

from __future__ import annotations

import hashlib
import json
import math
import tomllib
from pathlib import Path

import jsonschema
import pytest
from dialects import DIALECT_IMPORT, DIALECTS, write_dialect
from scipy import constants as sc
from seriesfactory import (
    LIGAND_M,
    TRUE_DELTA_LIGANDS,
    TRUE_LOG10_RATIO,
    simulate_point,
    write_manifest,
    write_plain_csv,
)

from cvfit.cli import main
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import results_to_json

SCHEMAS = Path(__file__).resolve().parents[1] / "schemas"


def validate(instance: dict, schema_name: str) -> None:
    schema = json.loads((SCHEMAS / schema_name).read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(schema).validate(instance)


def write_series(
    folder: Path,
    *,
    dialects=("plain_csv",),
    electrons=1,
    seed=0,
    slow_at=(),
    fit=None,
    series_extra=None,
) -> Path:
    entries = []
    for k, ligand in enumerate(LIGAND_M):
        dialect = dialects[k % len(dialects)]
        v = simulate_point(
            ligand,
            seed=seed + k,
            electrons=electrons,
            k0_cm_s=0.002 if ligand in slow_at else None,
        )
        name = f"{dialect}_{k:02d}.csv"
        write_dialect(
            folder / name,
            potential_V=v.potential_V,
            current_A=v.current_A,
            time_s=v.time_s,
            dialect=dialect,
        )
        entry = {"file": name, "ligand_M": ligand, "scan_rate_V_s": 0.1}
        entry.update(DIALECT_IMPORT[dialect])
        entries.append(entry)
    series = {"electrons": electrons, "title": f"simulated n={electrons}"}
    series.update(series_extra or {})
    return write_manifest(folder / "series.toml", entries, series=series, fit=fit)


@pytest.fixture(scope="module")
def dialect_series(tmp_path_factory):
    folder = tmp_path_factory.mktemp("dialects")
    manifest = write_series(folder, dialects=DIALECTS, seed=11)
    return manifest, analyse_series(load_manifest(manifest))


def test_round_trip_through_many_dialects(dialect_series):
    manifest, result = dialect_series
    assert result.nernstian
    fit = result.fit
    assert fit is not None and fit.n_points == len(LIGAND_M) - 1
    assert abs(fit.log10_beta_ratio.value - TRUE_LOG10_RATIO) < 0.03
    assert abs(fit.delta_ligands.value - TRUE_DELTA_LIGANDS) < 0.05
    assert fit.delta_ligands_integer == TRUE_DELTA_LIGANDS
    assert abs(fit.log10_beta_ratio_at_integer.value - TRUE_LOG10_RATIO) < 0.03


def test_series_conditions_and_criteria_are_records(dialect_series):
    """series and criteria are typed records; their JSON form is the [series] table as
    given (plus T in K, the model and the [titration] table) and the three screen margins."""
    from cvfit.pipeline.results import SeriesConditions
    from cvfit.reversibility_criteria import ReversibilityCriteria
    from cvfit.titration.lingane import LinganeFit

    manifest, result = dialect_series
    loaded = load_manifest(manifest)
    assert isinstance(result.series, SeriesConditions)
    assert result.series.settings == loaded.series and result.series.model == "lingane"
    assert isinstance(result.criteria, ReversibilityCriteria)
    assert result.criteria == loaded.reversibility
    assert isinstance(result.fit, LinganeFit)
    data = result.to_dict()
    assert data["series"]["title"] == result.series.title == "simulated n=1"
    assert data["series"]["temperature_K"] == pytest.approx(298.15)
    assert list(data["series"])[-3:] == ["temperature_K", "model", "titration"]
    assert data["series"]["titration"] is None  # no [titration] table: not by additions
    assert data["series"]["technique"] == "cv"  # [series] technique, by default
    assert data["reversibility_criteria"] == {
        "n_delta_Ep_margin_V": 0.010,
        "n_peak_width_margin_V": 0.010,
        "current_ratio_margin": 0.15,
    }
    with pytest.raises(ValueError, match="model"):
        SeriesConditions(loaded.series, "quadratic")


def test_results_json_and_manifest_follow_their_schemas(dialect_series):
    manifest, result = dialect_series
    data = json.loads(results_to_json(result))
    validate(data, "results.schema.json")
    with open(manifest, "rb") as fh:
        validate(tomllib.load(fh), "series.schema.json")
    # contract keys of results.json (schemas/results.schema.json, docs/design.md)
    v0 = data["voltammograms"][1]
    for key in (
        "file",
        "ligand_M",
        "free_ligand_M",
        "Epc_V",
        "Epa_V",
        "E_half_V",
        "E_half_stderr_V",
        "delta_Ep_V",
        "ipc_A",
        "ipa_A",
        "current_ratio",
        "reversible",
        "used_in_fit",
        "flags",
    ):
        assert key in v0
    for key in (
        "slope_V_per_decade",
        "intercept_V",
        "delta_ligands",
        "log10_beta_ratio",
        "log10_beta_ratio_at_integer",
    ):
        q = data["fit"][key]
        assert q["ci95"][0] <= q["value"] <= q["ci95"][1] and q["stderr"] > 0


def test_two_electron_series(tmp_path):
    manifest = write_series(
        tmp_path, electrons=2, seed=40, dialects=("tab_mV_uA", "semicolon_decimal_comma")
    )
    result = analyse_series(load_manifest(manifest))
    # The truth computed here, not by cvfit: E½ = E½(s) − (RT/2F)·ln[(1 + β2,ox[L]²)/(1 +
    # β1,red[L])] (DeFord & Hume, J. Am. Chem. Soc. 73 (1951) 5321), log β2,ox = 11,
    # log β1,red = 5, E½(s) = 0; RT/F from CODATA (scipy). Every E½ within 1 mV (0.5 %
    # noise, n = 2: SD ~0.12 mV; measured at most 0.38 mV), and the Lingane slope within its
    # interval of −(p − q)·ln10·RT/(nF) = −29.58 mV/decade (Lingane, Chem. Rev. 29 (1941) 1).
    rt_2f = sc.R * 298.15 / (2 * sc.physical_constants["Faraday constant"][0])
    for f in result.files:
        L = f.ligand_M
        truth = -rt_2f * math.log((1 + 1e11 * L**2) / (1 + 1e5 * L))
        assert abs(f.E_half_V - truth) < 1e-3, (f.file, f.E_half_V - truth)
    lo, hi = result.fit.slope_V_per_decade.ci95
    assert lo < -math.log(10.0) * rt_2f < hi
    assert result.fit.delta_ligands.ci95[0] < 1 < result.fit.delta_ligands.ci95[1]
    lo, hi = result.fit.log10_beta_ratio.ci95
    assert lo < 11.0 - 5.0 < hi


def test_slow_high_ligand_file_is_flagged_and_left_out(tmp_path):
    # peaks only: the behaviour without the curve fit (the default "auto" recovers the file,
    # tests/test_curve_series.py)
    manifest = write_series(tmp_path, seed=70, slow_at=(0.3,), fit={"half_wave_source": "peaks"})
    result = analyse_series(load_manifest(manifest))
    last = result.files[-1]
    assert last.reversible is False and not last.used_in_fit
    codes = {f.code for f in last.flags}
    assert "DELTA_EP_TOO_LARGE" in codes and "EXCLUDED_NON_NERNSTIAN" in codes
    assert all(f.reversible for f in result.files[:-1])
    assert not result.nernstian
    assert "FILES_EXCLUDED" in {f.code for f in result.flags}
    assert result.fit.n_points == len(LIGAND_M) - 2
    assert abs(result.fit.log10_beta_ratio.value - TRUE_LOG10_RATIO) < 0.03


def test_including_flagged_data_says_so(tmp_path):
    manifest = write_series(
        tmp_path,
        seed=70,
        slow_at=(0.3,),
        fit={"exclude_non_nernstian": False, "half_wave_source": "peaks"},
    )
    result = analyse_series(load_manifest(manifest))
    assert result.files[-1].used_in_fit
    assert "FIT_USES_FLAGGED_DATA" in {f.code for f in result.flags}


def test_too_few_usable_points_gives_null_constants_and_exit_0(tmp_path, capsys):
    manifest = write_series(
        tmp_path, seed=90, slow_at=(0.02, 0.04, 0.08, 0.15), fit={"half_wave_source": "peaks"}
    )
    out = tmp_path / "out"
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 0
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    validate(data, "results.schema.json")
    assert data["fit"]["log10_beta_ratio"]["value"] is None
    assert data["fit"]["delta_ligands_integer"] is None
    assert "TOO_FEW_POINTS" in {f["code"] for f in data["flags"]}


def _digests(folder: Path) -> dict[str, str]:
    return {
        p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in folder.iterdir() if p.is_file()
    }


def test_run_into_input_folder_is_refused_and_runs_are_deterministic(tmp_path, capsys):
    folder = tmp_path / "data"
    folder.mkdir()
    entries = []
    for k, ligand in enumerate(LIGAND_M[:5]):
        write_plain_csv(folder / f"f{k}.csv", simulate_point(ligand, seed=5 + k))
        entries.append({"file": f"f{k}.csv", "ligand_M": ligand})
    manifest = write_manifest(folder / "series.toml", entries)
    before = _digests(folder)
    # an output set replaces its folder whole: a folder of the user's files is refused
    assert main(["run", str(manifest), "--out", str(folder), "--quiet"]) == 2
    assert "would overwrite the input file" in capsys.readouterr().err
    assert _digests(folder) == before and sorted(p.name for p in folder.iterdir()) == sorted(
        before
    )
    out = tmp_path / "out"
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 0
    first = json.loads((out / "results.json").read_text(encoding="utf-8"))
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 0
    second = json.loads((out / "results.json").read_text(encoding="utf-8"))
    assert first == second
    assert _digests(folder) == before


def test_output_never_replaces_an_input(tmp_path, capsys):
    folder = tmp_path / "data"
    folder.mkdir()
    entries = []
    for k, ligand in enumerate(LIGAND_M[:4]):
        name = "results.json" if k == 1 else f"f{k}.csv"
        write_plain_csv(folder / name, simulate_point(ligand, seed=k))
        entries.append({"file": name, "ligand_M": ligand})
    manifest = write_manifest(folder / "series.toml", entries)
    before = _digests(folder)
    assert main(["run", str(manifest), "--out", str(folder)]) == 2
    assert "would overwrite the input file" in capsys.readouterr().err
    assert _digests(folder) == before


def test_demo_runs_from_package_data(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path / "demo")]) == 0
    text = capsys.readouterr().out
    assert "log10(β_ox/β_red)" in text and "±" in text
    data = json.loads((tmp_path / "demo" / "results" / "results.json").read_text("utf-8"))
    validate(data, "results.schema.json")
    # invented demo scenario (example_runs/make_demo.py): log10 ratio 5.4, p - q = 1, and
    # the slow highest-ligand file is flagged
    assert abs(data["fit"]["log10_beta_ratio_at_integer"]["value"] - 5.4) < 0.05
    assert data["fit"]["delta_ligands_integer"] == 1
    assert data["voltammograms"][-1]["reversible"] is False
    for name in ("voltammograms.csv", "voltammograms.png", "half_wave_shift.png"):
        assert (tmp_path / "demo" / "results" / name).stat().st_size > 0


def test_later_cycle_takes_its_current_ratio_from_cycle_1():
    """Nicholson's ratio (Anal. Chem. 38 (1966) 1406, from memory) needs a sweep that
    starts at rest; on the default last cycle of a 3-cycle record it comes from cycle 1."""
    from test_coverage_voltammograms import in_memory_manifest

    manifest = in_memory_manifest()
    records = {
        e.name: simulate_point(e.ligand_M, seed=300 + k, cycles=3)
        for k, e in enumerate(manifest.voltammograms)
    }
    result = analyse_series(manifest, records=records)
    for f in result.files:
        assert f.measurement.peaks.cycle_number == 3
        assert "CURRENT_RATIO_FROM_FIRST_CYCLE" in {g.code for g in f.flags}
        assert (
            abs(f.measurement.peaks.current_ratio - 1.0) < 0.05
        )  # ratio drifts up at far switches
        assert f.reversible is True
    assert abs(result.fit.log10_beta_ratio.value - TRUE_LOG10_RATIO) < 0.03


def test_k0_of_a_slow_file_uses_D_of_the_reversible_files(tmp_path):
    """k0 = ψ (π D n F v / RT)^½ (Nicholson, Anal. Chem. 37 (1965) 1351, from memory) with
    D from the Randles–Ševčík currents of the Nernstian files, not from the slow peak."""
    manifest = write_series(
        tmp_path,
        seed=70,
        slow_at=(0.3,),
        series_extra={"electrode_area_cm2": 0.0707, "analyte_M": 1e-3},
    )
    result = analyse_series(load_manifest(manifest))
    slow = result.files[-1]
    assert "D_FROM_REVERSIBLE_FILES" in {f.code for f in slow.flags}
    k0 = slow.measurement.kinetics.k0_cm_s
    assert abs(k0.value / 0.002 - 1) < 0.15
    assert k0.ci95[0] <= 0.002 <= k0.ci95[1]
