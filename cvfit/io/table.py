"""Delimited text to a numeric table: preamble, header row, delimiter and decimal mark.

The happy path parses the numeric block in one :func:`pandas.read_csv` call. Only when
it refuses are the lines scanned one by one to name the bad cell.
"""

from __future__ import annotations

import io
import warnings
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from cvfit.errors import InputError
from cvfit.io.cells import (
    DELIMITER_NAMES,
    NOT_TAB,
    cell_value,
    is_number,
    parse_number,
    split_cells,
)
from cvfit.io.diagnose import locate_bad_cell, no_rows
from cvfit.io.layout import SAMPLE, Layout, find_data_start, header_of, layout, metadata_of
from cvfit.io.text import head_lines, split_lines

__all__ = ["NumericTable", "read_table", "read_table_text"]


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
    has_empty : bool
        Whether any cell of ``values`` is NaN (an empty cell, or padding rows).
    """

    values: np.ndarray
    line_numbers: np.ndarray
    header: tuple[str, ...] | None
    header_line: int | None
    metadata: dict[str, str]
    delimiter: str
    decimal: str
    notes: dict[str, str] = field(default_factory=dict)
    has_empty: bool = False


def _parse_block(block: str | bytes, lay: Layout, *, fast: bool = False) -> np.ndarray:
    """One ``pandas.read_csv`` call (C engine) on the numeric block; raises on any doubt.

    ``fast`` (the happy path of :func:`read_table_text`, *block* in UTF-8 bytes): no initial-space
    skipping (pandas' float conversion accepts blanks around a number; a quoted cell after
    a blank fails and goes to the careful path), blank lines kept as NaN rows and no
    implicit index column, so every line is one row or the call fails.
    """
    sep = r"\s+" if lay.delimiter == "whitespace" else lay.delimiter
    # the fast path is given UTF-8 bytes, the careful path text
    source = io.BytesIO(block) if isinstance(block, bytes) else io.StringIO(block)
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
            index_col=False if fast else None,
            skip_blank_lines=not fast,
            skipinitialspace=not fast,
        )
    return frame.to_numpy(dtype=float, copy=True)


def _settings_values(lay: Layout) -> np.ndarray:
    """The numbers of a first data row that also carries run settings (NaN for text)."""
    _, cells = lay.settings  # type: ignore[misc]
    row = np.full(lay.ncols, np.nan)
    for k, cell in enumerate(cells):
        if cell and is_number(cell, lay.decimal):
            row[k] = parse_number(cell, lay.decimal)
    return row


def _run_settings(
    lines: list[str], lay: Layout, values: np.ndarray, first_line: int
) -> dict[str, str]:
    """The cells of the first data row in columns that every later row leaves empty (run
    settings such a row carries), by header label."""
    if values.shape[0] < 2:
        return {}
    alone = np.flatnonzero(np.isnan(values[1:]).all(axis=0))
    if alone.size == 0:
        return {}
    cells = split_cells(lines[first_line - 1], lay.delimiter)
    header = lay.header
    return {
        (header[k] if header and header[k] else f"column {k + 1}"): cell_value(cells[k])
        for k in alone.tolist()
        if k < len(cells) and cell_value(cells[k])
    }


def _table(lines: list[str], lay: Layout, values: np.ndarray, numbers: np.ndarray,
           has_empty: bool | None = None) -> NumericTable:  # fmt: skip
    header, header_idx = lay.header, lay.header_idx
    meta_lines = lines[:header_idx] if header is not None else lines[: lay.start]
    notes = {"import.delimiter": DELIMITER_NAMES[lay.delimiter], "import.decimal": lay.decimal}
    if header is not None and header_idx is not None:
        notes["import.header_line"] = str(header_idx + 1)
    if header is None and header_idx is not None:
        notes["import.header"] = (
            f"line {header_idx + 1} was not read as a header (its columns do not match the data)"
        )
    metadata = metadata_of(meta_lines)
    if lay.settings is not None:
        values = np.vstack([_settings_values(lay), values])
        numbers = np.concatenate([[lay.settings[0] + 1], numbers])
        has_empty = True
    if has_empty is None:
        has_empty = bool(np.isnan(values).any())
    settings = _run_settings(lines, lay, values, int(numbers[0])) if has_empty else {}
    if settings:
        for key, value in settings.items():
            metadata.setdefault(key, value)
        notes["import.settings_row"] = (
            f"line {numbers[0]}, the first data row, also holds run settings in "
            f"{len(settings)} column(s) that the later rows leave empty: "
            + "; ".join(f"{k} = {v}" for k, v in settings.items())
        )
    notes["import.first_data_line"] = str(int(numbers[0]))
    return NumericTable(
        values=values,
        line_numbers=numbers,
        header=header,
        header_line=header_idx + 1 if header is not None and header_idx is not None else None,
        metadata=metadata,
        delimiter=lay.delimiter,
        decimal=lay.decimal,
        notes=notes,
        has_empty=has_empty,
    )


def _sample(lines: list[str], start: int, header_key: str | None) -> list[str]:
    """The first data rows as the sniffers see them: no blank line, no repeated header,
    leading blanks kept (a tab there is an empty cell)."""
    rows = (ln.rstrip() for ln in lines[start : start + 4 * SAMPLE])
    return [ln for ln in rows if ln and ln.strip() != header_key][:SAMPLE]


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
    start = find_data_start(lines)
    if start is None:
        raise no_rows(lines, source)
    _, header_key = header_of(lines, start)
    lay = layout(
        lines,
        start,
        _sample(lines, start, header_key),
        source=source,
        delimiter=delimiter,
        decimal=decimal,
    )
    # One trim per line; blank lines and repeated header rows are dropped (rare, so the
    # common case keeps every line and numbers them by position).
    if lay.delimiter == "\t":  # inline: a call per line costs more than the strip
        texts = [ln.rstrip().lstrip(NOT_TAB) for ln in lines[start:]]
    else:
        texts = [ln.strip() for ln in lines[start:]]
    header_key = lay.header_key
    if "" in texts or (header_key is not None and header_key in texts):
        keep = [k for k, t in enumerate(texts) if t and t.strip() != header_key]
        texts = [texts[k] for k in keep]
        numbers = np.asarray(keep, dtype=int) + start + 1
    else:
        numbers = np.arange(start + 1, start + 1 + len(texts), dtype=int)
    try:
        values = _parse_block("\n".join(texts), lay)
        if values.shape[0] != len(texts):
            raise ValueError("row count changed while parsing")
    except (ValueError, TypeError, OverflowError, pd.errors.ParserError, Warning) as exc:
        rows = list(zip(numbers.tolist(), texts, strict=True))
        found = locate_bad_cell(rows, lay.delimiter, lay.decimal, lay.ncols, lay.header, source)
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
    n = SAMPLE + 100
    while n <= len(content):
        head, ends, complete = head_lines(content, n)
        if complete:
            return None
        if crlf:
            head = [ln[:-1] if ln.endswith("\r") else ln for ln in head]
        start = find_data_start(head)
        if start is not None and start + SAMPLE + 20 < len(head):
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
    sample = head[start : start + SAMPLE]
    lay = layout(head, start, sample, source=source, delimiter=delimiter, decimal=decimal)
    # every sampled row as read_table would see it: no blank, no surrounding blanks (a
    # leading tab is an empty cell of a tab-separated row), no repeated header; the
    # comparisons inline, a call per row would cost ~4 % of a 20 000-row file
    key = lay.header_key
    if lay.delimiter == "\t":
        if any(not ln or ln != ln.rstrip().lstrip(NOT_TAB) or ln == key for ln in sample):
            return None
    elif any(not ln or ln != ln.strip() or ln == key for ln in sample):
        return None
    offset = ends[start - 1] if start else 0
    rest = content[offset:] if isinstance(content, bytes) else content[offset:].encode("utf-8")
    block = _pandas_block(_without_blank_end(rest), lay, crlf)
    if block is None:
        return None
    values, has_empty = block
    numbers = np.arange(start + 1, start + 1 + values.shape[0], dtype=int)
    return _table(head, lay, values, numbers, has_empty)


def _without_blank_end(rest: bytes) -> bytes:
    """*rest* without blank lines at its end (such as a last line that held only a
    byte-order mark), which pandas would read as rows of NaN."""
    end = len(rest)
    while end and rest[end - 1] in b" \t\r\n":
        end -= 1
    if rest.count(b"\n", end) < 2:
        return rest  # no blank line at the end: no copy
    return rest[:end] + b"\n"


def _pandas_block(rest: bytes, lay: Layout, crlf: bool) -> tuple[np.ndarray, bool] | None:
    """The block from one ``pandas.read_csv`` call and whether it has an empty cell, or
    None if any row was unusual."""
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
    if values.shape[1] != lay.ncols:
        return None
    empty = np.isnan(values)
    has_empty = bool(empty.any())
    # a row with no number at all may be a blank line, which read_table drops
    if has_empty and empty.all(axis=1).any():
        return None
    return values, has_empty
