"""Text export → :class:`cvfit.Voltammogram` in V, A, s with the IUPAC sign."""

from __future__ import annotations

import os

import numpy as np

from cvfit.errors import InputError
from cvfit.io.checks import (
    check_finite,
    glitch_note,
    padding_rows,
    scan_rate_notes,
    unit_doubt_note,
)
from cvfit.io.choice import Columns, choose_columns
from cvfit.io.columns import ColumnLabel, time_scale
from cvfit.io.limits import MAX_DATA_FILE_BYTES, check_line_lengths, read_regular_file
from cvfit.io.options import CURRENT_UNIT_NAMES, POTENTIAL_UNIT_NAMES, ImportOptions
from cvfit.io.table import NumericTable, read_table_text
from cvfit.io.text import decode_bytes
from cvfit.units import CURRENT_UNITS, POTENTIAL_UNITS, normalise_unit
from cvfit.voltammogram import MIN_POINTS, Voltammogram

__all__ = ["read_voltammogram", "parse_voltammogram_text", "parse_voltammogram_bytes"]


def _scale(
    kind: str, option: str | None, label: ColumnLabel | None, table: dict, source: str
) -> tuple[float, str]:
    """Scale factor to SI and the unit used, from the option, the label, else the SI unit.

    The label's unit counts when it is a unit of *kind*, whatever its words say (a column
    the manifest names as the potential may be labelled ``V``); a unit of another
    quantity, or one cvfit has no factor for (``kA``), is refused.
    """
    known = label.unit if label is not None and label.unit in table else None
    if option is not None:
        factor = table[normalise_unit(option)]
        if label is not None and known is not None and table[known] != factor:
            raise InputError(
                f"column {label.text!r}: its label says {label.unit_text or known!r} but "
                f"{kind}_unit in [import] says {option!r}; correct or remove {kind}_unit",
                source=source,
                key=f"{kind}_unit",
            )
        return factor, option
    if label is not None and known is not None:
        return table[known], label.unit_text or known
    if label is not None and label.unit_text is not None:
        raise _unit_error(kind, label, source)
    return 1.0, "V (assumed)" if kind == "potential" else "A (assumed)"


def _unit_error(kind: str, label: ColumnLabel, source: str) -> InputError:
    names = POTENTIAL_UNIT_NAMES if kind == "potential" else CURRENT_UNIT_NAMES
    spelled = ", ".join(n for n in names if n not in ("uA", "\u03bcA"))
    if label.unit is not None:  # a unit of another quantity
        return InputError(
            f"column {label.text!r} is in {label.unit_text!r}, which is not a {kind} unit; "
            f"check {kind}_column in [import]",
            source=source,
            key=f"{kind}_column",
        )
    return InputError(
        f"column {label.text!r}: unit {label.unit_text!r} is not one cvfit reads for a {kind} "
        f"({spelled}); convert the column to one of these, or set {kind}_unit in [import] "
        "if the label is wrong",
        source=source,
        key=f"{kind}_unit",
    )


def _units(cols: Columns, options: ImportOptions, source: str) -> tuple[float, str, float, str]:
    labels = cols.labels

    def lab(k: int) -> ColumnLabel | None:
        return labels[k] if labels is not None else None

    e_scale, e_unit = _scale(
        "potential", options.potential_unit, lab(cols.potential), POTENTIAL_UNITS, source
    )
    i_scale, i_unit = _scale(
        "current", options.current_unit, lab(cols.current), CURRENT_UNITS, source
    )
    return e_scale, e_unit, i_scale, i_unit


def _rows(table: NumericTable, cols: Columns, source: str) -> tuple[np.ndarray, np.ndarray,
                                                                      dict[str, str]]:  # fmt: skip
    """The data rows (padding skipped) as (values, line numbers, notes)."""
    values, lines = table.values, table.line_numbers
    notes: dict[str, str] = {}
    if table.has_empty:
        keep, note = padding_rows(values[:, cols.potential], values[:, cols.current], lines)
        if keep is not None and note is not None:
            values, lines = values[keep], lines[keep]
            notes["import.padding_rows"] = note
    n = lines.size
    if n < MIN_POINTS:
        where = f" (lines {lines[0]}–{lines[-1]})" if n else ""
        raise InputError(
            f"only {n} data row(s){where}; a voltammogram needs at least {MIN_POINTS} points",
            source=source,
            line=int(lines[0]) if n else None,
        )
    for k in (cols.potential, cols.current):
        check_finite(values[:, k], _name(table, k), k, lines, source)
    return values, lines, notes


def _name(table: NumericTable, k: int | None) -> str:
    if k is None:
        return ""
    return repr(table.header[k]) if table.header else f"column {k + 1}"


def _time(
    table: NumericTable,
    values: np.ndarray,
    lines: np.ndarray,
    cols: Columns,
    options: ImportOptions,
    source: str,
) -> tuple[np.ndarray | None, dict[str, str]]:
    if cols.time is None:
        return None, {}
    label = cols.labels[cols.time] if cols.labels is not None else None
    unit = label.unit if label is not None and label.role == "time" and label.unit else "s"
    t = values[:, cols.time] * time_scale(unit)
    finite = np.isfinite(t)
    back = np.nonzero(t[1:] < t[:-1])[0] if np.all(finite) else np.array([], dtype=int)
    if np.all(finite) and not back.size:
        return t, {"import.time_unit": unit}
    if options.time_column is not None:
        check_finite(values[:, cols.time], _name(table, cols.time), cols.time, lines, source)
        raise InputError(
            "the time column decreases here; check time_column",
            source=source,
            line=int(lines[back[0] + 1]),
            key="time_column",
        )
    return None, {"import.time_ignored": "time column not increasing or incomplete; not used"}


def _column_notes(
    table: NumericTable, cols: Columns, e_unit: str, i_unit: str, timed: bool
) -> dict[str, str]:
    def describe(k: int) -> str:
        return table.header[k] if table.header else f"column {k + 1}"

    notes = {
        "import.potential_column": describe(cols.potential),
        "import.current_column": describe(cols.current),
        "import.potential_unit": e_unit,
        "import.current_unit": i_unit,
    }
    if timed and cols.time is not None:
        notes["import.time_column"] = describe(cols.time)
    label = cols.labels[cols.potential] if cols.labels is not None else None
    if label is not None and label.qualifier is not None:
        notes["import.potential_kind"] = label.qualifier
    return notes


def _build(
    table: NumericTable,
    options: ImportOptions,
    source: str,
    scan_rate_V_s: float | None,
    extra: dict[str, str] | None = None,
) -> Voltammogram:
    cols = choose_columns(table, options, source)
    e_scale, e_unit, i_scale, i_unit = _units(cols, options, source)
    values, lines, notes = _rows(table, cols, source)
    E = values[:, cols.potential] * e_scale
    i = values[:, cols.current] * i_scale
    if options.anodic_current == "negative":
        np.negative(i, out=i)  # i is this function's own array
    span = float(np.ptp(E))
    if span <= 0.0:
        raise InputError(
            f"the potential (column {_name(table, cols.potential)}) does not change (flat at "
            f"{E[0]:g} V over lines {lines[0]}–{lines[-1]}); check potential_column",
            source=source,
            line=int(lines[0]),
        )
    t, time_notes = _time(table, values, lines, cols, options, source)
    metadata = dict(table.metadata)
    metadata.update(table.notes)
    metadata.update(cols.notes)
    metadata.update(notes)
    metadata.update(time_notes)
    metadata.update(_column_notes(table, cols, e_unit, i_unit, t is not None))
    metadata["import.anodic_current"] = options.anodic_current or "positive"
    for key, note in (
        ("import.potential_glitches", glitch_note(E, lines)),
        (
            "import.potential_unit_doubt",
            unit_doubt_note(span, _name(table, cols.potential), e_unit),
        ),
    ):
        if note is not None:
            metadata[key] = note
    scan_rate_V_s, rate_notes = scan_rate_notes(metadata, scan_rate_V_s, E, t)
    metadata.update(rate_notes)
    metadata.update(extra or {})
    # the record takes read-only arrays of their own without copying them again
    for column in (E, i, t):
        if column is not None:
            column.setflags(write=False)
    return Voltammogram(
        potential_V=E,
        current_A=i,
        time_s=t,
        scan_rate_V_s=scan_rate_V_s,
        source=source,
        metadata=metadata,
    )


def parse_voltammogram_text(
    text: str,
    *,
    source: str,
    options: ImportOptions | None = None,
    scan_rate_V_s: float | None = None,
) -> Voltammogram:
    """Read a voltammogram from the text of a delimited export.

    Parameters
    ----------
    text : str
        Decoded file content.
    source : str
        File name (or description) used in error messages and on the result.
    options : ImportOptions, optional
        What to take instead of auto-detecting (columns, units, sign, delimiter, decimal).
    scan_rate_V_s : float, optional
        Scan rate, V/s, if known from elsewhere (the manifest).

    Returns
    -------
    Voltammogram
        The whole record (all cycles) in V, A, s with anodic current positive. Its
        ``metadata`` holds the ``key: value`` lines above the header and ``import.*``
        entries that say which columns, units and conventions were used.

    Raises
    ------
    InputError
        One-line message naming the file, the line and what to do; also a line longer
        than :data:`cvfit.io.limits.MAX_LINE_BYTES`.
    """
    check_line_lengths(text, source=source)
    return _parse_text(text, source, options, scan_rate_V_s)


def _parse_text(
    text: str,
    source: str,
    options: ImportOptions | None,
    scan_rate_V_s: float | None,
    extra: dict[str, str] | None = None,
    ascii_bytes: bytes | None = None,
) -> Voltammogram:
    opts = options or ImportOptions()
    if not isinstance(text, str):
        raise InputError("expected decoded text", source=source)
    if not text or text.isspace():  # no stripped copy of the whole text
        raise InputError(
            "the file is empty; export the voltammogram as delimited text", source=source
        )
    # A typographic minus (U+2212) appears in some localised exports; a byte-order mark
    # (U+FEFF) inside the text (a last line of only a mark) is no character of the data.
    table = read_table_text(
        text.replace("\u2212", "-").replace("\ufeff", ""),
        source=source,
        delimiter=opts.delimiter,
        decimal=opts.decimal,
        ascii_bytes=ascii_bytes,
    )
    return _build(table, opts, source, scan_rate_V_s, extra)


def parse_voltammogram_bytes(
    data: bytes,
    *,
    source: str,
    options: ImportOptions | None = None,
    scan_rate_V_s: float | None = None,
) -> Voltammogram:
    """As :func:`parse_voltammogram_text`, from raw bytes (encoding detected)."""
    check_line_lengths(data, source=source)
    decoded = decode_bytes(data, source=source)
    # ASCII data decoded as UTF-8 is the text byte for byte (and holds no U+2212): its
    # numeric block goes to pandas as it is, not encoded again
    same = decoded.encoding == "utf-8" and data.isascii()
    # one record built, with the encoding in its metadata (no second copy of the arrays)
    return _parse_text(
        decoded.text,
        source,
        options,
        scan_rate_V_s,
        {"import.encoding": decoded.encoding},
        ascii_bytes=data if same else None,
    )


def read_voltammogram(
    path: str | os.PathLike[str],
    options: ImportOptions | None = None,
    *,
    scan_rate_V_s: float | None = None,
) -> Voltammogram:
    """Read a voltammogram file (opened for reading only).

    Encodings: UTF-8 (with or without BOM), UTF-16/32 with BOM, BOM-less UTF-16,
    Windows-1252/Latin-1. See :func:`parse_voltammogram_text` for the rest.

    Raises
    ------
    InputError
        Missing, unreadable, empty or binary file, or any problem in its content; a FIFO,
        device or socket, or a file larger than
        :data:`cvfit.io.limits.MAX_DATA_FILE_BYTES` (64 MiB), is refused before reading.
    """
    data = read_regular_file(
        path,
        limit=MAX_DATA_FILE_BYTES,
        what="data file",
        missing="file not found; check the name and the folder",
        folder="this is a folder, not a file; name a data file",
    )
    source = str(path)
    return parse_voltammogram_bytes(
        data, source=source, options=options, scan_rate_V_s=scan_rate_V_s
    )
