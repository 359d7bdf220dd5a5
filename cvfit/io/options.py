"""Import options: what the manifest may say about how to read a file.

Every field left at its default means "detect it from the file".
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace
from typing import Literal

from cvfit.errors import InputError
from cvfit.io.manifest_keys import CURRENT_UNIT_NAMES, DELIMITERS, IMPORT, POTENTIAL_UNIT_NAMES
from cvfit.io.manifest_spec import clean_record

__all__ = [
    "ImportOptions",
    "IMPORT_KEYS",
    "DELIMITERS",
    "POTENTIAL_UNIT_NAMES",
    "CURRENT_UNIT_NAMES",
]


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
        clean_record(self, IMPORT)
        if self.delimiter == "," and self.decimal == ",":
            raise InputError(
                "delimiter and decimal cannot both be ','; a decimal-comma file needs ';', "
                "tab or whitespace between columns",
                key="decimal",
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
