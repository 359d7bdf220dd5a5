"""What square-wave voltammetry found in one file.

For a reversible couple with equal diffusion coefficients the net-current peak lies at E½
(Osteryoung & O'Dea 1986), up to a fraction of a millivolt that the staircase's step
makes and the exact reversible response of the file's program gives
(:mod:`cvfit.techniques.step_response`). The E½ is Nernstian when the net peak's width
and symmetry, and with the forward and reverse currents their peak potentials and height
ratio, agree with the reversible ones; unusable, with the reason, when not.

References
----------
Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

from cvfit.techniques.pulse_measurement import PulseMeasurement

__all__ = ["SWVMeasurement"]


@dataclass(frozen=True)
class SWVMeasurement(PulseMeasurement):
    """One square-wave record measured (see :class:`PulseMeasurement`)."""

    technique: ClassVar[str] = "swv"
    source: ClassVar[str] = "swv_peak"
