"""Checks of the numbers read, before they become a record: padding rows, glitches, a
potential unit that cannot be right, a scan rate the file states but does not have.

Each finding is a note in the record's metadata (``import.*``), which the per-file stage
turns into a flag (:mod:`cvfit.io.notes`); only an empty cell inside the data is an error.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping

import numpy as np

from cvfit.errors import InputError
from cvfit.voltammogram import potential_spikes

__all__ = [
    "SCAN_RATE_TOLERANCE",
    "check_finite",
    "glitch_note",
    "padding_rows",
    "scan_rate_notes",
    "stated_scan_rate",
    "unit_doubt_note",
]

#: Relative difference above which a stated scan rate disagrees with the one used.
SCAN_RATE_TOLERANCE = 0.05
#: Potential span (V) above which potentials in volts cannot be right (common practice:
#: no solvent window is wider than a few volts).
MAX_SPAN_V = 10.0
_LISTED = 5  # glitch lines named in a note

_RATE_KEY = re.compile(r"(?i)\b(?:scan|sweep)\s*rate\b")
_RATE_UNIT = re.compile(r"(?i)\b(m?)V\s*(?:/\s*s(?:ec)?\b|s\s*-\s*1|s\^-1|s⁻¹)")
_NUMBER = re.compile(r"[-+]?(?:\d+[.,]?\d*|[.,]\d+)(?:[eE][-+]?\d+)?")


def _lines(numbers: np.ndarray) -> str:
    first, last = int(numbers[0]), int(numbers[-1])
    if first == last:
        return f"line {first}"
    if last - first + 1 == numbers.size:
        return f"lines {first}–{last}"
    return f"lines {first}–{last}, not all in one block"


def padding_rows(
    potential: np.ndarray, current: np.ndarray, line_numbers: np.ndarray
) -> tuple[np.ndarray | None, str | None]:
    """Rows whose potential and current are both empty: padding to skip.

    Returns the mask of rows to keep (None: keep all) and the note that says how many
    were skipped and where.
    """
    empty = np.isnan(potential) & np.isnan(current)
    if not empty.any():
        return None, None
    skipped = line_numbers[empty]
    note = (
        f"{skipped.size} row(s) with neither a potential nor a current ({_lines(skipped)}; "
        "other columns, such as a counter, filled) were skipped as padding"
    )
    return ~empty, note


def check_finite(column: np.ndarray, name: str, k: int, line_numbers: np.ndarray,
                 source: str) -> None:  # fmt: skip
    """Refuse an empty, NaN or infinite cell in a data column, naming its line."""
    bad = ~np.isfinite(column)
    if np.any(bad):
        row = int(np.argmax(bad))
        raise InputError(
            f"column {k + 1} ({name}) is empty, NaN or infinite here while the row has the "
            "other of potential and current; fill or delete the line",
            source=source,
            line=int(line_numbers[row]),
        )


def glitch_note(potential_V: np.ndarray, line_numbers: np.ndarray) -> str | None:
    """Where the potential jumps away and straight back for one sample, in words."""
    spikes = potential_spikes(potential_V)
    if spikes.size == 0:
        return None
    jumps = potential_V[spikes] - 0.5 * (potential_V[spikes - 1] + potential_V[spikes + 1])
    where = ", ".join(
        f"line {int(line_numbers[k])} ({1e3 * float(j):+.1f} mV)"
        for k, j in zip(spikes[:_LISTED], jumps[:_LISTED], strict=True)
    )
    more = f" and {spikes.size - _LISTED} more" if spikes.size > _LISTED else ""
    return (
        f"the potential jumps away and straight back for one sample at {where}{more}: a "
        "glitch of the record; the sweeps were divided without it, the sample was kept; "
        "check the record there"
    )


def unit_doubt_note(span_V: float, column: str, unit: str) -> str | None:
    """A note when potentials read in volts span (*span_V*) more than any window can:
    probably mV."""
    span = span_V
    if not unit.endswith("(assumed)") or span <= MAX_SPAN_V:
        return None
    return (
        f"the potentials of {column} span {span:.4g} V, more than {MAX_SPAN_V:g} V, and no unit "
        'is given: they are probably in mV; set potential_unit = "mV" in [import]'
    )


def stated_scan_rate(metadata: Mapping[str, str]) -> tuple[float, str] | None:
    """The scan rate a metadata line states, V/s, and the line as read (None if none does
    with a unit of V/s or mV/s)."""
    for key, value in metadata.items():
        if key.startswith("import.") or not _RATE_KEY.search(key):
            continue
        unit = _RATE_UNIT.search(value) or _RATE_UNIT.search(key)
        number = _NUMBER.search(value)
        if unit is None or number is None:
            continue
        rate = float(number.group().replace(",", ".")) * (1e-3 if unit.group(1) else 1.0)
        if math.isfinite(rate) and rate > 0:
            return rate, f"{key}: {value}"
    return None


def _derived_V_s(potential_V: np.ndarray, time_s: np.ndarray) -> float | None:
    with np.errstate(over="ignore", invalid="ignore"):
        dt = float(time_s[-1] - time_s[0])
        swept = float(np.sum(np.abs(np.diff(potential_V))))
    return swept / dt if dt > 0 and math.isfinite(swept / dt) else None


def scan_rate_notes(
    metadata: Mapping[str, str],
    given_V_s: float | None,
    potential_V: np.ndarray,
    time_s: np.ndarray | None,
) -> tuple[float | None, dict[str, str]]:
    """The scan rate for the record and notes comparing it with the one the file states.

    The manifest's scan rate wins, then the time column's; the stated one is used only
    when neither exists. A stated rate more than :data:`SCAN_RATE_TOLERANCE` away from
    the one used is noted with both values.
    """
    stated = stated_scan_rate(metadata)
    if stated is None:
        return given_V_s, {}
    rate, line = stated
    if given_V_s is not None:
        used, source = given_V_s, "the manifest's"
    elif time_s is not None and (derived := _derived_V_s(potential_V, time_s)) is not None:
        used, source = derived, "the time column's"
    else:
        note = f"{rate:.6g} V/s, as the file states ({line!r}); no manifest or time column"
        return rate, {"import.scan_rate_source": note}
    notes: dict[str, str] = {}
    if abs(rate / used - 1.0) > SCAN_RATE_TOLERANCE:
        notes["import.scan_rate_disagreement"] = (
            f"the file states a scan rate of {1e3 * rate:.4g} mV/s ({line!r}) but "
            f"{source} is {1e3 * used:.4g} mV/s ({100 * (rate / used - 1):+.0f} %); "
            f"{source} is used: check which is right"
        )
    return given_V_s, notes
