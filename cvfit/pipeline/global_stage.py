"""Pipeline step of the global curve fit (``[fit] global = true``).

After the two-step analysis: the records of the files that entered the titration fit and
of the ligand-free reference files are read again (or taken from memory), and all curves
are fitted at once with E½ tied by the Lingane line
(:func:`cvfit.techniques.cv.curve.global_fit.fit_global_lingane`) or, with ``model = "stepwise"``,
by the
DeFord–Hume model (:func:`cvfit.techniques.cv.curve.global_stepwise.stepwise_tie`), started from
the two-step result. Files whose E½ came from the curve fit keep their own k0 and α (one α
for all of them with ``global_shared = ["alpha"]``); the others are modelled Nernstian.
``"charging"`` in ``global_shared`` makes one C_dl for all files. R_u: the manifest value,
else the file's fitted R_u, else none. Each file's background has the orders of its own
curve fit (a constant capacitance where it is shared).

A file whose own curve fit was refused is not Nernstian, whatever its peaks said: it is
left out (flag ``GLOBAL_FIT_FILE_LEFT_OUT``). A global fit whose reduced χ² exceeds
:data:`GLOBAL_REFUSE_REDUCED_CHI2` does not describe the curves with one set of constants:
it gives no constants (flag ``GLOBAL_FIT_REFUSED``), and the two-step result stands.
Composition only.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, cast

from cvfit.errors import CvfitError
from cvfit.flags import Flag
from cvfit.io import read_voltammogram, resistance_for
from cvfit.pipeline.results import FileResult, ReferenceHalfWave, TitrationFit
from cvfit.techniques.cv.curve.fit import CURVE_ORDERS, REFUSE_REDUCED_CHI2
from cvfit.techniques.cv.curve.global_fit import (
    GlobalCurveFit,
    GlobalFile,
    fit_global,
    fit_global_lingane,
)
from cvfit.techniques.cv.curve.global_stepwise import stepwise_tie
from cvfit.techniques.cv.curve.model import CurveModel
from cvfit.techniques.cv.curve.stage import record_curve_data
from cvfit.techniques.cv.measurement import CVMeasurement
from cvfit.titration.lingane import LinganeFit
from cvfit.titration.stepwise import StepwiseFit
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Voltammogram

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest, SeriesSettings

__all__ = ["run_global", "GLOBAL_REFUSE_REDUCED_CHI2"]

#: Reduced χ² above which the global fit gives no constants: the per-file fit's own limit
#: (its misfit then exceeds the noise by more than 2 in root-mean-square).
GLOBAL_REFUSE_REDUCED_CHI2 = REFUSE_REDUCED_CHI2


def _current_terms(
    members: Sequence[GlobalFile],
    chosen: Sequence[FileResult],
    fit: StepwiseFit,
    series: SeriesSettings,
) -> dict[str, float] | None:
    """DeFord–Hume (RT/nF)·ln(Is/Ic) from the curve models' current scales, or None.

    Only where the two-step fit applied the term with the reduced form not complexed (then
    the term is ln(Is/Ic) alone); the scale s = nFAC√D is solved in closed form at the
    two-step E½ (and k0, α of a curve-fitted file), one simulation per file, and divided
    by each solution's metal when all are known (as the two-step fit's currents are).
    """
    if fit.fixed_log10_beta or not any(f.code == "CURRENT_RATIO_APPLIED" for f in fit.flags):
        return None
    E = {f.file: _E_half(f) for f in chosen}
    scale = {}
    for m in members:
        lk = math.inf if m.log10_k0 is None else m.log10_k0
        lin = m.model.evaluate(E[m.name], lk, m.alpha or 0.5, m.resistance_ohm, m.D_ratio)
        scale[m.name] = abs(float(lin.coefficients[0]))
    # s ∝ C (Randles–Ševčík): with every solution's metal known, compare s/C, so that the
    # dilution of a titration by additions is not read as a change of D
    metal = {f.file: f.metal_M if f.metal_M is not None else series.metal_total_M for f in chosen}
    if all((metal.get(m.name) or 0.0) > 0 for m in members):
        scale = {name: s / cast(float, metal[name]) for name, s in scale.items()}
    refs = [scale[m.name] for m in members if m.ligand_M == 0.0]
    k = thermal_voltage(series.temperature_K, series.electrons)
    s_ref = sum(refs) / len(refs)
    return {m.name: k * math.log(s_ref / scale[m.name]) for m in members if m.ligand_M > 0}


def _E_half(f: FileResult) -> float:
    """The E½ of a file the global fit starts from (used in the two-step fit or giving the
    reference: such a file has one)."""
    return cast(float, f.E_half_V)


def _refused(f: FileResult) -> bool:
    """Whether the file's own curve fit was made and refused."""
    cf = getattr(f.measurement, "curve_fit", None)
    return cf is not None and not cf.accepted


def _not_possible(why: str) -> tuple[None, list[Flag]]:
    return None, [Flag("GLOBAL_FIT_NOT_POSSIBLE", f"no global curve fit: {why}", "warning")]


def run_global(
    files: Sequence[FileResult],
    manifest: Manifest,
    fit: TitrationFit | None,
    reference: ReferenceHalfWave,
    records: Mapping[str, Voltammogram] | None = None,
) -> tuple[GlobalCurveFit | None, list[Flag]]:
    """The global fit when the manifest asks for it, else (None, [])."""
    settings = manifest.fit
    if not settings.global_fit:
        return None, []
    if manifest.internal_standard is not None:
        return _not_possible(
            "the potentials are quoted against the internal standard, whose wave the curve "
            "model does not hold"
        )
    stepwise = settings.model == "stepwise"
    stepwise_fit = fit if stepwise and isinstance(fit, StepwiseFit) else None
    lingane_fit = fit if not stepwise and isinstance(fit, LinganeFit) else None
    if (stepwise_fit is None and lingane_fit is None) or reference.E_half_V is None:
        return _not_possible(
            f"the two-step {'stepwise' if stepwise else 'Lingane'} fit it starts from could "
            "not be made"
        )
    series = manifest.series
    entries = {e.name: e for e in manifest.voltammograms}
    chosen = [f for f in files if f.used_in_fit or f.file in reference.files]
    notes = [
        Flag(
            "GLOBAL_FIT_FILE_LEFT_OUT",
            f"{f.file} left out of the global curve fit: its own curve fit was refused, so "
            "it is not Nernstian whatever its peaks say",
            "info",
        )
        for f in chosen
        if _refused(f)
    ]
    chosen = [f for f in chosen if not _refused(f)]
    share = settings.global_shared
    members = []
    try:
        for f in chosen:
            e = entries[f.file]
            v = (records or {}).get(f.file) or read_voltammogram(
                e.file, e.import_options, scan_rate_V_s=e.scan_rate_V_s
            )
            # the manifest allows the global fit for cyclic voltammetry only
            measured = cast(CVMeasurement, f.measurement)
            data = record_curve_data(v, measured.peaks, series)
            D_sim = series.diffusion_cm2_s or 1e-5
            cf = measured.curve_fit
            P, Q = CURVE_ORDERS if cf is None else cf.background_orders
            model = CurveModel(data, D_sim, orders=(P, 0 if "charging" in share else Q))
            R = resistance_for(e, series)
            fitted_R = None if cf is None else cf.resistance_ohm
            refit_R = R is None and fitted_R is not None
            if refit_R and fitted_R is not None:
                R = fitted_R.value
            log_k0 = alpha = None
            if f.E_half_source == "curve" and cf is not None:
                v_scan = abs(float(data.potential_V[1] - data.potential_V[0])) / data.dt_s
                k0_sim = cf.psi * math.sqrt(math.pi * D_sim * data.nf_per_V * v_scan)
                log_k0, alpha = math.log10(k0_sim), cf.alpha.value
            ratio = settings.curve_diffusion_ratio
            if R:  # the drop from the model's own current at the two-step values
                model.settle_drop(
                    _E_half(f), math.inf if log_k0 is None else log_k0, alpha or 0.5, R, ratio
                )
            ligand = f.free_ligand_M if f.used_in_fit else 0.0
            members.append(
                GlobalFile(f.file, ligand, model, R or 0.0, log_k0, alpha, ratio, refit_R)
            )
        if stepwise_fit is not None:
            tie = stepwise_tie(
                [m.name for m in members],
                {f.file: _E_half(f) for f in chosen if f.used_in_fit},
                stepwise_fit,
                electrons=series.electrons,
                temperature_K=series.temperature_K,
                current_term_V=_current_terms(members, chosen, stepwise_fit, series),
            )
            result = fit_global(members, tie, share=share)
        elif lingane_fit is not None:  # one of the two, as checked above
            result = fit_global_lingane(
                members,
                electrons=series.electrons,
                temperature_K=series.temperature_K,
                start=(
                    reference.E_half_V,
                    lingane_fit.delta_ligands.value,
                    lingane_fit.log10_beta_ratio.value,
                ),
                share=share,
            )
    except CvfitError as exc:
        none, flags = _not_possible(str(exc))
        return none, notes + flags
    if not result.reduced_chi2 <= GLOBAL_REFUSE_REDUCED_CHI2:
        return None, notes + [
            Flag(
                "GLOBAL_FIT_REFUSED",
                f"the global curve fit's reduced χ² is {result.reduced_chi2:.3g} (more than "
                f"{GLOBAL_REFUSE_REDUCED_CHI2:g}): one set of constants does not describe the "
                "curves, so it gives none; the two-step result stands",
                "warning",
            )
        ]
    return result, notes
