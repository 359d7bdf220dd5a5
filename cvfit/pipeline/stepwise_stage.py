"""Pipeline step of the stepwise model: file results → stepwise fit → corrected free ligand.

Composition only: the DeFord–Hume current ratio from the files' peak currents, the
solution chemistry from the manifest, and the fit of :mod:`cvfit.titration.stepwise`.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace

import numpy as np

from cvfit.chemistry.speciation import BOUND_LIGAND_SHARE_MAX
from cvfit.errors import InputError
from cvfit.flags import FitRefused, Flag
from cvfit.io import Manifest
from cvfit.pipeline.results import FileResult, ReferenceHalfWave
from cvfit.titration.stepwise import (
    SolutionConditions,
    StepwiseFit,
    StepwisePoint,
    fit_stepwise,
)

__all__ = ["run_stepwise", "current_ratios"]


def _peak_per_root_v(f: FileResult) -> float | None:
    """The diffusion current over √v (v^½ normalises the Randles–Ševčík peak current), or the
    current itself if v is unknown; None when the technique gives none."""
    ip = f.measurement.diffusion_current_A
    if ip is None:
        return None
    v = f.scan_rate_V_s
    return ip / (math.sqrt(v) if v else 1.0)


def current_ratios(
    used: Sequence[FileResult], reference: ReferenceHalfWave, files: Sequence[FileResult]
) -> tuple[list[float | None], list[Flag]]:
    """ln(Is/Ic) per used file, from the cathodic peak currents (DeFord & Hume 1951).

    Is is the mean of the ligand-free files' peak currents. When any current is missing
    (no ligand-free file, a first sweep that is an oxidation, a missing peak) no point is
    corrected and a flag says why: mixing corrected and uncorrected points would bias.

    References
    ----------
    DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
    """
    refs = [f for f in files if f.file in reference.files and f.ligand_M == 0.0]
    Is = [x for x in (_peak_per_root_v(f) for f in refs) if x is not None]
    Ic = [_peak_per_root_v(f) for f in used]
    if not Is or any(x is None or x <= 0 for x in Ic):
        flag = Flag(
            "CURRENT_RATIO_NOT_APPLIED",
            "the DeFord–Hume term ln(Is/Ic) needs the reduction peak current of a "
            "ligand-free file and of every fitted file (first sweep a reduction); fitted "
            "without it, as if complexation left the diffusion coefficient unchanged",
            "info",
        )
        return [None] * len(used), [flag]
    scan_known = all(f.scan_rate_V_s for f in (*refs, *used))
    flags = []
    if not scan_known:
        flags.append(
            Flag(
                "CURRENT_RATIO_SCAN_RATE_UNKNOWN",
                "some scan rates are unknown; peak currents compared without the v^½ "
                "normalisation, which assumes one scan rate throughout",
                "info",
            )
        )
    s = float(np.mean(Is))
    ratios = [math.log(s / x) for x in Ic]
    flags.append(
        Flag(
            "CURRENT_RATIO_APPLIED",
            f"ln(Is/Ic) from the reduction peak currents, {min(ratios):+.3f} to "
            f"{max(ratios):+.3f}, added to the shift (DeFord–Hume); this assumes the same "
            "metal concentration in every solution — correct for dilution first, or set "
            "current_ratio_correction = false",
            "info",
        )
    )
    return ratios, flags


def run_stepwise(
    files: Sequence[FileResult], manifest: Manifest, reference: ReferenceHalfWave
) -> tuple[StepwiseFit | FitRefused, list[FileResult]]:
    """Fit the used files with the stepwise model; files come back with corrected [L].

    A refused fit (too few points) comes back as the value, with the files unchanged.

    Raises
    ------
    InputError
        ligand_pKa given without a pH for some fitted file, or a bound_ligand_number that
        leaves no free ligand.
    """
    series, fit_settings = manifest.series, manifest.fit
    entries = {e.name: e for e in manifest.voltammograms}
    used = [f for f in files if f.used_in_fit]
    pKa = series.ligand_pKa or ()
    for f in used:
        if pKa and entries[f.file].pH is None and series.pH is None:
            raise InputError(
                f"ligand_pKa is given but {f.file} has no pH; add pH to [series] or to its "
                "[[voltammogram]] table",
                source=str(manifest.path),
                key="series.pH",
            )
    n_bound, metal = series.bound_ligand_number, series.metal_total_M
    for f in used:
        if n_bound is not None and f.ligand_M - n_bound * metal <= 0:
            raise InputError(
                f"bound_ligand_number × metal_total_M ({n_bound * metal:.3g} M) is not below "
                f"the total ligand of {f.file} ({f.ligand_M:.3g} M); check the two values or "
                "leave bound_ligand_number out to solve the mass balance",
                source=str(manifest.path),
                key="series.bound_ligand_number",
            )
    flags: list[Flag] = []
    ratios: list[float | None] = [None] * len(used)
    if fit_settings.current_ratio_correction:
        ratios, flags = current_ratios(used, reference, files)
    points = [
        StepwisePoint(
            f.file,
            f.ligand_M,
            f.E_half_V,
            f.E_half_total_stderr_V,
            r,
            entries[f.file].pH,
            bulk_form=f.measurement.bulk_form,
        )
        for f, r in zip(used, ratios, strict=True)
    ]
    conditions = SolutionConditions(
        metal_total_M=series.metal_total_M,
        bound_ligand_number=series.bound_ligand_number,
        ligand_pKa=pKa,
        pH=series.pH,
        ionic_strength_M=series.ionic_strength_M,
        metal_charge=series.metal_charge,
        ligand_charge=series.ligand_charge,
    )
    fit = fit_stepwise(
        points,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
        reference_E_half_V=reference.E_half_V,
        reference_stderr_V=reference.stderr_V,
        max_complexes=fit_settings.max_complexes,
        fixed_log10_beta_ox=fit_settings.fixed_log10_beta_ox,
        fixed_log10_beta_red=fit_settings.fixed_log10_beta_red,
        conditions=conditions,
    )
    if isinstance(fit, FitRefused):
        return fit, list(files)
    if flags:
        fit = replace(fit, flags=tuple(flags) + fit.flags)
    free = dict(zip(fit.labels, fit.free_ligand_M, strict=True))
    alpha = dict(zip(fit.labels, fit.log10_alpha_L, strict=True))
    out = []
    for f in files:
        new_flags: list[Flag] = []
        if f.file in free:
            share = 1.0 - free[f.file] / (10.0 ** alpha[f.file] * f.ligand_M)
            if share > BOUND_LIGAND_SHARE_MAX:
                new_flags.append(
                    Flag(
                        "LOW_LIGAND_EXCESS",
                        f"{100 * share:.1f} % of the ligand is bound to the metal "
                        f"({f.ligand_M:.3g} M ligand, {series.metal_total_M:.3g} M metal); its "
                        "free ligand is corrected by the mass balance (common practice: "
                        ">= 10-fold excess per bound ligand)",
                    )
                )
        out.append(
            replace(
                f,
                free_ligand_M=free.get(f.file, f.free_ligand_M),
                series_flags=(*f.series_flags, *new_flags),
            )
        )
    return fit, out
