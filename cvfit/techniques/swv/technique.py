"""Square-wave voltammetry as a technique: one record → :class:`SWVMeasurement`.

The file holds the staircase potential and the net current (forward less reverse), and
optionally the forward and reverse currents (``forward_current_column``,
``reverse_current_column``); ``[technique]`` gives ``amplitude_V`` (half the peak-to-peak
height), ``frequency_Hz`` and ``step_V``. The net peak is fitted and screened by
:func:`cvfit.techniques.pulse_analysis.analyse_pulse`, with the components when given.

References
----------
Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209.
"""

from __future__ import annotations

from typing import cast

from cvfit.techniques.base import FileSettings
from cvfit.techniques.pulse_analysis import analyse_pulse
from cvfit.techniques.pulse_technique import (
    PulseTechnique,
    bulk_form_for,
    first_sweep,
    read_components,
    setting_flags,
)
from cvfit.techniques.step_response import PulseTiming
from cvfit.techniques.swv.measurement import SWVMeasurement
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Voltammogram

__all__ = ["SWV", "SquareWave", "analyse"]


def analyse(record: Voltammogram, settings: FileSettings) -> SWVMeasurement:
    """Measure and screen one square-wave record."""
    manifest, entry = settings.manifest, settings.entry
    t, series = manifest.technique, manifest.series
    # settings the manifest requires of a square-wave series
    frequency_Hz, amplitude_V = cast(float, t.frequency_Hz), cast(float, t.amplitude_V)
    E, i, time, cut = first_sweep(record)
    flags = setting_flags(E, time, step_V=t.step_V, period_s=1.0 / frequency_Hz)
    comps, read_flags = read_components(
        entry, (t.forward_current_column, t.reverse_current_column), cut, E.size
    )
    timing = PulseTiming("swv", amplitude_V, 0.5 / frequency_Hz, None, series.quiet_time_s or 0.0)
    nf = 1.0 / thermal_voltage(series.temperature_K, series.electrons)
    bulk = bulk_form_for(manifest, E)
    screen = analyse_pulse(
        E, i, timing, electrons=series.electrons, nf=nf, bulk_form=bulk,
        area_cm2=series.electrode_area_cm2, analyte_M=series.analyte_M,
        D_cm2_s=series.diffusion_cm2_s, components=comps,
    )  # fmt: skip
    return SWVMeasurement(screen, bulk, (*screen.flags, *flags, *read_flags))


class SquareWave(PulseTechnique):
    """SWV behind the technique seam (:class:`cvfit.techniques.base.Technique`)."""

    name = "swv"
    label = "square-wave"
    analyse = staticmethod(analyse)


#: The technique object for ``[series] technique = "swv"``.
SWV = SquareWave()
