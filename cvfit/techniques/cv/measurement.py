"""What cyclic voltammetry found in one file, and the E½ it offers under its verdicts.

The record holds the peak analysis, the reversibility screen (whose verdict a scan-rate
study may change later), the curve fit when one was made, the class of transfer and the
kinetics from the series study, the internal standard measured in the same record, and
the flags of all of them. :meth:`CVMeasurement.half_wave_estimate` turns them into the E½
the technique stands behind:

* an accepted curve fit (not irreversible) → its E½ (``"curve"``, a kinetic model);
* a file that passed the screen → the peak midpoint less the switching correction
  (``"peaks"``, Nernstian; :mod:`cvfit.techniques.cv.screen.switching`);
* otherwise the plain midpoint, which no fit should take without a reason
  (``"peaks"``, unusable, with the screen's reason).

The pipeline's one decision (:mod:`cvfit.pipeline.half_wave`) takes it from there.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Literal

from cvfit.flags import Flag
from cvfit.formatting import format_value
from cvfit.quantity import clean_number
from cvfit.techniques.base import HalfWaveEstimate, StandardMeasurement
from cvfit.techniques.cv.curve.stage import curve_fit_used
from cvfit.techniques.cv.screen.switching import corrected_half_wave_V

if TYPE_CHECKING:
    from cvfit.techniques.cv.curve.fit import CurveFit
    from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
    from cvfit.techniques.cv.screen.classification import Classification
    from cvfit.techniques.cv.screen.kinetics import KineticsResult
    from cvfit.techniques.cv.screen.reversibility import ReversibilityScreen

__all__ = ["CVMeasurement"]


@dataclass(frozen=True)
class CVMeasurement:
    """One cyclic voltammogram measured.

    Attributes
    ----------
    peaks : PeakAnalysis
        Peak potentials and heights of the analysed cycle.
    screen : ReversibilityScreen
        The reversibility screen (after the series study when there was one).
    electrons : int
        n of the couple (for the switching correction).
    temperature_K : float
        Cell temperature, K.
    flags : tuple of Flag
        Findings of the peak analysis, the screen, the curve fit and the series study.
    curve_fit : CurveFit or None
        The fit of the whole curve, when one was made.
    classification : Classification or None
        Class of the electron transfer (from the series study).
    kinetics : KineticsResult or None
        Nicholson's ψ and k0, or why they are not determinable (from the series study).
    standard : StandardMeasurement or None
        The internal reference couple measured in the same record.
    """

    peaks: PeakAnalysis
    screen: ReversibilityScreen
    electrons: int
    temperature_K: float
    flags: tuple[Flag, ...] = ()
    curve_fit: CurveFit | None = None
    classification: Classification | None = None
    kinetics: KineticsResult | None = None
    standard: StandardMeasurement | None = None

    technique = "cv"

    @property
    def reversible(self) -> bool | None:
        return self.screen.reversible

    @property
    def bulk_form(self) -> Literal["ox", "red"]:
        """The form in the bulk of the solution: the curve fit's where the file has one
        (``[series] bulk_form``, or detected from the record's start), else the one the
        first sweep converts."""
        if self.curve_fit is not None:
            return "red" if self.curve_fit.bulk_form == "red" else "ox"
        return "red" if self.peaks.first_sweep == "oxidation" else "ox"

    @property
    def diffusion_current_A(self) -> float | None:
        """The diffusion-controlled reduction current of the bulk oxidised form, A: the
        forward (cathodic) peak height, or for a file whose E½ comes from the curve fit the
        reversible peak of its fitted current scale (slow transfer lowers the measured
        peak, not the diffusion). None when the first sweep is an oxidation or no peak."""
        p = self.peaks
        if p.ipc_A is None or p.first_sweep != "reduction":
            return None
        fit = self.curve_fit
        if fit is not None and curve_fit_used(fit):
            return float(fit.reversible_peak_A)
        return abs(p.ipc_A)

    def half_wave_estimate(self) -> HalfWaveEstimate:
        """The E½ cyclic voltammetry offers for this file (module docstring)."""
        fit, p = self.curve_fit, self.peaks
        if fit is not None and curve_fit_used(fit):
            e = fit.E_half_V
            return HalfWaveEstimate(e.value, e.stderr, "curve", "kinetic_model")
        if p.E_half_V is None:
            return HalfWaveEstimate(None, None, "peaks", "unusable", why="no peak pair")
        if self.screen.reversible is True:
            e_half, corr = corrected_half_wave_V(
                p, electrons=self.electrons, temperature_K=self.temperature_K
            )
            return HalfWaveEstimate(e_half, p.E_half_stderr_V, "peaks", "nernstian", corr)
        why = (
            "the reversibility screen could not judge it"
            if self.screen.reversible is None
            else "it failed the reversibility screen"
        )
        return HalfWaveEstimate(p.E_half_V, p.E_half_stderr_V, "peaks", "unusable", why=why)

    def to_dict(self) -> dict[str, Any]:
        """The technique's fields of the results.json file record."""
        p = self.peaks
        return {
            "cycle": p.cycle_number,
            "first_sweep": p.first_sweep,
            "switching_potential_V": clean_number(p.switching_potential_V),
            "Epc_V": clean_number(p.Epc_V),
            "Epa_V": clean_number(p.Epa_V),
            "E_half_midpoint_V": clean_number(p.E_half_V),
            "delta_Ep_V": clean_number(p.delta_Ep_V),
            "expected_delta_Ep_V": clean_number(self.screen.expected_delta_Ep_V),
            "Ep_half_c_V": clean_number(p.Ep_half_c_V),
            "Ep_half_a_V": clean_number(p.Ep_half_a_V),
            "ipc_A": clean_number(p.ipc_A),
            "ipa_A": clean_number(p.ipa_A),
            "current_ratio": clean_number(p.current_ratio),
            "noise_A": clean_number(p.noise_A),
            "reversible": self.screen.reversible,
            "curve_fit": None if self.curve_fit is None else self.curve_fit.to_dict(),
            "classification": None
            if self.classification is None
            else self.classification.to_dict(),
            "kinetics": None if self.kinetics is None else self.kinetics.to_dict(),
        }

    def summary_cells(self) -> dict[str, str]:
        """The terminal table's technique columns: ΔEp, its Nernstian value, ipa/ipc."""
        p = self.peaks
        return {
            "ΔEp/mV": format_value(p.delta_Ep_V, scale=1e3),
            "Nernst": format_value(self.screen.expected_delta_Ep_V, scale=1e3),
            "ipa/ipc": format_value(p.current_ratio, digits=2),
        }

    def table_cells(self) -> dict[str, object]:
        """The technique's columns of the per-file table, units in the names."""
        p, kin, cls, fit = self.peaks, self.kinetics, self.classification, self.curve_fit
        cells: dict[str, object] = {
            "Epc_V": p.Epc_V,
            "Epa_V": p.Epa_V,
            "delta_Ep_V": p.delta_Ep_V,
            "expected_delta_Ep_V": self.screen.expected_delta_Ep_V,
            "ipc_A": p.ipc_A,
            "ipa_A": p.ipa_A,
            "current_ratio": p.current_ratio,
            "electron_transfer": None if cls is None else cls.kind,
            "psi": None if kin is None or kin.psi is None else kin.psi.value,
            "k0_cm_s": None if kin is None or kin.k0_cm_s is None else kin.k0_cm_s.value,
            "k0_stderr_cm_s": None if kin is None or kin.k0_cm_s is None else kin.k0_cm_s.stderr,
            "k0_lower_bound_cm_s": None if kin is None else kin.k0_lower_bound_cm_s,
        }
        if fit is not None:
            cells.update(
                curve_k0_cm_s=fit.k0_cm_s.value,
                curve_k0_lower_bound_cm_s=fit.k0_lower_bound_cm_s,
                curve_alpha=fit.alpha.value,
                curve_reduced_chi2=fit.reduced_chi2.value,
            )
        return {k: clean_number(v) if isinstance(v, float) else v for k, v in cells.items()}
