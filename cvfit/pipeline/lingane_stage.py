"""Pipeline step of the Lingane model: free ligand corrected for bound ligand, then the line.

With ``metal_total_M`` in the manifest the free ligand of every point is
[L] = c_L − n·c_M, n the ligands bound per metal in the bulk form: ``bound_ligand_number``
when given, else the fitted p − q (the reduced form taken as binding none, so a bulk
oxidised form binds p = p − q ligands and a bulk reduced form, oxidation first, none),
iterated with the fit to self-consistency. A point is flagged when more than a tenth of
its ligand is bound (n·c_M/c_L > 0.1; common practice: >= 10-fold excess per bound ligand)
or when the correction moves it by more than its E½ standard error.

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

from cvfit.chemistry.speciation import BOUND_LIGAND_SHARE_MAX
from cvfit.flags import FitRefused, Flag
from cvfit.io import Manifest
from cvfit.pipeline.results import FileResult, ReferenceHalfWave
from cvfit.titration.lingane import LinganeFit, TitrationPoint, fit_lingane

__all__ = ["run_lingane"]
_MAX_ROUNDS = 50


def _fit(points, manifest: Manifest, reference: ReferenceHalfWave):
    return fit_lingane(
        points,
        electrons=manifest.series.electrons,
        temperature_K=manifest.series.temperature_K,
        reference_E_half_V=reference.E_half_V,
        reference_stderr_V=reference.stderr_V,
        reference_count=max(len(reference.files), 1) if reference.source == "file" else 1,
    )


def run_lingane(
    points: Sequence[TitrationPoint],
    files: list[FileResult],
    manifest: Manifest,
    reference: ReferenceHalfWave,
) -> tuple[LinganeFit | FitRefused, list[FileResult]]:
    """Fit the Lingane line; with ``metal_total_M``, on the free ligand (module docstring).

    Returns the fit and the files with the free ligand used and their depletion flags.
    """
    metal = manifest.series.metal_total_M
    fit = _fit(points, manifest, reference)
    if metal is None or isinstance(fit, FitRefused):
        return fit, files
    given = manifest.series.bound_ligand_number
    bulk_red = {f.file for f in files if f.measurement.bulk_form == "red"}

    def bound(label: str, p: float) -> float:
        if given is not None:
            return float(given)
        return 0.0 if label in bulk_red else max(p, 0.0)

    total = {p.label: p.ligand_M for p in points}
    p_fit = fit.delta_ligands.value
    corrected = list(points)
    settled = False
    for _ in range(_MAX_ROUNDS):
        free = {lab: c - bound(lab, p_fit) * metal for lab, c in total.items()}
        if any(x <= 0 for x in free.values()):
            break
        corrected = [replace(p, ligand_M=free[p.label]) for p in points]
        new = _fit(corrected, manifest, reference)
        if isinstance(new, FitRefused):
            break
        fit = new
        change, p_fit = abs(new.delta_ligands.value - p_fit), new.delta_ligands.value
        if change < 1e-9:
            settled = True
            break
    extra: list[Flag] = []
    if not settled:
        extra.append(
            Flag(
                "FREE_LIGAND_NOT_CONVERGED",
                "the free ligand c_L − n·c_M and the fitted p − q did not settle (or left no "
                "free ligand); the last fit is reported — give bound_ligand_number",
            )
        )
        fit = replace(fit, flags=(*fit.flags, *extra))
    used = {p.label: p for p in corrected}
    slope = abs(fit.slope_V_per_decade.value)
    res = fit.residuals_V
    scatter = math.sqrt(sum(r * r for r in res) / max(fit.dof, 1)) if res else None
    out = []
    for f in files:
        pt = used.get(f.file)
        if pt is None:
            out.append(f)
            continue
        n = bound(f.file, p_fit)
        share = n * metal / f.ligand_M
        flags: list[Flag] = []
        if share > BOUND_LIGAND_SHARE_MAX:
            flags.append(
                Flag(
                    "LOW_LIGAND_EXCESS",
                    f"{100 * share:.1f} % of the ligand is bound (n·c_M/c_L with n = {n:.2f}, "
                    f"c_M = {metal:.3g} M, c_L = {f.ligand_M:.3g} M); free ligand corrected to "
                    f"{pt.ligand_M:.4g} M (common practice: >= 10-fold excess per bound ligand)",
                )
            )
        shift = slope * math.log10(f.ligand_M / pt.ligand_M)
        sigma = f.E_half_total_stderr_V or scatter
        if share > 0 and sigma is not None and shift > sigma:
            noise = f"{1e3 * sigma:.2f} mV"
            flags.append(
                Flag(
                    "LIGAND_DEPLETION_CORRECTED",
                    f"bound ligand ({100 * share:.1f} % of c_L) moves this point by "
                    f"{1e3 * shift:.2f} mV on the Lingane line, more than its E½ noise "
                    f"({noise}); fitted at the free ligand {pt.ligand_M:.4g} M",
                )
            )
        out.append(replace(f, free_ligand_M=pt.ligand_M, series_flags=(*f.series_flags, *flags)))
    return fit, out
