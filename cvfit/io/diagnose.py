"""The failure path of the table reader: which line, column or cell is wrong, in words."""

from __future__ import annotations

from cvfit.errors import InputError
from cvfit.io.cells import DELIMITER_NAMES, cell_value, is_number, split_cells

__all__ = ["locate_bad_cell", "no_rows"]

# lines looked at for a text column, and the rows in a row that make one
_SCAN_LINES = 2000
_RUN = 3


def locate_bad_cell(
    rows: list[tuple[int, str]],
    delimiter: str,
    decimal: str,
    ncols: int,
    header: tuple[str, ...] | None,
    source: str,
) -> InputError | None:
    """The first line whose cell count or content is wrong, as an error (None if none is)."""
    for lineno, line in rows:
        cells = split_cells(line, delimiter)
        if len(cells) > ncols:
            return InputError(
                f"this line has {len(cells)} {DELIMITER_NAMES[delimiter]}-separated columns "
                f"but the data rows above have {ncols}; fix or delete the line",
                source=source,
                line=lineno,
            )
        for col, cell in enumerate(cells):
            value = cell_value(cell)
            if value and not is_number(value, decimal):
                label = f" ({header[col]!r})" if header and col < len(header) else ""
                return InputError(
                    f"column {col + 1}{label}: {value[:40]!r} is not a number "
                    f"(decimal mark {decimal!r}); fix or delete the line, or set decimal/"
                    "delimiter in [import]",
                    source=source,
                    line=lineno,
                    key=header[col] if header and col < len(header) else None,
                )
    return None


def _text_columns(cells: list[str]) -> tuple[int, ...] | None:
    """Columns holding text in a row that is otherwise numbers (None for another row)."""
    numbers = [is_number(c, ".") or is_number(c, ",") for c in cells]
    text = tuple(k for k, (c, num) in enumerate(zip(cells, numbers, strict=True)) if c and not num)
    return text if text and sum(numbers) >= 2 else None


def _text_column_error(lines: list[str], source: str) -> InputError | None:
    """A column of text in every row of an otherwise numeric table, named (None if not)."""
    shown = [(k, ln) for k, ln in enumerate(lines[:_SCAN_LINES]) if ln.strip()]
    for delimiter in ("\t", ";", ",", "whitespace"):
        run: list[int] = []
        shape: tuple[int, tuple[int, ...]] | None = None
        for pos, (_, line) in enumerate(shown):
            cells = split_cells(line, delimiter)
            text = _text_columns(cells)
            here = (len(cells), text) if text is not None else None
            run = run + [pos] if here is not None and here == shape else [pos]
            shape = here
            if shape is not None and len(run) >= _RUN:
                return _name_text_columns(shown, run[0], delimiter, shape, source)
    return None


def _name_text_columns(
    shown: list[tuple[int, str]],
    first: int,
    delimiter: str,
    shape: tuple[int, tuple[int, ...]],
    source: str,
) -> InputError:
    ncols, text = shape
    header = split_cells(shown[first - 1][1], delimiter) if first else []
    index, line = shown[first]
    cells = split_cells(line, delimiter)
    names = [
        f"column {k + 1}" + (f" ({header[k]!r})" if len(header) == ncols and header[k] else "")
        for k in text
    ]
    return InputError(
        f"{', '.join(names)} holds text in every row (e.g. {cell_value(cells[text[0]])[:40]!r}), "
        f"so no row of this {DELIMITER_NAMES[delimiter]}-separated table is all numbers; cvfit "
        "reads columns of numbers only: export the table without that column",
        source=source,
        line=index + 1,
    )


def no_rows(lines: list[str], source: str) -> InputError:
    """The error for a file without rows of numbers, naming a text column if one is why."""
    named = _text_column_error(lines, source)
    if named is not None:
        return named
    return InputError(
        "no rows of numbers found; the file needs columns of numbers (potential and "
        "current) below an optional header row",
        source=source,
    )
