"""What a pulse technique (DPV, SWV) found in one file, and the E½ it offers.

:class:`PulseMeasurement` holds the peak, the reversible reference of the file's program,
the screen's verdict and the findings (:mod:`cvfit.techniques.pulse_analysis`). Its E½ is
the fitted peak potential less the reversible offset of the program (E½ = E_peak + ΔE/2
for DPV in Parry & Osteryoung's limit; the net peak for SWV, Osteryoung & O'Dea); it is
``"nernstian"`` when the file passed the pulse screen and ``"unusable"`` with the reason
when it did not — a quasi-reversible pulse record is flagged and never silently used.

References
----------
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, ClassVar, Literal

from cvfit.flags import Flag
from cvfit.formatting import format_value
from cvfit.quantity import clean_number
from cvfit.techniques.base import HalfWaveEstimate, StandardMeasurement
from cvfit.techniques.pulse_analysis import PulseScreen

__all__ = ["PulseMeasurement", "PULSE_REPORT_COLUMNS", "PULSE_HIDDEN_KEYS"]

#: The per-file HTML table's pulse columns: (header, results.json key, scale, decimals).
PULSE_REPORT_COLUMNS: tuple[tuple[str, str, float, int], ...] = (
    ("E peak / mV", "peak_potential_V", 1e3, 1),
    ("W½ / mV", "peak_width_V", 1e3, 1),
    ("reversible W½ / mV", "expected_peak_width_V", 1e3, 1),
)
#: Pulse keys the HTML table leaves out (kept in results.json and the CSV table).
PULSE_HIDDEN_KEYS = frozenset(
    {
        "peak_potential_stderr_V",
        "peak_height_stderr_A",
        "peak_width_stderr_V",
        "expected_peak_asymmetry",
        "reversible_offset_V",
        "bulk_form",
        "noise_A",
        "forward_peak_V",
        "reverse_peak_V",
        "component_ratio",
        "expected_forward_peak_V",
        "expected_reverse_peak_V",
        "expected_component_ratio",
    }
)


@dataclass(frozen=True)
class PulseMeasurement:
    """One pulse record measured (a DPV or SWV file).

    Attributes
    ----------
    screen : PulseScreen
        Peak, reversible reference, E½, verdict and the screen's findings.
    bulk_form_ : {"ox", "red"}
        The form taken to be in the bulk (``[series] bulk_form``, else the one the scan
        converts: ox for a scan towards negative potentials).
    flags : tuple of Flag
        The screen's findings and those about the settings.
    """

    screen: PulseScreen
    bulk_form_: Literal["ox", "red"]
    flags: tuple[Flag, ...] = ()

    technique: ClassVar[str] = "pulse"
    #: results.json ``E_half_source`` of this technique.
    source: ClassVar[str] = "pulse_peak"

    @property
    def standard(self) -> StandardMeasurement | None:
        return None

    @property
    def reversible(self) -> bool | None:
        return self.screen.reversible

    @property
    def bulk_form(self) -> Literal["ox", "red"]:
        return self.bulk_form_

    @property
    def diffusion_current_A(self) -> float | None:
        """The peak height of a reduction of the bulk oxidised form (∝ C√D, as a CV peak)."""
        p = self.screen.peak
        if p is None or self.bulk_form_ != "ox" or p.height_A >= 0:
            return None
        return abs(p.height_A)

    def half_wave_estimate(self) -> HalfWaveEstimate:
        s = self.screen
        if s.E_half_V is None:
            return HalfWaveEstimate(None, None, self.source, "unusable", why=s.why or "no peak")
        if s.reversible is True:
            return HalfWaveEstimate(s.E_half_V, s.E_half_stderr_V, self.source, "nernstian")
        return HalfWaveEstimate(s.E_half_V, s.E_half_stderr_V, self.source, "unusable", why=s.why)

    def figure_marks(
        self,
    ) -> tuple[list[tuple[tuple[float, ...], tuple[float, ...]]], list[tuple[float, ...]]]:
        """The fitted peak's baseline over its window and the peak as (E, i, baseline
        under it), V and A; nothing when no peak was fitted."""
        p = self.screen.peak
        if p is None:
            return [], []
        b0, b1 = p.baseline
        ends = p.window_V
        level = [b0 + b1 * (E - p.mean_V) for E in ends]
        under = b0 + b1 * (p.E_peak_V - p.mean_V)
        return [(ends, tuple(level))], [(p.E_peak_V, under + p.height_A, under)]

    def to_dict(self) -> dict[str, Any]:
        """The technique's fields of the results.json file record."""
        s, p, ref, comp = self.screen, self.screen.peak, self.screen.reference, None
        comp = s.components
        out: dict[str, Any] = {
            "peak_potential_V": None if p is None else p.E_peak_V,
            "peak_potential_stderr_V": None if p is None else p.E_peak_stderr_V,
            "peak_height_A": None if p is None else p.height_A,
            "peak_height_stderr_A": None if p is None else p.height_stderr_A,
            "peak_width_V": None if p is None else p.width_V,
            "peak_width_stderr_V": None if p is None else p.width_stderr_V,
            "expected_peak_width_V": None if ref is None else ref.width_V,
            "peak_asymmetry": None if p is None else p.asymmetry,
            "expected_peak_asymmetry": None if ref is None else ref.asymmetry,
            "expected_peak_height_A": s.expected_height_A,
            "reversible_offset_V": None if ref is None else ref.offset_V,
            "noise_A": None if p is None else p.noise_A,
            "bulk_form": self.bulk_form_,
            "reversible": s.reversible,
        }
        if comp is not None:
            out.update(
                forward_peak_V=comp.forward_V,
                reverse_peak_V=comp.reverse_V,
                component_ratio=comp.ratio,
                expected_forward_peak_V=comp.expected_forward_V,
                expected_reverse_peak_V=comp.expected_reverse_V,
                expected_component_ratio=comp.expected_ratio,
            )
        return {k: clean_number(v) if isinstance(v, float) else v for k, v in out.items()}

    def table_cells(self) -> dict[str, object]:
        """The technique's columns of the per-file CSV table."""
        d = self.to_dict()
        return {k: v for k, v in d.items() if k not in ("reversible", "bulk_form")}

    def summary_cells(self) -> dict[str, str]:
        """The terminal table's columns: the peak's width and the reversible width."""
        p, ref = self.screen.peak, self.screen.reference
        return {
            "W½/mV": format_value(None if p is None else p.width_V, scale=1e3),
            "rev.": format_value(None if ref is None else ref.width_V, scale=1e3),
        }
