"""Flags raised by the Lingane fit (kept apart from the arithmetic)."""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from cvfit.flags import Flag
from cvfit.quantity import Quantity
from cvfit.titration.lingane_regression import LineFit

__all__ = [
    "point_flags",
    "weighting_flag",
    "delta_ligand_flags",
    "free_ion_bend_flag",
    "SHORT_RANGE_DECADES",
    "BEND_BIAS_SHARE",
]

#: The neglected free-ion term is flagged when the bias it predicts in p − q or in
#: log10(β_ox/β_red) exceeds this share of the constant's standard error.
BEND_BIAS_SHARE = 0.5
#: ... and exceeds this (log10 units or ligands).
BEND_BIAS_FLOOR = 1e-3

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


def free_ion_bend_flag(
    log10_ligand: np.ndarray,
    weights: np.ndarray,
    *,
    log10_ratio: Quantity,
    delta: Quantity,
    nernst_slope_V: float,
) -> Flag | None:
    """``LINE_CURVED`` when the free ion the line neglects biases the fitted constants.

    Lingane's line drops the 1 of 1 + β·[L]^Δ: the E½ lie (RT/nF)·ln(1 + 1/(β·[L]^Δ)) off
    it (the reduced form taken as uncomplexed), most at the lowest ligand. At the fitted
    constants that shift is carried through the fit's own linear estimator; when the bias
    it predicts in p − q or in log10(β_ox/β_red) exceeds ``BEND_BIAS_SHARE`` of its
    standard error the flag is raised. Unlike the quadratic F-test this sees a bend
    confined to a cluster of points at the low end.

    References
    ----------
    Lingane, J. J. Chem. Rev. 29 (1941) 1.
    """
    x = np.asarray(log10_ligand, dtype=float)
    w = np.asarray(weights, dtype=float)
    level = log10_ratio.value + delta.value * x  # log10(β·[L]^Δ) at each point
    shift = nernst_slope_V / math.log(10.0) * np.log1p(10.0 ** -np.clip(level, -300, 300))
    design = np.column_stack([x, np.ones_like(x)])
    xtw = design.T * w
    d_slope, d_icpt = np.linalg.solve(xtw @ design, xtw @ shift)
    bias_delta = float(d_slope / nernst_slope_V)
    bias_ratio = float(d_icpt / nernst_slope_V)
    # in standard errors, with a floor of 0.001 (log10 units, ligands): below it a bias is
    # chemically meaningless, and exact data have standard errors of zero
    worst = max(
        abs(bias_delta) / max(delta.stderr, BEND_BIAS_FLOOR / BEND_BIAS_SHARE),
        abs(bias_ratio) / max(log10_ratio.stderr, BEND_BIAS_FLOOR / BEND_BIAS_SHARE),
    )
    if not (math.isfinite(worst) and worst > BEND_BIAS_SHARE):
        return None
    low = float(10.0 ** x.min())
    return Flag(
        "LINE_CURVED",
        f"at the fitted constants the free ion is not negligible at the lowest ligand "
        f"({low:.3g} M: E½ {1e3 * float(shift.max()):.2f} mV off the line, reduced form "
        f"taken as uncomplexed), which biases p − q by about {bias_delta:+.3g} and "
        f"log10(β_ox/β_red) by {bias_ratio:+.3g} (up to {worst:.1f} standard errors): drop the "
        'lowest points or try model = "stepwise"',
    )
