"""Class of electron transfer of one voltammogram from its reversibility screen.

reversible / quasi-reversible / irreversible / not determinable, with the reason in words
and the numbers behind it (n·ΔEp against the Nernstian value for the actual switch,
|Ep − Ep/2| against 2.20 RT/nF and 1.857 RT/(αnF), the current ratio, a missing reverse
peak).

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
Matsuda, H.; Ayabe, Y. Z. Elektrochem. 59 (1955) 494.
Nicholson, R. S. Anal. Chem. 37 (1965) 1351.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import cast

from cvfit.flag_codes import Severity
from cvfit.flags import Flag
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
from cvfit.techniques.cv.screen.reversibility import (
    PEAK_WIDTH_THERMAL,
    ReversibilityScreen,
    _check_n_T,
    _mV,
)
from cvfit.units import FARADAY, GAS_CONSTANT, STANDARD_TEMPERATURE_K, thermal_voltage

__all__ = ["Classification", "classify_voltammogram", "CLASSES", "IRREVERSIBLE_WIDTH_THERMAL"]


#: |Ep − Ep/2| of a totally irreversible peak in units of RT/(αnF) (Matsuda & Ayabe 1955).
IRREVERSIBLE_WIDTH_THERMAL = 1.857
#: Classes of electron transfer at the scan rate used.
CLASSES = ("reversible", "quasi-reversible", "irreversible", "not determinable")
#: Screen flags that are kinetic signatures (slow electron transfer widens the peaks).
_KINETIC_CODES = ("DELTA_EP_TOO_LARGE", "DELTA_EP_GROWS_WITH_SCAN_RATE")


@dataclass(frozen=True)
class Classification:
    """Class of the electron transfer of one voltammogram, the reason and the numbers.

    Attributes
    ----------
    kind : {"reversible", "quasi-reversible", "irreversible", "not determinable"}
    reason : str
        The reason in words, with the numbers behind it.
    n_delta_Ep_V, expected_delta_Ep_V : float or None
        n·ΔEp measured and its Nernstian value for the actual switch (n·ΔEp_N), V.
    peak_width_V : float or None
        |Ep − Ep/2| of the forward peak, V.
    reversible_width_V, irreversible_width_V : float
        2.20 RT/nF and 1.857 RT/(αnF), V.
    current_ratio : float or None
        Reverse/forward peak-current ratio (Nicholson 1966).
    flag : Flag
        ``CLASS_REVERSIBLE`` (info), ``CLASS_QUASI_REVERSIBLE``, ``CLASS_IRREVERSIBLE`` or
        ``CLASS_NOT_DETERMINABLE`` with the reason as its message.
    """

    kind: str
    reason: str
    n_delta_Ep_V: float | None
    expected_delta_Ep_V: float | None
    peak_width_V: float | None
    reversible_width_V: float
    irreversible_width_V: float
    current_ratio: float | None
    flag: Flag

    def __post_init__(self) -> None:
        if self.kind not in CLASSES:
            raise ValueError(f"kind must be one of {CLASSES}, got {self.kind!r}")
        if not isinstance(self.flag, Flag):
            raise TypeError("flag must be a Flag")

    def to_dict(self) -> dict:
        """JSON-ready mapping."""
        return {
            "kind": self.kind,
            "reason": self.reason,
            "n_delta_Ep_V": self.n_delta_Ep_V,
            "expected_n_delta_Ep_V": self.expected_delta_Ep_V,
            "peak_width_V": self.peak_width_V,
            "reversible_width_V": self.reversible_width_V,
            "irreversible_width_V": self.irreversible_width_V,
            "current_ratio": self.current_ratio,
            "code": self.flag.code,
        }


def classify_voltammogram(
    peaks: PeakAnalysis,
    screen: ReversibilityScreen,
    *,
    electrons: int,
    temperature_K: float,
    alpha: float = 0.5,
    criteria: ReversibilityCriteria = ReversibilityCriteria(),  # noqa: B008 (frozen)
) -> Classification:
    """Classify one voltammogram: reversible, quasi-reversible, irreversible or not determinable.

    * both peaks, screen passed → reversible;
    * both peaks, ΔEp too large (or growing with v in a scan-rate study) → quasi-reversible,
      or irreversible when Nicholson's ψ (from ΔEp,
      :mod:`cvfit.techniques.cv.screen.rate_constant`) puts
      Λ = √π·ψ at or below 10^(−2(1+α)) (Matsuda & Ayabe's regime boundary);
    * no reverse peak, forward peak wider than 2.20 RT/nF by more than the width margin →
      irreversible (its width is compared with 1.857 RT/(αnF) and αn is reported);
    * anything else that fails (current ratio, ΔEp too small, Nernstian-width peak with
      no reverse peak, no forward peak) → not determinable, with the reason.

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706 (2.20 RT/nF, 1.857 RT/(αnF)).
    Matsuda, H.; Ayabe, Y. Z. Elektrochem. 59 (1955) 494 (regimes by Λ; from memory).
    Nicholson, R. S. Anal. Chem. 37 (1965) 1351 (ψ).
    """
    from cvfit.techniques.cv.screen.rate_constant import (
        psi_from_table,
        switch_corrected_delta_Ep_V,
    )

    _check_n_T(electrons, temperature_K)
    if not 0.0 < alpha < 1.0:
        raise ValueError(f"alpha must lie strictly between 0 and 1, got {alpha}")
    n = electrons
    scale = temperature_K / STANDARD_TEMPERATURE_K
    rt_nf = thermal_voltage(temperature_K, electrons)
    w_rev = PEAK_WIDTH_THERMAL * rt_nf
    w_irr = IRREVERSIBLE_WIDTH_THERMAL * rt_nf / alpha
    E_fwd, E_half_fwd = peaks.forward_peak_V, peaks.forward_half_peak_V
    width = None if E_fwd is None or E_half_fwd is None else abs(E_fwd - E_half_fwd)
    nd = None if peaks.delta_Ep_V is None else n * peaks.delta_Ep_V
    exp_nd = None if screen.expected_delta_Ep_V is None else n * screen.expected_delta_Ep_V
    codes = {f.code for f in screen.flags}
    wide = width is not None and n * width - PEAK_WIDTH_THERMAL * rt_f(temperature_K) > (
        criteria.n_peak_width_margin_V * scale
    )
    width_txt = (
        ""
        if width is None
        else f"forward |Ep − Ep/2| = {_mV(width)} (reversible {_mV(w_rev)}, irreversible "
        f"{_mV(w_irr)} for α = {alpha:g})"
    )

    def done(kind: str, reason: str) -> Classification:
        code = "CLASS_" + kind.upper().replace("-", "_").replace(" ", "_")
        severity: Severity = "info" if kind == "reversible" else "warning"
        flag = Flag(code, f"{kind}: {reason}", severity)
        return Classification(
            kind, reason, nd, exp_nd, width, w_rev, w_irr, peaks.current_ratio, flag
        )

    if E_fwd is None:
        return done("not determinable", "no forward peak was found")
    if peaks.delta_Ep_V is None:
        if wide and width is not None:  # (a wide peak has a width)
            alpha_n = IRREVERSIBLE_WIDTH_THERMAL * rt_nf * n / width
            return done(
                "irreversible",
                f"no reverse peak and a broad forward peak: {width_txt}; the width implies "
                f"αn = {alpha_n:.2f} (1.857 RT/(F·|Ep − Ep/2|))",
            )
        why = (
            "no reverse peak, but the forward peak has the Nernstian width"
            if width is not None
            else "no reverse peak, and the forward peak's width could not be measured"
        )
        return done(
            "not determinable",
            f"{why}{'; ' + width_txt if width_txt else ''}: a following chemical reaction "
            "or a switch too close to the wave, not slow electron transfer",
        )
    ratio_txt = (
        "current ratio not measured"
        if peaks.current_ratio is None
        else f"current ratio {peaks.current_ratio:.3f}"
    )
    numbers = f"n·ΔEp = {_mV(n * peaks.delta_Ep_V)}" + (
        "" if exp_nd is None else f" against the Nernstian {_mV(exp_nd)} for this switch"
    )
    if screen.reversible is True:
        return done("reversible", f"{numbers}; {width_txt}; {ratio_txt}")
    if codes & set(_KINETIC_CODES) or (wide and "DELTA_EP_TOO_SMALL" not in codes):
        E_half = cast(float, peaks.E_half_V)  # both peaks were found (ΔEp measured)
        dEp = switch_corrected_delta_Ep_V(
            peaks.delta_Ep_V,
            switching_offset_V=peaks.switching_potential_V - E_half,
            electrons=n,
            temperature_K=temperature_K,
        )
        psi = psi_from_table(n * dEp, temperature_K=temperature_K)
        trend = (
            "; ΔEp grows with the scan rate" if "DELTA_EP_GROWS_WITH_SCAN_RATE" in codes else ""
        )
        if psi is None and 1e3 * n * dEp / scale > 212.0:
            psi = 2.18 * math.sqrt(alpha / math.pi) * math.exp(-(alpha**2) * dEp / rt_nf)
        limit = 10.0 ** (-2.0 * (1.0 + alpha)) / math.sqrt(math.pi)
        psi_txt = "" if psi is None else f"; Nicholson's ψ ≈ {psi:.3g}"
        if psi is not None and psi <= limit:
            return done(
                "irreversible",
                f"{numbers}{psi_txt} ≤ {limit:.2g} (Λ ≤ 10^(−2(1+α))); {width_txt}{trend}",
            )
        return done(
            "quasi-reversible",
            f"{numbers}{psi_txt}; {width_txt}{trend}: slow "
            "electron transfer (or uncompensated resistance)",
        )
    failed = ", ".join(sorted(codes - {"SWITCHING_TOO_CLOSE"})) or "the screen"
    return done(
        "not determinable",
        f"fails {failed}, which is not a kinetic signature ({numbers}; {ratio_txt}): a "
        "coupled chemical reaction, adsorption, or wrong n",
    )


def rt_f(temperature_K: float) -> float:
    """RT/F, V."""
    return GAS_CONSTANT * temperature_K / FARADAY
