"""The stepwise model behind the titration seam: the DeFord–Hume current ratio, the
solution chemistry from the manifest, and the fit of :mod:`cvfit.titration.stepwise`.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace
from typing import TYPE_CHECKING, Any

import numpy as np

from cvfit.chemistry.speciation import BOUND_LIGAND_SHARE_MAX
from cvfit.errors import InputError
from cvfit.flags import FitRefused, Flag
from cvfit.titration.base import ModelOutcome, PointNote, TitrationData, TitrationPoint
from cvfit.titration.lingane import check_points
from cvfit.titration.stepwise import SolutionConditions, StepwisePoint, fit_stepwise
from cvfit.titration.stepwise_result import null_stepwise_dict

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest

__all__ = ["StepwiseModel", "STEPWISE", "current_ratios"]


def current_ratios(
    used: Sequence[TitrationPoint],
    references: Sequence[TitrationPoint],
    *,
    series_metal_M: float | None = None,
) -> tuple[list[float | None], list[Flag]]:
    """ln(Is/Ic) per used point, from the diffusion currents (DeFord & Hume 1951).

    Is is the mean of the ligand-free files' currents. When any current is missing (no
    ligand-free file, a first sweep that is an oxidation, a missing peak) no point is
    corrected and a flag says why: mixing corrected and uncorrected points would bias.
    A diffusion current is proportional to the metal concentration (Randles–Ševčík), so
    when every solution's metal is known (its own, a titration by additions, else
    *series_metal_M*) each current is divided by it: the ratio then compares diffusion
    coefficients only, not the dilution (which would add up to ln(V/V0) to the shift).

    References
    ----------
    DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
    """
    refs = [p for p in references if p.diffusion_current_A is not None]
    if not refs or any(p.diffusion_current_A is None or p.diffusion_current_A <= 0 for p in used):
        flag = Flag(
            "CURRENT_RATIO_NOT_APPLIED",
            "the DeFord–Hume term ln(Is/Ic) needs the reduction peak current of a "
            "ligand-free file and of every fitted file (first sweep a reduction); fitted "
            "without it, as if complexation left the diffusion coefficient unchanged",
            "info",
        )
        return [None] * len(used), [flag]
    flags = []
    scan_known = all(p.scan_rate_V_s for p in (*refs, *used))
    if not scan_known:
        flags.append(
            Flag(
                "CURRENT_RATIO_SCAN_RATE_UNKNOWN",
                "some scan rates are unknown; peak currents compared without the v^½ "
                "normalisation, which assumes one scan rate throughout",
                "info",
            )
        )

    metals = [p.metal_or(series_metal_M) for p in (*refs, *used)]
    per_metal = all(m is not None and m > 0 for m in metals)

    def normalised(p: TitrationPoint) -> float:
        # v^½ and the metal concentration normalise the Randles–Ševčík peak current
        v = p.scan_rate_V_s
        c = (p.metal_or(series_metal_M) or 1.0) if per_metal else 1.0
        current = float(p.diffusion_current_A or 0.0)  # every one > 0 (checked above)
        return current / (math.sqrt(v) if v else 1.0) / c

    Is = [normalised(p) for p in refs]
    Ic = [normalised(p) for p in used]
    s = float(np.mean(Is))
    ratios = [math.log(s / x) for x in Ic]
    basis = (
        "each current divided by its solution's metal concentration"
        if per_metal
        else "this assumes the same metal concentration in every solution — give the "
        "metal (metal_total_M or a [titration] table), or set current_ratio_correction "
        "= false"
    )
    flag = Flag(
        "CURRENT_RATIO_APPLIED",
        f"ln(Is/Ic) from the reduction peak currents, {min(ratios):+.3f} to "
        f"{max(ratios):+.3f}, added to the shift (DeFord–Hume); {basis}",
        "info",
    )
    return list(ratios), [*flags, flag]


def _check_inputs(points: Sequence[TitrationPoint], manifest: Manifest) -> None:
    """ligand_pKa needs a pH for every point; a bound_ligand_number must leave free ligand.

    Raises
    ------
    InputError
    """
    series = manifest.series
    for p in points:
        if series.ligand_pKa and p.pH is None and series.pH is None:
            raise InputError(
                f"ligand_pKa is given but {p.label} has no pH; add pH to [series] or to its "
                "[[voltammogram]] table",
                source=str(manifest.path),
                key="series.pH",
            )
    n_bound = series.bound_ligand_number
    for p in points:
        metal = p.metal_or(series.metal_total_M)
        if n_bound is not None and metal is not None and p.x - n_bound * metal <= 0:
            raise InputError(
                f"bound_ligand_number × metal_total_M ({n_bound * metal:.3g} M) is not below "
                f"the total ligand of {p.label} ({p.x:.3g} M); check the two values or "
                "leave bound_ligand_number out to solve the mass balance",
                source=str(manifest.path),
                key="series.bound_ligand_number",
            )


def _conditions(manifest: Manifest) -> SolutionConditions:
    series = manifest.series
    return SolutionConditions(
        metal_total_M=series.metal_total_M,
        bound_ligand_number=series.bound_ligand_number,
        ligand_pKa=series.ligand_pKa or (),
        pH=series.pH,
        ionic_strength_M=series.ionic_strength_M,
        metal_charge=series.metal_charge,
        ligand_charge=series.ligand_charge,
    )


def _excess_flag(
    p: TitrationPoint, free_M: float, log10_alpha_L: float, metal: float | None
) -> tuple[Flag, ...]:
    share = 1.0 - free_M / (10.0**log10_alpha_L * p.x)
    if metal is None or share <= BOUND_LIGAND_SHARE_MAX:
        return ()
    return (
        Flag(
            "LOW_LIGAND_EXCESS",
            f"{100 * share:.1f} % of the ligand is bound to the metal "
            f"({p.x:.3g} M ligand, {metal:.3g} M metal); its "
            "free ligand is corrected by the mass balance (common practice: "
            ">= 10-fold excess per bound ligand)",
        ),
    )


#: The model's step of the method, as the report states it: (heading, text, sources).
METHOD_STEP: tuple[str, str, tuple[str, ...]] = (
    "Stepwise complexes",
    "When the reduced form is not complexed, F0([L]) = exp{(nF/RT)[E½(s) − E½(c)]} = "
    "Σ βj [L]^j (β0 = 1) is fitted directly by weighted least squares to give the overall "
    "constants βj with their standard errors; Leden's graphical functions F1, F2, … serve "
    "only as a check.",
    (
        "D. D. DeFord, D. N. Hume, J. Am. Chem. Soc. 73 (1951) 5321",
        "I. Leden, Z. phys. Chem. A188 (1941) 160",
    ),
)


class StepwiseModel:
    """Overall constants β_1 … β_N of both oxidation states (DeFord–Hume, Leden)."""

    name = "stepwise"
    title = "stepwise"
    variable = "ligand_M"
    needs_reference = True
    point_rule = "ligand_M > 0"
    #: Three points over more than one ligand concentration (:func:`check_points`).
    check_points = staticmethod(check_points)
    method_steps: tuple[tuple[str, str, tuple[str, ...]], ...] = (METHOD_STEP,)
    #: Its figures (keys of :mod:`cvfit.report.figures.registry`), drawn also without a fit.
    figures: tuple[str, ...] = ("stepwise_shift", "stepwise_leden", "stepwise_species")

    @staticmethod
    def is_point(x: float | None) -> bool:
        """A file with ligand is a titration point."""
        return x is not None and x > 0

    def fit(self, data: TitrationData, manifest: Manifest) -> ModelOutcome:
        """The stepwise fit of *data*; the notes give each point's free ligand.

        Raises
        ------
        InputError
            ligand_pKa given without a pH for some point, or a bound_ligand_number that
            leaves no free ligand.
        """
        series, settings = manifest.series, manifest.fit
        if data.reference.E_half_V is None:
            raise ValueError("the stepwise fit needs E½(s)")  # the pipeline refuses before
        used = data.points
        _check_inputs(used, manifest)
        flags: list[Flag] = []
        ratios: list[float | None] = [None] * len(used)
        if settings.current_ratio_correction:
            ratios, flags = current_ratios(
                used, data.reference_points, series_metal_M=series.metal_total_M
            )
        points = [
            StepwisePoint(
                p.label,
                p.x,
                p.E_half_V,
                p.E_half_stderr_V,
                r,
                p.pH,
                bulk_form=p.bulk_form or "ox",
                metal_M=p.metal_M,
            )
            for p, r in zip(used, ratios, strict=True)
        ]
        fit = fit_stepwise(
            points,
            electrons=series.electrons,
            temperature_K=series.temperature_K,
            reference_E_half_V=data.reference.E_half_V,
            reference_stderr_V=data.reference.stderr_V,
            reference_count=data.reference.count,
            max_complexes=settings.max_complexes,
            fixed_log10_beta_ox=settings.fixed_log10_beta_ox,
            fixed_log10_beta_red=settings.fixed_log10_beta_red,
            conditions=_conditions(manifest),
        )
        if isinstance(fit, FitRefused):
            return ModelOutcome(fit)
        if flags:
            fit = replace(fit, flags=tuple(flags) + fit.flags)
        free = dict(zip(fit.labels, fit.free_ligand_M, strict=True))
        alpha = dict(zip(fit.labels, fit.log10_alpha_L, strict=True))
        notes = {
            p.label: PointNote(
                free[p.label],
                _excess_flag(p, free[p.label], alpha[p.label], p.metal_or(series.metal_total_M)),
            )
            for p in used
            if p.label in free
        }
        return ModelOutcome(fit, notes)

    def null_dict(self, n_points: int, flags: Sequence[Flag]) -> dict[str, Any]:
        return null_stepwise_dict(n_points, flags)


#: The stepwise model object (``[fit] model = "stepwise"``).
STEPWISE = StepwiseModel()
