"""Text export → :class:`cvfit.Voltammogram` in V, A, s with the IUPAC sign."""

from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np

from cvfit.errors import InputError
from cvfit.io.columns import ColumnLabel, parse_label, time_scale
from cvfit.io.limits import MAX_DATA_FILE_BYTES, check_line_lengths, read_regular_file
from cvfit.io.options import ImportOptions
from cvfit.io.table import NumericTable, read_table_text
from cvfit.io.text import decode_bytes
from cvfit.units import CURRENT_UNITS, POTENTIAL_UNITS, normalise_unit
from cvfit.voltammogram import MIN_POINTS, Voltammogram

__all__ = ["read_voltammogram", "parse_voltammogram_text", "parse_voltammogram_bytes"]

_ROLE_OPTION = {
    "potential": "potential_column",
    "current": "current_column",
    "time": "time_column",
}


@dataclass(frozen=True)
class _Columns:
    potential: int
    current: int
    time: int | None
    labels: tuple[ColumnLabel, ...] | None
    notes: dict[str, str]


def _describe(table: NumericTable) -> str:
    if table.header is None:
        return f"{table.values.shape[1]} unlabelled columns (no header row)"
    return "columns found: " + ", ".join(repr(h) for h in table.header)


def _norm(text: str) -> str:
    return " ".join(text.casefold().split())


def _resolve(spec: str | int, role: str, table: NumericTable, source: str) -> int:
    """Index of a column asked for by header text or 0-based index."""
    ncols = table.values.shape[1]
    option = _ROLE_OPTION[role]
    if isinstance(spec, int):
        if spec < ncols:
            return spec
        raise InputError(
            f"{option} = {spec} but the file has only {ncols} columns (indices 0–{ncols - 1}); "
            f"{_describe(table)}",
            source=source,
            key=option,
        )
    if table.header is None:
        raise InputError(
            f"{option} = {spec!r} but the file has no header row; give a 0-based column "
            f"index instead ({_describe(table)})",
            source=source,
            key=option,
        )
    wanted = _norm(spec)
    for k, label in enumerate(table.header):
        if _norm(label) == wanted:
            return k
    raise InputError(
        f"{option} = {spec!r} is not a column of this file; {_describe(table)}",
        source=source,
        key=option,
    )


def _is_counter(column: np.ndarray) -> bool:
    """Integer-valued, non-decreasing and either a point counter or a cycle number."""
    finite = column[np.isfinite(column)]
    if finite.size < 2 or np.any(finite != np.round(finite)) or np.any(np.diff(finite) < 0):
        return False
    steps = np.diff(finite)
    return bool(np.all(steps == 1) or np.unique(finite).size <= max(1, finite.size // 5))


def _non_decreasing(column: np.ndarray) -> bool:
    finite = column[np.isfinite(column)]
    return finite.size >= 2 and bool(np.all(np.diff(finite) >= 0)) and finite[-1] > finite[0]


def _positional(table: NumericTable, reason: str, source: str) -> _Columns:
    values = table.values
    ncols = values.shape[1]
    usable = [k for k in range(ncols) if not np.all(np.isnan(values[:, k]))]
    skipped = [k for k in usable if _is_counter(values[:, k])]
    skipped_set = set(skipped)  # a list here made a 30 000-column file take minutes
    data = [k for k in usable if k not in skipped_set]
    if len(data) < 2:
        raise InputError(
            f"found {len(data)} numeric data column(s) ({reason}); a voltammogram needs a "
            "potential and a current column",
            source=source,
        )
    if len(data) >= 3 and _non_decreasing(values[:, data[0]]):
        t, e, i = data[0], data[1], data[2]
        roles = f"time (s) = column {t + 1}, potential (V) = column {e + 1}, "
    else:
        t, e, i = None, data[0], data[1]
        roles = f"potential (V) = column {e + 1}, "
    roles += f"current (A) = column {i + 1}"
    if skipped:
        roles += "; counter/cycle column(s) " + ", ".join(str(k + 1) for k in skipped) + " skipped"
    return _Columns(e, i, t, None, {"import.assumed_columns": f"{reason}: {roles}"})


def _best(labels: tuple[ColumnLabel, ...], role: str, taken: set[int]) -> int | None:
    found = [(lab.rank, k) for k, lab in enumerate(labels) if lab.role == role and k not in taken]
    return min(found)[1] if found else None


def _choose_columns(table: NumericTable, options: ImportOptions, source: str) -> _Columns:
    explicit = {
        role: _resolve(spec, role, table, source)
        for role in ("potential", "current", "time")
        if (spec := getattr(options, _ROLE_OPTION[role])) is not None
    }
    if table.header is None:
        if "potential" in explicit and "current" in explicit:
            return _Columns(
                explicit["potential"], explicit["current"], explicit.get("time"), None, {}
            )
        if explicit:
            raise InputError(
                "the file has no header row; give both potential_column and current_column "
                f"as 0-based indices ({_describe(table)})",
                source=source,
                key="potential_column" if "potential" not in explicit else "current_column",
            )
        return _positional(table, "no header row", source)
    labels = tuple(parse_label(h) for h in table.header)
    chosen: dict[str, int | None] = dict(explicit)
    taken = set(explicit.values())
    for role in ("potential", "current", "time"):
        if role not in chosen:
            chosen[role] = _best(labels, role, taken)
            if chosen[role] is not None:
                taken.add(chosen[role])
    notes: dict[str, str] = {}
    if chosen["potential"] is None and chosen["current"] is None and not explicit:
        return _positional(table, "header labels not recognised", source)
    for role in ("potential", "current"):
        if chosen[role] is None:
            raise InputError(
                f"no {role} column recognised; set {_ROLE_OPTION[role]} in [import] "
                f"({_describe(table)})",
                source=source,
                key=_ROLE_OPTION[role],
            )
    others = [
        lab.text
        for k, lab in enumerate(labels)
        if lab.role == "potential" and k != chosen["potential"]
    ]
    if others:
        notes["import.other_potential_columns"] = ", ".join(others)
    cycles = [lab.text for lab in labels if lab.role == "cycle"]
    if cycles:
        notes["import.cycle_columns"] = ", ".join(cycles)
    return _Columns(chosen["potential"], chosen["current"], chosen["time"], labels, notes)


def _scale(
    kind: str, option: str | None, label: ColumnLabel | None, table: dict, source: str
) -> tuple[float, str]:
    """Scale factor to SI and the unit used, from the option, the label, else the SI unit."""
    if option is not None:
        factor = table[normalise_unit(option)]
        if (
            label is not None
            and label.role == kind
            and label.unit is not None
            and table[label.unit] != factor
        ):
            raise InputError(
                f"column {label.text!r}: its label says {label.unit_text or label.unit!r} but "
                f"{kind}_unit in [import] says {option!r}; correct or remove {kind}_unit",
                source=source,
                key=f"{kind}_unit",
            )
        return factor, option
    if label is not None and label.role == kind and label.unit is not None:
        return table[label.unit], label.unit_text or label.unit
    if label is not None and label.unit_text is not None:
        raise InputError(
            f"column {label.text!r}: unit {label.unit_text!r} is not a {kind} unit cvfit "
            f"knows; set {kind}_unit in [import] (one of {', '.join(sorted(table))})",
            source=source,
            key=f"{kind}_unit",
        )
    return 1.0, "V (assumed)" if kind == "potential" else "A (assumed)"


def _check_finite(column: np.ndarray, table: NumericTable, k: int, source: str) -> None:
    bad = ~np.isfinite(column)
    if np.any(bad):
        row = int(np.argmax(bad))
        name = repr(table.header[k]) if table.header else f"{k + 1}"
        raise InputError(
            f"column {k + 1} ({name}) is empty, NaN or infinite here; fix or delete the line",
            source=source,
            line=int(table.line_numbers[row]),
        )


def _build(
    table: NumericTable,
    options: ImportOptions,
    source: str,
    scan_rate_V_s,
    extra: dict[str, str] | None = None,
) -> Voltammogram:
    cols = _choose_columns(table, options, source)
    labels = cols.labels

    def lab(k):
        return labels[k] if labels is not None and k is not None else None

    e_scale, e_unit = _scale(
        "potential", options.potential_unit, lab(cols.potential), POTENTIAL_UNITS, source
    )
    i_scale, i_unit = _scale(
        "current", options.current_unit, lab(cols.current), CURRENT_UNITS, source
    )
    lines = table.line_numbers
    n = lines.size
    if n < MIN_POINTS:
        raise InputError(
            f"only {n} data row(s) (lines {lines[0]}–{lines[-1]}); a voltammogram needs at "
            f"least {MIN_POINTS} points",
            source=source,
            line=int(lines[0]),
        )
    for k in (cols.potential, cols.current):
        _check_finite(table.values[:, k], table, k, source)
    E = table.values[:, cols.potential] * e_scale
    i = table.values[:, cols.current] * i_scale
    if options.anodic_current == "negative":
        np.negative(i, out=i)  # i is this function's own array
    notes = dict(table.notes)
    notes.update(cols.notes)
    if float(np.ptp(E)) <= 0.0:
        name = repr(table.header[cols.potential]) if table.header else str(cols.potential + 1)
        raise InputError(
            f"the potential (column {name}) does not change (flat at {E[0]:g} V over lines "
            f"{lines[0]}–{lines[-1]}); check potential_column",
            source=source,
            line=int(lines[0]),
        )
    t = None
    if cols.time is not None:
        label = lab(cols.time)
        unit = label.unit if label is not None and label.role == "time" and label.unit else "s"
        t = table.values[:, cols.time] * time_scale(unit)
        finite = np.isfinite(t)
        back = np.nonzero(t[1:] < t[:-1])[0] if np.all(finite) else np.array([], dtype=int)
        if not np.all(finite) or back.size:
            if options.time_column is not None:
                _check_finite(table.values[:, cols.time], table, cols.time, source)
                raise InputError(
                    "the time column decreases here; check time_column",
                    source=source,
                    line=int(lines[back[0] + 1]),
                    key="time_column",
                )
            notes["import.time_ignored"] = "time column not increasing or incomplete; not used"
            t = None
        else:
            notes["import.time_unit"] = unit

    def describe(k):
        return table.header[k] if table.header else f"column {k + 1}"

    notes["import.potential_column"] = describe(cols.potential)
    notes["import.current_column"] = describe(cols.current)
    if t is not None:
        notes["import.time_column"] = describe(cols.time)
    notes["import.potential_unit"] = e_unit
    notes["import.current_unit"] = i_unit
    notes["import.anodic_current"] = options.anodic_current or "positive"
    metadata = dict(table.metadata)
    metadata.update(notes)
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
    # A typographic minus (U+2212) appears in some localised exports.
    table = read_table_text(
        text.replace("\u2212", "-"),
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
