"""Interval of log10 k0 of a curve fit (covariance or χ² profile) and the runs test.

Near the reversible limit the curve hardly changes with k0, so the covariance interval of
log10 k0 is wide and symmetric where the truth is one-sided: the χ² profile (the other
parameters refitted at each fixed k0) then gives the interval, and when χ² never rises by
the 95 % quantile towards large k0 the upper side is open — the data say only "k0 above".

References
----------
Bates, D. M.; Watts, D. G. Nonlinear Regression Analysis and Its Applications; Wiley,
1988, ch. 6 (profile t / likelihood-ratio intervals).
Wald, A.; Wolfowitz, J. Ann. Math. Stat. 1940, 11, 147 (runs test).
"""

from __future__ import annotations

import math
from collections.abc import Callable

import numpy as np

from cvfit.likelihood import ProfileSide, profile_side
from cvfit.quantity import chi2_quantile

__all__ = ["log_k0_interval", "runs_test_z", "PROFILE_WHEN_STDERR"]

#: Standard error of log10 k0 above which the covariance interval is replaced by the
#: profile (common practice: beyond ~0.15 decades the curvature of χ² is far from
#: quadratic over the interval).
PROFILE_WHEN_STDERR = 0.15
#: Profile steps in log10 k0 (up, down) and the most steps each way.
_STEP_UP, _STEP_DOWN, _MAX_STEPS = 0.25, 0.1, 16


def runs_test_z(residual: np.ndarray) -> float:
    """Wald–Wolfowitz z of the sign sequence of *residual* (N(0, 1) for white residuals).

    Few long runs (negative z) mean a systematic misfit. Zeros are dropped; NaN when one
    sign is missing.
    """
    s = np.sign(np.asarray(residual, dtype=float))
    s = s[s != 0]
    n1 = int(np.sum(s > 0))
    n2 = int(np.sum(s < 0))
    n = n1 + n2
    if n1 == 0 or n2 == 0:
        return math.nan
    runs = 1 + int(np.sum(s[1:] != s[:-1]))
    mean = 2.0 * n1 * n2 / n + 1.0
    var = 2.0 * n1 * n2 * (2.0 * n1 * n2 - n) / (n * n * (n - 1.0))
    return (runs - mean) / math.sqrt(var) if var > 0 else math.nan


def log_k0_interval(
    best: float,
    stderr: float,
    ssr_min: float,
    inflate: float,
    profile_cost: Callable[[float, np.ndarray], tuple[float, np.ndarray]],
    x_best: np.ndarray,
    *,
    bounds: tuple[float, float],
    level: float = 0.95,
) -> tuple[float, float, bool]:
    """95 % interval (lo, hi) of log10 k0 and whether the upper side is open.

    Parameters
    ----------
    best, stderr : float
        Optimum and covariance standard error of log10 k0.
    ssr_min : float
        Σ(residual/σ)² at the optimum.
    inflate : float
        max(1, reduced χ²): the profile's Δχ² is divided by it, as the covariance is
        multiplied.
    profile_cost : callable
        ``profile_cost(log10_k0, x_start) -> (ssr, x)``: the other parameters refitted.
    x_best : ndarray
        All parameters at the optimum (the profile's first start).
    bounds : (float, float)
        The search range of log10 k0; reaching its upper end below the threshold means an
        open upper side.
    """
    lo_b, hi_b = bounds
    near_top = best > hi_b - 1.0
    if math.isfinite(stderr) and stderr < PROFILE_WHEN_STDERR and not near_top:
        h = 1.959963984540054 * stderr
        return best - h, best + h, False
    threshold = float(chi2_quantile(level, 1))

    def rise(lk: float, x: np.ndarray) -> tuple[float, np.ndarray]:
        ssr, x = profile_cost(lk, x)
        return max(ssr - ssr_min, 0.0) / inflate, x

    def walk(step: float, limit: float) -> ProfileSide:
        direction = 1.0 if step > 0 else -1.0
        return profile_side(
            rise, best, x_best, threshold, direction=direction, step=abs(step), bound=limit,
            grow=1.0, max_steps=_MAX_STEPS, crossing="linear",
        )  # fmt: skip

    hi, open_upper = walk(_STEP_UP, hi_b)
    lo, _ = walk(-_STEP_DOWN, lo_b)
    return lo, hi, open_upper
