"""The compiled parser of the numeric block gives pandas' table, or refuses.

``cvfit.io._numparse.parse_numbers`` reads plain rows of numbers from bytes and answers
None for anything else; the importer then takes the ``pandas.read_csv`` path (and behind
it the line-by-line path). Checked here: every accepted block equals pandas' table bit
for bit and the correctly rounded value of every cell; every refused form still gives the
old path's values or InputError; whole files read with the compiled parser on and off
give the same record, metadata and messages.
"""

from __future__ import annotations

import contextlib
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from dialects import DIALECTS, dialect_options, triangle_wave, write_dialect
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from cvfit.errors import InputError
from cvfit.io import ImportOptions, _numparse, parse_voltammogram_bytes, read_voltammogram
from cvfit.io import reader as reader_mod
from cvfit.io import table as table_mod
from cvfit.io import text as text_mod
from cvfit.io.text import head_lines
from cvfit.voltammogram import Voltammogram

needs_numba = pytest.mark.skipif(not _numparse.HAVE_NUMBA, reason="numba is not installed")
SETTINGS = settings(
    max_examples=150,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)
# pandas 3 converts correctly rounded (as the compiled parser does); pandas 2's default
# converter may differ in the last bit outside Clinger's range
PANDAS_ROUNDS_CORRECTLY = int(pd.__version__.split(".")[0]) >= 3
DELIMS = {",": ",", ";": ";", "\t": "\t", "whitespace": " "}


@contextlib.contextmanager
def numba_off():
    """The importer as it is without numba (hypothesis tests cannot take monkeypatch)."""
    saved = _numparse.HAVE_NUMBA
    _numparse.HAVE_NUMBA = False
    try:
        yield
    finally:
        _numparse.HAVE_NUMBA = saved


def _layout(ncols: int, delimiter: str, decimal: str) -> table_mod._Layout:
    return table_mod._Layout(0, None, None, None, delimiter, decimal, ncols)


def _pandas(block: bytes, ncols: int, delimiter: str, decimal: str) -> np.ndarray | None:
    """The importer's one-call pandas path on the same block (None: it refuses too)."""
    crlf = block.count(b"\r") == block.count(b"\r\n")
    return table_mod._pandas_block(block, _layout(ncols, delimiter, decimal), crlf)


def _bits(a: np.ndarray) -> np.ndarray:
    return np.ascontiguousarray(a, dtype=np.float64).view(np.int64)


def _assert_as_pandas(got: np.ndarray, want: np.ndarray) -> None:
    assert got.shape == want.shape
    if PANDAS_ROUNDS_CORRECTLY:
        np.testing.assert_array_equal(_bits(got), _bits(want))
    else:  # pragma: no cover - older pandas
        np.testing.assert_array_max_ulp(got, want, maxulp=1)


# --- cells and blocks -------------------------------------------------------------------


@st.composite
def cells(draw) -> str:
    """A number as exports and scripts write it (at most 19 significant digits)."""
    kind = draw(st.sampled_from(["repr", "%.10g", "%.6e", "%g", "%.18e", "int", "free"]))
    if kind == "int":
        return str(draw(st.integers(-(10**18), 10**18)))
    if kind == "free":  # 5, 5., .5, 1E+05, leading zeros, signs, long exponents
        sign = draw(st.sampled_from(["", "-", "+"]))
        whole = draw(st.from_regex(r"0{0,3}[0-9]{0,9}", fullmatch=True))
        frac = draw(st.from_regex(r"[0-9]{0,9}", fullmatch=True))
        point = draw(st.booleans()) or not whole
        mantissa = whole + ("." + frac if point else "")
        if not any(ch.isdigit() for ch in mantissa):
            mantissa = "0" + mantissa
        exponent = draw(
            st.sampled_from(["", "e5", "E+05", "e-07", "e-300", "E330", "e-330", "e0022"])
        )
        return sign + mantissa + exponent
    x = draw(st.floats(allow_nan=False, allow_infinity=False))
    return repr(x) if kind == "repr" else kind % x


@st.composite
def blocks(draw) -> tuple[bytes, int, str, str, list[list[str]], bool]:
    """(block, ncols, delimiter, decimal, cells, blanks in cells) of plain rows."""
    delimiter = draw(st.sampled_from([",", ";", "\t", "whitespace"]))
    decimal = "." if delimiter == "," else draw(st.sampled_from([".", ","]))
    ncols = draw(st.integers(1, 4))
    rows = draw(st.lists(st.lists(cells(), min_size=ncols, max_size=ncols), min_size=1))
    newline = draw(st.sampled_from(["\n", "\r\n"]))
    pad = draw(st.sampled_from(["", " ", "  "])) if delimiter != "whitespace" else ""
    sep = DELIMS[delimiter] if delimiter != "whitespace" else draw(st.sampled_from([" ", "\t "]))
    lines = [sep.join(f"{pad}{c.replace('.', decimal)}{pad}" for c in row) for row in rows]
    text = newline.join(lines) + draw(st.sampled_from([newline, ""]))
    return text.encode("ascii"), ncols, delimiter, decimal, rows, bool(pad)


@needs_numba
@SETTINGS
@given(blocks())
def test_plain_blocks_equal_pandas_bitwise(block):
    data, ncols, delimiter, decimal, rows, padded = block
    got = _numparse.parse_numbers(data, 0, ncols, delimiter, decimal)
    if got is None:
        # the one refusal of plain cells: '+' with blanks in the cell, which pandas reads
        # by a converter that is not correctly rounded
        assert padded and any(c.startswith("+") for row in rows for c in row)
        return
    # correctly rounded: the value Python's float() gives for every cell
    np.testing.assert_array_equal(_bits(got), _bits(np.array(rows, dtype=float)))
    want = _pandas(data, ncols, delimiter, decimal)
    assert want is not None
    _assert_as_pandas(got, want)


_JUNK = st.sampled_from(
    ['"', "'", "nan", "NaN", "inf", "-inf", "x", "", " ", "\r", "\n", "\r\n", "\t", ",",
     ";", ".", "e", "E", "+", "-", "--", "1..2", "1e", "1e+", "µ", "\u2212", "\x00", "\x0c",
     "12345678901234567890", "1e99999", "0x10", "1_0", "d", "#"]
)  # fmt: skip


@needs_numba
@SETTINGS
@given(blocks(), st.lists(st.tuples(st.floats(0, 1), _JUNK), min_size=1, max_size=4))
def test_edited_blocks_refused_or_as_pandas(block, edits):
    """Whatever the compiled parser accepts, pandas reads to the same values."""
    data, ncols, delimiter, decimal, *_ = block
    text = data.decode("ascii")
    for where, junk in edits:
        k = int(where * len(text))
        text = text[:k] + junk + text[k:]
    edited = text.encode("utf-8")
    got = _numparse.parse_numbers(edited, 0, ncols, delimiter, decimal)
    if got is not None:
        want = _pandas(edited, ncols, delimiter, decimal)
        assert want is not None, edited[:200]
        _assert_as_pandas(got, want)


@needs_numba
@pytest.mark.parametrize(
    ("block", "delimiter", "decimal"),
    [
        (b'1,2\n"3",4\n', ",", "."),  # quotes
        (b"1,2\nnan,4\n", ",", "."),
        (b"1,2\ninf,4\n", ",", "."),
        (b"1,2\n\n3,4\n", ",", "."),  # blank line
        (b"1,2\n   \n3,4\n", ",", "."),  # blank-only line
        (b"1,2\n3\n", ",", "."),  # short row
        (b"1,2\n3,4,5\n", ",", "."),  # long row
        (b"1,2\n3,\n", ",", "."),  # empty cell
        (b"1,2\r3,4\n", ",", "."),  # lone CR inside
        (b"1,2\n3,4\r", ",", "."),  # lone CR at the end
        (b"1,2\n3,4x\n", ",", "."),  # junk
        (b"1,2\n3,4 5\n", ",", "."),  # two numbers in one cell
        (b"1,2\n3,1e\n", ",", "."),  # exponent without digits
        (b"1,2\n3,.\n", ",", "."),
        (b"1,2\n3,12345678901234567890\n", ",", "."),  # 20 significant digits
        (b"1,2\n3,1e10000\n", ",", "."),  # exponent beyond 9999
        (b"1,2\n3,\xc2\xb5\n", ",", "."),  # non-ASCII
        (b"1,2\n3,\x004\n", ",", "."),  # control character
        (b"1;2,5\n3;4.5\n", ";", ","),  # wrong decimal mark
        (b"1\t\t2\n3\t4\n", "\t", "."),  # empty cell between tabs
        (b"1 2\n3 4x\n", "whitespace", "."),
    ],
)
def test_refused_forms(block, delimiter, decimal):
    assert _numparse.parse_numbers(block, 0, 2, delimiter, decimal) is None


@needs_numba
def test_edge_values_and_forms():
    cells = ["5", "5.", ".5", "-.5", "+5", "1e5", "1E+05", "-1.2e-07", "0", "-0", "-0.0e5",
             "007.50", "0.000000000000000000001234", "9007199254740993", "1e23", "1e-400",
             "1e400", "4.9406564584124654e-324", "2.4703282292062328e-324",
             "2.2250738585072011e-308", "1.7976931348623157e308", "1.7976931348623159e308",
             "1234567890123456789", "0.1000000000000000055"]  # fmt: skip
    data = "\n".join(f" {c} ,{c}" for c in cells).encode()
    got = _numparse.parse_numbers(data, 0, 2, ",", ".")
    want = np.array([[float(c), float(c)] for c in cells])
    np.testing.assert_array_equal(_bits(got), _bits(want))
    _assert_as_pandas(got, _pandas(data, 2, ",", "."))
    assert np.signbit(got[9, 0]) and np.signbit(got[10, 0])  # -0 stays negative zero


def test_without_numba_nothing_is_parsed():
    with numba_off():
        assert _numparse.parse_numbers(b"1,2\n3,4\n", 0, 2, ",", ".") is None


@needs_numba
def test_first_call_in_a_fresh_process_is_silent():
    code = (
        "from cvfit.io import _numparse\n"
        "assert _numparse.warm_up()\n"
        "v = _numparse.parse_numbers(b'1,2\\n3,4e-30\\n', 0, 2, ',', '.')\n"
        "assert v is not None and v.shape == (2, 2)\n"
    )
    run = subprocess.run(
        [sys.executable, "-W", "error", "-c", code], capture_output=True, text=True
    )
    assert run.returncode == 0, run.stderr
    assert run.stderr == "" and run.stdout == ""


@needs_numba
def test_nowhere_to_cache_means_pandas(tmp_path):
    """numba refuses cache=True without a writable cache directory: no numba then."""
    path = _plain_file(tmp_path)
    code = (
        "import numba\n"
        "def njit(*args, **kwargs):\n"
        "    def deco(func):\n"
        "        raise RuntimeError('cannot cache function: no locator available')\n"
        "    return deco\n"
        "numba.njit = njit\n"
        "from cvfit.io import _numparse, read_voltammogram\n"
        "assert not _numparse.HAVE_NUMBA and not _numparse.warm_up()\n"
        f"v = read_voltammogram({str(path)!r})\n"
        "assert v.n_points == 401, v.n_points\n"
    )
    run = subprocess.run(
        [sys.executable, "-W", "error", "-c", code], capture_output=True, text=True
    )
    assert run.returncode == 0, run.stderr


# --- whole files: compiled parser on and off ----------------------------------------------


def _outcome(call):
    """What an import gives: the record's arrays and metadata, or the error."""
    try:
        v = call()
    except InputError as exc:
        return ("error", str(exc), exc.line, exc.key)
    arrays = [v.potential_V, v.current_A, v.time_s]
    return (
        "record",
        [None if a is None else _bits(a).tolist() for a in arrays],
        dict(v.metadata),
        v.scan_rate_V_s,
    )


def _same_both_ways(call) -> tuple:
    on = _outcome(call)
    with numba_off():
        off = _outcome(call)
    assert on == off
    return on


_DEFECTS = {
    "none": lambda row: row,
    "blank": lambda row: row + "\n",
    "spaces": lambda row: row + "\n   ",
    "nan": lambda row: row.replace(row.split(",")[0], "nan", 1),
    "inf": lambda row: row.replace(row.split(",")[0], "inf", 1),
    "quoted": lambda row: '"' + row + '"',
    "short": lambda row: row.rsplit(",", 1)[0],
    "long": lambda row: row + ",1",
    "empty": lambda row: row.replace(",", ",,", 1),
    "lone-cr": lambda row: row + "\r" + row,
    "junk": lambda row: row + "x",
    "control": lambda row: row + "\x01",
    "non-ascii": lambda row: row + "µ",
    "unicode-minus": lambda row: "\u2212" + row,
    "long-number": lambda row: "1.2345678901234567890123" + row[row.index(",") :],
    "repeated-header": lambda row: "t,E,i\n" + row,
    "padded": lambda row: "  " + row + "\t",
}


@st.composite
def files(draw) -> tuple[bytes, ImportOptions]:
    n = draw(st.integers(310, 420))  # past the 300 lines read to find the header
    E, i, t = triangle_wave(points_per_sweep=n // 2 + 1, seed=draw(st.integers(0, 9)))
    fmt = draw(st.sampled_from(["{:r}", "{:.10g}", "{:.6e}", "{:g}"]))

    def cell(x):
        return repr(float(x)) if fmt == "{:r}" else fmt.format(x)

    rows = [",".join(cell(x) for x in r) for r in zip(t, E, i, strict=True)]
    for _ in range(draw(st.sampled_from([0, 0, 1, 2]))):  # clean files half the time
        at = draw(st.integers(0, len(rows) - 1))
        rows[at] = _DEFECTS[draw(st.sampled_from(sorted(_DEFECTS)))](rows[at])
    delimiter = draw(st.sampled_from([",", ";", "\t", "whitespace"]))
    decimal = "." if delimiter == "," else draw(st.sampled_from([".", ","]))
    sep = DELIMS[delimiter]
    header = draw(st.sampled_from(["t/s,E/V,I/A", "time_s,potential_V,current_mA", None]))
    preamble = draw(st.sampled_from([[], ["instrument: bench", "scan rate = 0.1 V/s", ""]]))
    lines = [*preamble, *([header] if header else []), *rows]
    text = "\n".join(ln.replace(",", "\0").replace(".", decimal).replace("\0", sep)
                     for ln in lines)  # fmt: skip
    text += draw(st.sampled_from(["\n", ""]))
    if draw(st.booleans()):
        text = text.replace("\n", "\r\n")
    data = text.encode("utf-8")
    if draw(st.integers(0, 3)) == 0:
        data = b"\xef\xbb\xbf" + data
    options = draw(
        st.sampled_from(
            [ImportOptions(), ImportOptions(anodic_current="negative"),
             ImportOptions(delimiter=delimiter, decimal=decimal)]
        )
    )  # fmt: skip
    return data, options


@SETTINGS
@given(files())
def test_files_read_the_same_with_and_without_numba(case):
    data, options = case
    _same_both_ways(lambda: parse_voltammogram_bytes(data, source="f.csv", options=options))
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError:  # pragma: no cover - the strategy writes UTF-8
        return
    _same_both_ways(lambda: reader_mod.parse_voltammogram_text(text, source="f.csv"))


@pytest.mark.parametrize("dialect", DIALECTS)
def test_dialects_read_the_same_with_and_without_numba(tmp_path, dialect):
    E, i, t = triangle_wave(points_per_sweep=200, cycles=2)
    path = write_dialect(tmp_path / "x.csv", potential_V=E, current_A=i, time_s=t,
                         dialect=dialect)  # fmt: skip
    kind, *_ = _same_both_ways(lambda: read_voltammogram(path, dialect_options(dialect)))
    assert kind == "record"


def _plain_file(
    tmp_path: Path, rows: int = 400, newline: str = "\n", header: str = "time/s,E/V,I/uA",
    bom: bool = False,
) -> Path:  # fmt: skip
    E, i, t = triangle_wave(points_per_sweep=rows // 2 + 1)
    lines = ["instrument: bench \u2212 cell 2", header]
    lines += [f"{a:.6g},{b:.10g},{c * 1e6:.6e}" for a, b, c in zip(t, E, i, strict=True)]
    path = tmp_path / "plain.csv"
    text = newline.join(lines) + newline
    path.write_bytes((b"\xef\xbb\xbf" if bom else b"") + text.encode("utf-8"))
    return path


@needs_numba
@pytest.mark.parametrize(
    ("newline", "header", "bom", "unit"),
    [
        ("\n", "time/s,E/V,I/uA", False, "uA"),
        ("\r\n", "time/s,E/V,I/uA", False, "uA"),
        ("\n", "time/s,E/V,I/\u00b5A", False, "\u00b5A"),
        ("\r\n", "time/s,E/V,I/\u00b5A", True, "\u00b5A"),
        ("\n", "t/s,E/V,I/\u03bcA", True, "\u03bcA"),
    ],
)
def test_utf8_file_is_parsed_from_its_bytes(tmp_path, monkeypatch, newline, header, bom, unit):
    """No decoded copy and no pandas for a plain file; same record as without numba."""
    path = _plain_file(tmp_path, newline=newline, header=header, bom=bom)
    with numba_off():
        expected = _outcome(lambda: read_voltammogram(path))

    def no_decoding(*args, **kwargs):
        raise AssertionError("a plain UTF-8 file was decoded")

    def no_pandas(*args, **kwargs):
        raise AssertionError("a plain UTF-8 file went to pandas")

    monkeypatch.setattr(reader_mod, "decode_bytes", no_decoding)
    monkeypatch.setattr(table_mod, "_parse_block", no_pandas)
    got = _outcome(lambda: read_voltammogram(path))
    assert got == expected
    assert got[2]["import.encoding"] == ("utf-8-sig" if bom else "utf-8")
    assert got[2]["import.current_unit"] == unit
    assert got[2]["instrument"] == "bench - cell 2"  # the typographic minus read as '-'


@needs_numba
def test_refused_file_gives_the_old_message(tmp_path):
    path = _plain_file(tmp_path)
    lines = path.read_text().splitlines()
    lines[300] = lines[300].replace(",", ",abc", 1)
    path.write_text("\n".join(lines) + "\n")
    kind, message, line, _ = _same_both_ways(lambda: read_voltammogram(path))
    assert kind == "error" and line == 301 and "'abc" in message


def test_record_shares_only_read_only_arrays_of_its_own():
    E = np.linspace(0.0, 1.0, 50)
    i = np.sin(E)
    v = Voltammogram(E, i)
    E[0] = 9.0  # the caller's array is still the caller's
    assert v.potential_V[0] == 0.0 and not v.potential_V.flags.writeable
    frozen = np.linspace(0.0, 1.0, 50).copy()  # no view of anything
    frozen.setflags(write=False)
    assert Voltammogram(frozen, i).potential_V is frozen
    view = np.linspace(0.0, 2.0, 100)[::2]
    view.setflags(write=False)
    assert Voltammogram(view, i).potential_V is not view  # a view is copied
    assert Voltammogram(v.potential_V, v.current_A).current_A is v.current_A


def _old_head(text: str, n: int):
    """head_lines as it was: the whole text split (reference)."""
    parts = text.split("\n", n)
    complete = len(parts) <= n or not parts[n]
    head = parts if len(parts) <= n else parts[:n]
    if head and head[-1] == "":
        head.pop()
    ends, total = [], 0
    for p in head:
        total += len(p) + 1
        ends.append(total)
    return head, ends, complete


@SETTINGS
@given(
    st.lists(st.sampled_from(["", "a", "1,2", "x" * 300, "\r", " "]), max_size=60).map("\n".join),
    st.integers(1, 40),
    st.booleans(),
)
def test_head_lines_as_before(text, n, trailing):
    text += "\n" if trailing else ""
    assert head_lines(text, n) == _old_head(text, n)
    assert head_lines(text.encode("ascii"), n) == _old_head(text, n)


@SETTINGS
@given(
    st.lists(
        st.sampled_from(["1,2\n", "µA", "€", "\u2212", "\ufeff", "é", "\x85", "\x9f", "\xa0",
                         "\x01", "\x1f", "\x7f", "\t", "\r\n", " ", "x"]),
        min_size=1,
        max_size=40,
    ).map("".join),
    st.booleans(),
)  # fmt: skip
def test_utf8_control_check_as_a_full_search(text, bom):
    """decode_bytes finds the first control character of UTF-8 text as a search would."""
    data = (b"\xef\xbb\xbf" if bom else b"") + text.encode("utf-8")
    decoded = data.decode("utf-8-sig").lstrip("\ufeff")
    first = next((ch for ch in decoded if text_mod._CONTROL.match(ch)), None)
    try:
        got = text_mod.decode_bytes(data, source="u.csv")
    except InputError as exc:
        if first is None:
            assert "empty" in str(exc)
        else:
            assert f"control character 0x{ord(first):02x} found" in str(exc)
            assert exc.line == decoded[: decoded.index(first)].count("\n") + 1
        return
    assert first is None and got.text == decoded
    assert got.encoding == ("utf-8-sig" if bom else "utf-8")
