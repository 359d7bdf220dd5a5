"""Checks of the electrode and kinetics manifest keys (scan-rate studies, k0, iR).

Used by :mod:`cvfit.io.manifest` from the ``__post_init__`` of its settings records; each
function returns the cleaned value or raises :class:`~cvfit.errors.InputError` naming
the key.
"""

from __future__ import annotations

import math

from cvfit.errors import InputError

__all__ = ["SERIES_ELECTRODE_KEYS", "ENTRY_ELECTRODE_KEYS", "clean_series", "positive"]

#: [series] keys: electrode area (cm²), bulk concentration of the electroactive species
#: (mol/L), a known diffusion coefficient and its standard error (cm²/s), the transfer
#: coefficient assumed, and the uncompensated resistance (Ω).
SERIES_ELECTRODE_KEYS = (
    "electrode_area_cm2",
    "analyte_M",
    "diffusion_cm2_s",
    "diffusion_stderr_cm2_s",
    "alpha",
    "resistance_ohm",
)
#: [[voltammogram]] keys that override the series value for one file.
ENTRY_ELECTRODE_KEYS = ("resistance_ohm",)


def _number(value: object, key: str) -> float:
    if (
        isinstance(value, bool)
        or not isinstance(value, int | float)
        or not math.isfinite(float(value))
    ):
        raise InputError(f"{key} must be a finite number, got {value!r}", key=key)
    return float(value)


def positive(value: object, key: str, unit: str, *, allow_zero: bool = False) -> float | None:
    """A finite number > 0 (or >= 0 with ``allow_zero``), or None."""
    if value is None:
        return None
    x = _number(value, key)
    if x < 0 or (x == 0 and not allow_zero):
        need = ">= 0" if allow_zero else "positive"
        raise InputError(f"{key} must be {need} ({unit}), got {x:g}", key=key)
    return x


def clean_series(s: object) -> None:
    """Check and normalise the electrode keys of a SeriesSettings record in place."""
    put = object.__setattr__
    put(s, "electrode_area_cm2", positive(s.electrode_area_cm2, "electrode_area_cm2", "cm²"))
    put(s, "analyte_M", positive(s.analyte_M, "analyte_M", "mol/L"))
    put(s, "diffusion_cm2_s", positive(s.diffusion_cm2_s, "diffusion_cm2_s", "cm²/s"))
    sd = positive(s.diffusion_stderr_cm2_s, "diffusion_stderr_cm2_s", "cm²/s", allow_zero=True)
    if sd is not None and s.diffusion_cm2_s is None:
        raise InputError(
            "diffusion_stderr_cm2_s is given without diffusion_cm2_s; add diffusion_cm2_s "
            "or remove the standard error",
            key="diffusion_stderr_cm2_s",
        )
    put(s, "diffusion_stderr_cm2_s", sd)
    a = _number(s.alpha, "alpha")
    if not 0.0 < a < 1.0:
        raise InputError(f"alpha must lie strictly between 0 and 1, got {a:g}", key="alpha")
    put(s, "alpha", a)
    put(s, "resistance_ohm", positive(s.resistance_ohm, "resistance_ohm", "Ω", allow_zero=True))
