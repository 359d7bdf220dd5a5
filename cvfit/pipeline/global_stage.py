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
else the file's fitted R_u, else none. Composition only.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

from cvfit.errors import CvfitError
from cvfit.flags import Flag
from cvfit.io import read_voltammogram, resistance_for
from cvfit.pipeline.results import FileResult, ReferenceHalfWave
from cvfit.techniques.cv.curve.global_fit import (
    GlobalCurveFit,
    GlobalFile,
    fit_global,
    fit_global_lingane,
)
from cvfit.techniques.cv.curve.global_stepwise import stepwise_tie
from cvfit.techniques.cv.curve.model import CurveModel
from cvfit.techniques.cv.curve.stage import record_curve_data
from cvfit.titration.lingane import LinganeFit
from cvfit.titration.stepwise import StepwiseFit
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Voltammogram

__all__ = ["run_global"]


def _current_terms(
    members: Sequence[GlobalFile],
    chosen: Sequence[FileResult],
    fit: StepwiseFit,
    series: object,
) -> dict[str, float] | None:
    """DeFord–Hume (RT/nF)·ln(Is/Ic) from the curve models' current scales, or None.

    Only where the two-step fit applied the term with the reduced form not complexed (then
    the term is ln(Is/Ic) alone); the scale s = nFAC√D is solved in closed form at the
    two-step E½ (and k0, α of a curve-fitted file), one simulation per file.
    """
    if fit.fixed_log10_beta or not any(f.code == "CURRENT_RATIO_APPLIED" for f in fit.flags):
        return None
    E = {f.file: f.E_half_V for f in chosen}
    scale = {}
    for m in members:
        lk = math.inf if m.log10_k0 is None else m.log10_k0
        lin = m.model.evaluate(E[m.name], lk, m.alpha or 0.5, m.resistance_ohm, m.D_ratio)
        scale[m.name] = abs(float(lin.coefficients[0]))
    refs = [scale[m.name] for m in members if m.ligand_M == 0.0]
    k = thermal_voltage(series.temperature_K, series.electrons)  # type: ignore[attr-defined]
    s_ref = sum(refs) / len(refs)
    return {m.name: k * math.log(s_ref / scale[m.name]) for m in members if m.ligand_M > 0}


def _not_possible(why: str) -> tuple[None, list[Flag]]:
    return None, [Flag("GLOBAL_FIT_NOT_POSSIBLE", f"no global curve fit: {why}", "warning")]


def run_global(
    files: Sequence[FileResult],
    manifest: object,
    fit: object,
    reference: ReferenceHalfWave,
    records: Mapping[str, Voltammogram] | None = None,
) -> tuple[GlobalCurveFit | None, list[Flag]]:
    """The global fit when the manifest asks for it, else (None, [])."""
    settings = manifest.fit  # type: ignore[attr-defined]
    if not settings.global_fit:
        return None, []
    if manifest.internal_standard is not None:  # type: ignore[attr-defined]
        return _not_possible(
            "the potentials are quoted against the internal standard, whose wave the curve "
            "model does not hold"
        )
    stepwise = settings.model == "stepwise"
    if not isinstance(fit, StepwiseFit if stepwise else LinganeFit) or reference.E_half_V is None:
        return _not_possible(
            f"the two-step {'stepwise' if stepwise else 'Lingane'} fit it starts from could "
            "not be made"
        )
    series = manifest.series  # type: ignore[attr-defined]
    entries = {e.name: e for e in manifest.voltammograms}  # type: ignore[attr-defined]
    chosen = [f for f in files if f.used_in_fit or f.file in reference.files]
    members = []
    try:
        for f in chosen:
            e = entries[f.file]
            v = (records or {}).get(f.file) or read_voltammogram(
                e.file, e.import_options, scan_rate_V_s=e.scan_rate_V_s
            )
            data = record_curve_data(v, f.measurement.peaks, series)
            D_sim = series.diffusion_cm2_s or 1e-5
            model = CurveModel(data, D_sim)
            R = resistance_for(e, series)
            cf = f.measurement.curve_fit
            refit_R = R is None and cf is not None and cf.resistance_ohm is not None
            if refit_R:
                R = cf.resistance_ohm.value
            log_k0 = alpha = None
            if f.E_half_source == "curve" and cf is not None:
                v_scan = abs(float(data.potential_V[1] - data.potential_V[0])) / data.dt_s
                k0_sim = cf.psi * math.sqrt(math.pi * D_sim * data.nf_per_V * v_scan)
                log_k0, alpha = math.log10(k0_sim), cf.alpha.value
            ratio = settings.curve_diffusion_ratio
            if R:  # the drop from the model's own current at the two-step values
                model.settle_drop(
                    f.E_half_V, math.inf if log_k0 is None else log_k0, alpha or 0.5, R, ratio
                )
            ligand = f.free_ligand_M if f.used_in_fit else 0.0
            members.append(
                GlobalFile(f.file, ligand, model, R or 0.0, log_k0, alpha, ratio, refit_R)
            )
        share = settings.global_shared
        if stepwise:
            tie = stepwise_tie(
                [m.name for m in members],
                {f.file: f.E_half_V for f in chosen if f.used_in_fit},
                fit,
                electrons=series.electrons,
                temperature_K=series.temperature_K,
                current_term_V=_current_terms(members, chosen, fit, series),
            )
            result = fit_global(members, tie, share=share)
        else:
            result = fit_global_lingane(
                members,
                electrons=series.electrons,
                temperature_K=series.temperature_K,
                start=(reference.E_half_V, fit.delta_ligands.value, fit.log10_beta_ratio.value),
                share=share,
            )
    except CvfitError as exc:
        return _not_possible(str(exc))
    return result, []
