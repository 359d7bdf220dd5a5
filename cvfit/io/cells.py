"""Cells of a delimited text line: splitting, trimming and telling numbers from text.

A tab-separated export may begin its rows with empty cells (run settings that only the
first data row fills): there a leading tab is an empty cell, not blank space, so a line is
trimmed of blanks but not of its leading tabs. Trailing empty cells are trimmed for every
delimiter: they cannot shift a column.
"""

from __future__ import annotations

import math
import re

__all__ = [
    "DELIMITER_NAMES",
    "KEY_VALUE",
    "NOT_TAB",
    "cell_value",
    "is_number",
    "is_numeric_line",
    "parse_number",
    "split_cells",
    "trim",
]

_SPECIAL = re.compile(r"(?i)\b(?:nan|[+-]?inf(?:inity)?)\b")
_NUMERIC_LINE = re.compile(r"^[\d\s.,;+\-eE\"']*$")
#: ``key: value`` or ``key = value`` (a metadata line above the header).
KEY_VALUE = re.compile(r"^\s*(?P<key>[^:=]*[^:=\s])\s*[:=]\s*(?P<value>.*?)\s*$")
_CELL_DOT = re.compile(r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$")
_CELL_COMMA = re.compile(r"^[+-]?(?:\d+,?\d*|,\d+)(?:[eE][+-]?\d+)?$")
_CELL_SPECIAL = re.compile(r"(?i)^[+-]?(?:nan|inf|infinity)$")
#: The delimiter in words, for messages.
DELIMITER_NAMES = {",": "comma", ";": "semicolon", "\t": "tab", "whitespace": "whitespace"}
#: Blanks other than the tab: what a tab-separated line may lose at its start.
NOT_TAB = " \r\n\x0b\x0c"


def is_numeric_line(line: str) -> bool:
    """True when *line* holds only numbers, blanks and delimiters (and some digit)."""
    stripped = _SPECIAL.sub("0", line)
    return bool(_NUMERIC_LINE.match(stripped)) and any(ch.isdigit() for ch in stripped)


def trim(line: str, delimiter: str) -> str:
    """*line* without surrounding blanks; a tab-separated line keeps its leading tabs."""
    if delimiter == "\t":
        return line.rstrip().lstrip(NOT_TAB)
    return line.strip()


def split_cells(line: str, delimiter: str) -> list[str]:
    """The cells of *line*, each stripped of blanks (empty cells kept in place)."""
    if delimiter == "whitespace":
        return line.split()
    return [cell.strip() for cell in trim(line, delimiter).split(delimiter)]


def cell_value(cell: str) -> str:
    """A cell without blanks and quotes."""
    return cell.strip().strip("\"'").strip()


def is_number(cell: str, decimal: str) -> bool:
    """True when *cell* (blanks and quotes removed) is a number with *decimal* as its mark."""
    value = cell_value(cell)
    pattern = _CELL_COMMA if decimal == "," else _CELL_DOT
    return bool(pattern.match(value) or _CELL_SPECIAL.match(value))


def parse_number(cell: str, decimal: str) -> float:
    """The number in *cell* (NaN for an empty cell); *cell* must pass :func:`is_number`."""
    value = cell_value(cell)
    if not value:
        return math.nan
    return float(value.replace(",", ".") if decimal == "," else value)
