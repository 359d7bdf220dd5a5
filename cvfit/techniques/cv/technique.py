"""Cyclic voltammetry as a technique: one record → :class:`CVMeasurement`.

:func:`analyse` measures one file on its own — the record corrected for a given R_u, the
peaks of the analysed cycle (:mod:`cvfit.techniques.cv.peaks`), the reversibility screen
(:mod:`cvfit.techniques.cv.screen`), the whole-curve fit where the screen asks for one
(:mod:`cvfit.techniques.cv.curve.stage`) and the internal standard's wave. What only the
series can tell — the scan-rate study, the class of transfer and k0 — is
:func:`cvfit.techniques.cv.series_study.study_series`. :data:`CV` bundles both behind the
technique seam (:mod:`cvfit.techniques.base`).
"""

from __future__ import annotations

from dataclasses import replace

from cvfit.flags import Flag
from cvfit.io import SeriesSettings, VoltammogramEntry, resistance_for
from cvfit.techniques.base import FileSettings
from cvfit.techniques.curves import CycleCurve, cycle_curve
from cvfit.techniques.cv.curve.stage import curve_fit_for
from cvfit.techniques.cv.internal_standard import measure_standard
from cvfit.techniques.cv.measurement import CVMeasurement
from cvfit.techniques.cv.peaks.analysis import PeakAnalysis, analyse_peaks
from cvfit.techniques.cv.report_sections import report_sections
from cvfit.techniques.cv.screen.ohmic_drop import correct_for_resistance, ohmic_flags
from cvfit.techniques.cv.screen.reversibility import screen_reversibility
from cvfit.techniques.cv.series_study import study_series
from cvfit.techniques.cv.summary import HIDDEN_KEYS, REPORT_COLUMNS, summary_lines
from cvfit.voltammogram import Voltammogram

__all__ = ["CV", "CyclicVoltammetry", "analyse", "drawn_curve"]


def _ratio_from_first_cycle(
    peaks: PeakAnalysis,
    v: Voltammogram,
    electrons: int,
    temperature_K: float,
    window_V: tuple[float, float] | None = None,
) -> PeakAnalysis:
    """On a later cycle, take the current ratio from cycle 1, which starts at rest.

    Nicholson's relation (Anal. Chem. 38 (1966) 1406) assumes a forward sweep that begins
    at rest, so the peak analysis leaves the ratio of a later cycle undetermined; the
    ratio is a property of the couple, and cycle 1 of the same record gives it. The reverse
    peak height is then reported as that ratio times this cycle's forward height — the
    definition the peak analysis uses on cycle 1 — so that ipa/ipc of the table is the ratio.
    """
    if peaks.current_ratio is not None or peaks.cycle_number == 1:
        return peaks
    if not any(f.code == "CURRENT_RATIO_NOT_DETERMINED" for f in peaks.flags):
        return peaks
    first_cycles = v.cycles()
    if not first_cycles or not first_cycles[0].complete:
        return peaks
    first = analyse_peaks(
        v, cycle=1, electrons=electrons, temperature_K=temperature_K, window_V=window_V
    )
    if first.current_ratio is None:
        return peaks
    flags = tuple(f for f in peaks.flags if f.code != "CURRENT_RATIO_NOT_DETERMINED")
    note = Flag(
        "CURRENT_RATIO_FROM_FIRST_CYCLE",
        f"cycle {peaks.cycle_number} does not start at rest, so ipa/ipc "
        f"({first.current_ratio:.3f}) was taken from cycle 1 of the same record "
        "(Nicholson 1966) and the reverse peak height is that ratio times this cycle's "
        "forward height",
        "info",
    )
    forward = peaks.forward_height_A
    height = None if forward is None else first.current_ratio * forward
    peaks = replace(peaks, current_ratio=first.current_ratio, flags=(*flags, note))
    if peaks.first_sweep == "reduction":
        return replace(peaks, ipa_A=height)
    return replace(peaks, ipc_A=height)


def _sign_convention_hint(
    flags: list[Flag], v: Voltammogram, entry: VoltammogramEntry, series: SeriesSettings
) -> list[Flag]:
    """When the forward peak is missing but the mirrored record (current × −1) has a clean
    one, say that the file may use the other current-sign convention."""
    missing = [k for k, f in enumerate(flags) if f.code == "NO_FORWARD_PEAK"]
    if not missing or entry.import_options.anodic_current is not None:
        return flags
    mirrored = analyse_peaks(
        replace(v, current_A=-v.current_A),
        cycle=entry.import_options.cycle,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
        window_V=series.analyte_window_V,
    )
    clean = mirrored.E_half_V is not None and not any(
        f.severity == "error" for f in mirrored.flags
    )
    if not clean:
        return flags
    flags.insert(
        missing[0] + 1,
        Flag(
            "CURRENT_SIGN_REVERSED",
            "no forward peak, but with the current's sign reversed the record has a clean "
            f"peak pair (E½ {mirrored.E_half_V:.4f} V): the current is probably in the "
            "polarographic convention (cathodic positive); set anodic_current = "
            '"negative" in [import]',
            "warning",
        ),
    )
    return flags


def analyse(record: Voltammogram, settings: FileSettings) -> CVMeasurement:
    """Measure and screen one cyclic voltammogram on its own.

    Parameters
    ----------
    record : Voltammogram
        The record as imported (the curve fit models its ohmic drop; the peak analysis
        uses it corrected by a given R_u).
    settings : FileSettings
        The file's manifest entry and the manifest.
    """
    entry, manifest = settings.entry, settings.manifest
    if entry.temperature_C is not None:  # a temperature series: each file at its own T
        series = replace(manifest.series, temperature_C=entry.temperature_C)
        manifest = replace(manifest, series=series)
    series = manifest.series
    n, T = series.electrons, series.temperature_K
    resistance = resistance_for(entry, series)
    v = correct_for_resistance(record, resistance)  # a new record; the input is not changed
    window = series.analyte_window_V
    cycle = entry.import_options.cycle
    peaks = analyse_peaks(v, cycle=cycle, electrons=n, temperature_K=T, window_V=window)
    peaks = _ratio_from_first_cycle(peaks, v, n, T, window)
    screen = screen_reversibility(
        peaks, electrons=n, temperature_K=T, criteria=manifest.reversibility
    )
    flags = _sign_convention_hint(list(peaks.flags), v, entry, series)
    flags += [f for f in screen.flags if f.code not in {g.code for g in flags}]
    flags += ohmic_flags(peaks, resistance)
    curve_fit, curve_flags = curve_fit_for(record, peaks, screen, manifest, resistance)
    flags += curve_flags
    standard = None
    if manifest.internal_standard is not None:
        standard = measure_standard(v, cycle, manifest)
    return CVMeasurement(
        peaks=peaks,
        screen=screen,
        electrons=n,
        temperature_K=T,
        flags=tuple(flags),
        curve_fit=curve_fit,
        standard=standard,
    )


def drawn_curve(record: Voltammogram, measurement: CVMeasurement, max_points: int) -> CycleCurve:
    """The analysed cycle of *record*, thinned to about *max_points* for figures."""
    return cycle_curve(record, measurement.peaks.cycle_number, max_points=max_points)


class CyclicVoltammetry:
    """Cyclic voltammetry behind the technique seam (:class:`cvfit.techniques.base.Technique`)."""

    name = "cv"
    #: Its figures (keys of :mod:`cvfit.report.figures.registry`).
    figures: tuple[str, ...] = ("diagnostics", "curve_fits")
    report_columns = REPORT_COLUMNS
    hidden_keys = HIDDEN_KEYS

    analyse = staticmethod(analyse)
    study_series = staticmethod(study_series)
    drawn_curve = staticmethod(drawn_curve)
    summary_lines = staticmethod(summary_lines)
    report_sections = staticmethod(report_sections)


#: The technique object the pipeline uses for ``[series] technique = "cv"``.
CV = CyclicVoltammetry()
