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
#: coefficient assumed, the uncompensated resistance (Ω), and the curve model's initial
#: state: the form in the bulk and the quiet time at the first potential (s).
SERIES_ELECTRODE_KEYS = (
    "electrode_area_cm2",
    "analyte_M",
    "diffusion_cm2_s",
    "diffusion_stderr_cm2_s",
    "alpha",
    "resistance_ohm",
    "bulk_form",
    "quiet_time_s",
)
#: What ``bulk_form`` may say.
BULK_FORMS = ("ox", "red")
#: Longest quiet time accepted, s (common practice: seconds to a minute; an hour is a typo).
MAX_QUIET_TIME_S = 3600.0
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
    if s.bulk_form is not None and s.bulk_form not in BULK_FORMS:
        raise InputError(
            f'bulk_form must be "ox" or "red" (the form present in the solution), got '
            f"{s.bulk_form!r}; leave it out to detect it from the record's start",
            key="bulk_form",
        )
    quiet = positive(s.quiet_time_s, "quiet_time_s", "s", allow_zero=True)
    if quiet is not None and quiet > MAX_QUIET_TIME_S:
        raise InputError(
            f"quiet_time_s must be at most {MAX_QUIET_TIME_S:g} s, got {quiet:g}",
            key="quiet_time_s",
        )
    put(s, "quiet_time_s", quiet)
