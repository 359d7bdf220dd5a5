"""Pipeline step of the curve fit: which files get one, and the fit of one file.

``[fit] half_wave_source`` chooses where E½ comes from: ``"peaks"`` (the peak midpoint,
never a curve fit), ``"curve"`` (the curve fit for every file that is not irreversible)
or ``"auto"`` (default: the peaks for files that pass the reversibility screen, the curve
fit for the others). Irreversible files — no usable reverse peak, or classified
irreversible — get no curve fit and stay out of the titration fit with the reason.

The fit runs in the per-file stage (in the worker that holds the whole record); a file
that the scan-rate study fails afterwards is read again and fitted after the study
(:func:`cvfit.techniques.cv.series_study.study_series`). The fit uses the
record as measured: R_u from the manifest enters the model as the ohmic drop of the cell
current (the peak analysis uses the corrected record instead); without it R_u is fitted.
Composition only; the mathematics is in :mod:`cvfit.techniques.cv.curve.fit`.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from cvfit.errors import FitError
from cvfit.flags import Flag
from cvfit.techniques.cv.curve.fit import CurveFit, fit_curve
from cvfit.techniques.cv.curve.initial_state import InitialState, initial_state
from cvfit.techniques.cv.curve.model import CurveData, curve_data
from cvfit.techniques.cv.screen.classification import classify_voltammogram
from cvfit.voltammogram import Voltammogram

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest, SeriesSettings
    from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
    from cvfit.techniques.cv.screen.reversibility import ReversibilityScreen

__all__ = [
    "curve_fit_for",
    "curve_fit_used",
    "record_curve_data",
    "wants_curve_fit",
    "MODEL_PRECISION",
    "PSI_IRREVERSIBLE",
]

#: Fitted ψ below which the curve counts as irreversible and its E½ is not used: a decade
#: below the end of Nicholson's working curve (ψ = 0.1, Anal. Chem. 37 (1965) 1351). There
#: E½ rests on the reverse peak alone, hundreds of mV from E½, and on Butler–Volmer
#: kinetics with one α holding over that range.
PSI_IRREVERSIBLE = 0.01

#: Floor of the point weight σ as a fraction of the forward peak height: the simulator's
#: discretisation error (below 0.1 % of the peak against an independent computation,
#: tests/test_curve_fit.py), so a record without noise is not judged on rounding.
MODEL_PRECISION = 1e-3


def wants_curve_fit(source: str, reversible: bool | None) -> bool:
    """Whether a file with this screen verdict is curve-fitted under *source*."""
    if source == "curve":
        return True
    return source == "auto" and reversible is not True


def record_curve_data(v: Voltammogram, peaks: PeakAnalysis, series: SeriesSettings) -> CurveData:
    """The samples of *v* a curve fit describes: from the start to the analysed cycle's end,
    with the initial state (``[series] bulk_form`` and ``quiet_time_s``, else detected:
    :mod:`cvfit.techniques.cv.curve.initial_state`).

    Raises
    ------
    FitError
        No reverse sweep, unequal time steps, no scan rate.
    """
    cycle = v.cycle(peaks.cycle_number)
    if cycle.reverse is None:
        raise FitError("the analysed cycle has no reverse sweep")
    height = abs(peaks.forward_height_A or 0.0)
    sigma = max(peaks.noise_A, MODEL_PRECISION * height)
    data = curve_data(
        v.potential_V,
        v.current_A,
        time_s=v.time_s,
        scan_rate_V_s=v.scan_rate_V_s,
        start=cycle.forward.start,
        stop=cycle.reverse.stop,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
        bulk="ox" if peaks.first_sweep == "reduction" else "red",
        sigma_A=sigma,
    )
    return initial_state(
        data,
        time_s=v.time_s,
        first_stop=_first_cycle_stop(v),
        E_half_V=float(
            peaks.E_half_V
            if peaks.E_half_V is not None
            else 0.5 * (v.potential_V.min() + v.potential_V.max())
        ),
        D_cm2_s=getattr(series, "diffusion_cm2_s", None) or 1e-5,
        bulk_form=getattr(series, "bulk_form", None),
        quiet_time_s=getattr(series, "quiet_time_s", None),
    )


def _first_cycle_stop(v: Voltammogram) -> int:
    """Last sample of the record's first cycle (of its first sweep when it has no other)."""
    first = v.cycles()[0]
    return first.forward.stop if first.reverse is None else first.reverse.stop


def curve_fit_for(
    v: Voltammogram,
    peaks: PeakAnalysis,
    screen: ReversibilityScreen,
    manifest: Manifest,
    resistance_ohm: float | None,
) -> tuple[CurveFit | None, list[Flag]]:
    """The curve fit of one file (None when none is made) and its flags.

    Parameters
    ----------
    v : Voltammogram
        The record as imported (not corrected for R_u).
    peaks, screen
        The file's :class:`~cvfit.techniques.cv.peaks.analysis.PeakAnalysis` and
        :class:`~cvfit.techniques.cv.screen.reversibility.ReversibilityScreen`.
    manifest : Manifest
    resistance_ohm : float or None
        R_u of the file from the manifest (None: fitted).
    """
    fit_settings = manifest.fit
    series = manifest.series
    if not wants_curve_fit(fit_settings.half_wave_source, screen.reversible):
        return None, []
    if manifest.internal_standard is not None:
        # the model holds one couple; the standard's wave would be fitted as the analyte's
        return None, [
            Flag(
                "CURVE_FIT_NOT_POSSIBLE",
                "no curve fit: the file also holds the internal standard's wave, and the "
                "curve model describes one couple",
                "warning",
            )
        ]
    n, T = series.electrons, series.temperature_K
    cls = classify_voltammogram(
        peaks, screen, electrons=n, temperature_K=T, alpha=series.alpha,
        criteria=manifest.reversibility,
    )  # fmt: skip
    if peaks.E_half_V is None or cls.kind == "irreversible":
        why = "no usable reverse peak" if peaks.E_half_V is None else cls.reason
        return None, [
            Flag("CURVE_FIT_IRREVERSIBLE", f"no curve fit: irreversible ({why})", "info")
        ]
    try:
        data = record_curve_data(v, peaks, series)
        fit = fit_curve(
            data,
            E_half_start_V=float(peaks.E_half_V),
            D_cm2_s=series.diffusion_cm2_s,
            area_cm2=series.electrode_area_cm2,
            concentration_M=series.analyte_M,
            resistance_ohm=resistance_ohm,
            D_ratio=fit_settings.curve_diffusion_ratio,
        )
    except FitError as exc:
        return None, [Flag("CURVE_FIT_NOT_POSSIBLE", f"no curve fit: {exc}", "warning")]
    flags = list(fit.flags)
    said = InitialState(data.bulk, data.bulk_source, data.quiet_time_s, data.quiet_source).flag()
    if said is not None:
        flags.append(said)
    if curve_fit_used(fit):
        e = fit.E_half_V
        flags.append(
            Flag(
                "CURVE_FIT_USED",
                f"E½ {1e3 * e.value:.2f} ± {1e3 * e.stderr:.2f} mV from the fit of the whole "
                f"curve (k0 {fit.k0_cm_s.value:.3g} cm/s, α {fit.alpha.value:.2f}, reduced χ² "
                f"{fit.reduced_chi2.value:.2f})",
                "info",
            )
        )
    elif fit.accepted:  # accepted, but too slow for its E½ to be trusted
        flags.append(
            Flag(
                "CURVE_FIT_IRREVERSIBLE",
                f"curve fit not used: irreversible (fitted ψ = {fit.psi:.2g}, a decade or more "
                f"below Nicholson's working curve; E½ {fit.E_half_V.value:.4f} V would rest on "
                "the reverse peak alone)",
                "info",
            )
        )
    return fit, flags


def curve_fit_used(fit: CurveFit | None) -> bool:
    """Whether the file's E½ is taken from *fit*: accepted, and not so slow that its E½
    would rest on the reverse peak alone (ψ below :data:`PSI_IRREVERSIBLE`)."""
    return fit is not None and fit.accepted and not fit.psi < PSI_IRREVERSIBLE
