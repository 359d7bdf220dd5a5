"""Flags: expected analysis failures and warnings as values with stable codes."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

__all__ = ["Flag", "FitRefused"]


@dataclass(frozen=True)
class Flag:
    """A finding about a voltammogram, a fit or a series.

    Attributes
    ----------
    code : str
        Stable upper-case identifier (``"NO_REVERSE_PEAK"``); tests and users key on it.
    message : str
        One sentence in words, with the numbers behind it and their units.
    severity : {"info", "warning", "error"}
        ``error`` means the quantity concerned could not be determined.
    """

    code: str
    message: str
    severity: Literal["info", "warning", "error"] = "warning"

    def __post_init__(self) -> None:
        if not self.code or not self.code.replace("_", "").isalnum() or not self.code.isupper():
            raise ValueError(f"flag code must be UPPER_SNAKE_CASE, got {self.code!r}")
        if self.severity not in ("info", "warning", "error"):
            raise ValueError(f"unknown flag severity {self.severity!r}")

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
