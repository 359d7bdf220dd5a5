"""Delimited text to a numeric table: preamble, header row, delimiter and decimal mark.

The happy path parses the numeric block in one :func:`pandas.read_csv` call. Only when
it refuses are the lines scanned one by one to name the bad cell.
"""

from __future__ import annotations

import io
import re
import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from cvfit.errors import InputError
from cvfit.io.columns import is_unit
from cvfit.io.text import head_lines, split_lines

__all__ = ["NumericTable", "read_table", "read_table_text"]

_SPECIAL = re.compile(r"(?i)\b(?:nan|[+-]?inf(?:inity)?)\b")
_NUMERIC_LINE = re.compile(r"^[\d\s.,;+\-eE\"']*$")
_KEY_VALUE = re.compile(r"^\s*(?P<key>[^:=]*[^:=\s])\s*[:=]\s*(?P<value>.*?)\s*$")
_CELL_DOT = re.compile(r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$")
_CELL_COMMA = re.compile(r"^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$")
_CELL_SPECIAL = re.compile(r"(?i)^[+-]?(?:nan|inf|infinity)$")
_COMMENT_MARK = re.compile(r"^\s*(?:#+|%+|//)\s*")  # "# E/V  I/A" style header rows
_SAMPLE = 200
_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "whitespace": "whitespace"}


@dataclass(frozen=True)
class NumericTable:
    """The numeric block of a text export.

    Attributes
    ----------
    values : ndarray, shape (rows, columns)
        The numbers, NaN where a cell was empty or NaN.
    line_numbers : ndarray of int
        1-based line of each row as an editor numbers it.
    header : tuple of str or None
        Header labels, one per column, or None when the file has no header row.
    header_line : int or None
        1-based line of the header row.
    metadata : dict
        ``key: value`` and ``key = value`` lines above the header.
    delimiter, decimal : str
        What separated the columns (``","``, ``";"``, ``"\\t"`` or ``"whitespace"``) and
        the decimal mark.
    notes : dict
        Remarks on how the table was read, for the voltammogram's metadata.
    """

    values: np.ndarray
    line_numbers: np.ndarray
    header: tuple[str, ...] | None
    header_line: int | None
    metadata: dict[str, str]
    delimiter: str
    decimal: str
    notes: dict[str, str] = field(default_factory=dict)


def _is_numeric_line(line: str) -> bool:
    stripped = _SPECIAL.sub("0", line)
    return bool(_NUMERIC_LINE.match(stripped)) and any(ch.isdigit() for ch in stripped)


def _find_data_start(lines: list[str]) -> int | None:
    """Index of the first numeric line that two more numeric lines follow (or end the file)."""
    first = None
    for k, line in enumerate(lines):
        if not line.strip() or not _is_numeric_line(line):
            continue
        if first is None:
            first = k
        following = [ln for ln in lines[k + 1 : k + 20] if ln.strip()][:2]
        if all(_is_numeric_line(ln) for ln in following):
            return k
    return first


def _split(line: str, delimiter: str) -> list[str]:
    if delimiter == "whitespace":
        return line.split()
    return [cell.strip() for cell in line.strip().split(delimiter)]


def _sniff_delimiter(sample: list[str]) -> str:
    need = 0.9 * len(sample)
    for d in ("\t", ";"):
        if sum(d in ln for ln in sample) >= need:
            return d
    if sum("," in ln for ln in sample) >= need:
        # "1,5 2,3" is whitespace-separated decimal-comma numbers; "1.5,2.3" is CSV.
        decimal_comma_ws = all(
            len(cells) >= 2 and all(_CELL_COMMA.match(c.strip("\"'")) for c in cells)
            for cells in (ln.split() for ln in sample)
        )
        return "whitespace" if decimal_comma_ws else ","
    return "whitespace"


def _sniff_decimal(sample: list[str], delimiter: str) -> str:
    if delimiter == ",":
        return "."
    text = "\n".join(sample)
    return "," if text.count(",") > text.count(".") else "."


def _split_header(line: str, delimiter: str, ncols: int) -> list[str]:
    """Header labels; for whitespace files, re-join unit groups split at blanks."""
    if delimiter != "whitespace":
        return _split(line, delimiter)
    wide = [c.strip() for c in re.split(r"\t|\s{2,}", line.strip()) if c.strip()]
    if len(wide) == ncols:
        return wide
    labels: list[str] = []
    for token in line.split():
        if labels and (token[0] in "([/" or labels[-1].endswith("/") or token.lower() == "vs"):
            labels[-1] = f"{labels[-1]} {token}"
        else:
            labels.append(token)
    return labels


def _join_units_row(
    header: tuple[str, ...], lines: list[str], header_idx: int, delimiter: str
) -> tuple[str, ...]:
    """``Potential,Current`` above ``V,mA`` becomes ``Potential (V)``, ``Current (mA)``."""
    if not all(not lab or is_unit(lab) for lab in header) or not any(header):
        return header
    above = [k for k in range(header_idx) if lines[k].strip()]
    if not above:
        return header
    names = [
        n.strip().strip("\"'").strip()
        for n in _split_header(lines[above[-1]], delimiter, len(header))
    ]
    if len(names) != len(header) or any(is_unit(n) for n in names if n):
        return header
    return tuple(f"{n} ({u})" if n and u else n or u for n, u in zip(names, header, strict=True))


def _metadata(lines: list[str]) -> dict[str, str]:
    out: dict[str, str] = {}
    for line in lines:
        m = _KEY_VALUE.match(line)
        if m and m["key"].strip():
            out[m["key"].strip().strip("\"'")] = m["value"].strip().strip("\"'")
    return out


def _locate_bad_cell(
    rows: list[tuple[int, str]],
    delimiter: str,
    decimal: str,
    ncols: int,
    header: tuple[str, ...] | None,
    source: str,
) -> InputError | None:
    """Failure path: the first line whose cell count or content is wrong."""
    cell_re = _CELL_COMMA if decimal == "," else _CELL_DOT
    for lineno, line in rows:
        cells = _split(line, delimiter)
        if len(cells) > ncols:
            return InputError(
                f"this line has {len(cells)} {_NAMES[delimiter]}-separated columns but the "
                f"data rows above have {ncols}; fix or delete the line",
                source=source,
                line=lineno,
            )
        for col, cell in enumerate(cells):
            value = cell.strip().strip("\"'").strip()
            if value and not (cell_re.match(value) or _CELL_SPECIAL.match(value)):
                label = f" ({header[col]!r})" if header and col < len(header) else ""
                return InputError(
                    f"column {col + 1}{label}: {value[:40]!r} is not a number "
                    f"(decimal mark {decimal!r}); fix or delete the line, or set decimal/"
                    "delimiter in [import]",
                    source=source,
                    line=lineno,
                    key=header[col] if header and col < len(header) else None,
                )
    return None


@dataclass(frozen=True)
class _Layout:
    """Where the numeric block starts and how it is written (shared by both paths)."""

    start: int
    header_idx: int | None
    header_key: str | None
    header: tuple[str, ...] | None
    delimiter: str
    decimal: str
    ncols: int


def _no_rows(source: str) -> InputError:
    return InputError(
        "no rows of numbers found; the file needs columns of numbers (potential and "
        "current) below an optional header row",
        source=source,
    )


def _header_of(lines: list[str], start: int) -> tuple[int | None, str | None]:
    """The nearest non-blank line above the data (index, stripped text)."""
    above = [k for k in range(start) if lines[k].strip()]
    header_idx = above[-1] if above else None
    return header_idx, (lines[header_idx].strip() if header_idx is not None else None)


def _layout(
    lines: list[str],
    start: int,
    sample: list[str],
    *,
    source: str,
    delimiter: str | None,
    decimal: str | None,
) -> _Layout:
    """Delimiter, decimal mark, column count and header from the first data rows."""
    header_idx, header_key = _header_of(lines, start)
    header_text = lines[header_idx] if header_idx is not None else None
    delim = delimiter or _sniff_delimiter(sample)
    dec = decimal or _sniff_decimal(sample, delim)
    if delim == "," and dec == ",":
        raise InputError(
            "the decimal mark and the delimiter are both ','; set delimiter in [import]",
            source=source,
            key="delimiter",
        )
    ncols = len(_split(sample[0], delim))
    header: tuple[str, ...] | None = None
    if header_text is not None:
        labels = _split_header(_COMMENT_MARK.sub("", header_text), delim, ncols)
        if len(labels) >= ncols and all(not lab for lab in labels[ncols:]):
            labels = labels[:ncols]
        if len(labels) == ncols and not _is_numeric_line(header_text):
            header = tuple(lab.strip().strip("\"'").strip() for lab in labels)
    if header is not None and header_idx is not None:
        header = _join_units_row(header, lines, header_idx, delim)
    return _Layout(start, header_idx, header_key, header, delim, dec, ncols)


def _parse_block(block: str | bytes, lay: _Layout, *, fast: bool = False) -> np.ndarray:
    """One ``pandas.read_csv`` call (C engine) on the numeric block; raises on any doubt.

    ``fast`` (the happy path of :func:`read_table_text`, *block* in UTF-8 bytes): no initial-space
    skipping (pandas' float conversion accepts blanks around a number; a quoted cell after
    a blank fails and goes to the careful path), blank lines kept as NaN rows and no
    implicit index column, so every line is one row or the call fails.
    """
    sep = r"\s+" if lay.delimiter == "whitespace" else lay.delimiter
    if fast:
        source: io.IOBase = io.BytesIO(block)
        extra = {"index_col": False, "skip_blank_lines": False, "skipinitialspace": False}
    else:
        source, extra = io.StringIO(block), {"skipinitialspace": True}
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        frame = pd.read_csv(
            source,
            sep=sep,
            header=None,
            names=range(lay.ncols),
            decimal=lay.decimal,
            dtype=np.float64,
            engine="c",
            quotechar='"',
            **extra,
        )
    return frame.to_numpy(dtype=float, copy=True)


def _table(lines: list[str], lay: _Layout, values: np.ndarray, numbers: np.ndarray
           ) -> NumericTable:  # fmt: skip
    header, header_idx = lay.header, lay.header_idx
    meta_lines = lines[:header_idx] if header is not None else lines[: lay.start]
    notes = {"import.delimiter": _NAMES[lay.delimiter], "import.decimal": lay.decimal}
    if header is None and header_idx is not None:
        notes["import.header"] = (
            f"line {header_idx + 1} was not read as a header (its columns do not match the data)"
        )
    return NumericTable(
        values=values,
        line_numbers=numbers,
        header=header,
        header_line=header_idx + 1 if header is not None else None,
        metadata=_metadata(meta_lines),
        delimiter=lay.delimiter,
        decimal=lay.decimal,
        notes=notes,
    )


def read_table(
    lines: list[str],
    *,
    source: str,
    delimiter: str | None = None,
    decimal: str | None = None,
) -> NumericTable:
    """Find and parse the numeric block of a delimited text export.

    Parameters
    ----------
    lines : list of str
        The file's lines (``lines[k]`` is line ``k + 1``).
    source : str
        File name for messages.
    delimiter, decimal : str, optional
        Override the sniffed column separator and decimal mark.

    Raises
    ------
    InputError
        No numeric rows, or a cell in the numeric block that is not a number (the message
        names its line and column).
    """
    start = _find_data_start(lines)
    if start is None:
        raise _no_rows(source)
    header_idx, header_key = _header_of(lines, start)
    # One strip per line; blank lines and repeated header rows are dropped (rare, so the
    # common case keeps every line and numbers them by position).
    texts = [ln.strip() for ln in lines[start:]]
    if "" in texts or (header_key is not None and header_key in texts):
        keep = [k for k, t in enumerate(texts) if t and t != header_key]
        texts = [texts[k] for k in keep]
        numbers = np.asarray(keep, dtype=int) + start + 1
    else:
        numbers = np.arange(start + 1, start + 1 + len(texts), dtype=int)
    lay = _layout(
        lines, start, texts[:_SAMPLE], source=source, delimiter=delimiter, decimal=decimal
    )
    try:
        values = _parse_block("\n".join(texts), lay)
        if values.shape[0] != len(texts):
            raise ValueError("row count changed while parsing")
    except (ValueError, TypeError, OverflowError, pd.errors.ParserError, Warning) as exc:
        rows = list(zip(numbers.tolist(), texts, strict=True))
        found = _locate_bad_cell(rows, lay.delimiter, lay.decimal, lay.ncols, lay.header, source)
        if found is not None:
            raise found from None
        first_line = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise InputError(
            f"could not read the numbers from line {numbers[0]} on ({first_line}); check the "
            "delimiter and decimal mark",
            source=source,
            line=int(numbers[0]),
        ) from None
    return _table(lines, lay, values, numbers)


def read_table_text(
    text: str,
    *,
    source: str,
    delimiter: str | None = None,
    decimal: str | None = None,
    ascii_bytes: bytes | None = None,
) -> NumericTable:
    """As :func:`read_table`, from the whole decoded text, parsing it once.

    Only the first lines are split into Python strings (to find the header, the delimiter
    and where the numbers start); the rest of the text goes to ``pandas.read_csv`` in one
    call, rows numbered by position. Anything unusual — blank or repeated header
    lines, a lone ``\\r`` line end (``\\r\\n`` is fine), a row pandas cannot read, an
    empty cell — sends the file to :func:`read_table`, which scans line by line and names
    the line and cell, so the result and every message are those of :func:`read_table`.

    *ascii_bytes*, when given, are the bytes *text* was decoded from, all ASCII (so a
    character's offset is its byte's): the block goes to pandas as they are, without
    encoding the text again (~0.5 ms of the ~3 ms a 20 000-line file takes).
    """
    if ascii_bytes is not None and len(ascii_bytes) != len(text):
        raise ValueError("ascii_bytes must be the ASCII bytes the text was decoded from")
    # Windows line ends (every \r followed by \n) are fine for pandas; a lone \r is not
    crlf = "\r" in text and text.count("\r") == text.count("\r\n")
    if "\r" not in text or crlf:
        fast = _one_call(text, crlf, source, delimiter, decimal, ascii_bytes)
        if fast is not None:
            return fast
    return read_table(split_lines(text), source=source, delimiter=delimiter, decimal=decimal)


def _one_call(
    content: str,
    crlf: bool,
    source: str,
    delimiter: str | None,
    decimal: str | None,
    ascii_bytes: bytes | None,
) -> NumericTable | None:
    """The table from one parse of the numeric block, or None for the line-by-line path."""
    n = _SAMPLE + 100
    while n <= len(content):
        head, ends, complete = head_lines(content, n)
        if complete:
            return None
        if crlf:
            head = [ln[:-1] if ln.endswith("\r") else ln for ln in head]
        start = _find_data_start(head)
        if start is not None and start + _SAMPLE + 20 < len(head):
            return _fast_table(
                ascii_bytes if ascii_bytes is not None else content,
                head, ends, start, source, delimiter, decimal, crlf,
            )  # fmt: skip
        n *= 8
    return None


def _fast_table(
    content: str | bytes,
    head: list[str],
    ends: list[int],
    start: int,
    source: str,
    delimiter: str | None,
    decimal: str | None,
    crlf: bool,
) -> NumericTable | None:
    """The happy path of :func:`read_table_text`; None to take the line-by-line path.

    *content*: the text, or its ASCII bytes (offsets in *ends* are then byte offsets too).
    """
    _, header_key = _header_of(head, start)
    sample = head[start : start + _SAMPLE]
    # every sampled row as read_table would see it: no blank, no surrounding blanks, no
    # repeated header
    if any(not ln or ln != ln.strip() or ln == header_key for ln in sample):
        return None
    offset = ends[start - 1] if start else 0
    rest = content[offset:] if isinstance(content, bytes) else content[offset:].encode("utf-8")
    lay = _layout(head, start, sample, source=source, delimiter=delimiter, decimal=decimal)
    values = _pandas_block(rest, lay, crlf)
    if values is None:
        return None
    numbers = np.arange(start + 1, start + 1 + values.shape[0], dtype=int)
    return _table(head, lay, values, numbers)


def _pandas_block(rest: bytes, lay: _Layout, crlf: bool) -> np.ndarray | None:
    """The block from one ``pandas.read_csv`` call, or None if any row was unusual."""
    if not crlf and b"\r" in rest:
        return None
    try:
        values = _parse_block(rest, lay, fast=True)
    except (ValueError, TypeError, OverflowError, pd.errors.ParserError, Warning):
        return None
    rows = values.shape[0]
    # blank lines came back as NaN rows; only a quoted cell can hold a line end and join
    # two lines into one row, so the lines are counted only when there is a quote
    if b'"' in rest and rows != rest.count(b"\n") + (0 if rest.endswith(b"\n") else 1):
        return None
    if values.shape[1] != lay.ncols or np.isnan(values).any():
        return None
    return values
