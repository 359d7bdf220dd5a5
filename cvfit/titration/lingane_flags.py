"""Flags raised by the Lingane fit (kept apart from the arithmetic)."""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from cvfit.flags import Flag
from cvfit.quantity import Quantity
from cvfit.titration.lingane_regression import LineFit

__all__ = ["point_flags", "weighting_flag", "delta_ligand_flags", "SHORT_RANGE_DECADES"]

#: Below this span of log10[L] the slope, hence p − q, is poorly determined (common practice).
SHORT_RANGE_DECADES = 1.0

#: |p − q − nearest integer| beyond this many standard errors: not a whole number.
WHOLE_NUMBER_SIGMAS = 2.5
#: ... and beyond this absolute distance (smaller departures are chemically meaningless and
#: arise from rounding on exact data; common practice).
WHOLE_NUMBER_TOLERANCE = 0.02


def point_flags(ligand_M: Sequence[float], min_points: int) -> tuple[Flag, ...]:
    """``TOO_FEW_POINTS`` / ``NO_LIGAND_RANGE`` (errors) and ``SHORT_LIGAND_RANGE``."""
    n = len(ligand_M)
    if n < min_points:
        return (
            Flag(
                "TOO_FEW_POINTS",
                f"{n} usable titration point(s); at least {min_points} are needed for a "
                "line with a confidence interval — no constants reported",
                "error",
            ),
        )
    x = np.log10(np.asarray(ligand_M, dtype=float))
    span = float(np.ptp(x))
    if np.unique(x).size < 2:
        return (
            Flag(
                "NO_LIGAND_RANGE",
                f"all {n} points have the same ligand concentration ({ligand_M[0]:.3g} M); "
                "the slope cannot be determined — no constants reported",
                "error",
            ),
        )
    if span < SHORT_RANGE_DECADES:
        return (
            Flag(
                "SHORT_LIGAND_RANGE",
                f"the ligand concentrations span only {span:.2f} decade(s); p − q is poorly "
                f"determined (aim for at least {SHORT_RANGE_DECADES:g})",
            ),
        )
    return ()


def weighting_flag(
    weighting: str,
    have_sigma: bool,
    credible: bool,
    redchi: float | None,
    weighted_line: LineFit | None,
) -> Flag | None:
    """Say why per-file weights were or were not used (``None`` when nothing to say)."""
    if weighting == "none":
        return None
    if not have_sigma:
        return Flag(
            "WEIGHTS_UNAVAILABLE",
            "not every E½ has a standard error > 0; the line is fitted unweighted",
            "info",
        )
    if credible:
        return None
    dof = 0 if weighted_line is None else weighted_line.dof
    action = (
        "the line is fitted unweighted and E½(s) is given the points' scatter"
        if weighting == "auto"
        else "weights used as requested, covariance scaled by the scatter"
    )
    return Flag(
        "WEIGHTS_NOT_CREDIBLE",
        f"the E½ scatter is far larger than the per-file errors predict (reduced χ² = "
        f"{redchi:.3g} on {dof} dof); {action}",
    )


def delta_ligand_flags(delta: Quantity, integer: int) -> tuple[Flag, ...]:
    """Flags on the rounding of p − q to a whole number."""
    out: list[Flag] = []
    v, se = delta.value, delta.stderr
    lo, hi = delta.ci95
    if math.isfinite(lo) and math.isfinite(hi) and math.floor(hi) - math.ceil(lo) >= 1:
        out.append(
            Flag(
                "DELTA_LIGANDS_AMBIGUOUS",
                f"p − q = {v:.2f} ± {se:.2f}: its 95 % interval [{lo:.2f}, {hi:.2f}] holds "
                "more than one whole number, so the fixed-integer refit is a guess",
            )
        )
    if abs(v - integer) > max(WHOLE_NUMBER_SIGMAS * se, WHOLE_NUMBER_TOLERANCE):
        out.append(
            Flag(
                "DELTA_LIGANDS_NOT_WHOLE",
                f"p − q = {v:.2f} ± {se:.2f} is {abs(v - integer) / se:.1f} standard errors "
                f"from the nearest whole number {integer}: the simple Lingane model may not "
                "hold (mixed complexes, non-Nernstian points, wrong n); where several "
                'complexes form in turn, try [fit] model = "stepwise"',
            )
        )
    if integer <= 0:
        out.append(
            Flag(
                "DELTA_LIGANDS_NOT_POSITIVE",
                f"p − q rounds to {integer}: the oxidised form should bind at least one more "
                "ligand than the reduced form for E½ to move negative with [L]; check n, "
                "the ligand concentrations and the sign of the shift",
            )
        )
    return tuple(out)
