"""Thresholds of the reversibility screen (documented defaults, configurable).

The margins are applied to n-scaled quantities so one setting serves n = 1 and n = 2,
and they are given at 25 °C and scaled with T/298.15 K like the Nernstian values.
The defaults are common practice, not a published standard: a Nernstian couple at
25 °C shows n·ΔEp of 57–61 mV depending on the switching potential (Nicholson & Shain,
Anal. Chem. 36 (1964) 706), ipa/ipc = 1 and n·|Ep − Ep/2| = 56.5 mV.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["ReversibilityCriteria"]


@dataclass(frozen=True)
class ReversibilityCriteria:
    """Margins within which a voltammogram counts as Nernstian.

    Attributes
    ----------
    n_delta_Ep_margin_V : float
        Allowed excess of n·ΔEp over the Nernstian n·ΔEp for the actual switching
        potential, V (default 0.010 V).
    n_peak_width_margin_V : float
        Allowed deviation of n·|Ep − Ep/2| of the forward peak from 2.20 RT/F, V
        (default 0.010 V).
    current_ratio_margin : float
        Allowed |ipa/ipc − 1| (reverse over forward peak current, Nicholson 1966),
        dimensionless (default 0.15).
    """

    n_delta_Ep_margin_V: float = 0.010
    n_peak_width_margin_V: float = 0.010
    current_ratio_margin: float = 0.15

    def __post_init__(self) -> None:
        for name in ("n_delta_Ep_margin_V", "n_peak_width_margin_V", "current_ratio_margin"):
            value = float(getattr(self, name))
            if not (math.isfinite(value) and value > 0):
                raise ValueError(f"{name} must be a positive number, got {value}")
            object.__setattr__(self, name, value)
