"""Is a voltammogram Nernstian? The reversibility screen and what follows from it.

- :mod:`.reversibility` — ΔEp, peak width and current ratio against the Nernstian values
- :mod:`.switching` — the switching-potential correction of the E½ midpoint
- :mod:`.classification` — reversible, quasi-reversible or irreversible, with the reason
- :mod:`.rate_constant` — Nicholson's ψ and the standard rate constant k0
- :mod:`.kinetics` — ψ, k0 and D of one voltammogram with their uncertainties
- :mod:`.scan_rate` — scan-rate studies of one solution
- :mod:`.excess_cause` — an iR drop, slow kinetics or neither behind a growing ΔEp
- :mod:`.midpoint_alpha` — the peak midpoint's extra error for an unknown α
- :mod:`.ohmic_drop` — correction for the uncompensated resistance
"""

from cvfit.techniques.cv.screen.classification import Classification, classify_voltammogram
from cvfit.techniques.cv.screen.kinetics import (
    KineticsResult,
    diffusion_from_peak_current,
    estimate_kinetics,
)
from cvfit.techniques.cv.screen.ohmic_drop import correct_ohmic_drop
from cvfit.techniques.cv.screen.rate_constant import k0_from_psi_cm_s, psi_from_table
from cvfit.techniques.cv.screen.reversibility import (
    ReversibilityScreen,
    nernstian_delta_Ep_V,
    screen_reversibility,
)
from cvfit.techniques.cv.screen.scan_rate import ScanRateStudy, analyse_scan_rate_study
from cvfit.techniques.cv.screen.switching import corrected_half_wave_V, switching_correction_V

__all__ = [
    "Classification",
    "KineticsResult",
    "ReversibilityScreen",
    "ScanRateStudy",
    "analyse_scan_rate_study",
    "classify_voltammogram",
    "correct_ohmic_drop",
    "corrected_half_wave_V",
    "diffusion_from_peak_current",
    "estimate_kinetics",
    "k0_from_psi_cm_s",
    "nernstian_delta_Ep_V",
    "psi_from_table",
    "screen_reversibility",
    "switching_correction_V",
]
