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
from cvfit.quantity import Quantity, chi2_quantile

__all__ = ["log_k0_interval", "resistance_interval", "runs_test_z", "PROFILE_WHEN_STDERR"]

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
    quadratic = math.isfinite(stderr) and stderr < PROFILE_WHEN_STDERR
    if quadratic and not near_top:
        h = 1.959963984540054 * stderr
        return best - h, best + h, False
    threshold = float(chi2_quantile(level, 1))
    # first step about the covariance half-width (a step far beyond the crossing makes
    # the interpolation crude), then doubling up to the fixed steps
    first = 1.2 * 1.959963984540054 * stderr if quadratic else math.inf

    def rise(lk: float, x: np.ndarray) -> tuple[float, np.ndarray]:
        ssr, x = profile_cost(lk, x)
        return max(ssr - ssr_min, 0.0) / inflate, x

    def walk(largest: float, limit: float) -> ProfileSide:
        direction = 1.0 if largest > 0 else -1.0
        return profile_side(
            rise, best, x_best, threshold, direction=direction,
            step=min(first, abs(largest)), bound=limit, grow=2.0 if quadratic else 1.0,
            max_steps=_MAX_STEPS, crossing="sqrt",
        )  # fmt: skip

    hi, open_upper = walk(_STEP_UP, hi_b)
    lo, _ = walk(-_STEP_DOWN, lo_b)
    return lo, hi, open_upper


def resistance_interval(
    best: float,
    stderr: float,
    ssr_min: float,
    inflate: float,
    profile_cost: Callable[[float, np.ndarray], tuple[float, np.ndarray]],
    x_best: np.ndarray,
    *,
    level: float = 0.95,
) -> Quantity:
    """A fitted R_u with a 95 % interval that never reaches below zero.

    The covariance interval where it stays above zero; else its lower side from the χ²
    profile towards R_u = 0 (the other parameters refitted there): 0 when Δχ² at R_u = 0
    stays below the level's quantile, else where √Δχ² (linear in R_u for a quadratic
    profile) reaches it.
    """
    h = 1.959963984540054 * stderr
    if not math.isfinite(stderr):
        return Quantity(best, stderr, (math.nan, math.nan), "covariance")
    if best - h >= 0.0:
        return Quantity(best, stderr, (best - h, best + h), "covariance")
    threshold = float(chi2_quantile(level, 1))
    if best <= 1e-6 * h:  # at the bound: the profile starts there
        return Quantity(best, stderr, (0.0, best + h), "covariance, bounded at 0")
    ssr0, _ = profile_cost(0.0, x_best)
    d0 = max(ssr0 - ssr_min, 0.0) / inflate
    lo = 0.0 if d0 <= threshold else best * (1.0 - math.sqrt(threshold / d0))
    return Quantity(best, stderr, (lo, best + h), "covariance; lower side from the χ² profile")
