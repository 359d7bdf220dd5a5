"""Issue 27 acceptance: a new user's titration by additions, from the exports to constants.

The chemist pipettes a ligand stock into a cell of metal solution (the metal is diluted as
the titration proceeds), exports each voltammogram from the instrument with the added
volume in its file name, runs ``cvfit init`` on the folder, fills in the four values the
names cannot carry, and runs ``cvfit run``. The truth is the simulation's: one complex ML2
of the oxidised form (log10 β2 = 10), the reduced form not complexed, so
log10(β_ox/β_red) = 10 and p − q = 2 (Lingane, Chem. Rev. 29 (1941) 1); each solution's
metal is checked against the dilution worked out by hand in the test.
"""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from dialects import write_dialect
from realistic_records import RealisticRecord, write_export

from cvfit.cli import main

ADDED_ML = (0.0, 0.5, 1.0, 2.0, 3.0, 5.0)
START_ML, METAL_M, STOCK_M = 10.0, 1e-3, 0.1
TRUE_LOG10_RATIO, TRUE_DELTA_LIGANDS = 10.0, 2.0
#: How each record leaves the instrument: a metadata block with units in the header, a
#: UTF-16 file, a semicolon export with decimal commas (tests/realistic_records.py and
#: tests/dialects.py write them, with invented header texts).
DIALECT = ("export", "utf16", "semicolon_decimal_comma", "export", "utf16", "export")


@pytest.fixture(scope="module")
def bench(tmp_path_factory):
    root = tmp_path_factory.mktemp("bench")
    sim = root / "sim"
    code = main([
        "simulate", "--series", "--e-half", "-0.2", "--log-beta-ox=-5,10",
        "--added-mL", ",".join(f"{a:g}" for a in ADDED_ML), "--start-volume-mL", "10",
        "--metal-M", "1e-3", "--ligand-stock-M", "0.1", "--noise", "0.003", "--seed", "3",
        "--out", str(sim),
    ])  # fmt: skip
    assert code == 0
    folder = root / "tazine_titration"
    folder.mkdir()
    for k, (added, dialect) in enumerate(zip(ADDED_ML, DIALECT, strict=True)):
        t, E, i = np.loadtxt(sim / f"add_{k:02d}.csv", delimiter=",", skiprows=1, unpack=True)
        name = folder / f"tazine_{added:g}mL.csv"
        if dialect == "export":
            write_export(name, RealisticRecord(t, E, i, 0.1))
        else:
            write_dialect(name, potential_V=E, current_A=i, time_s=t, dialect=dialect)
    return folder


def _filled(text: str) -> str:
    for key, value in (
        ("electrons", "1"),
        ("start_volume_mL", f"{START_ML}"),
        ("metal_M", f"{METAL_M}"),
        ("ligand_stock_M", f"{STOCK_M}"),
    ):
        assert f'{key} = "FILL IN"' in text, key
        text = text.replace(f'{key} = "FILL IN"', f"{key} = {value}", 1)
    return text


def test_init_then_four_values_give_the_constants(bench, capsys):
    assert main(["init", str(bench)]) == 0
    manifest = bench / "series.toml"
    text = manifest.read_text(encoding="utf-8")
    # natural order: 0.5 mL before 1 mL before 5 mL, every volume from its name
    order = [text.index(f'file = "tazine_{a:g}mL.csv"') for a in ADDED_ML]
    assert order == sorted(order)
    assert "[titration]" in text
    values = [
        float(line.split("=")[1]) for line in text.splitlines() if line.startswith("added_mL")
    ]
    assert values == list(ADDED_ML)
    capsys.readouterr()

    # not filled in yet: one line listing all four, exit 2, the manifest untouched
    assert main(["run", str(manifest), "--out", str(bench.parent / "o1")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and '4 value(s) still "FILL IN"' in err
    assert manifest.read_text(encoding="utf-8") == text

    manifest.write_text(_filled(text), encoding="utf-8")
    out = bench.parent / "results"
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 0
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    fit = data["fit"]
    ratio, dl = fit["log10_beta_ratio"], fit["delta_ligands"]
    assert ratio["ci95"][0] <= TRUE_LOG10_RATIO <= ratio["ci95"][1]
    assert dl["ci95"][0] <= TRUE_DELTA_LIGANDS <= dl["ci95"][1]
    assert abs(ratio["value"] - TRUE_LOG10_RATIO) < 0.02
    assert abs(dl["value"] - TRUE_DELTA_LIGANDS) < 0.01
    assert all(v["reversible"] for v in data["voltammograms"])
    assert data["series"]["titration"] == {
        "start_volume_mL": START_ML, "metal_M": METAL_M, "ligand_M": 0.0,
        "ligand_stock_M": STOCK_M, "metal_stock_M": 0.0,
    }  # fmt: skip
    report = (out / "report.html").read_text(encoding="utf-8")
    assert "titration by additions" in report and "10 mL of 0.001 mol/L metal" in report
    heads = re.findall(r"<th>([^<]*)</th>", report)
    first = heads.index("file")  # the per-file table: each solution's metal beside [L]
    assert heads[first + 1 : first + 5] == [
        "[L] / mol L⁻¹", "free [L] / mol L⁻¹", "total metal / mol L⁻¹", "volume / mL",
    ]  # fmt: skip

    # each solution by hand: V = 10 + a mL, c_M = 1e-3·10/V, c_L = 0.1·a/V
    by_name = {v["file"]: v for v in data["voltammograms"]}
    for a in ADDED_ML:
        v = by_name[f"tazine_{a:g}mL.csv"]
        volume = START_ML + a
        assert v["volume_mL"] == pytest.approx(volume, rel=1e-12)
        assert v["metal_M"] == pytest.approx(METAL_M * START_ML / volume, rel=1e-12)
        assert v["ligand_M"] == pytest.approx(STOCK_M * a / volume, rel=1e-12, abs=0)
    # the last solution's metal is diluted by a third: the mass balance sees it
    assert by_name["tazine_5mL.csv"]["metal_M"] == pytest.approx(METAL_M / 1.5)


def test_a_files_table_with_volumes_gives_the_same_solutions(bench, tmp_path):
    """The spreadsheet route: `[series] files_table` with an added_mL column."""
    rows = ["file,added_mL,label"] + [
        f"{(bench / f'tazine_{a:g}mL.csv').as_posix()},{a},{a:g} mL" for a in ADDED_ML
    ]
    (tmp_path / "titration.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    manifest = tmp_path / "series.toml"
    manifest.write_text(
        '[series]\nelectrons = 1\nfiles_table = "titration.csv"\n'
        f"[titration]\nstart_volume_mL = {START_ML}\nmetal_M = {METAL_M}\n"
        f"ligand_stock_M = {STOCK_M}\n",
        encoding="utf-8",
    )
    assert main(["run", str(manifest), "--out", str(tmp_path / "o"), "--quiet"]) == 0
    data = json.loads((tmp_path / "o" / "results.json").read_text(encoding="utf-8"))
    metals = [v["metal_M"] for v in data["voltammograms"]]
    assert metals == pytest.approx([METAL_M * START_ML / (START_ML + a) for a in ADDED_ML])
    ratio = data["fit"]["log10_beta_ratio"]
    assert ratio["ci95"][0] <= TRUE_LOG10_RATIO <= ratio["ci95"][1]


def test_init_on_numbered_additions_then_the_volumes_filled_in(bench, tmp_path, capsys):
    """The same exports named by addition number (add_1 … add_6): `cvfit init` leaves each
    volume to fill in, the chemist writes the pipetted volumes from the lab book, and the
    run gives the constants."""
    folder = tmp_path / "numbered"
    folder.mkdir()
    for k, added in enumerate(ADDED_ML, start=1):
        (folder / f"tazine_add_{k}.csv").write_bytes(
            (bench / f"tazine_{added:g}mL.csv").read_bytes()
        )
    assert main(["init", str(folder)]) == 0
    text = (folder / "series.toml").read_text(encoding="utf-8")
    assert text.count('added_mL = "FILL IN"') == len(ADDED_ML)
    capsys.readouterr()
    assert main(["run", str(folder / "series.toml"), "--out", str(tmp_path / "o1")]) == 2
    assert f"{4 + len(ADDED_ML)} value(s) still" in capsys.readouterr().err
    text = _filled(text)
    for added in ADDED_ML:  # in file order, as the lab book lists them
        text = text.replace('added_mL = "FILL IN"', f"added_mL = {added}", 1)
    (folder / "series.toml").write_text(text, encoding="utf-8")
    out = tmp_path / "o2"
    assert main(["run", str(folder / "series.toml"), "--out", str(out), "--quiet"]) == 0
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    ratio, dl = data["fit"]["log10_beta_ratio"], data["fit"]["delta_ligands"]
    assert ratio["ci95"][0] <= TRUE_LOG10_RATIO <= ratio["ci95"][1]
    assert dl["ci95"][0] <= TRUE_DELTA_LIGANDS <= dl["ci95"][1]
    metals = [v["metal_M"] for v in data["voltammograms"]]
    assert metals == pytest.approx([METAL_M * START_ML / (START_ML + a) for a in ADDED_ML])
