"""The internal reference couple of a series: ``[internal_standard]`` and the analyte's window.

An inert, reversible couple added to every solution (ferrocene and the like) gives each
file its own potential reference: the analyte's E½ is quoted against the standard's E½
measured in the same voltammogram, which removes the drift of the reference electrode
between solutions. Used by :mod:`cvfit.io.manifest`; each check raises
:class:`~cvfit.errors.InputError` naming the key.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from cvfit.errors import InputError

__all__ = ["INTERNAL_STANDARD_KEYS", "InternalStandard", "potential_window", "windows_apart"]

#: Keys of the ``[internal_standard]`` table.
INTERNAL_STANDARD_KEYS = ("window_V", "E_half_V", "electrons")
#: Largest magnitude of the E½ assigned to the standard, V (electrode potentials in any
#: solvent lie within a few volts).
MAX_ABS_POTENTIAL_V = 10.0


def potential_window(value: object, key: str) -> tuple[float, float] | None:
    """``[low, high]`` in V as a tuple of two finite numbers with low < high (or None)."""
    if value is None:
        return None
    ok = isinstance(value, list | tuple) and len(value) == 2
    ok = ok and all(
        isinstance(x, int | float) and not isinstance(x, bool) and math.isfinite(float(x))
        for x in value
    )
    if not ok:
        raise InputError(
            f"{key} must be a list of two potentials in V, [low, high], got {value!r}", key=key
        )
    low, high = float(value[0]), float(value[1])
    if not low < high:
        raise InputError(
            f"{key} must be [low, high] with low < high, got [{low:g}, {high:g}]", key=key
        )
    return low, high


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
        window = potential_window(self.window_V, "window_V")
        if window is None:
            raise InputError("window_V is required: [low, high] in V", key="window_V")
        object.__setattr__(self, "window_V", window)
        e = self.E_half_V
        if isinstance(e, bool) or not isinstance(e, int | float) or not math.isfinite(float(e)):
            raise InputError(f"E_half_V must be a finite number (V), got {e!r}", key="E_half_V")
        if not abs(float(e)) <= MAX_ABS_POTENTIAL_V:  # 1e308 overflows the error budget
            raise InputError(
                f"E_half_V must lie within ±{MAX_ABS_POTENTIAL_V:g} V (the standard's E½ on the "
                f"reported scale), got {float(e):g}",
                key="E_half_V",
            )
        object.__setattr__(self, "E_half_V", float(e))
        n = self.electrons
        if isinstance(n, float) and n.is_integer():
            n = int(n)
        if isinstance(n, bool) or not isinstance(n, int) or n < 1:
            raise InputError(
                f"electrons must be a positive whole number, got {self.electrons!r}",
                key="electrons",
            )
        object.__setattr__(self, "electrons", n)
