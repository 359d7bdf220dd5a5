"""Differential-pulse voltammetry as a technique: one record → :class:`DPVMeasurement`.

The file holds the base (staircase) potential and the difference current (pulse end less
just before the pulse); ``[technique]`` gives ``pulse_amplitude_V`` (signed, in the scan's
direction), ``pulse_width_s``, ``step_V`` and, when known, ``period_s``. The peak is fitted
and screened by :func:`cvfit.techniques.pulse_analysis.analyse_pulse`.

References
----------
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
"""

from __future__ import annotations

from typing import cast

import numpy as np

from cvfit.flags import Flag
from cvfit.techniques.base import FileSettings
from cvfit.techniques.dpv.measurement import DPVMeasurement
from cvfit.techniques.pulse_analysis import analyse_pulse
from cvfit.techniques.pulse_technique import (
    PulseTechnique,
    bulk_form_for,
    first_sweep,
    read_components,
    setting_flags,
)
from cvfit.techniques.step_response import PulseTiming
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Voltammogram

__all__ = ["DPV", "DifferentialPulse", "analyse"]


def analyse(record: Voltammogram, settings: FileSettings) -> DPVMeasurement:
    """Measure and screen one differential-pulse record."""
    manifest, entry = settings.manifest, settings.entry
    t, series = manifest.technique, manifest.series
    E, i, time, cut = first_sweep(record)
    flags = setting_flags(
        E, time, step_V=t.step_V, period_s=t.period_s, amplitude_V=t.pulse_amplitude_V
    )
    # the two sampled currents are read and kept for a check of the difference only
    comps, read_flags = read_components(
        entry, (t.pulse_current_column, t.base_current_column), cut, E.size
    )
    flags += read_flags
    timing = PulseTiming(
        "dpv",
        cast(float, t.pulse_amplitude_V),  # required of a differential-pulse series
        cast(float, t.pulse_width_s),  # (the manifest refuses a series without them)
        t.period_s,
        series.quiet_time_s or 0.0,
    )
    bulk = bulk_form_for(manifest, E)
    nf = 1.0 / thermal_voltage(series.temperature_K, series.electrons)
    screen = analyse_pulse(
        E, i, timing, electrons=series.electrons, nf=nf, bulk_form=bulk,
        area_cm2=series.electrode_area_cm2, analyte_M=series.analyte_M,
        D_cm2_s=series.diffusion_cm2_s,
    )  # fmt: skip
    if comps is not None:
        flags += _difference_check(comps, i)
    return DPVMeasurement(screen, bulk, (*screen.flags, *flags))


def _difference_check(comps: tuple[np.ndarray, np.ndarray], i: np.ndarray) -> list[Flag]:
    """The difference current should be the pulse current less the base current."""
    gap = float(np.max(np.abs(comps[0] - comps[1] - i)))
    scale = float(np.max(np.abs(i))) or 1.0
    if gap <= 0.05 * scale:
        return []
    return [
        Flag(
            "TECHNIQUE_SETTING_CONTRADICTS_FILE",
            f"the difference current differs from pulse_current_column − base_current_column "
            f"by up to {100 * gap / scale:.1f} % of its peak; check the column names",
        )
    ]


class DifferentialPulse(PulseTechnique):
    """DPV behind the technique seam (:class:`cvfit.techniques.base.Technique`)."""

    name = "dpv"
    label = "differential-pulse"
    analyse = staticmethod(analyse)


#: The technique object for ``[series] technique = "dpv"``.
DPV = DifferentialPulse()
