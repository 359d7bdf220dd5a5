"""An internal reference couple measured in the same cyclic voltammogram as the analyte.

With ``[internal_standard]`` in the manifest every voltammogram holds two waves. The
standard's peaks are measured in its own window
(:func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks`
with ``window_V``), screened for reversibility with its own n, and its E½ is corrected for
the switching potential like the analyte's when it passes. The pipeline's one E½ decision
(:mod:`cvfit.pipeline.half_wave`) then quotes the analyte's E½ against it.
"""

from __future__ import annotations

from typing import Literal

from cvfit.io import Manifest
from cvfit.techniques.base import StandardMeasurement
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.reversibility import screen_reversibility
from cvfit.techniques.cv.screen.switching import corrected_half_wave_V
from cvfit.voltammogram import Voltammogram

__all__ = ["measure_standard"]


def measure_standard(
    v: Voltammogram, cycle: int | Literal["last"], manifest: Manifest
) -> StandardMeasurement:
    """E½ of the internal standard in one record (the record as the analyte's, iR-corrected).

    Raises ``ValueError`` if the manifest has no ``[internal_standard]``.
    """
    std = manifest.internal_standard
    if std is None:
        raise ValueError("the manifest has no [internal_standard]")
    T = manifest.series.temperature_K
    peaks = analyse_peaks(
        v, cycle=cycle, electrons=std.electrons, temperature_K=T, window_V=std.window_V
    )
    screen = screen_reversibility(
        peaks, electrons=std.electrons, temperature_K=T, criteria=manifest.reversibility
    )
    e_half = peaks.E_half_V
    if screen.reversible is True:
        e_half, _ = corrected_half_wave_V(peaks, electrons=std.electrons, temperature_K=T)
    flags = list(peaks.flags)
    flags += [f for f in screen.flags if f.code not in {g.code for g in flags}]
    return StandardMeasurement(
        E_half_V=e_half,
        E_half_stderr_V=peaks.E_half_stderr_V,
        reversible=screen.reversible,
        delta_Ep_V=peaks.delta_Ep_V,
        flags=tuple(flags),
    )
