"""Which columns of a table hold the potential, the current and the time.

Asked for by the manifest (header text or 0-based index), else read from the header
labels (:mod:`cvfit.io.columns`), else by position. A column that is empty in most rows
(a run setting that only the first data row carries) is chosen only when no other fits; two
columns that share a name are told apart by what they hold and said so.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from cvfit.errors import InputError
from cvfit.io.columns import ColumnLabel, is_unit, parse_label
from cvfit.io.options import ImportOptions
from cvfit.io.table import NumericTable

__all__ = ["Columns", "ROLE_OPTION", "choose_columns", "describe"]

ROLE_OPTION = {
    "potential": "potential_column",
    "current": "current_column",
    "time": "time_column",
}


@dataclass(frozen=True)
class Columns:
    """Indices of the chosen columns, the parsed labels and notes on the choice."""

    potential: int
    current: int
    time: int | None
    labels: tuple[ColumnLabel, ...] | None
    notes: dict[str, str]


def describe(table: NumericTable) -> str:
    """The columns of *table* in words, for messages."""
    if table.header is None:
        return f"{table.values.shape[1]} unlabelled columns (no header row)"
    return "columns found: " + ", ".join(repr(h) for h in table.header)


def _norm(text: str) -> str:
    return " ".join(text.casefold().split())


def _resolve(spec: str | int, role: str, table: NumericTable, source: str) -> int:
    """Index of a column asked for by header text or 0-based index."""
    ncols = table.values.shape[1]
    option = ROLE_OPTION[role]
    if isinstance(spec, int):
        if spec < ncols:
            return spec
        raise InputError(
            f"{option} = {spec} but the file has only {ncols} columns (indices 0–{ncols - 1}); "
            f"{describe(table)}",
            source=source,
            key=option,
        )
    if table.header is None:
        raise InputError(
            f"{option} = {spec!r} but the file has no header row; give a 0-based column "
            f"index instead ({describe(table)})",
            source=source,
            key=option,
        )
    wanted = _norm(spec)
    found = [k for k, label in enumerate(table.header) if _norm(label) == wanted]
    if len(found) > 1:
        raise InputError(
            f"{option} = {spec!r} names {len(found)} columns of this file (0-based "
            f"{', '.join(map(str, found))}); give the 0-based index of the one to read",
            source=source,
            key=option,
        )
    if found:
        return found[0]
    raise InputError(
        f"{option} = {spec!r} is not a column of this file; {describe(table)}",
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


def _turns(column: np.ndarray) -> bool:
    """True when the column goes both up and down (a potential does; a time does not)."""
    steps = np.diff(column[np.isfinite(column)])
    return bool(np.any(steps > 0) and np.any(steps < 0))


def _positional(table: NumericTable, reason: str, source: str) -> Columns:
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
    return Columns(e, i, t, None, {"import.assumed_columns": f"{reason}: {roles}"})


def _filled(table: NumericTable) -> np.ndarray | None:
    """Numbers in each column (None when no cell is empty, the common case)."""
    if not table.has_empty:
        return None
    return np.count_nonzero(~np.isnan(table.values), axis=0)


def _best(
    labels: tuple[ColumnLabel, ...], role: str, taken: set[int], filled: np.ndarray | None
) -> int | None:
    """The column whose label fits *role* best; a column holding fewer than half the
    numbers of another candidate (a run setting that one row carries) comes last."""
    found = [k for k, lab in enumerate(labels) if lab.role == role and k not in taken]
    if not found:
        return None
    if filled is None:
        return min(found, key=lambda k: (labels[k].rank, k))
    most = max(int(filled[k]) for k in found)
    return min(found, key=lambda k: (2 * int(filled[k]) < most, labels[k].rank, k))


def _twin(
    table: NumericTable, labels: tuple[ColumnLabel, ...], role: str, k: int, taken: set[int]
) -> tuple[int, str | None]:
    """The column to read for *role* among those named like column *k*, and a note when
    several share the name (which was taken and why)."""
    name = _norm(labels[k].text)
    twins = [j for j, lab in enumerate(labels) if _norm(lab.text) == name and j not in taken]
    if len(twins) < 2:
        return k, None
    values = table.values
    why = "the first of them"
    if role == "potential":
        turning = [j for j in twins if _turns(values[:, j])]
        if turning and turning[0] != twins[0]:
            k = turning[0]
            flat = ", ".join(str(j + 1) for j in twins if j not in turning)
            why = f"it goes up and down as a potential does; column(s) {flat} only rise(s)"
        elif turning:
            why = "the first that goes up and down as a potential does"
    listed = ", ".join(str(j + 1) for j in twins)
    note = (
        f"columns {listed} are all named {labels[k].text!r}; column {k + 1} was read as the "
        f"{role} ({why}); set {ROLE_OPTION[role]} to a 0-based column index to choose another"
    )
    return k, note


def _labels(header: tuple[str, ...]) -> tuple[ColumnLabel, ...]:
    # a header of units only ("V", "µA"): each unit names its column, one letter or more
    bare = any(header) and all(is_unit(h) for h in header if h)
    return tuple(parse_label(h, bare_unit=bare) for h in header)


def _without_header(table: NumericTable, explicit: dict[str, int], source: str) -> Columns:
    if "potential" in explicit and "current" in explicit:
        return Columns(explicit["potential"], explicit["current"], explicit.get("time"), None, {})
    if explicit:
        raise InputError(
            "the file has no header row; give both potential_column and current_column "
            f"as 0-based indices ({describe(table)})",
            source=source,
            key="potential_column" if "potential" not in explicit else "current_column",
        )
    return _positional(table, "no header row", source)


def _required(chosen: dict[str, int | None], role: str, table: NumericTable, source: str) -> int:
    k = chosen[role]
    if k is None:
        raise InputError(
            f"no {role} column recognised; set {ROLE_OPTION[role]} in [import] "
            f"({describe(table)})",
            source=source,
            key=ROLE_OPTION[role],
        )
    return k


def choose_columns(table: NumericTable, options: ImportOptions, source: str) -> Columns:
    """The potential, current and time columns of *table*.

    Raises
    ------
    InputError
        A column asked for that the file does not have, or no potential or current
        column recognised.
    """
    explicit = {
        role: _resolve(spec, role, table, source)
        for role in ("potential", "current", "time")
        if (spec := getattr(options, ROLE_OPTION[role])) is not None
    }
    if table.header is None:
        return _without_header(table, explicit, source)
    labels = _labels(table.header)
    filled = _filled(table)
    chosen: dict[str, int | None] = dict(explicit)
    taken = set(explicit.values())
    notes: dict[str, str] = {}
    for role in ("potential", "current", "time"):
        if role in chosen:
            continue
        k = _best(labels, role, taken, filled)
        if k is not None:
            k, note = _twin(table, labels, role, k, taken)
            if note is not None:
                notes.setdefault("import.duplicate_columns", note)
            taken.add(k)
        chosen[role] = k
    if chosen["potential"] is None and chosen["current"] is None and not explicit:
        return _positional(table, "header labels not recognised", source)
    potential = _required(chosen, "potential", table, source)
    current = _required(chosen, "current", table, source)
    least = 0 if filled is None else int(filled[potential]) / 2
    others = [
        lab.text
        for k, lab in enumerate(labels)
        if lab.role == "potential" and k != potential and (filled is None or filled[k] >= least)
    ]
    if others:
        notes["import.other_potential_columns"] = ", ".join(others)
    cycles = [lab.text for lab in labels if lab.role == "cycle"]
    if cycles:
        notes["import.cycle_columns"] = ", ".join(cycles)
    return Columns(potential, current, chosen["time"], labels, notes)
