"""``[series] files_table``: the files of a series listed in a CSV table.

Happy paths (comma and semicolon, with and without a byte-order mark, decimal commas,
empty optional cells) and each refusal: a one-line error naming the table, its line and
the column.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from clirun import assert_clean_error, run_cli
from dialects import triangle_wave, write_dialect

from cvfit.errors import InputError
from cvfit.io import load_manifest

FILES = ("a_1.csv", "a_2.csv", "a_10.csv", "free.csv")


@pytest.fixture(scope="module")
def data_folder(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("files")
    E, i, t = triangle_wave(points_per_sweep=100)
    for name in FILES:
        write_dialect(folder / name, potential_V=E, current_A=i, time_s=t, dialect="plain_csv")
    return folder


def _series(folder: Path, table: str, *, extra: str = "", name: str = "titration.csv",
            raw: bytes | None = None) -> Path:  # fmt: skip
    (folder / name).write_bytes(raw if raw is not None else table.encode("utf-8"))
    manifest = folder / "series.toml"
    manifest.write_text(
        f'[series]\nelectrons = 1\nfiles_table = "{name}"\n{extra}', encoding="utf-8"
    )
    return manifest


def _error(manifest: Path) -> InputError:
    with pytest.raises(InputError) as info:
        load_manifest(manifest)
    return info.value


def test_rows_become_entries_in_row_order(data_folder):
    table = (
        "file,ligand_M,scan_rate_V_s,label,exclude,pH,temperature_C\n"
        "a_10.csv,0.01,0.05,ten,,7.0,\n"
        "\n"  # a blank row is skipped
        "free.csv,0,,,,,\n"
        "a_2.csv,2e-3,,,bubble on the electrode,,30\n"
    )
    m = load_manifest(_series(data_folder, table))
    got = [(e.name, e.ligand_M, e.scan_rate_V_s, e.label, e.exclude, e.pH, e.temperature_C)
           for e in m.voltammograms]  # fmt: skip
    assert got == [
        ("a_10.csv", 0.01, 0.05, "ten", None, 7.0, None),
        ("free.csv", 0.0, None, None, None, None, None),
        ("a_2.csv", 0.002, None, None, "bubble on the electrode", None, 30.0),
    ]
    assert m.voltammograms[0].file == (data_folder / "a_10.csv").resolve()


def test_semicolons_decimal_commas_and_bom(data_folder):
    table = '\ufeffFile;Ligand_M;Label\r\na_1.csv;0,001;"one; first"\r\nfree.csv;0;\r\n'
    m = load_manifest(_series(data_folder, "", raw=table.encode("utf-8")))
    assert [(e.name, e.ligand_M, e.label) for e in m.voltammograms] == [
        ("a_1.csv", 0.001, "one; first"),
        ("free.csv", 0.0, None),
    ]


def test_a_table_with_import_keys(data_folder):
    """Per-file [import] keys work as columns too (cycle, anodic_current)."""
    table = "file,ligand_M,cycle,anodic_current\na_1.csv,0.001,1,negative\nfree.csv,0,,\n"
    m = load_manifest(_series(data_folder, table))
    assert m.voltammograms[0].import_options.cycle == 1
    assert m.voltammograms[0].import_options.anodic_current == "negative"
    assert m.voltammograms[1].import_options.anodic_current is None


@pytest.mark.parametrize(
    ("table", "line", "needles"),
    [
        ("file,ligand_M\na_1.csv,abc\n", 2, ["row 1 (a_1.csv), column ligand_M", "number", "abc"]),
        ("file,ligand_M\na_1.csv,0.001\na_2.csv,-1\n", 3, ["column ligand_M", ">= 0"]),
        ("file,ligand_M\na_1.csv,nan\n", 2, ["column ligand_M"]),
        ("file,ligand_M,scan_rate_V_s\na_1.csv,0.001,0\n", 2, ["column scan_rate_V_s"]),
        ("file,ligand_M,exclude\na_1.csv,0.001,  \nfree.csv,0,x\n", None, None),  # accepted
        ("file,ligand_M,cycle\na_1.csv,0.001,first\n", 2, ["column cycle"]),
        ("file,ligand_M\na_1.csv,FILL IN\n", 2, ["column ligand_M", '"FILL IN"']),
        ("file,ligand_M\na_1.csv,0.001,7\n", 2, ["3 cells but 2 columns"]),
        ("file,ligand_M\n,0.001\n", 2, ["column file", "empty"]),
        ("file,ligand_M\na_1.csv,0.001\nfree.csv,\n", 3, ["row 2 (free.csv)", "ligand_M"]),
        ("file,ligand_M\nnone.csv,0.001\n", 2, ["row 1 (none.csv), column file", "not found"]),
        ("file,ligand_M\na_1.csv,0.001\na_1.csv,0.002\n", 3, ["listed twice"]),
        ("file,conc,notes\na_1.csv,1,x\n", 1, ["unknown column(s) 'conc', 'notes'"]),
        ("file,ligand_m\na_1.csv,1\n", None, None),  # case is ignored
        ("file,ligand_M,ligand_M\na_1.csv,1,1\n", 1, ["'ligand_M' is given twice"]),
        ("ligand_M\n0.001\n", 1, ["column 'file'"]),
        ("file,ligand_M\n", 1, ["lists no file"]),
        ("", 1, ["empty"]),
        ("file,potential_window\na_1.csv,1\n", 1, ["unknown column"]),
    ],
)
def test_bad_tables(data_folder, table, line, needles):
    manifest = _series(data_folder, table)
    if needles is None:
        load_manifest(manifest)
        return
    err = _error(manifest)
    assert err.source == str(data_folder / "titration.csv")
    assert err.line == line
    for needle in needles:
        assert needle in err.message, (needle, err.message)


def test_list_valued_key_is_no_column(data_folder):
    """A key that holds a list belongs in the manifest, not in a cell: named as unknown
    here, with the columns a table may have."""
    table = "file,ligand_M,analyte_window_V\na_1.csv,1,1\n"
    assert "unknown column" in _error(_series(data_folder, table)).message


def test_not_utf8(data_folder):
    err = _error(_series(data_folder, "", raw=b"file,ligand_M,label\na_1.csv,0.001,\xe9t\xe9\n"))
    assert err.line == 2 and "UTF-8" in err.message


def test_table_and_voltammogram_tables_is_an_error(data_folder):
    manifest = _series(
        data_folder,
        "file,ligand_M\na_1.csv,0.001\n",
        extra='\n[[voltammogram]]\nfile = "a_2.csv"\nligand_M = 0.002\n',
    )
    err = _error(manifest)
    assert err.source == str(manifest) and err.line == 3
    assert "series.files_table" in err.message and "not both" in err.message


def test_missing_table_named_at_the_manifest_line(data_folder):
    manifest = data_folder / "series.toml"
    manifest.write_text('[series]\nelectrons = 1\nfiles_table = "gone.csv"\n', encoding="utf-8")
    err = _error(manifest)
    assert "gone.csv" in err.message and "not found" in err.message
    manifest.write_text('[series]\nelectrons = 1\nfiles_table = ""\n', encoding="utf-8")
    err = _error(manifest)
    assert err.line == 3 and "files_table" in err.message


def test_cli_names_the_table_line_and_column(data_folder, tmp_path):
    for name in FILES:
        (tmp_path / name).write_bytes((data_folder / name).read_bytes())
    _series(tmp_path, "file,ligand_M\nfree.csv,0\na_1.csv,1 mM\n")
    err = assert_clean_error(run_cli("run", "series.toml", cwd=tmp_path), "column ligand_M")
    assert err.startswith("cvfit: error: titration.csv:3: row 2 (a_1.csv)"), err


def test_schema_takes_a_files_table_instead_of_voltammogram_tables():
    """schemas/series.schema.json agrees with the loader: a files table stands for the
    [[voltammogram]] tables, and both together are refused."""
    import json
    import tomllib

    import jsonschema

    root = Path(__file__).resolve().parents[1]
    schema = json.loads((root / "schemas" / "series.schema.json").read_text(encoding="utf-8"))
    validator = jsonschema.Draft202012Validator(schema)
    table = '[series]\nelectrons = 1\nfiles_table = "t.csv"\n'
    entry = '[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.0\n'
    assert validator.is_valid(tomllib.loads(table))
    assert not validator.is_valid(tomllib.loads(table + entry))
    assert not validator.is_valid(tomllib.loads("[series]\nelectrons = 1\n"))
    assert not validator.is_valid(tomllib.loads(table.replace('"t.csv"', '""')))
