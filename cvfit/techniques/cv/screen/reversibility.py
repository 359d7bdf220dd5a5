"""First reversibility screen: is a voltammogram Nernstian?

Three criteria of a reversible (Nernstian) couple are compared with the measured peaks,
on n-scaled values and with every mV margin scaled by T/298.15 K:

* ΔEp = Epa − Epc against the Nernstian value for the actual switching potential
  (:func:`nernstian_delta_Ep_V`, from the simulated table of
  :mod:`cvfit.techniques.cv.screen.switching_table`);
* the width |Ep − Ep/2| of the forward peak against 2.20 RT/nF;
* the reverse/forward peak-current ratio (Nicholson 1966) against 1.

The margins live in :class:`cvfit.reversibility_criteria.ReversibilityCriteria` (defaults
10 mV, 10 mV and 0.15, common practice). :mod:`cvfit.techniques.cv.screen.classification` turns the
screen into a class of electron transfer; ψ and k0 are in
:mod:`cvfit.techniques.cv.screen.rate_constant`.

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed. (2001), Table 6.2.1.
Nicholson, R. S. Anal. Chem. 38 (1966) 1406.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from cvfit.flags import Flag
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
from cvfit.techniques.cv.screen.switching_table import MIN_SWITCH_THERMAL, n_delta_Ep_thermal
from cvfit.units import FARADAY, GAS_CONSTANT, STANDARD_TEMPERATURE_K, thermal_voltage

__all__ = [
    "nernstian_delta_Ep_V",
    "screen_reversibility",
    "ReversibilityScreen",
    "MIN_TABULATED_OFFSET_V",
    "PEAK_WIDTH_THERMAL",
    "PEAK_OFFSET_THERMAL",
]

#: Smallest n·|Eλ − E½| (at 25 °C) at which ΔEp is tested, V. The table
#: (:mod:`cvfit.techniques.cv.screen.switching_table`) reaches 38.5 mV; 50 mV leaves room for
#: the midpoint, which lies up to 4 mV/n beyond E½ at such switches.
MIN_TABULATED_OFFSET_V = 0.050
#: |Ep − Ep/2| of a reversible peak in units of RT/nF (Nicholson & Shain 1964).
PEAK_WIDTH_THERMAL = 2.20
#: |Ep − E½| of a reversible peak in units of RT/nF (Nicholson & Shain 1964: 1.109).
PEAK_OFFSET_THERMAL = 1.109


def _check_n_T(electrons: int, temperature_K: float) -> None:
    if isinstance(electrons, bool) or int(electrons) != electrons or electrons < 1:
        raise ValueError(f"electrons must be a whole number >= 1, got {electrons!r}")
    if not (math.isfinite(temperature_K) and temperature_K > 0):
        raise ValueError(f"temperature_K must be positive, got {temperature_K}")


def nernstian_delta_Ep_V(
    *, switching_offset_V: float, electrons: int = 1, temperature_K: float = 298.15
) -> float:
    """Peak separation of a Nernstian couple for a given switching potential.

    n·ΔEp = (2·1.10893 + e(ξλ))·RT/F with ξλ = nF|Eλ − E½|/RT and e from the simulated
    table of :mod:`cvfit.techniques.cv.screen.switching_table` (converged in the step to
    10⁻⁴ mV, checked against an independent convolution-integral computation within
    0.005 mV): 60.19, 58.78, 58.16, 57.64 mV at 100, 150, 200, 300 mV past E½ (25 °C),
    tending to 57.0 mV far away. Continuous in the switching distance, in n and in T.
    Nicholson and Shain's published table (60.5, 59.2, 58.3, 57.8 mV) lies 0.1–0.4 mV
    above. Closer than the table reaches (n·|Eλ − E½| < 38.5 mV at 25 °C) the value at its
    edge (about 63.9 mV/n) is returned as a lower bound; :func:`screen_reversibility`
    flags ``SWITCHING_TOO_CLOSE`` below 50 mV instead of testing ΔEp.

    Parameters
    ----------
    switching_offset_V : float
        |Eλ − E½|, V (the sign is ignored).
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.

    Returns
    -------
    float
        Expected ΔEp = Epa − Epc, V.

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
    """
    _check_n_T(electrons, temperature_K)
    offset = abs(float(switching_offset_V))
    if not math.isfinite(offset):
        raise ValueError(f"switching_offset_V must be finite, got {switching_offset_V}")
    rt_nf = thermal_voltage(temperature_K, electrons)
    return n_delta_Ep_thermal(max(offset / rt_nf, MIN_SWITCH_THERMAL)) * rt_nf


@dataclass(frozen=True)
class ReversibilityScreen:
    """Outcome of the reversibility screen of one voltammogram.

    Attributes
    ----------
    reversible : bool or None
        True when every applicable criterion passes; False when any fails; None when a
        peak is missing and nothing that could be tested failed (not determinable).
    expected_delta_Ep_V : float or None
        Nernstian ΔEp for the actual switching potential, V; None when E½ is unknown or
        the switch is closer to E½ than the table covers.
    expected_peak_width_V : float
        2.20 RT/nF, V.
    flags : tuple of Flag
        Codes ``DELTA_EP_TOO_LARGE``, ``DELTA_EP_TOO_SMALL``, ``PEAK_WIDTH_OFF``,
        ``CURRENT_RATIO_OFF``, ``NO_FORWARD_PEAK``, ``NO_REVERSE_PEAK``,
        ``SWITCHING_TOO_CLOSE``; messages give the numbers with units.
    """

    reversible: bool | None
    expected_delta_Ep_V: float | None
    expected_peak_width_V: float
    flags: tuple[Flag, ...] = ()

    def __post_init__(self) -> None:
        if self.reversible not in (True, False, None):
            raise ValueError(f"reversible must be True, False or None, got {self.reversible!r}")
        if self.expected_delta_Ep_V is not None:
            v = float(self.expected_delta_Ep_V)
            if not (math.isfinite(v) and v > 0):
                raise ValueError(f"expected_delta_Ep_V must be positive, got {v}")
            object.__setattr__(self, "expected_delta_Ep_V", v)
        w = float(self.expected_peak_width_V)
        if not (math.isfinite(w) and w > 0):
            raise ValueError(f"expected_peak_width_V must be positive, got {w}")
        object.__setattr__(self, "expected_peak_width_V", w)
        flags = tuple(self.flags)
        if not all(isinstance(f, Flag) for f in flags):
            raise TypeError("flags must be Flag instances")
        object.__setattr__(self, "flags", flags)

    def to_dict(self) -> dict:
        """JSON-ready mapping; missing values are None, flags are dicts."""
        return {
            "reversible": self.reversible,
            "expected_delta_Ep_V": self.expected_delta_Ep_V,
            "expected_peak_width_V": self.expected_peak_width_V,
            "flags": [f.to_dict() for f in self.flags],
        }


def _mV(x: float) -> str:
    return f"{1e3 * x:.1f} mV"


def screen_reversibility(
    peaks: PeakAnalysis,
    *,
    electrons: int,
    temperature_K: float,
    criteria: ReversibilityCriteria = ReversibilityCriteria(),  # noqa: B008 (frozen)
) -> ReversibilityScreen:
    """Compare the peaks of one voltammogram with the Nernstian criteria.

    Each margin of ``criteria`` is applied to the n-scaled quantity and scaled with
    T/298.15 K: the test on ΔEp is ``n·(ΔEp − ΔEp_N) ≤ margin·T/298.15`` (and not below
    by more than the margin either), the width test ``|n·|Ep − Ep/2| − 2.20 RT/F| ≤
    margin·T/298.15``, the ratio test ``|ratio − 1| ≤ margin``. ΔEp_N is
    :func:`nernstian_delta_Ep_V` at |Eλ − E½|, with E½ = (Epa + Epc)/2, or — when the
    reverse peak is missing — E½ = Ep ± 1.109 RT/nF from the forward peak.

    Parameters
    ----------
    peaks : PeakAnalysis
        Output of :func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks`.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.
    criteria : ReversibilityCriteria
        Margins of the tests.

    Returns
    -------
    ReversibilityScreen

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706 (ΔEp table, 2.20 RT/nF, 1.109 RT/nF).
    Nicholson, R. S. Anal. Chem. 38 (1966) 1406 (current ratio).
    """
    _check_n_T(electrons, temperature_K)
    scale = temperature_K / STANDARD_TEMPERATURE_K
    rt_nf = thermal_voltage(temperature_K, electrons)
    rt_f = GAS_CONSTANT * temperature_K / FARADAY
    width_expected = PEAK_WIDTH_THERMAL * rt_nf
    n = electrons
    flags: list[Flag] = []
    failed = False
    missing = False
    E_fwd, E_half_fwd = peaks.forward_peak_V, peaks.forward_half_peak_V
    E_rev = peaks.reverse_peak_V
    towards = -1.0 if peaks.first_sweep == "reduction" else 1.0  # forward peak side of E½

    if E_fwd is None:
        missing = True
        flags.append(
            Flag(
                "NO_FORWARD_PEAK",
                "reversibility not determinable: no forward peak was found (see the peak "
                "analysis flags)",
                "error",
            )
        )
    if E_rev is None:
        missing = True
        flags.append(
            Flag(
                "NO_REVERSE_PEAK",
                "reversibility not determinable from ΔEp or the current ratio: no reverse "
                "peak was found (a chemically irreversible couple, or a switch too close to "
                "the wave)",
                "error",
            )
        )

    E_half = peaks.E_half_V
    if E_half is None and E_fwd is not None:
        E_half = E_fwd - towards * PEAK_OFFSET_THERMAL * rt_nf
    expected_delta = None
    if E_half is not None:
        offset = abs(peaks.switching_potential_V - E_half)
        if n * offset / scale < MIN_TABULATED_OFFSET_V:
            bound = nernstian_delta_Ep_V(
                switching_offset_V=offset, electrons=n, temperature_K=temperature_K
            )
            flags.append(
                Flag(
                    "SWITCHING_TOO_CLOSE",
                    f"the switch lies only {_mV(offset)} past E½ (n·|Eλ − E½| = "
                    f"{_mV(n * offset)} < {_mV(MIN_TABULATED_OFFSET_V * scale)}), too close "
                    "for the Nernstian ΔEp to be tested (the Nernstian value "
                    f"there is at least {_mV(bound)}); switch further past the wave",
                    "warning",
                )
            )
        else:
            expected_delta = nernstian_delta_Ep_V(
                switching_offset_V=offset, electrons=n, temperature_K=temperature_K
            )
            margin = criteria.n_delta_Ep_margin_V * scale
            if peaks.delta_Ep_V is not None:
                excess = n * (peaks.delta_Ep_V - expected_delta)
                if excess > margin:
                    failed = True
                    flags.append(
                        Flag(
                            "DELTA_EP_TOO_LARGE",
                            f"ΔEp = {_mV(peaks.delta_Ep_V)} exceeds the Nernstian "
                            f"{_mV(expected_delta)} (n = {n}, {temperature_K:.2f} K, switch "
                            f"{_mV(offset)} past E½) by {_mV(excess / n)}; allowed "
                            f"{_mV(margin / n)}: slow electron transfer or uncompensated "
                            "resistance",
                        )
                    )
                elif excess < -margin:
                    failed = True
                    flags.append(
                        Flag(
                            "DELTA_EP_TOO_SMALL",
                            f"ΔEp = {_mV(peaks.delta_Ep_V)} is below the Nernstian "
                            f"{_mV(expected_delta)} (n = {n}, {temperature_K:.2f} K) by "
                            f"{_mV(-excess / n)}; allowed {_mV(margin / n)}: check n, or "
                            "adsorption of the couple",
                        )
                    )

    if E_fwd is not None and E_half_fwd is not None:
        width = abs(E_fwd - E_half_fwd)
        deviation = n * width - PEAK_WIDTH_THERMAL * rt_f
        margin = criteria.n_peak_width_margin_V * scale
        if abs(deviation) > margin:
            failed = True
            flags.append(
                Flag(
                    "PEAK_WIDTH_OFF",
                    f"|Ep − Ep/2| of the forward peak is {_mV(width)}, "
                    f"{'more' if deviation > 0 else 'less'} than the Nernstian "
                    f"{_mV(width_expected)} (2.20 RT/nF, n = {n}, {temperature_K:.2f} K) by "
                    f"{_mV(abs(deviation) / n)}; allowed {_mV(margin / n)}",
                )
            )

    if peaks.current_ratio is not None:
        dev = peaks.current_ratio - 1.0
        if abs(dev) > criteria.current_ratio_margin:
            failed = True
            flags.append(
                Flag(
                    "CURRENT_RATIO_OFF",
                    f"reverse/forward peak-current ratio (Nicholson 1966) is "
                    f"{peaks.current_ratio:.3f}, {abs(dev):.3f} from 1; allowed "
                    f"{criteria.current_ratio_margin:.3f}: a following chemical reaction, "
                    "adsorption or slow kinetics",
                )
            )

    reversible: bool | None = False if failed else (None if missing else True)
    return ReversibilityScreen(reversible, expected_delta, width_expected, tuple(flags))
