"""Checks of the solution-chemistry and stepwise-model manifest keys.

Used by :mod:`cvfit.io.manifest` from the ``__post_init__`` of its settings records; each
function returns the cleaned value or raises :class:`~cvfit.errors.InputError` naming
the key.
"""

from __future__ import annotations

import math

from cvfit.errors import InputError

__all__ = ["number_list", "optional_pH", "optional_nonnegative", "optional_charge", "flag"]


def _is_number(value: object) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def number_list(value: object, key: str, *, allow_none: bool = True) -> tuple[float, ...] | None:
    """A list of finite numbers (log10 constants, pKa values) as a tuple."""
    if value is None and allow_none:
        return None
    if not isinstance(value, list | tuple) or not value:
        raise InputError(f"{key} must be a non-empty list of numbers, e.g. [4.2]", key=key)
    out = []
    for x in value:
        if not _is_number(x) or not math.isfinite(float(x)):
            raise InputError(f"{key} must hold finite numbers only, got {x!r}", key=key)
        out.append(float(x))
    return tuple(out)


def optional_pH(value: object, key: str = "pH") -> float | None:
    """pH within 0–14, or None."""
    if value is None:
        return None
    if not _is_number(value) or not 0.0 <= float(value) <= 14.0:
        raise InputError(f"{key} must be a number within 0–14, got {value!r}", key=key)
    return float(value)


def optional_nonnegative(value: object, key: str) -> float | None:
    """A finite number >= 0, or None."""
    if value is None:
        return None
    if not _is_number(value) or not math.isfinite(float(value)) or float(value) < 0:
        raise InputError(f"{key} must be a number >= 0, got {value!r}", key=key)
    return float(value)


def optional_charge(value: object, key: str) -> int | None:
    """A whole charge number (may be negative or zero), or None."""
    if value is None:
        return None
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if isinstance(value, bool) or not isinstance(value, int) or abs(value) > 10:
        raise InputError(
            f"{key} must be a whole charge number, e.g. 2 or -1, got {value!r}", key=key
        )
    return value


def flag(value: object, key: str) -> bool:
    """true or false."""
    if not isinstance(value, bool):
        raise InputError(f"{key} must be true or false, got {value!r}", key=key)
    return value


SERIES_CHEMISTRY_KEYS = (
    "ligand_pKa",
    "pH",
    "ionic_strength_M",
    "metal_charge",
    "ligand_charge",
    "bound_ligand_number",
)
FIT_STEPWISE_KEYS = ("fixed_log10_beta_ox", "fixed_log10_beta_red", "current_ratio_correction")


def clean_series(record: object) -> None:
    """Check and normalise the chemistry fields of a frozen SeriesSettings in place."""
    set_ = object.__setattr__
    set_(record, "ligand_pKa", number_list(record.ligand_pKa, "ligand_pKa"))
    set_(record, "pH", optional_pH(record.pH))
    set_(
        record,
        "ionic_strength_M",
        optional_nonnegative(record.ionic_strength_M, "ionic_strength_M"),
    )
    set_(record, "metal_charge", optional_charge(record.metal_charge, "metal_charge"))
    set_(record, "ligand_charge", optional_charge(record.ligand_charge, "ligand_charge"))
    n = optional_nonnegative(record.bound_ligand_number, "bound_ligand_number")
    if n is not None and record.metal_total_M is None:
        raise InputError(
            "bound_ligand_number needs metal_total_M; add it or remove bound_ligand_number",
            key="bound_ligand_number",
        )
    set_(record, "bound_ligand_number", n)


def clean_fit(record: object) -> None:
    """Check and normalise the stepwise fields of a frozen FitSettings in place."""
    set_ = object.__setattr__
    ox = number_list(record.fixed_log10_beta_ox, "fixed_log10_beta_ox")
    red = number_list(record.fixed_log10_beta_red, "fixed_log10_beta_red")
    if ox is not None and red is not None:
        raise InputError(
            "give fixed_log10_beta_ox or fixed_log10_beta_red, not both: the constants of "
            "the other oxidation state are what the fit finds",
            key="fixed_log10_beta_red",
        )
    if (ox is not None or red is not None) and record.model != "stepwise":
        key = "fixed_log10_beta_ox" if ox is not None else "fixed_log10_beta_red"
        raise InputError(f'{key} needs model = "stepwise" in [fit]', key=key)
    set_(record, "fixed_log10_beta_ox", ox)
    set_(record, "fixed_log10_beta_red", red)
    set_(
        record,
        "current_ratio_correction",
        flag(record.current_ratio_correction, "current_ratio_correction"),
    )
