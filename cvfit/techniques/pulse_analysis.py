"""One pulse record (DPV or SWV) → its peak, its E½ and its Nernstian screen.

The peak is fitted with the reversible shape on a sloping baseline
(:func:`cvfit.techniques.pulse_peak.fit_peak`). The reversible response of the record's own
program (:func:`cvfit.techniques.step_response.reversible_record`) is fitted the same way:
its fitted peak's offset from its E½ is the reversible offset of this program (−ΔE/2 for
DPV in Parry & Osteryoung's limit, 0 for the square-wave net peak, Osteryoung & O'Dea), and
its width, symmetry and height are the reversible values the screen compares with:

* the half-height width within ``WIDTH_MARGIN`` (relative) of the reversible one, beyond
  twice its standard error — a slow electron transfer broadens the peak;
* the symmetry of the half-height crossings within ``SYMMETRY_MARGIN`` of the reversible
  one — a slow transfer skews it;
* with electrode area, concentration and D in ``[series]``, the height against the
  reversible height (a warning only: complexation changes D along a titration);
* with the two sampled currents of a square wave, the forward and reverse peak
  potentials and the ratio of their heights against the reversible ones.

References
----------
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from cvfit.flags import Flag
from cvfit.techniques.pulse_peak import PeakFit, fit_peak, reversible_width_V
from cvfit.techniques.step_response import PulseTiming, reversible_record
from cvfit.units import FARADAY

__all__ = [
    "PulseScreen",
    "ReversiblePeak",
    "ComponentPeaks",
    "analyse_pulse",
    "WIDTH_MARGIN",
    "SYMMETRY_MARGIN",
    "HEIGHT_MARGIN",
]

#: Relative excess of the half-height width over its reversible value a Nernstian peak
#: may show beyond twice its standard error. Set from simulations of quasi-reversible
#: couples (tests/test_pulse_techniques.py): the width of a reversible peak is exact for its
#: program, while a slow transfer moves the DPV peak by some 0.6 mV per 1 % of extra
#: width, so the margin is kept tight.
WIDTH_MARGIN = 0.015
#: Largest difference of the half-height asymmetry from the reversible one.
SYMMETRY_MARGIN = 0.03
#: Largest relative difference of the peak height from the reversible one (a warning).
HEIGHT_MARGIN = 0.15
#: Largest shift of a square-wave component peak from its reversible place, in reversible
#: widths, and largest relative difference of the reverse/forward height ratio.
COMPONENT_SHIFT_WIDTHS = 0.03
COMPONENT_RATIO_MARGIN = 0.05


@dataclass(frozen=True)
class ReversiblePeak:
    """The reversible values of this program (from its exact reversible response).

    Attributes
    ----------
    offset_V : float
        Fitted peak potential less E½, V.
    width_V : float
        Half-height width, V.
    asymmetry : float or None
    height_per_unit : float
        Peak height in units of nFAC√(D/π), s^−½ (signed).
    history : bool
        Whether the earlier steps were taken into account (False: a DPV without its period).
    """

    offset_V: float
    width_V: float
    asymmetry: float | None
    height_per_unit: float
    history: bool


@dataclass(frozen=True)
class ComponentPeaks:
    """The forward and reverse peaks of a square wave's two sampled currents.

    Attributes
    ----------
    forward_V, reverse_V : float
        Their potentials less E½, V.
    ratio : float
        |reverse peak| / |forward peak|.
    expected_forward_V, expected_reverse_V, expected_ratio : float
        The reversible values.
    """

    forward_V: float
    reverse_V: float
    ratio: float
    expected_forward_V: float
    expected_reverse_V: float
    expected_ratio: float


@dataclass(frozen=True)
class PulseScreen:
    """What one pulse record gives: peak, reference, E½, verdict and findings."""

    peak: PeakFit | None
    reference: ReversiblePeak | None
    E_half_V: float | None
    E_half_stderr_V: float | None
    reversible: bool | None
    why: str
    expected_height_A: float | None
    components: ComponentPeaks | None
    flags: tuple[Flag, ...]


def _reference(base, timing, E_half, nf, a, bulk) -> ReversiblePeak | None:
    point, _, _ = reversible_record(base, timing, E_half_V=E_half, nf=nf, bulk_form=bulk)
    ref = fit_peak(base, point, a=a, nf=nf)
    if isinstance(ref, str):
        return None
    return ReversiblePeak(
        ref.E_peak_V - E_half,
        ref.width_V,
        ref.asymmetry,
        ref.height_A,
        timing.technique == "swv" or timing.period_s is not None,
    )


def _extremum(E: np.ndarray, i: np.ndarray, sign: float, half_V: float) -> tuple[float, float]:
    """Potential and height of the extremum of sign *sign* (quadratic through its top)."""
    j = int(np.argmax(sign * i))
    keep = np.abs(E - E[j]) <= half_V
    if keep.sum() < 3:
        return float(E[j]), float(i[j])
    c = np.polyfit(E[keep] - E[j], i[keep], 2)
    if c[0] * sign >= 0:
        return float(E[j]), float(i[j])
    x = float(np.clip(-c[1] / (2 * c[0]), -half_V, half_V))
    return float(E[j] + x), float(np.polyval(c, x))


def _components(base, first, second, timing, E_half, nf, bulk, sign, W) -> ComponentPeaks:
    _, f_ref, r_ref = reversible_record(base, timing, E_half_V=E_half, nf=nf, bulk_form=bulk)
    half = W / 3.0
    ef, hf = _extremum(base, first, sign, half)
    er, hr = _extremum(base, second, -sign, half)
    ef0, hf0 = _extremum(base, f_ref, sign, half)
    er0, hr0 = _extremum(base, r_ref, -sign, half)
    return ComponentPeaks(
        ef - E_half, er - E_half, abs(hr / hf), ef0 - E_half, er0 - E_half, abs(hr0 / hf0)
    )


def _width_verdict(peak: PeakFit, ref: ReversiblePeak) -> list[Flag]:
    flags = []
    rel = peak.width_V / ref.width_V - 1.0
    sd = peak.width_stderr_V / ref.width_V
    if abs(rel) > WIDTH_MARGIN + 2.0 * sd:
        flags.append(
            Flag(
                "PULSE_WIDTH_NOT_NERNSTIAN",
                f"half-height width {1e3 * peak.width_V:.1f} ± {1e3 * peak.width_stderr_V:.1f} mV "
                f"against the reversible {1e3 * ref.width_V:.1f} mV for this program "
                f"({100 * rel:+.0f} %): "
                + ("a slow electron transfer broadens the peak" if rel > 0 else "check n"),
            )
        )
    if peak.asymmetry is not None and ref.asymmetry is not None:
        d = peak.asymmetry - ref.asymmetry
        if abs(d) > SYMMETRY_MARGIN + 2.0 * (peak.asymmetry_stderr or 0.0):
            flags.append(
                Flag(
                    "PULSE_PEAK_ASYMMETRIC",
                    f"the half-height crossings are asymmetric ({peak.asymmetry:+.3f} against "
                    f"the reversible {ref.asymmetry:+.3f}): a slow electron transfer skews "
                    "the peak",
                )
            )
    return flags


def _height(peak, ref, electrons, area_cm2, analyte_M, D_cm2_s) -> tuple[float | None, list[Flag]]:
    if area_cm2 is None or analyte_M is None or D_cm2_s is None:
        return None, []
    unit = electrons * FARADAY * area_cm2 * analyte_M * 1e-3 * math.sqrt(D_cm2_s / math.pi)
    expected = abs(ref.height_per_unit) * unit
    ratio = abs(peak.height_A) / expected
    flags = []
    if abs(ratio - 1.0) > HEIGHT_MARGIN:
        flags.append(
            Flag(
                "PULSE_PEAK_HEIGHT",
                f"peak height {abs(peak.height_A):.3g} A is {ratio:.2f} times the reversible "
                f"{expected:.3g} A for the area, concentration and D of [series] (a slow "
                "transfer lowers it; so does a complex that diffuses more slowly)",
            )
        )
    return expected, flags


def analyse_pulse(
    base_V: np.ndarray,
    current_A: np.ndarray,
    timing: PulseTiming,
    *,
    electrons: int,
    nf: float,
    bulk_form: Literal["ox", "red"],
    area_cm2: float | None = None,
    analyte_M: float | None = None,
    D_cm2_s: float | None = None,
    components: tuple[np.ndarray, np.ndarray] | None = None,
) -> PulseScreen:
    """Peak, E½ and screen of one pulse record (module docstring)."""
    a = nf * (
        abs(timing.amplitude_V) / 2 if timing.technique == "dpv" else abs(timing.amplitude_V)
    )
    peak = fit_peak(base_V, current_A, a=a, nf=nf)
    if isinstance(peak, str):
        flag = Flag("PULSE_NO_PEAK", f"no peak could be measured: {peak}", "error")
        return PulseScreen(None, None, None, None, None, peak, None, None, (flag,))
    offset = -timing.amplitude_V / 2 if timing.technique == "dpv" else 0.0
    E_half = peak.E_peak_V - offset
    ref = None
    for _ in range(2):  # the offset varies slowly with E½: once more from the better E½
        ref = _reference(base_V, timing, E_half, nf, a, bulk_form)
        if ref is None:
            break
        E_half = peak.E_peak_V - ref.offset_V
    if ref is None:
        flag = Flag("PULSE_NO_PEAK", "the reversible reference of this program has no peak "
                    "inside the record; widen the record", "error")  # fmt: skip
        return PulseScreen(peak, None, None, None, None, "no reference", None, None, (flag,))
    flags = _width_verdict(peak, ref)
    reversible = not flags
    comp = None
    if components is not None:
        sign = math.copysign(1.0, peak.height_A)
        comp = _components(base_V, *components, timing, E_half, nf, bulk_form, sign, ref.width_V)
        shift = COMPONENT_SHIFT_WIDTHS * ref.width_V
        off = max(abs(comp.forward_V - comp.expected_forward_V),
                  abs(comp.reverse_V - comp.expected_reverse_V))  # fmt: skip
        if off > shift or abs(comp.ratio / comp.expected_ratio - 1) > COMPONENT_RATIO_MARGIN:
            reversible = False
            flags.append(
                Flag(
                    "SWV_COMPONENTS_NOT_NERNSTIAN",
                    f"forward and reverse peaks at {1e3 * comp.forward_V:+.1f} and "
                    f"{1e3 * comp.reverse_V:+.1f} mV from E½, height ratio {comp.ratio:.2f}, "
                    f"against the reversible {1e3 * comp.expected_forward_V:+.1f}, "
                    f"{1e3 * comp.expected_reverse_V:+.1f} mV and {comp.expected_ratio:.2f}",
                )
            )
    expected, height_flags = _height(peak, ref, electrons, area_cm2, analyte_M, D_cm2_s)
    flags += height_flags
    if not ref.history:
        flags.append(
            Flag(
                "PULSE_HISTORY_UNKNOWN",
                "period_s is not given: the reversible reference leaves out the earlier steps "
                "(Parry & Osteryoung's limit); give period_s in [technique] for the exact one",
                "info",
            )
        )
    why = (
        ""
        if reversible
        else "it failed the pulse screen ("
        + ", ".join(
            f.code for f in flags if f.severity == "warning" and f.code != "PULSE_PEAK_HEIGHT"
        )
        + ")"
    )
    return PulseScreen(
        peak, ref, E_half, peak.E_peak_stderr_V, reversible, why, expected, comp, tuple(flags)
    )


def width_for(timing: PulseTiming, nf: float) -> float:
    """The reversible width of the fitted shape for *timing* without history, V."""
    a = nf * (
        abs(timing.amplitude_V) / 2 if timing.technique == "dpv" else abs(timing.amplitude_V)
    )
    return reversible_width_V(a, nf)
