"""`cvfit run` on a simulated titration whose files are written in the shapes of real
exports (tests/dialects.py), read as written, no conversion: each file's shape shows in
its flags and in the columns results.json says were read, and the series gives constants.
Faults that stop a file (a unit prefix cvfit has no factor for, a text column) are one
clean line naming the file."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import jsonschema
import numpy as np
import pytest
from clirun import assert_clean_error, run_cli
from dialects import write_dialect
from seriesfactory import TRUE_LOG10_RATIO, simulate_point, write_manifest, write_plain_csv

from cvfit.techniques.cv.peaks import analyse_peaks

ROOT = Path(__file__).resolve().parents[1]
APPLIED_OFFSET_V = -0.0015  # tests/dialects.py writes the applied potential 1.5 mV below
LIGANDS = (0.0, 0.01, 0.02, 0.04, 0.08, 0.15, 0.3, 0.5, 0.6)


def _glitched(v, folder: Path, name: str) -> tuple[Path, int]:
    """A plain CSV with one sample 20 mV off, four samples before the switch; its line."""
    E = v.potential_V.copy()
    k = int(np.argmin(E)) - 4
    E[k] += 0.020
    block = np.column_stack([v.time_s, E, v.current_A])
    path = folder / name
    np.savetxt(path, block, delimiter=",", header="time_s,potential_V,current_A",
               comments="", fmt="%.10g")  # fmt: skip
    return path, k + 2


def _twins(v, folder: Path, name: str) -> Path:
    """Time, potential and current under the header ``E,E,I``."""
    block = np.column_stack([v.time_s, v.potential_V, v.current_A])
    path = folder / name
    np.savetxt(path, block, delimiter=",", header="E,E,I", comments="", fmt="%.10g")
    return path


@pytest.fixture(scope="module")
def series(tmp_path_factory):
    """Nine files, one shape each, the cvfit run on them and the records written."""
    folder = tmp_path_factory.mktemp("real")
    records = [simulate_point(lig, seed=40 + k) for k, lig in enumerate(LIGANDS)]
    arrays = [dict(potential_V=v.potential_V, current_A=v.current_A, time_s=v.time_s)
              for v in records]  # fmt: skip
    shapes = ["tab_leading_settings", "counter_padding", "applied_and_measured",
              "utf16_units_header", "stated_scan_rate", None, "applied_and_measured",
              None, None]  # fmt: skip
    entries, glitch_line = [], None
    for k, (lig, shape) in enumerate(zip(LIGANDS, shapes, strict=True)):
        name = f"f{k}.txt"
        if shape == "stated_scan_rate":
            write_dialect(folder / name, **arrays[k], dialect=shape, stated_scan_rate_V_s=0.05)
        elif shape is not None:
            write_dialect(folder / name, **arrays[k], dialect=shape)
        elif k == 5:
            glitch_line = _glitched(records[k], folder, name)[1]
        elif k == 7:
            _twins(records[k], folder, name)
        else:  # mV under a label without a unit
            block = np.column_stack([1e3 * records[k].potential_V, records[k].current_A])
            np.savetxt(folder / name, block, delimiter=",", header="E,I", comments="")
        entries.append({"file": name, "ligand_M": lig})
    entries[3]["potential_column"] = "V"
    entries[6]["potential_column"] = "Potential applied (V)"
    manifest = write_manifest(folder / "series.toml", entries, series={"electrons": 1})
    before = {p.name: p.read_bytes() for p in folder.iterdir()}
    proc = run_cli("run", str(manifest), "--out", str(folder / "out"), cwd=folder)
    assert proc.returncode == 0, proc.stderr
    assert {p.name: p.read_bytes() for p in folder.iterdir() if p.is_file()} == before
    results = json.loads((folder / "out" / "results.json").read_text(encoding="utf-8"))
    return {"proc": proc, "results": results, "records": records, "folder": folder,
            "glitch_line": glitch_line}  # fmt: skip


def _file(series, k: int) -> dict:
    return series["results"]["voltammograms"][k]


def _codes(series, k: int) -> list[str]:
    return [f["code"] for f in _file(series, k)["flags"]]


def _midpoint(series, k: int, offset_V: float = 0.0) -> float:
    """E½ midpoint of the record as simulated (potentials moved by *offset_V*)."""
    v = series["records"][k]
    if offset_V:
        from dataclasses import replace

        v = replace(v, potential_V=v.potential_V + offset_V)
    return float(analyse_peaks(v, electrons=1).E_half_V)


def test_every_shape_is_read_and_the_series_gives_constants(series):
    res = series["results"]
    schema = json.loads((ROOT / "cvfit" / "schemas" / "results.schema.json").read_text("utf-8"))
    jsonschema.Draft202012Validator(schema).validate(res)
    ratio = res["fit"]["log10_beta_ratio"]
    assert ratio["ci95"][0] - 0.2 < TRUE_LOG10_RATIO < ratio["ci95"][1] + 0.2
    # the files read as written give the midpoints of the records simulated
    for k in (0, 1, 2, 3, 4, 5, 7):
        got = _file(series, k)["E_half_midpoint_V"]
        assert got == pytest.approx(_midpoint(series, k), abs=2e-5), k


def test_leading_settings_and_padding(series):
    settings = _file(series, 0)["imported_columns"]
    assert settings["potential_column"] == "Potential (V)" and settings["time_unit"] == "s"
    assert "PADDING_ROWS_SKIPPED" in _codes(series, 1)
    flag = next(f for f in _file(series, 1)["flags"] if f["code"] == "PADDING_ROWS_SKIPPED")
    assert flag["severity"] == "info" and "3000 row(s)" in flag["message"]
    assert sum(c == "PADDING_ROWS_SKIPPED" for c in _codes(series, 1)) == 1


def test_measured_potential_by_default_applied_when_asked(series):
    measured, applied = _file(series, 2), _file(series, 6)
    assert measured["imported_columns"] == {
        "potential_column": "Potential measured (V)", "potential_unit": "V",
        "potential_kind": "measured", "current_column": "Current (mA)", "current_unit": "mA",
        "time_column": "Time (s)", "time_unit": "s",
    }  # fmt: skip
    assert applied["imported_columns"]["potential_kind"] == "applied"
    assert applied["E_half_midpoint_V"] == pytest.approx(
        _midpoint(series, 6, APPLIED_OFFSET_V), abs=2e-5
    )
    out = series["proc"].stdout
    assert "Columns read:" in out and "'Potential measured (V)' [V, measured]" in out
    assert "'Potential applied (V)' [V, applied]" in out
    html = (series["folder"] / "out" / "report.html").read_text(encoding="utf-8")
    assert "Columns read:" in html and "Potential applied (V)" in html


def test_utf16_units_header_with_potential_column_V(series):
    cols = _file(series, 3)["imported_columns"]
    assert (cols["potential_column"], cols["current_column"]) == ("V", "µA")


def test_stated_scan_rate_loses_to_the_time_column(series):
    f = _file(series, 4)
    flag = next(x for x in f["flags"] if x["code"] == "SCAN_RATE_METADATA_DISAGREES")
    assert flag["severity"] == "warning"
    assert "50 mV/s" in flag["message"] and "100 mV/s" in flag["message"]
    assert f["scan_rate_V_s"] == pytest.approx(0.1, rel=1e-6)


def test_glitch_twins_and_mV_are_file_level_flags(series):
    glitch = next(x for x in _file(series, 5)["flags"] if x["code"] == "POTENTIAL_GLITCH")
    assert f"line {series['glitch_line']} (" in glitch["message"]
    assert _file(series, 5)["E_half_V"] is not None
    assert "DUPLICATE_COLUMN_NAMES" in _codes(series, 7)
    assert _file(series, 7)["imported_columns"]["potential_column"] == "E"
    doubt = next(x for x in _file(series, 8)["flags"] if x["code"] == "POTENTIAL_UNIT_DOUBTFUL")
    assert 'potential_unit = "mV"' in doubt["message"]


@pytest.fixture(scope="module")
def good_files(tmp_path_factory) -> list[tuple[float, Path]]:
    folder = tmp_path_factory.mktemp("good")
    return [
        (lig, write_plain_csv(folder / f"g{k}.csv", simulate_point(lig, seed=3 + k)))
        for k, lig in enumerate((0.01, 0.02, 0.04))
    ]


@pytest.mark.parametrize(
    ("header", "cells", "needles"),
    [("E/V,current_kA", None, ["f0.csv", "current_kA", "'kA'"]),
     ("E/V,Status,I/A", "OK", ["f0.csv:2:", "column 2 ('Status')", "'OK'"])],
)  # fmt: skip
def test_faults_that_stop_a_file_are_one_clean_line(tmp_path, good_files, header, cells, needles):
    entries = [{"file": "f0.csv", "ligand_M": 0.0}]  # the faulty file: the run stops there
    for k, (lig, path) in enumerate(good_files, start=1):
        shutil.copy(path, tmp_path / f"f{k}.csv")
        entries.append({"file": f"f{k}.csv", "ligand_M": lig})
    v = simulate_point(0.0, seed=4)
    columns = [f"{e!r}" for e in v.potential_V.tolist()]
    rows = [f"{e},{cells},{c!r}" if cells else f"{e},{c!r}"
            for e, c in zip(columns, v.current_A.tolist(), strict=True)]  # fmt: skip
    (tmp_path / "f0.csv").write_text(header + "\n" + "\n".join(rows) + "\n")
    manifest = write_manifest(tmp_path / "s.toml", entries, series={"electrons": 1})
    proc = run_cli("run", str(manifest), "--out", str(tmp_path / "out"), cwd=tmp_path)
    assert "no rows of numbers" not in assert_clean_error(proc, *needles)


def test_figure_axis_says_the_measured_potential(tmp_path, monkeypatch):
    """Every file's potential labelled as measured: the voltammogram axis says so."""
    import matplotlib.axes

    from cvfit.pipeline import analyse_manifest_file
    from cvfit.report.figures.titration import plot_voltammograms

    entries = []
    for k, lig in enumerate((0.0, 0.02, 0.08, 0.3)):
        v = simulate_point(lig, seed=60 + k)
        write_dialect(tmp_path / f"m{k}.csv", potential_V=v.potential_V, current_A=v.current_A,
                      time_s=v.time_s, dialect="applied_and_measured")  # fmt: skip
        entries.append({"file": f"m{k}.csv", "ligand_M": lig})
    result = analyse_manifest_file(write_manifest(tmp_path / "m.toml", entries))
    labels: list[str] = []
    original = matplotlib.axes.Axes.set_xlabel

    def record(self, text, *args, **kwargs):
        labels.append(text)
        return original(self, text, *args, **kwargs)

    monkeypatch.setattr(matplotlib.axes.Axes, "set_xlabel", record)
    plot_voltammograms(result, tmp_path / "v.png")
    assert "E (measured) / V" in labels
    shutil.rmtree(tmp_path, ignore_errors=True)
