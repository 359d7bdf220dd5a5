"""Van 't Hoff analysis of several titrations at different temperatures.

For the overall reaction of the two complexed forms, ln(β_ox/β_red) = −ΔH/(RT) + ΔS/R,
so log10(β_ox/β_red) against 1/T is a line of slope −ΔH/(R ln 10) and intercept
ΔS/(R ln 10); ΔH = ΔH_ox − ΔH_red and ΔS = ΔS_ox − ΔS_red are the differences of the
complexation enthalpies and entropies of the two oxidation states, taken as constant over
the range (ΔCp = 0). The line is fitted weighted by each titration's standard error with
the scale from the residuals (Student-t intervals on N − 2 degrees of freedom).

References
----------
van 't Hoff, J. H. Études de dynamique chimique; Muller: Amsterdam, 1884 (the relation).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from cvfit.formatting import format_pm
from cvfit.quantity import Quantity
from cvfit.units import GAS_CONSTANT

__all__ = ["VantHoff", "fit_van_t_hoff", "MIN_TEMPERATURES"]

#: Fewest titrations (distinct temperatures) for a line with an interval.
MIN_TEMPERATURES = 3
LN10 = math.log(10.0)


@dataclass(frozen=True)
class VantHoff:
    """ΔH (J/mol) and ΔS (J mol⁻¹ K⁻¹) of log10(β_ox/β_red) against 1/T."""

    enthalpy: Quantity
    entropy: Quantity
    temperature_K: tuple[float, ...]
    log10_ratio: tuple[float, ...]
    dof: int

    def lines(self) -> list[str]:
        h, s = self.enthalpy, self.entropy
        T = self.temperature_K
        return [
            f"Van 't Hoff, log10(β_ox/β_red) of {len(T)} titrations at {min(T):.1f}–"
            f"{max(T):.1f} K against 1/T ({self.dof} degrees of freedom):",
            f"  ΔH = {format_pm(h.value, h.stderr, scale=1e-3, unit='kJ/mol')}   95 % CI "
            f"[{1e-3 * h.ci95[0]:.2f}, {1e-3 * h.ci95[1]:.2f}] kJ/mol",
            f"  ΔS = {format_pm(s.value, s.stderr, unit='J/(mol K)')}   95 % CI "
            f"[{s.ci95[0]:.1f}, {s.ci95[1]:.1f}] J/(mol K)",
            "  (differences ox − red of the complexation enthalpy and entropy; ΔCp = 0)",
        ]


def fit_van_t_hoff(
    temperature_K: Sequence[float], log10_ratio: Sequence[float], stderr: Sequence[float]
) -> VantHoff | None:
    """The van 't Hoff line of log10(β_ox/β_red) against 1/T (module docstring); None with
    fewer than :data:`MIN_TEMPERATURES` distinct temperatures.

    References
    ----------
    van 't Hoff, J. H. Études de dynamique chimique; Muller, 1884.
    """
    T = np.asarray(temperature_K, dtype=float)
    y = np.asarray(log10_ratio, dtype=float)
    s = np.asarray(stderr, dtype=float)
    if np.unique(T).size < MIN_TEMPERATURES:
        return None
    w = 1.0 / s**2 if np.all(np.isfinite(s)) and np.all(s > 0) else np.ones_like(T)
    x = 1.0 / T
    xm = float(np.sum(w * x) / np.sum(w))
    X = np.column_stack([np.ones_like(x), x - xm])
    sw = np.sqrt(w)
    coef, *_ = np.linalg.lstsq(X * sw[:, None], y * sw, rcond=None)
    r = (y - X @ coef) * sw
    dof = T.size - 2
    cov = np.linalg.inv((X * w[:, None]).T @ X) * (float(r @ r) / dof)
    k = GAS_CONSTANT * LN10
    slope_se = math.sqrt(cov[1, 1])
    # intercept at 1/T = 0: a − b·x̄, uncorrelated a and b about the weighted mean
    a0, a0_se = coef[0] - coef[1] * xm, math.sqrt(cov[0, 0] + xm**2 * cov[1, 1])
    return VantHoff(
        Quantity.from_t(-k * coef[1], k * slope_se, dof),
        Quantity.from_t(k * a0, k * a0_se, dof),
        tuple(float(t) for t in T),
        tuple(float(v) for v in y),
        dof,
    )
