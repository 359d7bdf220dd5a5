"""E½ of a Nernstian voltammogram from its peak potentials, corrected for the switch.

For a reversible couple the anodic peak of the reverse sweep depends on how far beyond
the wave the scan was switched, so the midpoint (Epa + Epc)/2 lies above E½ by
½[ΔEp(Eλ) − ΔEp(∞)] — 1.75/n mV for n·|Eλ − E½| = 100 mV (71.5 mV past the forward
peak), 0.65/n mV at 200 mV, 0.4/n mV at 300 mV (Nicholson & Shain 1964). Left uncorrected
this bias changes along a titration (E½ moves while Eλ is fixed) and tilts the Lingane
line. The correction uses the same tabulated ΔEp(Eλ) as the reversibility screen and is
applied only to voltammograms that passed it.
"""

from __future__ import annotations

from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
from cvfit.techniques.cv.screen.reversibility import nernstian_delta_Ep_V
from cvfit.units import STANDARD_TEMPERATURE_K

__all__ = ["switching_correction_V", "corrected_half_wave_V", "N_DELTA_EP_LIMIT_V"]

#: n·ΔEp of a Nernstian couple switched far beyond the wave, at 25 °C, V
#: (Nicholson & Shain, Anal. Chem. 36 (1964) 706; from memory).
N_DELTA_EP_LIMIT_V = 0.0570


def switching_correction_V(
    *, switching_offset_V: float, electrons: int, temperature_K: float
) -> float:
    """½[ΔEp(Eλ) − ΔEp(∞)] of a Nernstian couple, V (>= 0).

    Parameters
    ----------
    switching_offset_V : float
        |Eλ − E½|, V.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K; the limit scales with T/298.15 K.

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
    """
    limit = N_DELTA_EP_LIMIT_V * (temperature_K / STANDARD_TEMPERATURE_K) / electrons
    expected = nernstian_delta_Ep_V(
        switching_offset_V=switching_offset_V, electrons=electrons, temperature_K=temperature_K
    )
    return max(0.0, 0.5 * (expected - limit))


def corrected_half_wave_V(
    peaks: PeakAnalysis, *, electrons: int, temperature_K: float
) -> tuple[float | None, float]:
    """E½ from the midpoint less the switching correction; returns (E½, correction).

    ``(None, 0.0)`` when the midpoint is not available. The correction assumes the wave
    is Nernstian: call it only for voltammograms that passed the reversibility screen.
    """
    if peaks.E_half_V is None:
        return None, 0.0
    offset = abs(peaks.switching_potential_V - peaks.E_half_V)
    corr = switching_correction_V(
        switching_offset_V=offset, electrons=electrons, temperature_K=temperature_K
    )
    # The reverse peak lies beyond E½ in the direction of the reverse sweep.
    sign = 1.0 if peaks.first_sweep == "reduction" else -1.0
    return peaks.E_half_V - sign * corr, corr
