"""``[series] files_table``: the series' files listed in a CSV table instead of
``[[voltammogram]]`` tables (spreadsheet-friendly).

One row per file, in order; the header names ``[[voltammogram]]`` keys (``file``, and
``ligand_M`` or ``added_mL``, ``scan_rate_V_s``, ``label``, ``exclude``, ``pH`` …; case
is ignored). Each row becomes the table a ``[[voltammogram]]`` would hold, every cell
checked by the key's own check (:func:`cvfit.io.manifest_spec.clean_value`); an empty
cell means "not given". UTF-8 with or without a byte-order mark, comma- or
semicolon-separated (with semicolons a decimal comma is read too). Every error names the
table, its line and the column.
"""

from __future__ import annotations

import csv
import difflib
import io
from dataclasses import dataclass
from pathlib import Path

from cvfit.errors import InputError
from cvfit.io.limits import MAX_MANIFEST_BYTES, read_regular_file
from cvfit.io.manifest_spec import Key, Table, clean_value
from cvfit.io.text import decode_utf8

__all__ = ["FilesTable", "read_files_table", "looks_like_files_table", "TABLE_KINDS"]

#: Kinds of key a cell can hold (a list-valued key belongs in the manifest).
TABLE_KINDS = frozenset({"number", "integer", "text", "flag", "choice", "column", "cycle"})
_ENTRY = "voltammogram["


@dataclass(frozen=True)
class FilesTable:
    """A read files table.

    Attributes
    ----------
    path : Path
        The table file.
    rows : tuple of dict
        One ``[[voltammogram]]``-like table per row, with only the cells given.
    lines : tuple of int
        The line of each row (1-based, as an editor numbers it).
    """

    path: Path
    rows: tuple[dict[str, object], ...]
    lines: tuple[int, ...]

    def error(self, message: str, keypath: str) -> InputError | None:
        """The loader's error about ``voltammogram[K].key`` told as the table's (row K's
        line, the column); None for an error about something else."""
        if not keypath.startswith(_ENTRY) or "]" not in keypath:
            return None
        index_text, _, key = keypath[len(_ENTRY) :].partition("]")
        if not index_text.isdigit() or not 1 <= int(index_text) <= len(self.rows):
            return None
        k = int(index_text) - 1
        key = key.lstrip(".")
        text = message.removeprefix(f"{keypath}: ")
        column = f", column {key}" if key else ""
        return InputError(
            f"row {k + 1} ({self.rows[k].get('file')}){column}: {text}",
            source=str(self.path),
            line=self.lines[k],
            key=key or None,
        )


def _columns(header: list[str], table: Table, source: str) -> list[Key]:
    """The key of each column, by its header cell (case ignored)."""
    by_name = {k.name.casefold(): k for k in table.all_keys if k.kind in TABLE_KINDS}
    names = [cell.strip().lstrip("\ufeff") for cell in header]
    unknown = [n for n in names if n.casefold() not in by_name]
    if unknown:
        close = [
            difflib.get_close_matches(n, [k.name for k in by_name.values()], n=1) for n in unknown
        ]
        hints = "; ".join(
            f"{n!r}: did you mean {c[0]!r}?" for n, c in zip(unknown, close, strict=True) if c
        )
        raise InputError(
            f"unknown column(s) {', '.join(repr(n) for n in unknown)}"
            + (f" ({hints})" if hints else "")
            + "; columns are [[voltammogram]] keys: "
            + ", ".join(k.name for k in by_name.values()),
            source=source,
            line=1,
        )
    keys = [by_name[n.casefold()] for n in names]
    seen = [k.name for k in keys]
    twice = sorted({n for n in seen if seen.count(n) > 1})
    if twice:
        raise InputError(f"column {twice[0]!r} is given twice; keep one", source=source, line=1)
    if "file" not in seen:
        raise InputError(
            "the table needs a column 'file' (the export's name)", source=source, line=1
        )
    return keys


def _value(key: Key, cell: str, decimal_comma: bool) -> object:
    """The cell as the TOML value it stands for (what cannot be read stays text, which the
    key's check then refuses with its own message)."""
    if key.kind in ("number", "integer"):
        text = cell.replace(",", ".") if decimal_comma else cell
        try:
            return float(text)
        except ValueError:
            return cell
    if key.kind == "flag":
        return {"true": True, "false": False}.get(cell.casefold(), cell)
    if key.kind in ("column", "cycle") and cell.isdigit():
        return int(cell)
    return cell


def _row(keys: list[Key], cells: list[str], number: int, decimal_comma: bool,
         where: dict) -> dict[str, object]:  # fmt: skip
    """One row's cells as a [[voltammogram]] table, each checked by its key."""
    if len(cells) > len(keys):
        raise InputError(
            f"{len(cells)} cells but {len(keys)} columns in the header; remove the extra "
            "cells or name their column",
            **where,
        )
    given = [(key, cell.strip()) for key, cell in zip(keys, cells, strict=False) if cell.strip()]
    file = next((cell for key, cell in given if key.name == "file"), None)
    if file is None:
        raise InputError(f"row {number}, column file: the cell is empty; name the export",
                         key="file", **where)  # fmt: skip
    row: dict[str, object] = {}
    for key, cell in given:
        value = _value(key, cell, decimal_comma)
        try:
            clean_value(key, value)
        except InputError as exc:
            raise InputError(
                f"row {number} ({file}), column {key.name}: {exc.message}", key=key.name, **where
            ) from None
        row[key.name] = value
    return row


def read_files_table(path: Path, table: Table, *, name: str) -> FilesTable:
    """Read the files table at *path* (*name*: as the manifest gives it) for *table*
    (``[[voltammogram]]``).

    Raises
    ------
    InputError
        Not readable, not UTF-8, an unknown or repeated column, no ``file`` column, a row
        longer than the header, a bad cell (its line and column), or no row at all.
    """
    source = str(path)
    raw = read_regular_file(
        path,
        limit=MAX_MANIFEST_BYTES,
        what="files table",
        missing=f"files table {name!r} not found; paths are relative to the manifest's folder",
        folder="this is a folder; name the files table (.csv)",
    )
    text = decode_utf8(raw, source=source, what="files table")
    first = text.split("\n", 1)[0]
    delimiter = ";" if first.count(";") > first.count(",") else ","
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    rows: list[dict[str, object]] = []
    lines: list[int] = []
    try:
        header = next(reader, None)
        if header is None or not any(c.strip() for c in header):
            raise InputError(
                "the files table is empty; give a header row and one row per file",
                source=source,
                line=1,
            )
        keys = _columns(header, table, source)
        for cells in reader:
            if any(c.strip() for c in cells):  # a blank row is skipped
                where = {"source": source, "line": reader.line_num}
                rows.append(_row(keys, cells, len(rows) + 1, delimiter == ";", where))
                lines.append(reader.line_num)
    except csv.Error as exc:
        raise InputError(
            f"not a readable CSV table ({exc}); save it as CSV",
            source=source,
            line=reader.line_num,
        ) from None
    if not rows:
        raise InputError(
            "the files table lists no file; give one row per file", source=source, line=1
        )
    return FilesTable(path, tuple(rows), tuple(lines))


def looks_like_files_table(path: Path) -> bool:
    """Whether *path* starts like a files table (a header whose first cell is ``file``),
    so that ``cvfit init`` does not take it for an export."""
    try:
        with open(path, "rb") as f:
            head = f.read(256)
    except OSError:
        return False
    first = head.decode("utf-8-sig", errors="replace").splitlines()[:1]
    cell = first[0].replace(";", ",").split(",", 1)[0] if first else ""
    return cell.strip().strip('"').casefold() == "file"
