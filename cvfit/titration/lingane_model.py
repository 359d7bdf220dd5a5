"""The Lingane model behind the titration seam: free ligand corrected for bound ligand, then
the line (:func:`cvfit.titration.lingane.fit_lingane`).

With ``metal_total_M`` in the manifest (or each solution's own metal, a titration by
additions) the free ligand of every point is [L] = c_L − n·c_M, n the ligands bound per
metal in the bulk form: ``bound_ligand_number`` when given, else the fitted p − q (the
reduced form taken as binding none, so a bulk oxidised form binds p = p − q ligands and a
bulk reduced form, oxidation first, none). With p − q fitted, the estimate is the
self-consistent one, p* = G(p*) with G(p) the p − q fitted at the free ligand of an
assumed p, found by a bracketing root finder (:func:`_self_consistent`; plain iteration
diverges when |G'| > 1), and its intervals carry the dependence of [L] on the fitted
p − q by the implicit-function theorem (:func:`_feedback`); the constant at the whole
p − q = k is refitted at [L] = c_L − k·c_M, which has no such dependence. A
point is flagged when more than a tenth of its ligand is bound (n·c_M/c_L > 0.1; common
practice: >= 10-fold excess per bound ligand) or when the correction moves it by more
than its E½ standard error.

References
----------
Lingane, J. J. Chem. Rev. 1941, 29, 1.
Bjerrum, J. Metal Ammine Formation in Aqueous Solution; Haase: Copenhagen, 1941
(mass balance of bound ligand).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import replace
from typing import TYPE_CHECKING, Any

import numpy as np
from scipy.optimize import brentq

from cvfit.chemistry.speciation import BOUND_LIGAND_SHARE_MAX
from cvfit.flags import FitRefused, Flag
from cvfit.titration.base import ModelOutcome, PointNote, TitrationData, TitrationPoint
from cvfit.titration.lingane import LinganeFit, check_points, fit_lingane, null_fit_dict

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest

__all__ = ["LinganeModel", "LINGANE"]

#: Grid of assumed p − q searched for the first sign change of G(p) − p (below).
_GRID = 24
#: Largest assumed p − q as a share of the one that leaves a point no free ligand.
_EDGE = 1.0 - 1e-9

Bound = Callable[[TitrationPoint, float], float]


def _line(
    points: Sequence[TitrationPoint],
    data: TitrationData,
    manifest: Manifest,
    feedback: tuple[tuple[float, float], tuple[float, float]] | None = None,
) -> LinganeFit | FitRefused:
    ref = data.reference
    if ref.E_half_V is None:
        raise ValueError("the Lingane line needs E½(s)")  # the pipeline refuses before
    return fit_lingane(
        points,
        electrons=manifest.series.electrons,
        temperature_K=manifest.series.temperature_K,
        reference_E_half_V=ref.E_half_V,
        reference_stderr_V=ref.stderr_V,
        reference_count=ref.count,
        feedback=feedback,
    )


def _corrected(
    data: TitrationData, metal: float | None, bound: Bound, p_assumed: float
) -> list[TitrationPoint] | None:
    """The points at [L] = c_L − n·c_M, n = bound(point, p_assumed); None if one is <= 0."""
    free = [p.x - bound(p, p_assumed) * (p.metal_or(metal) or 0.0) for p in data.points]
    if any(not x > 0 for x in free):
        return None
    return [replace(p, x=x) for p, x in zip(data.points, free, strict=True)]


def _most_bound(data: TitrationData, metal: float | None, bound: Bound) -> float:
    """The assumed p − q at which a point would have no free ligand left (inf: never)."""
    limits = [
        p.x / ((p.metal_or(metal) or 0.0) * bound(p, 1.0))
        for p in data.points
        if bound(p, 1.0) > 0 and (p.metal_or(metal) or 0.0) > 0
    ]
    return min(limits, default=math.inf)


def _self_consistent(
    data: TitrationData, manifest: Manifest, bound: Bound, p_start: float
) -> float | None:
    """The assumed p − q equal to the one fitted at it, p* = G(p*), or None.

    G(p) is the fitted p − q at [L] = c_L − p·c_M. G(0) = *p_start* > 0 and G falls to 0
    as a point's free ligand goes to 0 (its log10[L] runs off to −∞ and flattens the
    line), so g(p) = G(p) − p changes sign on (0, p_max): the first change on a grid is
    bracketed and solved by Brent's method. Plain iteration p ← G(p) diverges where
    |G'(p*)| > 1 (2 mM metal against 0.1 M stock additions).

    References
    ----------
    Brent, R. P. Algorithms for Minimization without Derivatives; Prentice-Hall, 1973,
    ch. 4 (the bracketing root finder; from memory).
    """
    metal = manifest.series.metal_total_M
    p_max = _most_bound(data, metal, bound)
    top = _EDGE * p_max if math.isfinite(p_max) else 2.0 * p_start + 10.0

    def g(p_assumed: float) -> float:
        points = _corrected(data, metal, bound, p_assumed)
        fit = None if points is None else _line(points, data, manifest)
        if fit is None or isinstance(fit, FitRefused):
            return -p_assumed  # no line: count it as past the root
        return fit.delta_ligands.value - p_assumed

    grid = np.linspace(0.0, top, _GRID + 1)
    low = 0.0
    for high in grid[1:]:
        g_high = g(float(high))
        if g_high <= 0.0:
            if g_high == 0.0:
                return float(high)
            return float(brentq(g, low, float(high), xtol=1e-12, rtol=1e-12))
        low = float(high)
    return None


def _feedback(
    data: TitrationData, manifest: Manifest, bound: Bound, p_star: float, slope_nernst: float
) -> tuple[tuple[float, float], tuple[float, float]] | None:
    """Jacobian of the self-consistent (slope, intercept) on the line's own (fixed [L]).

    With b(y, p) and a(y, p) the line fitted at the free ligand of an assumed p − q and
    p* = −b(y, p*)/S (S = ln10·RT/nF), the implicit-function theorem gives
    dp* = −db/(S + ∂b/∂p), so d(slope*) = S/(S + ∂b/∂p)·db and
    d(intercept*) = da − ∂a/∂p/(S + ∂b/∂p)·db. The derivatives are central differences
    (one-sided at p* = 0) of two more line fits. None when they cannot be taken.

    References
    ----------
    Rudin, W. Principles of Mathematical Analysis, 3rd ed.; McGraw-Hill, 1976, theorem 9.28
    (implicit functions; from memory).
    """
    metal = manifest.series.metal_total_M
    h = 1e-4 * max(p_star, 1.0)
    room = _EDGE * _most_bound(data, metal, bound) - p_star
    h = min(h, 0.5 * room) if room > 0 else h
    steps = (max(p_star - h, 0.0), p_star + h)
    ends = []
    for p_assumed in steps:
        points = _corrected(data, metal, bound, p_assumed)
        fit = None if points is None else _line(points, data, manifest)
        if fit is None or isinstance(fit, FitRefused):
            return None
        ends.append((fit.slope_V_per_decade.value, fit.intercept_V.value))
    width = steps[1] - steps[0]
    db = (ends[1][0] - ends[0][0]) / width
    da = (ends[1][1] - ends[0][1]) / width
    denominator = slope_nernst + db
    if not denominator > 0:  # the root is not a downward crossing: no honest error
        return None
    return ((slope_nernst / denominator, 0.0), (-da / denominator, 1.0))


def _settle_free_ligand(
    fit: LinganeFit, data: TitrationData, manifest: Manifest, bound: Bound, fixed: bool
) -> tuple[LinganeFit, list[TitrationPoint], bool]:
    """The fit at the self-consistent free ligand, its errors propagated through [L].

    *fixed*: the bound ligand number is given (no dependence on the fit: one line at it).
    """
    metal = manifest.series.metal_total_M
    if fixed:
        points = _corrected(data, metal, bound, 0.0)
        new = None if points is None else _line(points, data, manifest)
        if points is None or new is None or isinstance(new, FitRefused):
            return fit, list(data.points), False
        return new, points, True
    p_start = fit.delta_ligands.value
    if not p_start > 0:  # nothing bound at the fitted p − q <= 0: already consistent
        return fit, list(data.points), True
    p_star = _self_consistent(data, manifest, bound, p_start)
    points = None if p_star is None else _corrected(data, metal, bound, p_star)
    if p_star is None or points is None:
        return fit, list(data.points), False
    jac = _feedback(data, manifest, bound, p_star, fit.nernst_slope_V_per_decade)
    new = _line(points, data, manifest, jac)
    if isinstance(new, FitRefused) or jac is None:
        return fit, list(data.points), False
    if abs(new.delta_ligands.value - p_star) > 1e-6 * max(p_star, 1.0):
        return fit, list(data.points), False  # a jump of G (the weighting), not a root
    return _at_integer(new, data, manifest, bound), points, True


def _at_integer(
    fit: LinganeFit, data: TitrationData, manifest: Manifest, bound: Bound
) -> LinganeFit:
    """The fixed-integer constant refitted at the free ligand of that integer p − q.

    With p − q held at k the bound ligand is k·c_M exactly, so that refit needs no
    propagation (the slope-free fit's [L] depends on the fitted p − q; this one does not).
    """
    k = fit.delta_ligands_integer
    points = _corrected(data, manifest.series.metal_total_M, bound, float(k)) if k > 0 else None
    at_k = None if points is None else _line(points, data, manifest)
    if at_k is None or isinstance(at_k, FitRefused) or at_k.delta_ligands_integer != k:
        return fit
    key = "log10_beta_ratio_at_integer"
    budget = dict(fit.error_budget or {})
    if at_k.error_budget is not None:
        budget[key] = at_k.error_budget[key]
    q = at_k.log10_beta_ratio_at_integer.with_note(f", free ligand at p - q = {k}")
    return replace(fit, log10_beta_ratio_at_integer=q, error_budget=budget or None)


def _depletion_flags(
    total: TitrationPoint, used: TitrationPoint, n: float, metal: float, slope: float, scatter
) -> list[Flag]:
    """LOW_LIGAND_EXCESS and LIGAND_DEPLETION_CORRECTED for one point."""
    share = n * metal / total.x
    flags = []
    if share > BOUND_LIGAND_SHARE_MAX:
        flags.append(
            Flag(
                "LOW_LIGAND_EXCESS",
                f"{100 * share:.1f} % of the ligand is bound (n·c_M/c_L with n = {n:.2f}, "
                f"c_M = {metal:.3g} M, c_L = {total.x:.3g} M); free ligand corrected to "
                f"{used.x:.4g} M (common practice: >= 10-fold excess per bound ligand)",
            )
        )
    shift = slope * math.log10(total.x / used.x)
    sigma = total.E_half_stderr_V or scatter
    if share > 0 and sigma is not None and shift > sigma:
        flags.append(
            Flag(
                "LIGAND_DEPLETION_CORRECTED",
                f"bound ligand ({100 * share:.1f} % of c_L) moves this point by "
                f"{1e3 * shift:.2f} mV on the Lingane line, more than its E½ noise "
                f"({1e3 * sigma:.2f} mV); fitted at the free ligand {used.x:.4g} M",
            )
        )
    return flags


class LinganeModel:
    """Lingane's line of E½ against log10[L] (:mod:`cvfit.titration.lingane`)."""

    name = "lingane"
    title = "Lingane"
    variable = "ligand_M"
    needs_reference = True
    point_rule = "ligand_M > 0"
    #: Three points over more than one ligand concentration (:func:`check_points`).
    check_points = staticmethod(check_points)
    #: Its step of the method beyond the common ones (the report's method section states
    #: the Lingane line itself).
    method_steps: tuple[tuple[str, str, tuple[str, ...]], ...] = ()
    #: Its figures (keys of :mod:`cvfit.report.figures.registry`), drawn also without a fit.
    figures: tuple[str, ...] = ("lingane",)

    @staticmethod
    def is_point(x: float | None) -> bool:
        """A file with ligand is a titration point."""
        return x is not None and x > 0

    def fit(self, data: TitrationData, manifest: Manifest) -> ModelOutcome:
        """The line; with the metal known, on the free ligand (module docstring)."""
        metal = manifest.series.metal_total_M
        fit = _line(data.points, data, manifest)
        known = any(p.metal_or(metal) is not None for p in data.points)
        if not known or isinstance(fit, FitRefused):
            return ModelOutcome(fit)
        given = manifest.series.bound_ligand_number

        def bound(p: TitrationPoint, p_fit: float) -> float:
            if given is not None:
                return float(given)
            return 0.0 if p.bulk_form == "red" else max(p_fit, 0.0)

        fit, corrected, settled = _settle_free_ligand(
            fit, data, manifest, bound, given is not None
        )
        if not settled:
            flag = Flag(
                "FREE_LIGAND_NOT_CONVERGED",
                "no free ligand c_L − n·c_M agrees with the p − q fitted at it (or none is "
                "left); the fit at the total ligand is reported — give bound_ligand_number",
            )
            fit = replace(fit, flags=(*fit.flags, flag))
        p_fit = fit.delta_ligands.value
        slope = abs(fit.slope_V_per_decade.value)
        res = fit.residuals_V
        scatter = math.sqrt(sum(r * r for r in res) / max(fit.dof, 1)) if res else None
        notes = {
            used.label: PointNote(
                used.x,
                tuple(
                    _depletion_flags(
                        p, used, bound(p, p_fit), p.metal_or(metal) or 0.0, slope, scatter
                    )
                ),
            )
            for p, used in zip(data.points, corrected, strict=True)
        }
        return ModelOutcome(fit, notes)

    def null_dict(self, n_points: int, flags: Sequence[Flag]) -> dict[str, Any]:
        return null_fit_dict(n_points, flags)


#: The Lingane model object (``[fit] model = "lingane"``).
LINGANE = LinganeModel()
