"""Bad input files give one-line InputErrors that name the file and the line."""

from __future__ import annotations

import numpy as np
import pytest
from dialects import triangle_wave, write_dialect

from cvfit.errors import InputError
from cvfit.io import ImportOptions, parse_voltammogram_text, read_voltammogram
from cvfit.io.columns import parse_label
from cvfit.io.text import decode_bytes


def _csv(tmp_path, name="d.csv", header="E/V,I/A", n_sweep=40):
    E, i, _ = triangle_wave(points_per_sweep=n_sweep)
    rows = [f"{e!r},{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True)]
    return [header, *rows]


def _write(tmp_path, lines, name="d.csv", newline="\n"):
    p = tmp_path / name
    p.write_text(newline.join(lines) + newline, encoding="utf-8", newline="")
    return p


def _error(path, options=None) -> InputError:
    with pytest.raises(InputError) as info:
        read_voltammogram(path, options)
    err = info.value
    assert "\n" not in str(err)
    assert str(err).startswith(str(path))
    return err


def test_missing_file(tmp_path):
    err = _error(tmp_path / "nope.csv")
    assert "not found" in err.message and err.line is None


def test_folder_instead_of_file(tmp_path):
    assert "folder" in _error(tmp_path).message


@pytest.mark.parametrize("content", [b"", b"   \n\r\n\t\n", b"\xef\xbb\xbf\n"])
def test_empty_file(tmp_path, content):
    p = tmp_path / "e.csv"
    p.write_bytes(content)
    assert "empty" in _error(p).message


@pytest.mark.parametrize(
    "content",
    [b"PK\x03\x04\x14\x00\x06\x00binary\x00\x00zip", bytes(range(256)) * 4, b"1,2\n3,\x01\n"],
)
def test_binary_file(tmp_path, content):
    p = tmp_path / "b.csv"
    p.write_bytes(content)
    err = _error(p)
    assert "binary" in err.message or "control character" in err.message
    assert err.line is not None


def test_no_numeric_rows(tmp_path):
    p = _write(tmp_path, ["Title: nothing", "E/V,I/A", "a,b", "c,d"])
    assert "no rows of numbers" in _error(p).message


def test_non_numeric_cell_names_line_and_column(tmp_path):
    lines = _csv(tmp_path)
    lines.insert(0, "Instrument: test")
    lines.insert(1, "")
    lines[25] = lines[25].split(",")[0] + ",0.3x"
    err = _error(_write(tmp_path, lines, newline="\r\n"))
    assert err.line == 26  # as an editor numbers it (CRLF counted once)
    assert "column 2" in err.message and "'I/A'" in err.message and "'0.3x'" in err.message


def test_non_numeric_cell_in_utf16_file(tmp_path):
    E, i, _ = triangle_wave(points_per_sweep=30)
    p = write_dialect(tmp_path / "u.txt", potential_V=E, current_A=i, dialect="utf16")
    text = p.read_bytes().decode("utf-16").splitlines()
    text[12] = "oops\t1"
    p.write_bytes("\r\n".join(text).encode("utf-16"))
    err = _error(p)
    assert err.line == 13 and "'oops'" in err.message


def test_extra_column_on_one_line(tmp_path):
    lines = _csv(tmp_path)
    lines[30] += ",7"
    err = _error(_write(tmp_path, lines))
    assert err.line == 31 and "3 comma-separated columns" in err.message


def test_trailing_text_line(tmp_path):
    lines = [*_csv(tmp_path), "End of data"]
    err = _error(_write(tmp_path, lines))
    assert err.line == len(lines) and "not a number" in err.message


@pytest.mark.parametrize("cell", ["nan", "NaN", "inf", "-inf", ""])
def test_nan_inf_or_empty_cell(tmp_path, cell):
    lines = _csv(tmp_path)
    lines[17] = lines[17].split(",")[0] + "," + cell
    err = _error(_write(tmp_path, lines))
    assert err.line == 18 and "NaN or infinite" in err.message


def test_flat_potential(tmp_path):
    lines = ["E/V,I/A"] + [f"0.25,{k * 1e-7!r}" for k in range(30)]
    err = _error(_write(tmp_path, lines))
    assert "does not change" in err.message and err.line == 2


def test_fewer_than_ten_points(tmp_path):
    lines = ["E/V,I/A"] + [f"{k * 0.01!r},{k * 1e-7!r}" for k in range(6)]
    err = _error(_write(tmp_path, lines))
    assert "only 6 data row(s)" in err.message and "lines 2–7" in err.message


@pytest.mark.parametrize(
    ("options", "words"),
    [
        (ImportOptions(potential_column="Potential"), ["potential_column", "'E/V', 'I/A'"]),
        (ImportOptions(current_column=5), ["current_column = 5", "only 2 columns"]),
        (ImportOptions(time_column="t"), ["time_column", "columns found"]),
    ],
)
def test_column_asked_for_not_found(tmp_path, options, words):
    err = _error(_write(tmp_path, _csv(tmp_path)), options)
    for w in words:
        assert w in err.message


def test_named_column_in_file_without_header(tmp_path):
    p = _write(tmp_path, _csv(tmp_path)[1:])
    assert "no header row" in _error(p, ImportOptions(potential_column="E")).message


def test_unknown_unit_in_label(tmp_path):
    lines = _csv(tmp_path, header="E (furlong),I/A")
    err = _error(_write(tmp_path, lines))
    assert "'furlong'" in err.message and "potential_unit" in err.message
    ok = read_voltammogram(_write(tmp_path, lines), ImportOptions(potential_unit="mV"))
    assert ok.metadata["import.potential_unit"] == "mV"


def test_current_column_missing_in_header(tmp_path):
    err = _error(_write(tmp_path, _csv(tmp_path, header="E/V,Something")))
    assert "no current column" in err.message and "'Something'" in err.message


def test_single_numeric_column(tmp_path):
    p = _write(tmp_path, [f"{k * 0.1!r}" for k in range(30)])
    assert "needs a potential and a current column" in _error(p).message


def test_decreasing_explicit_time_column(tmp_path):
    E, i, t = triangle_wave(points_per_sweep=30)
    t = t.copy()
    t[20:] -= 1.0
    rows = [
        f"{a!r},{b!r},{c!r}" for a, b, c in zip(t.tolist(), E.tolist(), i.tolist(), strict=True)
    ]
    p = _write(tmp_path, ["t/s,E/V,I/A", *rows])
    err = _error(p, ImportOptions(time_column="t/s"))
    assert err.line == 22 and "decreases" in err.message


@pytest.mark.parametrize(
    "kwargs",
    [
        {"potential_unit": "kg"},
        {"current_unit": "V"},
        {"anodic_current": "up"},
        {"delimiter": "|"},
        {"decimal": ";"},
        {"delimiter": ",", "decimal": ","},
        {"cycle": 0},
        {"cycle": "first"},
        {"potential_column": -1},
        {"current_column": True},
    ],
)
def test_bad_import_options(kwargs):
    with pytest.raises(InputError):
        ImportOptions(**kwargs)


def test_options_merge():
    base = ImportOptions(delimiter=";", current_unit="uA", cycle=2)
    merged = base.merged(ImportOptions(current_unit="nA", anodic_current="negative"))
    assert merged == ImportOptions(
        delimiter=";", current_unit="nA", anodic_current="negative", cycle=2
    )
    assert ImportOptions(delimiter=" ").delimiter == "whitespace"


def test_text_api_errors_name_the_source():
    with pytest.raises(InputError, match=r"^mem: the file is empty"):
        parse_voltammogram_text("  \n", source="mem")


@pytest.mark.parametrize(
    ("label", "role", "unit"),
    [
        ("E/V", "potential", "v"),
        ("Potential (mV)", "potential", "mv"),
        ("i / uA", "current", "ua"),
        ("Current/nA", "current", "na"),
        ("µA", "current", "ua"),
        ("I [A]", "current", "a"),
        ("WE(1).Potential (V)", "potential", "v"),
        ("WE(1).Current (A)", "current", "a"),
        ("Ewe/V", "potential", "v"),
        ("<I>/mA", "current", "ma"),
        ("Time (s)", "time", "s"),
        ("t/s", "time", "s"),
        ("Time/ms", "time", "ms"),
        ("E vs Ag/AgCl (V)", "potential", "v"),
        ("Potential (mV vs SCE)", "potential", "mv"),
        ("Current \u03bcA", "current", "ua"),
        ("I_uA", "current", "ua"),
        ("Cycle", "cycle", None),
        ("Scan", "cycle", None),
        ("cycle number", "cycle", None),
        ("Scan rate (V/s)", "other", None),
        ("I Range", "other", None),
        ("Potential (A)", "other", "a"),
    ],
)
def test_label_parsing(label, role, unit):
    parsed = parse_label(label)
    assert (parsed.role, parsed.unit) == (role, unit)


def test_label_ranks_prefer_measured_then_plain_potential():
    labels = (
        "Potential measured (V)",
        "Working electrode (V)",
        "E/V",
        "Potential applied (V)",
        "Ece/V",
        "Analog IN/V",
    )
    ranks = [parse_label(s).rank for s in labels]
    assert ranks == sorted(ranks) and len(set(ranks[:5])) == 5
    assert all(parse_label(s).role == "potential" for s in labels)
    kinds = [parse_label(s).qualifier for s in labels]
    assert kinds == ["measured", "measured", None, "applied", None, None]


@pytest.mark.parametrize(
    ("data", "encoding"),
    [
        (b"E/V\n", "utf-8"),
        ("E/µV\n".encode("utf-8-sig"), "utf-8-sig"),
        ("E/µV\n".encode("utf-16"), "utf-16-le"),
        ("E/µV\n".encode("utf-16-le"), "utf-16-le"),
        ("E/µV\n".encode("utf-16-be"), "utf-16-be"),
        ("E/µV\n".encode("latin-1"), "cp1252"),
    ],
)
def test_decoding(data, encoding):
    decoded = decode_bytes(data, source="x")
    assert decoded.encoding == encoding
    assert decoded.text.startswith("E/")


def test_input_file_opened_read_only(tmp_path):
    p = _write(tmp_path, _csv(tmp_path))
    p.chmod(0o444)
    vg = read_voltammogram(p)
    assert np.all(np.isfinite(vg.current_A))


def test_manifest_unit_contradicting_the_label_is_refused(tmp_path):
    """current_unit = "mA" for a column labelled "Current (µA)" once scaled the current a
    thousandfold without a word (D came out 6.96 cm²/s): now a one-line InputError."""
    p = _write(tmp_path, _csv(tmp_path, header="Potential (V),Current (µA)"))
    err = _error(p, ImportOptions(current_unit="mA"))
    text = str(err)
    assert "d.csv" in text and "Current (µA)" in text and "'mA'" in text and "'µA'" in text
    assert "\n" not in text
    # The same unit in another spelling is no contradiction.
    v = read_voltammogram(p, ImportOptions(current_unit="uA"))
    assert np.isfinite(v.current_A).all()
