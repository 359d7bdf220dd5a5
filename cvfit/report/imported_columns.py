"""Which columns were read from each file, in words, for the summary, the report and the
figures (from the files' ``imported_columns`` in ``results.json``)."""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from cvfit.errors import printable

__all__ = ["column_groups", "columns_view", "columns_lines", "describe_columns", "potential_kind"]

_SHOWN_FILES = 6  # file names listed per group before "… and N more"


def describe_columns(cols: Mapping[str, str]) -> str:
    """``potential 'E measured (V)' [V, measured], current 'I (µA)' [µA], time 't (s)' [s]``."""
    parts = []
    for role in ("potential", "current", "time"):
        column = cols.get(f"{role}_column")
        if column is None:
            continue
        unit = cols.get(f"{role}_unit", "")
        kind = cols.get("potential_kind") if role == "potential" else None
        bracket = ", ".join(x for x in (unit, kind) if x)
        parts.append(f"{role} {column!r}" + (f" [{bracket}]" if bracket else ""))
    return ", ".join(parts)


def column_groups(
    files: Sequence[tuple[str, Mapping[str, str] | None]],
) -> list[tuple[str, list[str]]]:
    """Files grouped by the columns read: (description, file names), in first-seen order;
    files not read from a file (simulated records) are left out."""
    groups: dict[str, list[str]] = {}
    for name, cols in files:
        if cols:
            groups.setdefault(describe_columns(cols), []).append(name)
    return list(groups.items())


def _names(names: list[str]) -> str:
    shown = ", ".join(names[:_SHOWN_FILES])
    more = len(names) - _SHOWN_FILES
    return shown + (f" … and {more} more" if more > 0 else "")


def columns_lines(files: Sequence[tuple[str, Mapping[str, str] | None]]) -> list[str]:
    """Terminal lines: one when every file was read alike, else one per kind of file."""
    groups = column_groups(files)
    if not groups:
        return []
    if len(groups) == 1:
        return [printable(f"Columns read from every file: {groups[0][0]}", limit=400)]
    lines = ["Columns read:"]
    for text, names in groups:
        lines.append(printable(f"  {text} — {_names(names)}", limit=400))
    return lines


def columns_view(files: Sequence[Mapping[str, object]]) -> list[tuple[str, str]]:
    """The columns read, for the report: (description, files it holds for) per kind of file."""
    pairs = [
        (
            str(f.get("file")),
            cols if isinstance(cols := f.get("imported_columns"), Mapping) else None,
        )
        for f in files
    ]
    return [(text, _names(names)) for text, names in column_groups(pairs)]


def potential_kind(files: Sequence[Mapping[str, str] | None]) -> str | None:
    """``"measured"`` or ``"applied"`` when every file read says the same, else None."""
    kinds = {cols.get("potential_kind") for cols in files if cols}
    return kinds.pop() if len(kinds) == 1 else None
