"""Bounds of a plan's numbers: what a titration can reach, and what the plan can compute.

Each bound is stated in the error that refuses a value beyond it and in docs/plan.md. They
are wide for chemistry and narrow enough that no number of the plan overflows: a
constant of 10^300 or a noise of 10^-300 would give infinities, not a plan.
"""

from __future__ import annotations

from cvfit.errors import InputError

__all__ = ["MAX_POINTS", "MAX_CONSTANTS", "LIMITS", "within"]

#: Most solutions a plan designs, and most concentrations a proposed design lists. A
#: titration has some 5-30; a plan of 100 takes some 10 s (four stepwise constants with a
#: metal balance, on one core), and the time grows faster than the number.
MAX_POINTS = 100
#: Most stepwise constants: as many as a manifest's ``[fit] max_complexes`` allows.
MAX_CONSTANTS = 8

#: key -> (lowest, highest, unit) of a number of the plan file. ``log10`` covers every
#: log10 β, log10(β_ox/β_red) and each end of their ranges.
LIMITS: dict[str, tuple[float, float, str]] = {
    "series.electrons": (1, 10, ""),
    "series.temperature_C": (0.0, 100.0, " °C"),
    "series.metal_total_M": (1e-12, 20.0, " mol/L"),
    "series.E_half_free_V": (-10.0, 10.0, " V"),
    "ligand": (1e-12, 20.0, " mol/L"),
    "design.E_half_stderr_V": (1e-7, 1.0, " V"),
    "design.target_stderr_log10": (1e-4, 10.0, ""),
    "expect.delta_ligands": (0.01, 20.0, ""),
    "log10": (-100.0, 100.0, ""),
}


def within(src: str, key: str, value: float, limit: str | None = None) -> float:
    """*value* when it lies within the bounds of ``LIMITS[limit or key]``.

    Raises
    ------
    InputError
        Naming *key*, the value and the bounds.
    """
    lo, hi, unit = LIMITS[limit or key]
    if not lo <= value <= hi:
        raise InputError(
            f"{key}: {value:g}{unit} is outside what a plan takes ({lo:g} to {hi:g}{unit}); "
            "give a value a titration can reach",
            source=src,
            key=key,
        )
    return value
