"""The text of a first manifest for a folder of exports (``cvfit init``).

:func:`find_exports` lists a folder's exports in natural order; :func:`survey_export`
reads one with the reader ``cvfit run`` uses and keeps what it detected (dialect, columns,
scan rate) and what the file name says (:mod:`cvfit.io.file_names`);
:func:`manifest_texts` writes the commented ``series.toml`` (and, with a files table, the
table's CSV text). What the name does not give is written as :data:`PLACEHOLDER`, a
string the loader refuses with a one-line error naming the manifest's line and the key.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from pathlib import Path

from cvfit.errors import InputError, printable
from cvfit.io.file_names import NameValues, natural_sorted, parse_name
from cvfit.io.files_table import looks_like_files_table
from cvfit.io.manifest_spec import PLACEHOLDER, toml_text
from cvfit.io.reader import read_voltammogram

__all__ = [
    "EXPORT_SUFFIXES",
    "PLACEHOLDER",
    "TITRATION_KEYS",
    "ExportSurvey",
    "InitTexts",
    "find_exports",
    "survey_export",
    "manifest_texts",
]

#: File name endings read as exports (any case): delimited text, as the reader takes it.
EXPORT_SUFFIXES = (".csv", ".txt", ".tsv", ".dat", ".asc")
#: ``[titration]`` keys written when the names carry added volumes: (key, required, meaning).
TITRATION_KEYS: tuple[tuple[str, bool, str], ...] = (
    ("start_volume_mL", True, "volume in the cell before the first addition, mL"),
    ("metal_M", True, "metal concentration in the cell before the first addition, mol/L"),
    ("ligand_stock_M", True, "ligand concentration of the stock solution added, mol/L"),
    ("ligand_M", False, "ligand in the cell before the first addition, mol/L (if any)"),
    ("metal_stock_M", False, "metal in the ligand stock, mol/L (if the stock holds metal)"),
)
#: A scan rate from the name differing from the file's by more than this is mentioned.
_RATE_TOLERANCE = 0.05


@dataclass(frozen=True)
class ExportSurvey:
    """One export as ``cvfit init`` found it.

    Attributes
    ----------
    name : str
        File name, relative to the folder.
    read_as : tuple of str
        What the reader detected, one comment line each (empty when refused).
    refused : str or None
        The reader's one-line reason for refusing the file.
    file_rate_V_s : float or None
        Scan rate the file gives (time column or a metadata line), V/s.
    values : NameValues
        What the file name carries.
    """

    name: str
    read_as: tuple[str, ...]
    refused: str | None
    file_rate_V_s: float | None
    values: NameValues


@dataclass(frozen=True)
class InitTexts:
    """What ``cvfit init`` writes: the manifest, the files table's CSV text (None without
    ``--table``) and what the user still has to fill in, one item per line."""

    manifest: str
    table: str | None
    to_fill: tuple[str, ...]


def find_exports(
    folder: Path, *, skip: Callable[[str], str | None] = lambda name: None
) -> tuple[list[str], list[tuple[str, str]]]:
    """Names of the exports directly in *folder* (not in its sub-folders), in natural
    order, and ``(name, why)`` for the files left out. *skip* gives the reason to leave
    out a file of an export's suffix (a file cvfit wrote), or None."""
    names: list[str] = []
    skipped: list[tuple[str, str]] = []
    for entry in folder.iterdir():
        name = entry.name
        if name.startswith(".") or entry.suffix.lower() not in EXPORT_SUFFIXES:
            continue
        if not _utf8(name):
            skipped.append((printable(name), "its name is not UTF-8 text; rename the file"))
        elif not entry.is_file():
            skipped.append((name, "not a regular file"))
        elif (why := skip(name)) is not None:
            skipped.append((name, why))
        elif looks_like_files_table(entry):
            skipped.append((name, "a files table (its first column is file)"))
        else:
            names.append(name)
    return natural_sorted(names), sorted(skipped)


def _utf8(name: str) -> bool:
    try:
        name.encode("utf-8")
    except UnicodeEncodeError:  # undecodable bytes of a file name (lone surrogates)
        return False
    return True


def _read_as(metadata: dict[str, str]) -> tuple[str, ...]:
    """The dialect and the columns the reader chose, from its ``import.*`` notes."""
    note = metadata.get
    kept = [k for k in metadata if not k.startswith("import.")]
    header = note("import.header_line")
    if header is not None:
        above = f"header on line {header}"
        if int(header) > 1:
            above += f", {int(header) - 1} line(s) above it skipped"
    else:
        above = "no header row"
    if kept:
        above += f" ({len(kept)} kept as metadata)"
    dialect = (
        f"read as {note('import.encoding', 'text')}, {note('import.delimiter')}-delimited, "
        f"decimal mark {note('import.decimal')!r}; {above}; data from line "
        f"{note('import.first_data_line')}"
    )
    columns = (
        f"columns: potential {note('import.potential_column')!r} in "
        f"{note('import.potential_unit')}, current {note('import.current_column')!r} in "
        f"{note('import.current_unit')}"
    )
    if "import.time_column" in metadata:
        columns += f", time {note('import.time_column')!r} in {note('import.time_unit')}"
    return dialect, columns


def survey_export(folder: Path, name: str) -> ExportSurvey:
    """Read *name* in *folder* as ``cvfit run`` would (default import settings) and parse
    its file name."""
    values = parse_name(Path(name).stem)
    try:
        v = read_voltammogram(folder / name)
    except InputError as exc:
        where = f"line {exc.line}: " if exc.line is not None else ""
        return ExportSurvey(name, (), where + exc.message, None, values)
    lines = list(_read_as(dict(v.metadata)))
    rate = v.derived_scan_rate_V_s()
    if rate is not None:
        lines.append(f"scan rate {rate:.3g} V/s from the time column (cvfit run derives it)")
    elif v.scan_rate_V_s is not None:
        rate = v.scan_rate_V_s
        lines.append(f"scan rate {rate:.3g} V/s as the file states it (cvfit run reads it)")
    name_rate = values.scan_rate_V_s
    if rate is not None and name_rate is not None and abs(name_rate / rate - 1) > _RATE_TOLERANCE:
        lines.append(f"the name says {name_rate:g} V/s: check which is right")
    return ExportSurvey(name, tuple(lines), None, rate, values)


def _entry(s: ExportSurvey, variable: str, to_fill: list[str]) -> tuple[list[str], dict]:
    """Comment lines and the values of one file's entry; what is missing goes to *to_fill*."""
    nv = s.values
    notes = [*s.read_as, *(f"name: {said}" for said in nv.said)]
    notes += [f"name: {doubt}" for doubt in nv.doubts]
    row: dict[str, object] = {"file": s.name}
    value = nv.added_mL if variable == "added_mL" else nv.ligand_M
    if variable == "added_mL" and nv.ligand_M == 0.0:
        value = 0.0  # a ligand-free solution: nothing added
    if value is not None:
        row[variable] = value
    elif nv.addition is not None:
        what = (
            "the total volume of ligand stock added up to this file, mL"
            if variable == "added_mL"
            else "the total ligand concentration after it, mol/L"
        )
        notes.append(f"addition {nv.addition}: fill in {variable}, {what}")
        to_fill.append(f"{s.name}: {variable} (addition {nv.addition})")
    else:
        unit = "mL of ligand stock added up to this file" if variable == "added_mL" else (
            "mol/L, the total ligand concentration")  # fmt: skip
        notes.append(f"the name carries no {variable}: fill it in ({unit})")
        to_fill.append(f"{s.name}: {variable}")
    if s.file_rate_V_s is None and nv.scan_rate_V_s is not None:
        row["scan_rate_V_s"] = nv.scan_rate_V_s  # the name's words say so above
    elif s.file_rate_V_s is None:
        notes.append("no scan rate in the file or its name: give scan_rate_V_s (V/s) if known")
    return notes, row


def _toml_entry(notes: list[str], row: dict[str, object]) -> list[str]:
    lines = [f"# {printable(n)}" for n in notes] + ["[[voltammogram]]"]
    keys = ("file", "ligand_M", "added_mL", "scan_rate_V_s")
    return lines + [f"{key} = {toml_text(row[key])}" for key in keys if key in row]


def _head(title: str, variable: str, table_name: str | None) -> list[str]:
    lines = [
        "# Written by `cvfit init`. Replace every " + toml_text(PLACEHOLDER) + " (cvfit run "
        "lists those left),",
        "# check the values read from the file names, then: cvfit run series.toml",
        "# Keys and their meaning: `cvfit run --help` and `cvfit guide manifest`.",
        "",
        "[series]",
        f"title = {toml_text(title)}",
        "# n, the electrons exchanged by the couple",
        f"electrons = {toml_text(PLACEHOLDER)}",
        "# temperature_C = 25.0     # cell temperature, °C (default 25)",
    ]
    if variable != "added_mL":  # with additions the metal of each solution is computed
        lines.append(
            "# metal_total_M = 0.001    # analytical metal concentration, mol/L (optional)"
        )
    if table_name is not None:
        lines += [f"# the files: one row each in {table_name} (columns file, {variable}, ...)",
                  f"files_table = {toml_text(table_name)}"]  # fmt: skip
    lines += [
        "",
        "[fit]",
        'model = "lingane"          # or "stepwise" for β1 … βN (DeFord–Hume)',
    ]
    if variable == "added_mL":
        lines += ["", "# the solutions, from the volumes added (added_mL of each file)",
                  "[titration]"]  # fmt: skip
        for key, required, meaning in TITRATION_KEYS:
            value = f"{key} = {toml_text(PLACEHOLDER)}" if required else f"# {key} = 0.0"
            lines.append(f"{value.ljust(28)} # {meaning}")
    return lines


def _table_text(rows: Sequence[dict[str, object]], variable: str) -> str:
    columns = ["file", variable]
    if any("scan_rate_V_s" in r for r in rows):
        columns.append("scan_rate_V_s")
    out = io.StringIO()
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(columns)
    for r in rows:
        writer.writerow(["" if r.get(c) is None else r[c] for c in columns])
    return out.getvalue()


def manifest_texts(
    surveys: Sequence[ExportSurvey], *, title: str, table_name: str | None = None
) -> InitTexts:
    """The commented manifest for *surveys* (in their order), and with *table_name* the
    files table it points to.

    The titration variable is ``added_mL`` when some name carries a volume or an addition
    number and none a non-zero concentration (a ``[titration]`` table is then written with
    placeholders), else ``ligand_M``. A file the reader refused is listed commented out
    with its reason.
    """
    usable = [s for s in surveys if s.refused is None]
    by_volume = any(s.values.added_mL is not None or s.values.addition is not None
                    for s in usable)  # fmt: skip
    by_volume = by_volume and not any(s.values.ligand_M for s in usable)
    variable = "added_mL" if by_volume else "ligand_M"
    to_fill = ["[series] electrons"]
    if by_volume:
        to_fill += [f"[titration] {k}" for k, required, _ in TITRATION_KEYS if required]
    lines = _head(title, variable, table_name)
    rows: list[dict[str, object]] = []
    for s in surveys:
        lines.append("")
        if s.refused is not None and table_name is not None:
            lines.append(f"# {printable(s.name)}: refused by the reader, not in the table: "
                         f"{s.refused}")  # fmt: skip
            continue
        if s.refused is not None:
            lines += [f"# refused by the reader: {s.refused}", "# [[voltammogram]]",
                      f"# file = {toml_text(s.name)}"]  # fmt: skip
            continue
        notes, row = _entry(s, variable, to_fill)
        if variable not in row:
            row = {**row, variable: PLACEHOLDER}
        rows.append(row)
        if table_name is not None:
            lines += [f"# {printable(s.name)}: {printable(n)}" for n in notes]
            continue
        lines += _toml_entry(notes, row)
    table = _table_text(rows, variable) if table_name is not None else None
    return InitTexts("\n".join(lines) + "\n", table, tuple(to_fill))
