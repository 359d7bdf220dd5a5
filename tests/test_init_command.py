"""``cvfit init FOLDER``: a commented manifest for a folder of exports, in one step.

The exports are written by our own generators (tests/dialects.py, tests/realistic_records.py)
and by ``cvfit simulate --series``; the truth of the simulated series (log10 β_ox = 4,
one ligand bound) is what the analysis of the manifest ``cvfit init`` wrote must recover.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from clirun import assert_clean_error, run_cli
from dialects import triangle_wave, write_dialect
from realistic_records import RealisticRecord, write_export

from cvfit.cli import main
from cvfit.io import load_manifest, manifest_keys
from cvfit.io.init_manifest import find_exports, manifest_texts, survey_export
from cvfit.io.manifest_spec import PLACEHOLDER

#: The simulated titration: ligand concentrations, mol/L, and the name each file gets.
LIGANDS_M = (0.0, 0.005, 0.01, 0.02, 0.05)
NAMES = ("M_blank.csv", "M_L_5mM.csv", "M_L_10mM.csv", "M_L_20mM.csv", "M_L_50mM.csv")
LOG_BETA_OX = 4.0


@pytest.fixture
def cli(capsys, monkeypatch, tmp_path):
    """``cvfit ARGS`` in this process, in *tmp_path* (faster than a subprocess)."""
    monkeypatch.chdir(tmp_path)

    def call(*args: str) -> subprocess.CompletedProcess:
        try:
            code = main(list(args))
        except SystemExit as stop:
            code = stop.code
        out = capsys.readouterr()
        return subprocess.CompletedProcess(args, code, out.out, out.err)

    return call


@pytest.fixture(scope="module")
def simulated(tmp_path_factory) -> Path:
    """A simulated series with its files renamed to names carrying the concentrations
    (shuffled on disk: the order must come from the names), and no manifest."""
    root = tmp_path_factory.mktemp("sim")
    proc = run_cli(
        "simulate", "--series", "--e-half", "-0.2", "--ligand-M",
        ",".join(str(c) for c in LIGANDS_M), "--log-beta-ox", str(LOG_BETA_OX),
        "--noise", "0.002", "--seed", "2", "--out", "made", cwd=root,
    )  # fmt: skip
    assert proc.returncode == 0, proc.stderr
    folder = root / "series"
    folder.mkdir()
    for k, name in enumerate(NAMES):
        shutil.copy(root / "made" / f"titr_{k:02d}.csv", folder / name)
    return folder


def _blocks(text: str) -> dict[str, list[str]]:
    """The comment lines above each [[voltammogram]] entry, by the file it names."""
    out: dict[str, list[str]] = {}
    for block in text.split("\n\n"):
        m = re.search(r'^#? ?file = "([^"]+)"', block, re.MULTILINE)
        if m:
            out[m.group(1)] = [ln for ln in block.splitlines() if ln.startswith("#")]
    return out


def test_simulated_series_from_init_to_constants(cli, simulated, tmp_path):
    folder = tmp_path / "series"
    shutil.copytree(simulated, folder)
    proc = cli("init", "series")
    assert proc.returncode == 0, proc.stderr
    assert "series.toml" in proc.stdout and "[series] electrons" in proc.stdout
    text = (folder / "series.toml").read_text(encoding="utf-8")
    # natural order, concentrations from the names
    assert re.findall(r'^file = "(.+)"', text, re.MULTILINE) == list(NAMES)
    assert re.findall(r"^ligand_M = (.+)$", text, re.MULTILINE) == [
        "0.0", "0.005", "0.01", "0.02", "0.05"
    ]  # fmt: skip
    # unfilled: one line naming the manifest's line and the key
    err = assert_clean_error(run_cli("run", "series/series.toml", cwd=tmp_path), "electrons")
    assert "series.toml:" in err and PLACEHOLDER in err
    filled = text.replace(f'electrons = "{PLACEHOLDER}"', "electrons = 1")
    (folder / "series.toml").write_text(filled, encoding="utf-8")
    proc = run_cli("run", "series/series.toml", "--out", "out", cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr
    fit = json.loads((tmp_path / "out" / "results.json").read_text())["fit"]
    assert fit["delta_ligands_integer"] == 1
    low, high = fit["log10_beta_ratio_at_integer"]["ci95"]
    assert low <= LOG_BETA_OX <= high, (low, high)


@pytest.fixture(scope="module")
def exports(tmp_path_factory) -> Path:
    """Exports as instruments write them: UTF-16 with tabs, semicolons with decimal commas
    under a preamble, a metadata block stating the scan rate, µA under a header of units,
    a file without time, one without header, one that is not an export; and what cvfit
    wrote there (a batch summary, an output folder)."""
    folder = tmp_path_factory.mktemp("exports")
    E, i, t = triangle_wave(points_per_sweep=150)
    write_dialect(folder / "Fe_blank.txt", potential_V=E, current_A=i, time_s=t, dialect="utf16")
    write_dialect(folder / "Fe_L_2mM.csv", potential_V=E, current_A=i, time_s=t,
                  dialect="semicolon_decimal_comma")  # fmt: skip
    write_dialect(folder / "Fe_L_10mM.csv", potential_V=E, current_A=i, time_s=t,
                  dialect="metadata_header")  # fmt: skip
    write_export(folder / "Fe_L_5mM.csv", RealisticRecord(t, E, i, 0.1))
    write_dialect(folder / "Fe_L_20mM_50mVs.tsv", potential_V=E, current_A=i,
                  dialect="tab_mV_uA")  # fmt: skip
    write_dialect(folder / "sample_x.dat", potential_V=E, current_A=i, dialect="no_header")
    (folder / "notes.txt").write_text("bubble on the electrode in the third run\n")
    (folder / "batch_summary.csv").write_text("title,manifest\n")
    (folder / "Fe_cvfit").mkdir()
    (folder / "Fe_cvfit" / "voltammograms.csv").write_text("file,E_half_V\n")
    (folder / "readme.md").write_text("not an export\n")
    (folder / "my_list.csv").write_text("\ufeffFile;ligand_M\nFe_blank.txt;0\n", encoding="utf-8")
    return folder


def test_init_on_realistic_exports(cli, exports, tmp_path):
    folder = tmp_path / "exports"
    shutil.copytree(exports, folder)
    proc = cli("init", "exports")
    assert proc.returncode == 0, proc.stderr
    assert "left out batch_summary.csv" in proc.stdout
    assert "left out my_list.csv: a files table" in proc.stdout
    assert "1 refused" in proc.stdout
    assert "sample_x.dat: ligand_M" in proc.stdout
    text = (folder / "series.toml").read_text(encoding="utf-8")
    blocks = _blocks(text)
    order = ["Fe_blank.txt", "Fe_L_2mM.csv", "Fe_L_5mM.csv", "Fe_L_10mM.csv",
             "Fe_L_20mM_50mVs.tsv", "notes.txt", "sample_x.dat"]  # fmt: skip
    assert list(blocks) == order
    utf16 = " ".join(blocks["Fe_blank.txt"])
    assert "utf-16" in utf16 and "tab-delimited" in utf16 and "'<I>/mA' in mA" in utf16
    semi = " ".join(blocks["Fe_L_2mM.csv"])
    # three preamble lines (two of text, one blank), the header on line 4
    assert "semicolon-delimited" in semi and "decimal mark ','" in semi
    assert "header on line 4, 3 line(s) above it skipped" in semi
    meta = " ".join(blocks["Fe_L_10mM.csv"])
    assert "'WE(1).Potential (V)'" in meta and "time 'Time (s)' in s" in meta
    assert "scan rate 0.1 V/s from the time column" in meta
    realistic = " ".join(blocks["Fe_L_5mM.csv"])
    assert "'Current (µA)' in µA" in realistic and "header on line 6" in realistic
    # no time in the file: the rate from the name (50 mV/s), said so
    assert "scan_rate_V_s = 0.05" in text
    assert "name: 50mVs → scan_rate_V_s = 0.05" in " ".join(blocks["Fe_L_20mM_50mVs.tsv"])
    assert "no header row" in " ".join(blocks["sample_x.dat"])
    refused = blocks["notes.txt"]
    assert refused[0].startswith("# refused by the reader: ") and '# file = "notes.txt"' in refused
    assert "voltammograms.csv" not in text and "batch_summary" not in text
    # filled in, it loads, in natural order, every file read as the run reads it
    filled = text.replace(f'electrons = "{PLACEHOLDER}"', "electrons = 1")
    filled = filled.replace(f'ligand_M = "{PLACEHOLDER}"', "ligand_M = 0.04")
    (folder / "series.toml").write_text(filled, encoding="utf-8")
    m = load_manifest(folder / "series.toml")
    assert [e.name for e in m.voltammograms] == [n for n in order if n != "notes.txt"]
    assert [e.ligand_M for e in m.voltammograms] == [0.0, 0.002, 0.005, 0.01, 0.02, 0.04]


def test_init_never_overwrites(cli, simulated, tmp_path):
    folder = tmp_path / "s"
    shutil.copytree(simulated, folder)
    (folder / "series.toml").write_text("# mine\n", encoding="utf-8")
    err = assert_clean_error(cli("init", "s"), "series.toml", "--out")
    assert "never replaces" in err
    assert (folder / "series.toml").read_text(encoding="utf-8") == "# mine\n"
    proc = cli("init", "s", "--out", "second.toml")
    assert proc.returncode == 0, proc.stderr
    assert (folder / "second.toml").is_file()
    assert_clean_error(cli("init", "s", "--out", "second.toml"), "second.toml")
    (folder / "titration.csv").write_text("file,ligand_M\n", encoding="utf-8")
    assert_clean_error(cli("init", "s", "--table", "--out", "third.toml"), "titration.csv")
    assert not (folder / "third.toml").exists()


@pytest.mark.parametrize(
    ("make", "needle"),
    [
        (lambda p: p.mkdir(), "no exports in this folder"),
        (lambda p: (p.mkdir(), (p / "a.png").write_bytes(b"x")), "no exports"),
        (lambda p: (p.mkdir(), (p / "batch_summary.csv").write_text("x")), "cvfit's own"),
        (lambda p: (p.mkdir(), (p / ".cvfit-set.json").write_text("{}")), "output folder"),
        (lambda p: p.write_text("x"), "not a folder"),
        (lambda p: None, "folder not found"),
    ],
)
def test_init_refusals(cli, tmp_path, make, needle):
    make(tmp_path / "f")
    assert_clean_error(cli("init", "f"), "f", needle)


def test_init_out_must_be_a_toml_name(cli, simulated, tmp_path):
    shutil.copytree(simulated, tmp_path / "s")
    assert_clean_error(cli("init", "s", "--out", "../x.toml"), "--out")


def test_init_table(cli, simulated, tmp_path):
    folder = tmp_path / "s"
    shutil.copytree(simulated, folder)
    (folder / "odd_sample.csv").write_bytes((simulated / NAMES[1]).read_bytes())
    proc = cli("init", "s", "--table")
    assert proc.returncode == 0, proc.stderr
    table = (folder / "titration.csv").read_text(encoding="utf-8").splitlines()
    assert table[0] == "file,ligand_M"
    assert table[1:] == [
        "M_blank.csv,0.0", "M_L_5mM.csv,0.005", "M_L_10mM.csv,0.01", "M_L_20mM.csv,0.02",
        "M_L_50mM.csv,0.05", f"odd_sample.csv,{PLACEHOLDER}",
    ]  # fmt: skip
    text = (folder / "series.toml").read_text(encoding="utf-8")
    assert 'files_table = "titration.csv"' in text and "[[voltammogram]]" not in text
    filled = text.replace(f'electrons = "{PLACEHOLDER}"', "electrons = 1")
    (folder / "series.toml").write_text(filled, encoding="utf-8")
    # the cell left to fill: the table's line and column
    err = assert_clean_error(run_cli("run", "s/series.toml", cwd=tmp_path), "column ligand_M")
    assert "titration.csv:7:" in err and "odd_sample.csv" in err
    (folder / "titration.csv").write_text(
        "\n".join(table[:-1] + ["odd_sample.csv,0.005"]) + "\n", encoding="utf-8"
    )
    m = load_manifest(folder / "series.toml")
    assert [e.name for e in m.voltammograms] == [*NAMES, "odd_sample.csv"]


VOLUME_NAMES = ("V_0uL.csv", "V_25uL.csv", "V_50uL.csv", "V_add_3.csv", "V_blank.csv")


def test_init_with_added_volumes(simulated, tmp_path):
    """Names with volumes: a [titration] table with placeholders and added_mL per file."""
    folder = tmp_path / "v"
    folder.mkdir()
    for name in VOLUME_NAMES:
        shutil.copy(simulated / NAMES[0], folder / name)
    names, _ = find_exports(folder)
    texts = manifest_texts([survey_export(folder, n) for n in names], title="v")
    text = texts.manifest
    head, _, files = text.partition("[titration]")
    assert files, text
    for key in ("start_volume_mL", "metal_M", "ligand_stock_M"):
        assert f'{key} = "{PLACEHOLDER}"' in files
    for key in ("ligand_M", "metal_stock_M"):  # optional: written commented out
        assert f"# {key} = 0.0" in files
    assert re.findall(r"^added_mL = (.+)$", text, re.MULTILINE) == [
        "0.0", "0.025", "0.05", f'"{PLACEHOLDER}"', "0.0"
    ]  # fmt: skip
    assert "addition 3: fill in added_mL" in text
    assert "V_add_3.csv: added_mL (addition 3)" in texts.to_fill
    assert "[titration] start_volume_mL" in texts.to_fill
    if not any(t.name == "titration" for t in manifest_keys.TABLES):
        pytest.skip(
            "the [titration] table is not declared on this branch (cvfit.io.manifest_keys)"
        )
    filled = text.replace(f'electrons = "{PLACEHOLDER}"', "electrons = 1")
    for key, value in (("start_volume_mL", "10.0"), ("metal_M", "0.001"),
                       ("ligand_stock_M", "0.1")):  # fmt: skip
        filled = filled.replace(f'{key} = "{PLACEHOLDER}"', f"{key} = {value}")
    filled = filled.replace(f'added_mL = "{PLACEHOLDER}"', "added_mL = 0.075")
    (folder / "series.toml").write_text(filled, encoding="utf-8")
    assert len(load_manifest(folder / "series.toml").voltammograms) == len(VOLUME_NAMES)


def test_init_help_is_enough(cli, tmp_path):
    out = cli("init", "--help").stdout
    needles = ("5mM", "0.25uL", "add_3", "blank", "100mVs", "FILL IN", "--out", "--table",
               "natural", "never overwrites", "refuses", "files table", "semicolon")  # fmt: skip
    for needle in needles:
        assert needle in out, needle


def test_name_rate_against_file_rate(tmp_path):
    """A name's scan rate that the time column contradicts is pointed out."""
    E, i, t = triangle_wave(points_per_sweep=150, scan_rate_V_s=0.1)
    write_dialect(tmp_path / "L_5mM_20mVs.csv", potential_V=E, current_A=i, time_s=t,
                  dialect="plain_csv")  # fmt: skip
    s = survey_export(tmp_path, "L_5mM_20mVs.csv")
    assert s.file_rate_V_s == pytest.approx(0.1, rel=0.01)
    assert any("the name says 0.02 V/s" in line for line in s.read_as)
    assert (
        "scan_rate_V_s" not in manifest_texts([s], title="x").manifest.split("[[voltammogram]]")[1]
    )
    assert np.isfinite(s.file_rate_V_s)


def test_odd_file_names_stay_inside_their_strings(simulated, tmp_path):
    """A quote or a line break in a file name cannot break the manifest's TOML."""
    import tomllib

    for name in ('q"uote_5mM.csv', "new\nline.csv", "back\\slash.csv"):
        shutil.copy(simulated / NAMES[0], tmp_path / name)
    names, _ = find_exports(tmp_path)
    text = manifest_texts([survey_export(tmp_path, n) for n in names], title='a "b"').manifest
    data = tomllib.loads(text)
    assert sorted(e["file"] for e in data["voltammogram"]) == sorted(names)
    assert data["series"]["title"] == 'a "b"'
