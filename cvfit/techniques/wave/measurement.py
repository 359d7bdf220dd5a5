"""What a steady-state or sampled-current wave gave in one file, and the E½ it offers.

E½ is the fitted half-wave potential (:mod:`cvfit.techniques.wave.fit`). It is Nernstian
when the log-plot slope agrees with 2.303 RT/nF and Tomeš's E¼ − E¾ with 2 ln 3 · RT/nF,
each within ``SLOPE_MARGIN`` (relative) beyond twice its standard error, and unusable,
with the reason, when not: a slow electron transfer draws the wave out.

References
----------
Heyrovský, J.; Ilkovič, D. Collect. Czech. Chem. Commun. 1935, 7, 198.
Tomeš, J. Collect. Czech. Chem. Commun. 1937, 9, 12.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any, ClassVar, Literal

from cvfit.flags import Flag
from cvfit.formatting import format_value
from cvfit.quantity import clean_number
from cvfit.techniques.base import EstimateKind, HalfWaveEstimate, StandardMeasurement
from cvfit.techniques.wave.fit import WaveFit
from cvfit.units import thermal_voltage

__all__ = ["WaveMeasurement", "SLOPE_MARGIN", "screen_wave"]

#: Relative difference of the log-plot slope (and of E¼ − E¾) from its reversible value
#: a Nernstian wave may show beyond twice its standard error. Set from simulations of
#: quasi-reversible waves at a rotating disc (tests/test_pulse_techniques.py), where a
#: slow transfer moves E½ by some 0.8 mV per 1 % of extra slope: kept tight.
SLOPE_MARGIN = 0.02


def screen_wave(fit: WaveFit, nf: float) -> tuple[bool, list[Flag]]:
    """The Nernstian verdict of a fitted wave and the findings."""
    ln10 = math.log(10.0)
    rev_slope, rev_q = ln10 / nf, 2.0 * math.log(3.0) / nf
    problems = []
    rel = fit.log_slope_V / rev_slope - 1.0
    if abs(rel) > SLOPE_MARGIN + 2.0 * fit.log_slope_stderr_V / rev_slope:
        problems.append(
            f"log-plot slope {1e3 * fit.log_slope_V:.1f} ± {1e3 * fit.log_slope_stderr_V:.1f} "
            f"mV/decade against the reversible {1e3 * rev_slope:.1f}"
        )
    q, q_sd = fit.quartile_difference_V, fit.quartile_stderr_V
    if q is not None and abs(q / rev_q - 1.0) > SLOPE_MARGIN + 2.0 * (q_sd or 0.0) / rev_q:
        problems.append(f"E¼ − E¾ {1e3 * q:.1f} mV against Tomeš's {1e3 * rev_q:.1f}")
    if not problems:
        return True, []
    return False, [
        Flag(
            "WAVE_SLOPE_NOT_NERNSTIAN",
            "; ".join(problems) + ": the wave is drawn out (a slow electron transfer), or n "
            "is not what [series] says",
        )
    ]


@dataclass(frozen=True)
class WaveMeasurement:
    """One wave measured.

    Attributes
    ----------
    fit : WaveFit or None
        The fitted wave (None: none could be fitted, see *why*).
    reversible_ : bool or None
        The verdict of :func:`screen_wave`.
    why : str
        Why the E½ is not Nernstian (empty when it is).
    electrons : int
    temperature_K : float
    bulk_form_ : {"ox", "red"}
        ``[series] bulk_form``, else the form whose plateau carries no current.
    rotation_rate_rpm : float or None
        The disc's rotation rate from the manifest.
    levich_exponent : float or None
        d ln i_l / d ln ω of the solution's files at several rotation rates (0.5 when the
        limiting current follows Levich), set by the series study.
    flags : tuple of Flag
    """

    fit: WaveFit | None
    reversible_: bool | None
    why: str
    electrons: int
    temperature_K: float
    bulk_form_: Literal["ox", "red"]
    rotation_rate_rpm: float | None = None
    levich_exponent: float | None = None
    flags: tuple[Flag, ...] = ()

    technique: ClassVar[str] = "wave"

    @property
    def standard(self) -> StandardMeasurement | None:
        return None

    @property
    def reversible(self) -> bool | None:
        return self.reversible_

    @property
    def bulk_form(self) -> Literal["ox", "red"]:
        return self.bulk_form_

    def figure_marks(
        self,
    ) -> tuple[list[tuple[tuple[float, ...], tuple[float, ...]]], list[tuple[float, ...]]]:
        """The point of the fitted wave at E½ as (E½, i, baseline under it), V and A;
        nothing when no wave was fitted."""
        f = self.fit
        if f is None:
            return [], []
        b0, b1 = f.baseline
        under = b0 + b1 * (f.E_half_V - f.mean_V)
        return [], [(f.E_half_V, under + f.limiting_A / 2, under)]

    @property
    def diffusion_current_A(self) -> float | None:
        """The limiting current of a reduction of the bulk oxidised form, A."""
        if self.fit is None or self.bulk_form_ != "ox":
            return None
        return abs(self.fit.limiting_A)

    def half_wave_estimate(self) -> HalfWaveEstimate:
        f = self.fit
        if f is None:
            return HalfWaveEstimate(None, None, "wave_fit", "unusable", why=self.why)
        kind: EstimateKind = "nernstian" if self.reversible_ is True else "unusable"
        return HalfWaveEstimate(f.E_half_V, f.E_half_stderr_V, "wave_fit", kind, why=self.why)

    def to_dict(self) -> dict[str, Any]:
        f = self.fit
        ln10, nf = math.log(10.0), 1.0 / thermal_voltage(self.temperature_K, self.electrons)
        out: dict[str, Any] = {
            "limiting_current_A": None if f is None else abs(f.limiting_A),
            "limiting_current_stderr_A": None if f is None else f.limiting_stderr_A,
            "log_slope_V": None if f is None else f.log_slope_V,
            "log_slope_stderr_V": None if f is None else f.log_slope_stderr_V,
            "expected_log_slope_V": ln10 / nf,
            "quartile_difference_V": None if f is None else f.quartile_difference_V,
            "expected_quartile_difference_V": 2.0 * math.log(3.0) / nf,
            "rotation_rate_rpm": self.rotation_rate_rpm,
            "levich_exponent": self.levich_exponent,
            "noise_A": None if f is None else f.noise_A,
            "bulk_form": self.bulk_form_,
            "reversible": self.reversible_,
        }
        return {k: clean_number(v) if isinstance(v, float) else v for k, v in out.items()}

    def table_cells(self) -> dict[str, object]:
        d = self.to_dict()
        return {k: v for k, v in d.items() if k not in ("reversible", "bulk_form")}

    def summary_cells(self) -> dict[str, str]:
        f = self.fit
        return {
            "slope/mV": format_value(None if f is None else f.log_slope_V, scale=1e3),
            "E¼−E¾/mV": format_value(None if f is None else f.quartile_difference_V, scale=1e3),
        }
