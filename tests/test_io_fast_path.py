"""The one-call import path gives what the line-by-line path gives, or hands over to it.

``read_table_text`` parses the numeric block with one ``pandas.read_csv`` call and falls
back to ``read_table`` (line by line) on anything unusual; every table and every error
message must be the same as the line-by-line path's for the same text.
"""

from __future__ import annotations

from dataclasses import fields, replace

import numpy as np
import pytest

from cvfit.errors import InputError
from cvfit.io import table as table_mod
from cvfit.io.table import read_table, read_table_text
from cvfit.io.text import split_lines
from cvfit.voltammogram import Voltammogram, turning_points

ROWS = 1200  # well past the lines the fast path reads to find the header


def _rows(n: int = ROWS, fmt: str = "{t:.4f},{e:.5f},{i:.6e}") -> list[str]:
    t = np.arange(n) * 0.001
    e = 0.2 - 0.4 * np.abs((np.arange(n) / (n / 2)) - 1.0)
    i = 1e-6 * np.sin(np.arange(n) / 37.0)
    return [fmt.format(t=a, e=b, i=c) for a, b, c in zip(t, e, i, strict=True)]


def _csv(rows: list[str], *, header: str = "time/s,E/V,I/A", newline: str = "\n") -> str:
    lines = ["instrument: bench", "scan rate = 0.1 V/s", "", header, *rows]
    return newline.join(lines) + newline


def _edit(rows: list[str], at: int, line: str, *, replace: bool = False) -> list[str]:
    out = list(rows)
    if replace:
        out[at] = line
    else:
        out.insert(at, line)
    return out


def _same(text: str, **kw) -> None:
    """Both paths give equal tables, or both raise the same message at the same line.

    ASCII text is read a second time from its bytes (``ascii_bytes``, as a file is read),
    which must give the same again.
    """
    if text.isascii():
        _same_one(text, **kw)
        kw = {**kw, "ascii_bytes": text.encode("ascii")}
    _same_one(text, **kw)


def _same_one(text: str, **kw) -> None:
    line_kw = {k: v for k, v in kw.items() if k != "ascii_bytes"}
    try:
        slow = read_table(split_lines(text), source="f.csv", **line_kw)
    except InputError as exc:
        with pytest.raises(InputError) as got:
            read_table_text(text, source="f.csv", **kw)
        assert str(got.value) == str(exc)
        assert got.value.line == exc.line
        return
    fast = read_table_text(text, source="f.csv", **kw)
    np.testing.assert_array_equal(fast.values, slow.values)
    np.testing.assert_array_equal(fast.line_numbers, slow.line_numbers)
    assert fast.header == slow.header
    assert fast.header_line == slow.header_line
    assert dict(fast.metadata) == dict(slow.metadata)
    assert (fast.delimiter, fast.decimal) == (slow.delimiter, slow.decimal)
    assert fast.notes == slow.notes


def test_clean_file_takes_one_call_and_matches(monkeypatch):
    text = _csv(_rows())
    expected = read_table(split_lines(text), source="f.csv")

    def refuse(*args, **kwargs):
        raise AssertionError("the clean file went to the line-by-line path")

    monkeypatch.setattr(table_mod, "read_table", refuse)
    got = read_table_text(text, source="f.csv")
    np.testing.assert_array_equal(got.values, expected.values)
    np.testing.assert_array_equal(got.line_numbers, expected.line_numbers)
    assert got.line_numbers[0] == 5 and got.line_numbers[-1] == 4 + ROWS
    assert got.header == ("time/s", "E/V", "I/A")
    assert dict(got.metadata) == {"instrument": "bench", "scan rate": "0.1 V/s"}


@pytest.mark.parametrize(
    "rows",
    [
        _edit(_rows(), 900, ""),  # blank line deep in the data
        _edit(_rows(), 900, "   "),  # whitespace-only line
        _edit(_rows(), 950, "time/s,E/V,I/A"),  # repeated header row
        _edit(_rows(), 10, ""),  # blank line among the sampled rows
        _rows() + ["", ""],  # trailing blank lines
        _edit(_rows(), 700, "  0.7,0.1,1e-6  "),  # surrounding blanks on one row
        _edit(_rows(), 700, "\t0.7,0.1,1e-6"),  # leading tab
        _edit(_rows(), 980, "0.98,abc,1e-6", replace=True),  # bad cell
        _edit(_rows(), 980, "0.98,0.1", replace=True),  # short row
        _edit(_rows(), 980, "0.98,0.1,1e-6,4", replace=True),  # long row
        _edit(_rows(), 980, "0.98,,1e-6", replace=True),  # empty cell
        _edit(_rows(), 980, "0.98,nan,1e-6", replace=True),  # NaN cell
        _edit(_rows(), 980, '0.98, "0.1",1e-6', replace=True),  # quoted after a blank
        _edit(_rows(), 980, '"0.98","0.1","1e-6"', replace=True),  # quoted cells
        _edit(_rows(), 980, '"0.98\n",0.1,1e-6', replace=True),  # line end inside quotes
    ],
    ids=[
        "blank",
        "whitespace-line",
        "repeated-header",
        "blank-in-sample",
        "trailing-blanks",
        "padded-row",
        "leading-tab",
        "bad-cell",
        "short-row",
        "long-row",
        "empty-cell",
        "nan-cell",
        "quote-after-blank",
        "quoted",
        "quoted-line-end",
    ],
)
def test_unusual_rows_give_what_the_line_path_gives(rows):
    _same(_csv(rows))


@pytest.mark.parametrize("newline", ["\r\n", "\r"])
def test_windows_and_old_mac_line_ends(newline):
    _same(_csv(_rows(), newline=newline))
    _same(_csv(_edit(_rows(), 990, "x,y,z", replace=True), newline=newline))
    _same(_csv(_edit(_rows(), 990, ""), newline=newline))
    mixed = _csv(_rows()).replace("\n", newline, 600)  # some lines end one way, some the other
    _same(mixed)
    _same(mixed.rstrip("\r\n"))  # no line end after the last row


def test_windows_file_takes_one_call(monkeypatch):
    text = _csv(_rows(), newline="\r\n")
    expected = read_table(split_lines(text), source="f.csv")
    monkeypatch.setattr(table_mod, "read_table", None)  # any call would fail
    got = read_table_text(text, source="f.csv")
    np.testing.assert_array_equal(got.values, expected.values)
    np.testing.assert_array_equal(got.line_numbers, expected.line_numbers)
    assert got.header == expected.header and dict(got.metadata) == dict(expected.metadata)


@pytest.mark.parametrize(
    ("fmt", "header", "kw"),
    [
        ("{t:.4f};{e:.5f};{i:.6e}", "t;E;I", {}),
        ("{t:.4f}\t{e:.5f}\t{i:.6e}", "t\tE\tI", {}),
        ("{t:.4f}  {e:.5f}  {i:.6e}", "t  E  I", {}),
        ("{t:.4f};{e:.5f};{i:.6e}", "t;E;I", {"delimiter": ";", "decimal": "."}),
    ],
    ids=["semicolon", "tab", "whitespace", "explicit"],
)
def test_other_dialects(fmt, header, kw):
    rows = _rows(fmt=fmt)
    _same(_csv(rows, header=header), **kw)
    _same(_csv(_edit(rows, 950, ""), header=header), **kw)
    comma = [r.replace(".", ",") for r in rows]
    if ";" in fmt:
        _same(_csv(comma, header=header))


def test_long_preamble_and_short_files():
    preamble = [f"key{k} = {k}" for k in range(2000)]
    text = "\n".join(preamble + ["E,I"] + [r.split(",", 1)[1] for r in _rows()]) + "\n"
    _same(text)
    _same(_csv(_rows(50)))  # shorter than the lines read ahead: line-by-line path


def test_turning_points_cached_once_and_record_unchanged():
    E = np.concatenate([np.linspace(0.2, -0.4, 500), np.linspace(-0.4, 0.2, 500)[1:]])
    v = Voltammogram(E, np.sin(E * 9.0))
    first = v.sweeps()
    assert [(s.start, s.stop) for s in first] == [(0, 499), (499, 998)]
    assert tuple(turning_points(E)) == v._turns
    assert v.sweeps() == first
    # the cache is no field: records compare, copy and pickle as before
    assert "_turns" not in {f.name for f in fields(v)}
    assert [(s.start, s.stop) for s in replace(v, source="x").sweeps()] == [(0, 499), (499, 998)]


def test_bytes_that_are_not_the_text_are_refused():
    text = _csv(_rows())
    with pytest.raises(ValueError, match="ascii_bytes"):
        read_table_text(text, source="f.csv", ascii_bytes=text.encode()[:-1])


@pytest.mark.parametrize(
    "header",
    ["time/s,E/V,I/A", "time/s,E/V,I/µA", "t,E,I"],
    ids=["ascii", "utf-8", "minus-sign"],
)
def test_file_bytes_read_as_their_text(header):
    """A file's bytes give the record its decoded text gives (ASCII bytes go to pandas
    as they are; other text is encoded again)."""
    from cvfit.io import parse_voltammogram_bytes, parse_voltammogram_text

    rows = _rows()
    if header == "t,E,I":  # a typographic minus, as some localised exports write it
        rows = [r.replace("-", "\u2212") for r in rows]
    text = _csv(rows, header=header)
    data = text.encode("utf-8")
    a = parse_voltammogram_bytes(data, source="f.csv")
    b = parse_voltammogram_text(text, source="f.csv")
    np.testing.assert_array_equal(a.potential_V, b.potential_V)
    np.testing.assert_array_equal(a.current_A, b.current_A)
    assert a.metadata["import.encoding"] == "utf-8"
