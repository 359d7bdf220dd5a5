"""Per-file CSV table: the E½ each file contributes, the technique's own values, verdicts."""

from __future__ import annotations

import csv
from pathlib import Path
from typing import IO

from cvfit.pipeline.results import SOLUTION_FIELDS, FileResult, SeriesResult
from cvfit.report.atomic import atomic_write_with

__all__ = [
    "GENERIC_HEAD",
    "GENERIC_TAIL",
    "FORMULA_STARTS",
    "table_columns",
    "text_cell",
    "write_file_table",
]

#: The generic columns of the per-file table before the technique's own, units in the names.
GENERIC_HEAD = (
    "file",
    "label",
    "ligand_M",
    "free_ligand_M",
    "scan_rate_V_s",
    "E_half_V",
    "E_half_stderr_V",
    "E_half_source",
)
#: The internal standard's columns (empty cells without a standard), then the verdicts.
GENERIC_TAIL = (
    "standard_E_half_V",
    "standard_E_half_stderr_V",
    "standard_reversible",
    "reversible",
    "used_in_fit",
    "excluded_by_user",
    "flags",
)


def table_columns(result: SeriesResult) -> tuple[str, ...]:
    """The columns of *result*'s table: generic ones around the technique's own
    (:meth:`~cvfit.techniques.base.Measurement.table_cells`, in the order it gives them)."""
    own: dict[str, None] = {}
    for f in result.files:
        own.update(dict.fromkeys(f.measurement.table_cells()))
    head: tuple[str, ...] = GENERIC_HEAD
    if any(f.metal_M is not None for f in result.files):
        at = head.index("free_ligand_M") + 1
        head = (*head[:at], *SOLUTION_FIELDS, *head[at:])
    return (*head, *own, *GENERIC_TAIL)


def _row(f: FileResult) -> dict[str, object]:
    """One file's cells by column name."""
    std = f.internal_standard
    return {
        "file": f.file,
        "label": f.label,
        "ligand_M": f.ligand_M,
        "free_ligand_M": f.free_ligand_M,
        **{k: getattr(f, k) for k in SOLUTION_FIELDS},
        "scan_rate_V_s": f.scan_rate_V_s,
        "E_half_V": f.E_half_V,
        "E_half_stderr_V": f.E_half_total_stderr_V,
        "E_half_source": f.E_half_source,
        **f.measurement.table_cells(),
        "standard_E_half_V": None if std is None else std.E_half_V,
        "standard_E_half_stderr_V": None if std is None else std.E_half_stderr_V,
        "standard_reversible": None if std is None else std.reversible,
        "reversible": f.reversible,
        "used_in_fit": f.used_in_fit,
        "excluded_by_user": f.excluded_by_user,
        "flags": " ".join(fl.code for fl in f.flags),
    }


#: First characters that make a spreadsheet read a cell as a formula (and tab and carriage
#: return, which some read past): a text cell that begins with one is written with a
#: leading apostrophe, which spreadsheets show as text (OWASP, "CSV Injection").
FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def text_cell(text: str) -> str:
    """*text* safe for a spreadsheet: ``'`` before a leading ``=``, ``+``, ``-``, ``@``."""
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def _cell(value: object) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:.10g}"  # a number stays a number, also a negative one
    if isinstance(value, int):
        return str(value)
    return text_cell(str(value))


def write_file_table(result: SeriesResult, path: str | Path) -> Path:
    """Write one row per voltammogram (empty cell = not determined)."""
    path = Path(path)

    def writer(fh: IO[str]) -> None:
        w = csv.writer(fh, lineterminator="\n")
        columns = table_columns(result)
        w.writerow(columns)  # column names: cvfit's own, never a formula
        for f in result.files:
            cells = _row(f)
            w.writerow([_cell(cells.get(c)) for c in columns])

    atomic_write_with(path, writer)
    return path
