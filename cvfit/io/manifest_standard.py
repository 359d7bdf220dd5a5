"""The internal reference couple of a series: ``[internal_standard]`` and the analyte's window.

An inert, reversible couple added to every solution (ferrocene and the like) gives each
file its own potential reference: the analyte's E½ is quoted against the standard's E½
measured in the same voltammogram, which removes the drift of the reference electrode
between solutions. Used by :mod:`cvfit.io.manifest`; each check raises
:class:`~cvfit.errors.InputError` naming the key.
"""

from __future__ import annotations

from dataclasses import dataclass

from cvfit.io.manifest_keys import INTERNAL_STANDARD
from cvfit.io.manifest_spec import clean_record

__all__ = ["INTERNAL_STANDARD_KEYS", "InternalStandard", "windows_apart"]

#: Keys of the ``[internal_standard]`` table.
INTERNAL_STANDARD_KEYS = INTERNAL_STANDARD.names


def windows_apart(analyte: tuple[float, float], standard: tuple[float, float]) -> bool:
    """Whether the two potential windows share no potential."""
    return analyte[1] <= standard[0] or standard[1] <= analyte[0]


@dataclass(frozen=True, kw_only=True)
class InternalStandard:
    """The ``[internal_standard]`` table.

    Attributes
    ----------
    window_V : (float, float)
        Potential range of the standard's wave, V (low < high); its peaks are measured
        there only.
    E_half_V : float
        The value assigned to the standard's E½ on the reported scale, V (default 0.0:
        potentials are reported against the standard).
    electrons : int
        n of the reference couple (default 1).
    """

    window_V: tuple[float, float]
    E_half_V: float = 0.0
    electrons: int = 1

    def __post_init__(self) -> None:
        clean_record(self, INTERNAL_STANDARD)
