"""Where the numbers start in a text export, how its cells are written, and its header.

Shared by both paths of :mod:`cvfit.io.table`: the delimiter and decimal mark are sniffed
from the first data rows, the header is the nearest line above them whose cells match
theirs, and a first data row that also carries run settings is told from a header.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from cvfit.errors import InputError
from cvfit.io.cells import KEY_VALUE, is_number, is_numeric_line, split_cells
from cvfit.io.columns import is_unit

__all__ = ["Layout", "find_data_start", "header_of", "layout", "metadata_of", "SAMPLE"]

_COMMENT_MARK = re.compile(r"^\s*(?:#+|%+|//)\s*")  # "# E/V  I/A" style header rows
#: Data rows the delimiter, the decimal mark and the column count are sniffed from.
SAMPLE = 200


def find_data_start(lines: list[str]) -> int | None:
    """Index of the first numeric line that two more numeric lines follow (or end the file)."""
    first = None
    for k, line in enumerate(lines):
        if not line.strip() or not is_numeric_line(line):
            continue
        if first is None:
            first = k
        following = [ln for ln in lines[k + 1 : k + 20] if ln.strip()][:2]
        if all(is_numeric_line(ln) for ln in following):
            return k
    return first


def _sniff_delimiter(sample: list[str]) -> str:
    need = 0.9 * len(sample)
    for d in ("\t", ";"):
        if sum(d in ln for ln in sample) >= need:
            return d
    if sum("," in ln for ln in sample) >= need:
        # "1,5 2,3" is whitespace-separated decimal-comma numbers; "1.5,2.3" is CSV.
        decimal_comma_ws = all(
            len(cells) >= 2 and all(is_number(c, ",") for c in cells)
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
        return split_cells(line, delimiter)
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
    if not above or KEY_VALUE.match(lines[above[-1]]):
        return header  # a "Notes: a, b" line above a header of units names nothing
    names = [
        n.strip().strip("\"'").strip()
        for n in _split_header(lines[above[-1]], delimiter, len(header))
    ]
    if len(names) != len(header) or any(is_unit(n) for n in names if n):
        return header
    return tuple(f"{n} ({u})" if n and u else n or u for n, u in zip(names, header, strict=True))


def metadata_of(lines: list[str]) -> dict[str, str]:
    out: dict[str, str] = {}
    for line in lines:
        m = KEY_VALUE.match(line)
        if m and m["key"].strip():
            out[m["key"].strip().strip("\"'")] = m["value"].strip().strip("\"'")
    return out


@dataclass(frozen=True)
class Layout:
    """Where the numeric block starts and how it is written (shared by both paths).

    ``start`` is the first row parsed as a block; a row of run settings above it
    (``settings``: its line index and cells) is a data row read on its own.
    """

    start: int
    header_idx: int | None
    header_key: str | None
    header: tuple[str, ...] | None
    delimiter: str
    decimal: str
    ncols: int
    settings: tuple[int, tuple[str, ...]] | None = None


def header_of(lines: list[str], start: int) -> tuple[int | None, str | None]:
    """The nearest non-blank line above the data (index, stripped text)."""
    above = [k for k in range(start) if lines[k].strip()]
    header_idx = above[-1] if above else None
    return header_idx, (lines[header_idx].strip() if header_idx is not None else None)


def _settings_cells(
    line: str, sample: list[str], delimiter: str, decimal: str, ncols: int
) -> tuple[str, ...] | None:
    """The cells of *line* when it is the first data row that also carries run settings.

    Such a row has numbers in every column the rows below fill, and text in some columns
    they all leave empty (a tab-separated export whose later rows begin with empty
    cells). A header never has numbers in all the data columns.
    """
    if delimiter == "whitespace" or is_numeric_line(line):
        return None
    cells = split_cells(line, delimiter)
    # a header has at most one number among its cells: most files stop here
    if len(cells) > ncols or sum(bool(c) and is_number(c, decimal) for c in cells) < 2:
        return None
    filled = {k for row in sample for k, c in enumerate(split_cells(row, delimiter)) if c}
    if len(filled) < 2 or any(k >= len(cells) for k in filled):
        return None
    if not all(cells[k] and is_number(cells[k], decimal) for k in filled):
        return None
    if not any(c for k, c in enumerate(cells) if k not in filled):
        return None
    return tuple(cells)


def layout(
    lines: list[str],
    start: int,
    sample: list[str],
    *,
    source: str,
    delimiter: str | None,
    decimal: str | None,
) -> Layout:
    """Delimiter, decimal mark, column count and header from the first data rows."""
    header_idx, header_key = header_of(lines, start)
    delim = delimiter or _sniff_delimiter(sample)
    dec = decimal or _sniff_decimal(sample, delim)
    if delim == "," and dec == ",":
        raise InputError(
            "the decimal mark and the delimiter are both ','; set delimiter in [import]",
            source=source,
            key="delimiter",
        )
    ncols = len(split_cells(sample[0], delim))
    settings = None
    if header_idx is not None:
        cells = _settings_cells(lines[header_idx], sample, delim, dec, ncols)
        if cells is not None:
            settings = (header_idx, cells)
            header_idx, header_key = header_of(lines, header_idx)
    header: tuple[str, ...] | None = None
    if header_idx is not None:
        header_text = lines[header_idx]
        labels = _split_header(_COMMENT_MARK.sub("", header_text), delim, ncols)
        if len(labels) >= ncols and all(not lab for lab in labels[ncols:]):
            labels = labels[:ncols]
        if len(labels) == ncols and not is_numeric_line(header_text):
            header = tuple(lab.strip().strip("\"'").strip() for lab in labels)
    if header is not None and header_idx is not None:
        header = _join_units_row(header, lines, header_idx, delim)
    return Layout(start, header_idx, header_key, header, delim, dec, ncols, settings)
