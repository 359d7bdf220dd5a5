"""Steady-state and sampled-current waves as a technique: one record → :class:`WaveMeasurement`.

The file holds the potential and current of a sigmoidal wave (a rotating disc, a
microelectrode, normal-pulse or sampled-current polarography). E½ comes from the fit of
the wave equation (:mod:`cvfit.techniques.wave.fit`), the verdict from its log-plot slope
and Tomeš's quartile difference. With several rotation rates of a disc for one solution
(``rotation_rate_rpm`` per file) the series study reads the Levich exponent d ln i_l /
d ln ω, 0.5 for a limiting current under convective diffusion (Levich 1962), as a
diagnostic.

References
----------
Heyrovský, J.; Ilkovič, D. Collect. Czech. Chem. Commun. 1935, 7, 198.
Levich, V. G. Physicochemical Hydrodynamics; Prentice-Hall, 1962.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from typing import Any, Literal

import numpy as np

from cvfit.flags import Flag
from cvfit.io.manifest import Manifest
from cvfit.techniques.base import (
    FileSettings,
    FileView,
    SeriesStudy,
    StudyItem,
    no_report_sections,
)
from cvfit.techniques.pulse_technique import drawn_sweep, first_sweep, screen_summary
from cvfit.techniques.wave.fit import WaveFit, fit_wave
from cvfit.techniques.wave.measurement import WaveMeasurement, screen_wave
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Voltammogram

__all__ = ["WAVE", "Wave", "analyse", "study_series", "LEVICH_MARGIN"]

#: Largest distance of the Levich exponent from 0.5 that is not flagged (common practice).
LEVICH_MARGIN = 0.05


def _bulk_form(given: str | None, fit: WaveFit | None, E: np.ndarray) -> Literal["ox", "red"]:
    """``[series] bulk_form``, else the form whose plateau carries no current."""
    if given in ("ox", "red"):
        return given  # type: ignore[return-value]
    if fit is None:
        return "ox"
    b0, b1 = fit.baseline
    high = b0 + b1 * (float(E.max()) - fit.mean_V)  # beyond the wave on the positive side
    low = high - b1 * float(np.ptp(E)) + fit.limiting_A
    return "ox" if abs(high) <= abs(low) else "red"


def analyse(record: Voltammogram, settings: FileSettings) -> WaveMeasurement:
    """Fit and screen one wave."""
    series = settings.manifest.series
    n, T = series.electrons, series.temperature_K
    E, i, _, _ = first_sweep(record)
    nf = 1.0 / thermal_voltage(T, n)
    got = fit_wave(E, i, nf=nf)
    rpm = settings.entry.rotation_rate_rpm
    if isinstance(got, str):
        flag = Flag("WAVE_NOT_FOUND", f"no wave could be fitted: {got}", "error")
        bulk = _bulk_form(series.bulk_form, None, E)
        return WaveMeasurement(None, None, got, n, T, bulk, rpm, None, (flag,))
    ok, flags = screen_wave(got, nf)
    why = "" if ok else "it failed the wave screen (WAVE_SLOPE_NOT_NERNSTIAN)"
    bulk = _bulk_form(series.bulk_form, got, E)
    return WaveMeasurement(got, ok, why, n, T, bulk, rpm, None, tuple(flags))


def study_series(items: Sequence[StudyItem], manifest: Manifest, reread: Any) -> SeriesStudy:
    """The Levich exponent of each solution measured at two or more rotation rates."""
    out = [it.measurement for it in items]
    flags = []
    for ligand in sorted({it.ligand_M for it in items}):
        group = [
            k for k, it in enumerate(items)
            if it.ligand_M == ligand and it.measurement.fit is not None
            and it.measurement.rotation_rate_rpm is not None
        ]  # fmt: skip
        rates = {items[k].measurement.rotation_rate_rpm for k in group}
        if len(rates) < 2:
            continue
        x = np.log([items[k].measurement.rotation_rate_rpm for k in group])
        y = np.log([abs(items[k].measurement.fit.limiting_A) for k in group])
        exponent = float(np.polyfit(x, y, 1)[0])
        for k in group:
            out[k] = replace(out[k], levich_exponent=exponent)
        if abs(exponent - 0.5) > LEVICH_MARGIN:
            flags.append(
                Flag(
                    "WAVE_LEVICH_NOT_LINEAR",
                    f"at ligand {ligand:g} M the limiting current grows as ω^{exponent:.2f} "
                    f"over {len(rates)} rotation rates, not as ω^0.5 (Levich): the current is "
                    "not limited by convective diffusion alone",
                )
            )
    return SeriesStudy(tuple(out), (), tuple(flags))


def summary_lines(files: Sequence[FileView], studies: Sequence[Any]) -> list[str]:
    return screen_summary("wave", files)


#: The per-file HTML table's wave columns: (header, results.json key, scale, decimals).
REPORT_COLUMNS: tuple[tuple[str, str, float, int], ...] = (
    ("i_l / µA", "limiting_current_A", 1e6, 3),
    ("log slope / mV", "log_slope_V", 1e3, 1),
    ("E¼ − E¾ / mV", "quartile_difference_V", 1e3, 1),
)
HIDDEN_KEYS = frozenset(
    {
        "limiting_current_stderr_A",
        "log_slope_stderr_V",
        "expected_log_slope_V",
        "expected_quartile_difference_V",
        "noise_A",
        "bulk_form",
    }
)


class Wave:
    """Waves behind the technique seam (:class:`cvfit.techniques.base.Technique`)."""

    name = "wave"
    figures: tuple[str, ...] = ("wave_log_plot",)
    report_columns = REPORT_COLUMNS
    hidden_keys = HIDDEN_KEYS

    analyse = staticmethod(analyse)
    study_series = staticmethod(study_series)
    drawn_curve = staticmethod(drawn_sweep)
    summary_lines = staticmethod(summary_lines)
    report_sections = staticmethod(no_report_sections)


#: The technique object for ``[series] technique = "wave"``.
WAVE = Wave()
