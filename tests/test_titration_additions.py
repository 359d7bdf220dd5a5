"""Titration by additions: the dilution rule, the manifest's rules, the per-solution metal
in the models and the outputs, the simulator, and the acceptance series."""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import jsonschema
import pytest
from hypothesis import given
from hypothesis import strategies as st

from cvfit.chemistry.dilution import diluted
from cvfit.cli import main
from cvfit.errors import InputError
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series

ROOT = Path(__file__).resolve().parents[1]

# --- the dilution rule ------------------------------------------------------------------


def test_dilution_against_a_hand_computation():
    # 10 mL of 1 mM metal (no ligand), 2.5 mL of 0.100 M ligand stock added:
    # V = 12.5 mL, c_L = 0.100 × 2.5 / 12.5 = 0.0200 M, c_M = 1e-3 × 10 / 12.5 = 8.0e-4 M
    d = diluted(start_volume_mL=10.0, added_mL=2.5, metal_M=1e-3, ligand_stock_M=0.100)
    assert d.volume_mL == pytest.approx(12.5, rel=1e-15)
    assert d.ligand_M == pytest.approx(0.0200, rel=1e-14)
    assert d.metal_M == pytest.approx(8.0e-4, rel=1e-14)
    # with 1 mM ligand in the cell and 0.5 mM metal in the stock:
    # c_L = (1e-3·10 + 0.1·2.5)/12.5 = 0.260/12.5 = 0.0208 M
    # c_M = (1e-3·10 + 5e-4·2.5)/12.5 = 0.01125/12.5 = 9.0e-4 M
    d = diluted(
        start_volume_mL=10.0, added_mL=2.5, metal_M=1e-3, ligand_M=1e-3,
        ligand_stock_M=0.100, metal_stock_M=5e-4,
    )  # fmt: skip
    assert d.ligand_M == pytest.approx(0.0208, rel=1e-14)
    assert d.metal_M == pytest.approx(9.0e-4, rel=1e-14)


# 0 or a concentration a solution may have (subnormal floats underflow in any product)
_conc = st.one_of(st.just(0.0), st.floats(min_value=1e-12, max_value=2.0))


@given(
    v0=st.floats(min_value=0.01, max_value=1000.0),
    add=st.floats(min_value=0.0, max_value=1000.0),
    cm0=_conc, cl0=_conc, cls=_conc, cms=_conc,
)  # fmt: skip
def test_dilution_conserves_the_amounts_and_mixes_between_the_two(v0, add, cm0, cl0, cls, cms):
    d = diluted(
        start_volume_mL=v0, added_mL=add, metal_M=cm0, ligand_M=cl0,
        ligand_stock_M=cls, metal_stock_M=cms,
    )  # fmt: skip
    # amount in the cell = amount at the start + amount added (c·V conserved)
    assert d.volume_mL == pytest.approx(v0 + add)
    assert d.ligand_M * d.volume_mL == pytest.approx(cl0 * v0 + cls * add, rel=1e-12, abs=1e-300)
    assert d.metal_M * d.volume_mL == pytest.approx(cm0 * v0 + cms * add, rel=1e-12, abs=1e-300)
    # a mixture lies between its two parts
    for c, a, b in ((d.ligand_M, cl0, cls), (d.metal_M, cm0, cms)):
        assert min(a, b) * (1 - 1e-12) <= c <= max(a, b) * (1 + 1e-12)


def test_dilution_refuses_a_negative_volume():
    with pytest.raises(ValueError, match="added_mL"):
        diluted(start_volume_mL=10.0, added_mL=-1.0, metal_M=1e-3, ligand_stock_M=0.1)


# --- the manifest -----------------------------------------------------------------------

_HEAD = """[series]
electrons = 1
{series}
[titration]
start_volume_mL = 10.0
metal_M = 1e-3
ligand_stock_M = 0.1
{titration}
"""


def _manifest(tmp_path: Path, entries: list[str], *, series: str = "", titration: str = "",
              head: str | None = None) -> Path:  # fmt: skip
    for k in range(len(entries)):
        (tmp_path / f"f{k}.csv").write_text("time_s,potential_V,current_A\n0,0,0\n")
    text = (head if head is not None else _HEAD).format(series=series, titration=titration)
    for k, own in enumerate(entries):
        text += f'\n[[voltammogram]]\nfile = "f{k}.csv"\n{own}\n'
    path = tmp_path / "series.toml"
    path.write_text(text, encoding="utf-8")
    return path


def test_loader_computes_each_solution_from_the_additions(tmp_path):
    # listed in any order: a later file with less stock is no error
    m = load_manifest(_manifest(tmp_path, ["added_mL = 2.5", "added_mL = 0.0", "added_mL = 1.0"]))
    a, b, c = m.voltammograms
    assert (a.ligand_M, a.metal_M, a.volume_mL) == pytest.approx((0.02, 8e-4, 12.5))
    assert (b.ligand_M, b.metal_M, b.volume_mL) == pytest.approx((0.0, 1e-3, 10.0))
    # 1.0 mL: c_L = 0.1/11 = 9.0909e-3 M, c_M = 0.01/11 = 9.0909e-4 M
    assert (c.ligand_M, c.metal_M) == pytest.approx((0.1 / 11, 0.01 / 11))
    assert m.titration is not None and m.titration.start_volume_mL == 10.0


def test_a_file_own_metal_overrides_the_computed_one(tmp_path):
    m = load_manifest(_manifest(tmp_path, ["added_mL = 2.5\nmetal_M = 7.5e-4", "ligand_M = 0.0"]))
    assert m.voltammograms[0].metal_M == 7.5e-4
    assert m.voltammograms[0].ligand_M == pytest.approx(0.02)
    # a file giving ligand_M under [titration] keeps the cell's initial metal
    assert m.voltammograms[1].metal_M == 1e-3 and m.voltammograms[1].volume_mL is None


_NO_TITRATION = "[series]\nelectrons = 1\n{series}{titration}\n"


@pytest.mark.parametrize(
    ("entries", "kwargs", "key", "words"),
    [
        (["ligand_M = 0.01\nadded_mL = 1.0"], {}, "voltammogram[1].added_mL", "not both"),
        (["added_mL = 1.0"], {"head": _NO_TITRATION}, "voltammogram[1].added_mL",
         "needs a [titration] table"),
        (["added_mL = 1.0", "scan_rate_V_s = 0.1"], {}, "voltammogram[2].added_mL",
         "cumulative volume"),
        (["added_mL = -0.5"], {}, "voltammogram[1].added_mL", ">= 0"),
        (["added_mL = 1.0"], {"series": "metal_total_M = 1e-3"}, "series.metal_total_M",
         "remove one"),
        (["added_mL = 1.0"], {"series": "metal_total_M = 1e-3\nbound_ligand_number = 2"},
         "series.metal_total_M", "remove one"),
        (["ligand_M = 0.0\nmetal_M = 1e-3", "ligand_M = 0.01"], {"head": _NO_TITRATION},
         "voltammogram[2].metal_M", "every file"),
        (["added_mL = 1.0"], {"titration": "start_volume_mL = 0.0"}, "titration",
         "start_volume_mL"),
    ],
)  # fmt: skip
def test_manifest_rules_are_one_line_errors_naming_the_key(tmp_path, entries, kwargs, key, words):
    if "start_volume_mL = 0.0" in kwargs.get("titration", ""):
        kwargs = {"head": _HEAD.replace("start_volume_mL = 10.0", "start_volume_mL = 0.0")}
    with pytest.raises(InputError) as err:
        load_manifest(_manifest(tmp_path, entries, **kwargs))
    message = str(err.value)
    assert key in message and words in message and "\n" not in message
    assert message.startswith(str(tmp_path / "series.toml"))


def test_the_command_line_says_it_in_one_line_with_status_2(tmp_path, capsys):
    path = _manifest(tmp_path, ["ligand_M = 0.01\nadded_mL = 1.0"])
    assert main(["run", str(path), "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "added_mL" in err and "Traceback" not in err


def test_the_schema_says_the_same(tmp_path):
    import tomllib

    schema = json.loads((ROOT / "cvfit/schemas/series.schema.json").read_text(encoding="utf-8"))
    ok = _manifest(tmp_path, ["added_mL = 0.0", "added_mL = 1.0"]).read_text()
    jsonschema.validate(tomllib.loads(ok), schema)
    for bad in (
        _manifest(tmp_path, ["ligand_M = 0.01\nadded_mL = 1.0"]),
        _manifest(tmp_path, ["added_mL = 1.0"], head=_NO_TITRATION),
        _manifest(tmp_path, ["added_mL = 1.0"], series="metal_total_M = 1e-3"),
    ):
        with pytest.raises(jsonschema.ValidationError):
            jsonschema.validate(tomllib.loads(bad.read_text()), schema)


# --- the acceptance series --------------------------------------------------------------

#: The truth: one complex ML2 of the oxidised form (log10 β2 = 10; β1 negligible), the
#: reduced form not complexed, so log10(β_ox/β_red) = 10 and p − q = 2.
_TRUTH_LOG_BETA, _TRUTH_P = 10.0, 2.0
#: 10 mL of 1 mM metal; 0.100 M ligand stock added up to 5 mL: the metal falls by a third
#: (1 → 0.667 mM) and 40 % of the ligand is bound at the first addition (2·c_M/c_L).
_ADDED = "0,0.5,0.75,1,1.5,2,3,4,5"


@pytest.fixture(scope="module")
def acceptance(tmp_path_factory):
    out = tmp_path_factory.mktemp("additions")
    code = main([
        "simulate", "--series", "--e-half", "-0.2", "--log-beta-ox=-5,10",
        "--added-mL", _ADDED, "--start-volume-mL", "10", "--metal-M", "1e-3",
        "--ligand-stock-M", "0.1", "--noise", "0.003", "--seed", "5", "--out", str(out),
    ])  # fmt: skip
    assert code == 0
    text = (out / "series.toml").read_text(encoding="utf-8")
    (out / "series.toml").write_text(
        text.replace("electrons = 1\n", "electrons = 1\nelectrode_area_cm2 = 0.0707\n", 1)
    )
    assert main(["run", str(out / "series.toml"), "--out", str(out / "run"), "--quiet"]) == 0
    return out


def _constants(fit: dict) -> tuple[dict, dict]:
    return fit["log10_beta_ratio"], fit["delta_ligands"]


def test_simulated_manifest_states_the_additions(acceptance):
    m = load_manifest(acceptance / "series.toml")
    assert m.titration is not None and len(m.voltammograms) == 9
    last = m.voltammograms[-1]
    # 5 mL into 10 mL: c_M = 1e-3·10/15, c_L = 0.1·5/15
    assert last.metal_M == pytest.approx(1e-3 * 10 / 15) and last.volume_mL == 15.0
    assert last.ligand_M == pytest.approx(0.5 / 15)
    assert 1 - last.metal_M / 1e-3 >= 0.2  # diluted by at least 20 %


def test_constants_of_a_titration_by_additions_hold_the_truth(acceptance):
    data = json.loads((acceptance / "run" / "results.json").read_text(encoding="utf-8"))
    beta, p = _constants(data["fit"])
    # measured (seed 5): log10 β 10.0032 ± 0.0033, p − q 1.9998 ± 0.0013
    assert beta["ci95"][0] <= _TRUTH_LOG_BETA <= beta["ci95"][1]
    assert p["ci95"][0] <= _TRUTH_P <= p["ci95"][1]
    assert abs(beta["value"] - _TRUTH_LOG_BETA) < 0.02 and abs(p["value"] - _TRUTH_P) < 0.01


def test_ignoring_the_dilution_gives_a_measurably_different_answer(acceptance):
    # the same files with the metal fixed at its start (1 mM) and the ligand as computed
    m = load_manifest(acceptance / "series.toml")
    text = (acceptance / "series.toml").read_text(encoding="utf-8").split("[titration]")[0]
    text += "metal_total_M = 1e-3\n"
    text += "".join(
        f'\n[[voltammogram]]\nfile = "{e.name}"\nligand_M = {e.ligand_M!r}\n'
        for e in m.voltammograms
    )
    (acceptance / "fixed.toml").write_text(text, encoding="utf-8")
    fixed = analyse_series(load_manifest(acceptance / "fixed.toml")).fit
    data = json.loads((acceptance / "run" / "results.json").read_text(encoding="utf-8"))
    right_beta, right_p = _constants(data["fit"])
    # measured (seed 5): p − q 1.9921 ± 0.0012, 95 % CI [1.9891, 1.9951] — the truth outside
    p = fixed.delta_ligands
    assert not p.ci95[0] <= _TRUTH_P <= p.ci95[1]
    assert abs(p.value - right_p["value"]) > 3 * math.hypot(p.stderr, right_p["stderr"])
    assert fixed.log10_beta_ratio.value > right_beta["value"]  # less metal → less bound


def test_each_file_current_is_read_at_its_own_metal(acceptance):
    # Randles–Ševčík D of every file at its own diluted concentration is the simulated
    # 1e-5 cm²/s; at the undiluted 1 mM the last file would give (15/10)² × 1e-5
    data = json.loads((acceptance / "run" / "results.json").read_text(encoding="utf-8"))
    for f in data["voltammograms"]:
        assert f["kinetics"]["D_cm2_s"]["value"] == pytest.approx(1e-5, rel=0.02)


def test_outputs_report_volume_metal_and_ligand(acceptance):
    run = acceptance / "run"
    data = json.loads((run / "results.json").read_text(encoding="utf-8"))
    schema = json.loads((ROOT / "schemas/results.schema.json").read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    last = data["voltammograms"][-1]
    assert last["added_mL"] == 5.0 and last["volume_mL"] == 15.0
    assert last["metal_M"] == pytest.approx(1e-3 * 10 / 15)
    assert last["ligand_M"] == pytest.approx(0.5 / 15)
    with open(run / "voltammograms.csv", newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert float(rows[-1]["metal_M"]) == pytest.approx(1e-3 * 10 / 15)
    assert float(rows[-1]["volume_mL"]) == 15.0 and float(rows[-1]["added_mL"]) == 5.0
    html = (run / "report.html").read_text(encoding="utf-8")
    assert "total metal" in html and "stock added" in html


def test_terminal_table_shows_each_solution_metal_and_volume(acceptance):
    from cvfit.report.summary import format_summary

    text = format_summary(analyse_series(load_manifest(acceptance / "series.toml")))
    assert "[M]/M" in text and "V/mL" in text
    row = next(line for line in text.splitlines() if line.startswith("add_08.csv"))
    assert "0.0006667" in row and "15" in row


def test_the_curve_fit_scales_the_current_with_the_file_own_metal(acceptance):
    # the curve fit's D from its current scale (nFAC) at the last file's 0.667 mM is the
    # simulated 1e-5 cm²/s; at the undiluted 1 mM it would be (10/15)² × 1e-5
    from dataclasses import replace

    from cvfit.pipeline.per_file import analyse_file

    m = load_manifest(acceptance / "series.toml")
    m = replace(m, fit=replace(m.fit, half_wave_source="curve"))
    fit = analyse_file(m.voltammograms[-1], m).measurement.curve_fit
    assert fit.D_source == "current scale"
    assert fit.D_cm2_s == pytest.approx(1e-5, rel=0.03)


def test_the_same_series_as_instrument_exports_gives_the_same_constants(acceptance, tmp_path):
    # each record rewritten as an export (metadata block, units in the header, current in
    # µA rounded to 7 digits, tests/realistic_records.py), the manifest unchanged
    import numpy as np
    from realistic_records import RealisticRecord, write_export

    for src in sorted(acceptance.glob("add_*.csv")):
        t, E, i = np.loadtxt(src, delimiter=",", skiprows=1, unpack=True)
        write_export(tmp_path / src.name, RealisticRecord(t, E, i, 0.1))
    (tmp_path / "series.toml").write_text((acceptance / "series.toml").read_text("utf-8"))
    fit = analyse_series(load_manifest(tmp_path / "series.toml")).fit
    beta, p = fit.log10_beta_ratio, fit.delta_ligands
    assert beta.ci95[0] <= _TRUTH_LOG_BETA <= beta.ci95[1]
    assert p.ci95[0] <= _TRUTH_P <= p.ci95[1]


@pytest.mark.parametrize(
    ("extra", "key"),
    [
        (["--added-mL", "0,1"], "--added-mL"),  # no --series
        (["--series", "--added-mL", "0,1", "--ligand-M", "0,0.01"], "--added-mL"),
        (["--series", "--added-mL", "0,1", "--technique", "dpv"], "--added-mL"),
        (["--series", "--added-mL", "0,1"], "--ligand-stock-M"),
        (["--series", "--added-mL", "0,-1", "--ligand-stock-M", "0.1"], "--added-mL"),
        (["--series", "--ligand-M", "0,0.01", "--metal-M", "1e-3"], "--metal-M"),
    ],
)
def test_simulate_refuses_addition_options_that_clash(tmp_path, capsys, extra, key):
    code = main(["simulate", "--e-half", "-0.2", "--out", str(tmp_path / "s"), *extra])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and key in err
    assert not (tmp_path / "s").exists()


def test_simulating_into_existing_files_says_how_to_replace_them(tmp_path, capsys):
    argv = ["simulate", "--series", "--e-half", "-0.2", "--log-beta-ox=-5,10",
            "--added-mL", "0,1,2,3", "--start-volume-mL", "10", "--metal-M", "1e-3",
            "--ligand-stock-M", "0.1", "--out", str(tmp_path / "s")]  # fmt: skip
    assert main(argv) == 0
    capsys.readouterr()
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "use --force to replace" in err
    assert main([*argv, "--force"]) == 0
