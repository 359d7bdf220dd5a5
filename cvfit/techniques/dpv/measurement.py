"""What differential-pulse voltammetry found in one file.

A reversible couple's difference-current peak lies at E½ − ΔE/2 (ΔE the signed pulse
amplitude; Parry & Osteryoung 1965), so E½ = E_peak + ΔE/2, refined by the exact
reversible response of the file's staircase (:mod:`cvfit.techniques.step_response`). The
E½ is Nernstian when the peak passes the pulse screen (half-height width and symmetry
against the reversible ones for the amplitude) and unusable, with the reason, when not.

References
----------
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

from cvfit.techniques.pulse_measurement import PulseMeasurement

__all__ = ["DPVMeasurement"]


@dataclass(frozen=True)
class DPVMeasurement(PulseMeasurement):
    """One differential-pulse record measured (see :class:`PulseMeasurement`)."""

    technique: ClassVar[str] = "dpv"
    source: ClassVar[str] = "dpv_peak"
