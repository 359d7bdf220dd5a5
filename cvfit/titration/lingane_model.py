"""The Lingane model behind the titration seam: free ligand corrected for bound ligand, then
the line (:func:`cvfit.titration.lingane.fit_lingane`).

With ``metal_total_M`` in the manifest (or each solution's own metal, a titration by
additions) the free ligand of every point is [L] = c_L − n·c_M, n the ligands bound per
metal in the bulk form: ``bound_ligand_number`` when given, else the fitted p − q (the
reduced form taken as binding none, so a bulk oxidised form binds p = p − q ligands and a
bulk reduced form, oxidation first, none), iterated with the fit to self-consistency. A
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
from collections.abc import Sequence
from dataclasses import replace
from typing import TYPE_CHECKING, Any

from cvfit.chemistry.speciation import BOUND_LIGAND_SHARE_MAX
from cvfit.flags import FitRefused, Flag
from cvfit.titration.base import ModelOutcome, PointNote, TitrationData, TitrationPoint
from cvfit.titration.lingane import LinganeFit, check_points, fit_lingane, null_fit_dict

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest

__all__ = ["LinganeModel", "LINGANE"]

_MAX_ROUNDS = 50


def _line(
    points: Sequence[TitrationPoint], data: TitrationData, manifest: Manifest
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
    )


def _settle_free_ligand(
    fit: LinganeFit, data: TitrationData, manifest: Manifest, bound
) -> tuple[LinganeFit, list[TitrationPoint], bool]:
    """Iterate [L] = c_L − n·c_M with the fitted p − q until both settle."""
    metal = manifest.series.metal_total_M
    points = data.points
    p_fit = fit.delta_ligands.value
    corrected = list(points)
    for _ in range(_MAX_ROUNDS):
        free = [p.x - bound(p, p_fit) * (p.metal_or(metal) or 0.0) for p in points]
        if any(x <= 0 for x in free):
            return fit, corrected, False
        corrected = [replace(p, x=x) for p, x in zip(points, free, strict=True)]
        new = _line(corrected, data, manifest)
        if isinstance(new, FitRefused):
            return fit, corrected, False
        fit = new
        change, p_fit = abs(new.delta_ligands.value - p_fit), new.delta_ligands.value
        if change < 1e-9:
            return fit, corrected, True
    return fit, corrected, False


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

        fit, corrected, settled = _settle_free_ligand(fit, data, manifest, bound)
        if not settled:
            flag = Flag(
                "FREE_LIGAND_NOT_CONVERGED",
                "the free ligand c_L − n·c_M and the fitted p − q did not settle (or left no "
                "free ligand); the last fit is reported — give bound_ligand_number",
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
