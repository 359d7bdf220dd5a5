"""E½ of a Nernstian voltammogram from its peak potentials, corrected for the switch.

For a reversible couple the reverse peak depends on how far beyond the wave the scan was
switched, so the midpoint (Epa + Epc)/2 lies beyond E½ (on the side of the reverse peak) by
e(ξλ)/2·RT/nF, ξλ = nF|Eλ − E½|/RT — 1.60/n mV for n·|Eλ − E½| = 100 mV, 0.59/n mV at
200 mV, 0.33/n mV at 300 mV, 0.02/n mV at 2 V (25 °C; the simulated table of
:mod:`cvfit.techniques.cv.screen.switching_table`). Left uncorrected this bias changes along
a titration (E½ moves while Eλ is fixed) and tilts the Lingane line. The correction is
applied only to voltammograms that passed the reversibility screen. On noise-free
reversible records (1 mV steps, n = 1 and 2, switches 80–400 mV past E½) the corrected E½
lies within 0.01 mV of the truth (tests/test_switching_table.py).
"""

from __future__ import annotations

from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
from cvfit.techniques.cv.screen.switching_table import (
    FORWARD_PEAK_THERMAL,
    MIN_SWITCH_THERMAL,
    midpoint_offset_thermal,
)
from cvfit.units import thermal_voltage

__all__ = ["switching_correction_V", "corrected_half_wave_V", "N_DELTA_EP_LIMIT_V"]

#: n·ΔEp of a Nernstian couple switched far beyond the wave, at 25 °C, V: 2·1.10893 RT/F
#: = 56.98 mV (simulated; Nicholson & Shain, Anal. Chem. 36 (1964) 706 give 57.0 mV).
N_DELTA_EP_LIMIT_V = 2.0 * FORWARD_PEAK_THERMAL * thermal_voltage()

# fixed-point passes from the midpoint's switching distance to E½'s (the correction changes
# by < 0.1 mV per mV of distance, so three passes settle it below 1e-6 mV)
_PASSES = 3


def switching_correction_V(
    *, switching_offset_V: float, electrons: int, temperature_K: float
) -> float:
    """|(Epa + Epc)/2 − E½| of a Nernstian couple switched |Eλ − E½| past E½, V (>= 0).

    Half the excess of ΔEp over its far-switch value, e(ξλ)/2·RT/nF. Closer than the table
    reaches (n·|Eλ − E½| < 38.5 mV at 25 °C) the value at its edge (1.95 RT/nF … about
    4.8/n mV) is returned; such records are flagged ``SWITCHING_TOO_CLOSE`` by the screen.

    Parameters
    ----------
    switching_offset_V : float
        |Eλ − E½|, V (the true E½, not the midpoint: see :func:`corrected_half_wave_V`).
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K; potentials scale with RT/nF.

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
    """
    rt_nf = thermal_voltage(temperature_K, electrons)
    distance = max(abs(switching_offset_V) / rt_nf, MIN_SWITCH_THERMAL)
    return midpoint_offset_thermal(distance) * rt_nf


def corrected_half_wave_V(
    peaks: PeakAnalysis, *, electrons: int, temperature_K: float
) -> tuple[float | None, float]:
    """E½ from the midpoint less the switching correction; returns (E½, correction).

    The midpoint lies beyond E½ away from the switch, so |Eλ − E½| = |Eλ − midpoint| −
    correction; the correction is evaluated at that distance (a short fixed-point
    iteration), not at the midpoint's, which would misplace it by up to 0.06 mV at 80 mV.
    ``(None, 0.0)`` when the midpoint is not available. The correction assumes the wave
    is Nernstian: call it only for voltammograms that passed the reversibility screen.
    """
    if peaks.E_half_V is None:
        return None, 0.0
    midpoint_distance = abs(peaks.switching_potential_V - peaks.E_half_V)
    corr = 0.0
    for _ in range(_PASSES):
        corr = switching_correction_V(
            switching_offset_V=max(midpoint_distance - corr, 0.0),
            electrons=electrons,
            temperature_K=temperature_K,
        )
    # The reverse peak lies beyond E½ in the direction of the reverse sweep.
    sign = 1.0 if peaks.first_sweep == "reduction" else -1.0
    return peaks.E_half_V - sign * corr, corr
