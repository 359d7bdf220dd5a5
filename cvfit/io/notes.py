"""What the importer noted about a file, as flags and as the columns it read.

The reader writes its findings into the record's metadata (``import.*`` notes); the
per-file stage turns those that deserve a word into flags with :func:`import_flags` and
reports the columns read with :func:`imported_columns`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from cvfit.flags import Flag

__all__ = ["IMPORTED_COLUMN_KEYS", "ImportedFile", "import_flags", "imported_columns",
           "imported_file"]  # fmt: skip

#: Keys of :func:`imported_columns`, in order (``time_*`` and ``potential_kind`` only when
#: there is one).
IMPORTED_COLUMN_KEYS: tuple[str, ...] = (
    "potential_column",
    "potential_unit",
    "potential_kind",
    "current_column",
    "current_unit",
    "time_column",
    "time_unit",
)


def import_flags(metadata: Mapping[str, str]) -> list[Flag]:
    """Flags for the importer's notes on one file (an empty list for most files)."""
    flags: list[Flag] = []
    note = metadata.get
    if (text := note("import.padding_rows")) is not None:
        flags.append(Flag("PADDING_ROWS_SKIPPED", text, "info"))
    if (text := note("import.duplicate_columns")) is not None:
        flags.append(Flag("DUPLICATE_COLUMN_NAMES", text, "warning"))
    if (text := note("import.potential_unit_doubt")) is not None:
        flags.append(Flag("POTENTIAL_UNIT_DOUBTFUL", text, "warning"))
    if (text := note("import.potential_glitches")) is not None:
        flags.append(Flag("POTENTIAL_GLITCH", text, "warning"))
    if (text := note("import.scan_rate_disagreement")) is not None:
        flags.append(Flag("SCAN_RATE_METADATA_DISAGREES", text, "warning"))
    if (text := note("import.scan_rate_source")) is not None:
        flags.append(Flag("SCAN_RATE_FROM_FILE", "scan rate " + text, "info"))
    return flags


def imported_columns(metadata: Mapping[str, str]) -> dict[str, str] | None:
    """The columns read from the file and their units (None for a record not read from
    a file, such as a simulated one).

    Keys: ``potential_column``, ``potential_unit``, ``current_column``, ``current_unit``;
    ``potential_kind`` (``"measured"`` or ``"applied"``) when the label says which;
    ``time_column`` and ``time_unit`` when a time column was used. A column is named by
    its header label, or ``column N`` in a file without a header; a unit the file did not
    give reads ``"V (assumed)"`` or ``"A (assumed)"``.
    """
    if "import.potential_column" not in metadata:
        return None
    out = {}
    for key in IMPORTED_COLUMN_KEYS:
        value = metadata.get("import." + key)
        if value is not None:
            out[key] = value
    if "time_column" not in out:
        out.pop("time_unit", None)
    return out


@dataclass(frozen=True)
class ImportedFile:
    """What the importer read from one file: the columns and the flags its notes raise.

    Attributes
    ----------
    column_items : tuple of (str, str)
        :func:`imported_columns` as pairs (a frozen record holds no dict).
    flags : tuple of Flag
        :func:`import_flags`.
    """

    column_items: tuple[tuple[str, str], ...]
    flags: tuple[Flag, ...] = ()

    @property
    def columns(self) -> dict[str, str]:
        """The columns read and their units (keys :data:`IMPORTED_COLUMN_KEYS`)."""
        return dict(self.column_items)


def imported_file(metadata: Mapping[str, str]) -> ImportedFile | None:
    """The import record of a record read from a file (None for one made otherwise)."""
    columns = imported_columns(metadata)
    if columns is None:
        return None
    return ImportedFile(tuple(columns.items()), tuple(import_flags(metadata)))
