"""Flags: expected analysis failures and warnings as values with stable codes."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from cvfit.flag_codes import Severity

__all__ = ["Flag", "FitRefused"]


@dataclass(frozen=True)
class Flag:
    """A finding about a voltammogram, a fit or a series.

    Attributes
    ----------
    code : str
        Stable upper-case identifier (``"NO_REVERSE_PEAK"``); tests and users key on it.
        Must be one of :data:`cvfit.flag_codes.FLAG_CODES`.
    message : str
        One sentence in words, with the numbers behind it and their units.
    severity : {"info", "warning", "error"}
        ``error`` means the quantity concerned could not be determined; must be the one
        the catalogue gives the code.
    """

    code: str
    message: str
    severity: Severity = "warning"

    def __post_init__(self) -> None:
        # imported here so that ``python -m cvfit.flag_codes`` runs the module only once
        # (``import cvfit`` imports this module)
        from cvfit.flag_codes import FLAG_CODES, SEVERITIES

        entry = FLAG_CODES.get(self.code)
        if entry is None:
            raise ValueError(
                f"unknown flag code {self.code!r}: every code is catalogued in "
                "cvfit/flag_codes.py (with its meaning and severity)"
            )
        if self.severity not in SEVERITIES:
            raise ValueError(f"unknown flag severity {self.severity!r}")
        if self.severity not in entry.severities:
            raise ValueError(
                f"flag {self.code} is catalogued with severity {' or '.join(entry.severities)}, "
                f"not {self.severity!r}"
            )

    def to_dict(self) -> dict[str, str]:
        return {"code": self.code, "message": self.message, "severity": self.severity}


@dataclass(frozen=True)
class FitRefused:
    """A fit that could not be made, as a value: no constants, and the flags saying why.

    Fits return it for an expected failure (too few points, no ligand range, no reference
    E½) instead of raising; bad *input* is still an :class:`cvfit.errors.InputError`.

    Attributes
    ----------
    flags : tuple of Flag
        Why; at least one of severity ``error`` (warnings found on the way may join them).
    """

    flags: tuple[Flag, ...]

    def __post_init__(self) -> None:
        object.__setattr__(self, "flags", tuple(self.flags))
        if not all(isinstance(f, Flag) for f in self.flags):
            raise TypeError("flags must be Flag instances")
        if not any(f.severity == "error" for f in self.flags):
            raise ValueError("a refused fit needs at least one flag of severity 'error'")

    @property
    def message(self) -> str:
        """The reasons in words (the messages of the error flags, joined)."""
        return "; ".join(f.message for f in self.flags if f.severity == "error")
