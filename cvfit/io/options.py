"""Import options: what the manifest may say about how to read a file.

Every field left at its default means "detect it from the file".
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace
from typing import Literal

from cvfit.errors import InputError

__all__ = [
    "ImportOptions",
    "IMPORT_KEYS",
    "DELIMITERS",
    "POTENTIAL_UNIT_NAMES",
    "CURRENT_UNIT_NAMES",
]

#: Unit spellings accepted for ``potential_unit`` and ``current_unit`` (as in the schema).
POTENTIAL_UNIT_NAMES: tuple[str, ...] = ("V", "mV")
CURRENT_UNIT_NAMES: tuple[str, ...] = ("A", "mA", "uA", "\u00b5A", "\u03bcA", "nA", "pA")

#: Accepted spellings of a delimiter and the canonical value each one means.
DELIMITERS: dict[str, str] = {
    ",": ",",
    ";": ";",
    "\t": "\t",
    "tab": "\t",
    " ": "whitespace",
    "whitespace": "whitespace",
}


def _check_column(name: str, value: object) -> None:
    if value is None or isinstance(value, str) and value.strip():
        return
    if isinstance(value, int) and not isinstance(value, bool) and value >= 0:
        return
    raise InputError(
        f"{name} must be a column header text or a 0-based column index, got {value!r}",
        key=name,
    )


@dataclass(frozen=True)
class ImportOptions:
    """How to read one voltammogram file; ``None`` means auto-detect.

    Attributes
    ----------
    potential_column, current_column, time_column : str or int or None
        Header text (matched ignoring case and surrounding blanks) or 0-based index.
    potential_unit : {"V", "mV"} or None
        Unit of the potential column; default from the header label, else V.
    current_unit : {"A", "mA", "uA", "µA", "nA"} or None
        Unit of the current column; default from the header label, else A.
    anodic_current : {"positive", "negative"} or None
        Sign the file gives anodic current; ``"negative"`` (polarographic convention) flips
        the current to the IUPAC sign. Default positive.
    delimiter : {",", ";", "\\t", "whitespace"} or None
        Column separator; sniffed when absent. ``" "`` and ``"tab"`` are accepted too.
    decimal : {".", ","} or None
        Decimal mark; sniffed when absent.
    cycle : int or "last"
        1-based cycle the analysis uses, or the last complete one. The importer reads the
        whole record; the cycle is picked with :meth:`cvfit.Voltammogram.cycle`.
    """

    potential_column: str | int | None = None
    current_column: str | int | None = None
    time_column: str | int | None = None
    potential_unit: str | None = None
    current_unit: str | None = None
    anodic_current: Literal["positive", "negative"] | None = None
    delimiter: str | None = None
    decimal: str | None = None
    cycle: int | Literal["last"] = "last"

    def __post_init__(self) -> None:
        for name in ("potential_column", "current_column", "time_column"):
            _check_column(name, getattr(self, name))
        for name, allowed in (
            ("potential_unit", POTENTIAL_UNIT_NAMES),
            ("current_unit", CURRENT_UNIT_NAMES),
        ):
            unit = getattr(self, name)
            if unit is not None and unit not in allowed:
                raise InputError(
                    f"{name} {unit!r} is not known; use one of {', '.join(allowed)}", key=name
                )
        if self.anodic_current not in (None, "positive", "negative"):
            raise InputError(
                f"anodic_current must be 'positive' or 'negative', got {self.anodic_current!r}",
                key="anodic_current",
            )
        if self.delimiter is not None:
            if not isinstance(self.delimiter, str) or self.delimiter not in DELIMITERS:
                raise InputError(
                    f"delimiter must be ',', ';', '\\t' or 'whitespace', got {self.delimiter!r}",
                    key="delimiter",
                )
            object.__setattr__(self, "delimiter", DELIMITERS[self.delimiter])
        if self.decimal not in (None, ".", ","):
            raise InputError(f"decimal must be '.' or ',', got {self.decimal!r}", key="decimal")
        if self.delimiter == "," and self.decimal == ",":
            raise InputError(
                "delimiter and decimal cannot both be ','; a decimal-comma file needs ';', "
                "tab or whitespace between columns",
                key="decimal",
            )
        c = self.cycle
        if c != "last" and (isinstance(c, bool) or not isinstance(c, int) or c < 1):
            raise InputError(
                f"cycle must be a whole number >= 1 or 'last', got {c!r}", key="cycle"
            )

    def merged(self, override: ImportOptions) -> ImportOptions:
        """These options with every non-default field of *override* taking precedence."""
        changes = {}
        for f in fields(self):
            value = getattr(override, f.name)
            if value != f.default:
                changes[f.name] = value
        return replace(self, **changes)


#: Keys of the manifest's ``[import]`` table (also valid per voltammogram).
IMPORT_KEYS: tuple[str, ...] = tuple(f.name for f in fields(ImportOptions))
