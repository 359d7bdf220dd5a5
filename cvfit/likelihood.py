"""Profile-likelihood interval of one fitted parameter: the walk out and the crossing.

The interval is the set of values v of one parameter at which the cost with the other
parameters refitted, minus its minimum, stays at or below a threshold (a χ² or an
s²·F quantile). Each fit that needs one (the stepwise constants, log10 k0 of a curve
fit, the constants of the global curve fit) supplies its own refit as a callback; this
module walks outwards from the optimum on each side until the cost rises past the
threshold and locates the crossing.

References
----------
Venzon, D. J.; Moolgavkar, S. H. Appl. Stat. 1988, 37, 87 (profile-likelihood intervals).
Bates, D. M.; Watts, D. G. Nonlinear Regression Analysis and Its Applications; Wiley,
1988, ch. 6 (profile t / likelihood-ratio intervals).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any, NamedTuple

from scipy import optimize

__all__ = ["ProfileSide", "profile_side"]

#: ``rise(v, start) -> (Δcost, state)``: the cost's rise over its minimum with the
#: parameter held at v and the others refitted from *start*, and the refitted state.
Rise = Callable[[float, Any], tuple[float, Any]]


class ProfileSide(NamedTuple):
    """Where the profile crosses the threshold, or, when ``open``, the last value tried
    (the bound or the step limit was reached below the threshold)."""

    limit: float
    open: bool


def profile_side(
    rise: Rise,
    best: float,
    start: Any,
    threshold: float,
    *,
    direction: float,
    step: float,
    bound: float = math.inf,
    grow: float = 2.0,
    max_steps: int = 64,
    crossing: str = "root",
    xtol: float = 1e-4,
    polish: int = 0,
) -> ProfileSide:
    """Walk from *best* in *direction* (±1) until the rise reaches *threshold*.

    Parameters
    ----------
    rise : callable
        See :data:`Rise`; its state is passed on as the start of the next refit.
    best, start : float, any
        The optimum of the parameter and the state there (the first refit's start).
    threshold : float
        The rise that ends the interval.
    direction : float
        −1 for the lower side, +1 for the upper.
    step : float
        The first step (> 0).
    bound : float
        The parameter's bound on this side (a finite value ends the walk as open there).
    grow : float
        Each step is *grow* times the last (> 1); 1 for steps of equal size.
    max_steps : int
        Steps before the side is called open.
    crossing : {"root", "linear", "sqrt"}
        How the crossing is found once bracketed: a root of ``rise − threshold``
        (Brent's method, to *xtol*), or straight-line interpolation of the rise
        (``"linear"``) or of its square root (``"sqrt"``, exact for a quadratic profile)
        between the last two values, improved *polish* times by false position.

    Returns
    -------
    ProfileSide
    """
    inner, inner_rise, state = best, 0.0, start
    offset = step
    for _ in range(max_steps):
        v = best + direction * offset
        if (v - bound) * direction >= 0:
            v = bound
        r, new_state = rise(v, state)
        if r >= threshold:
            where = (inner, inner_rise, state)
            return ProfileSide(
                _crossing(rise, where, (v, r), threshold, crossing, xtol, polish), False
            )
        if v == bound:
            return ProfileSide(v, True)
        inner, inner_rise, state = v, r, new_state
        offset = offset * grow if grow > 1.0 else offset + step
    return ProfileSide(inner, True)


def _crossing(
    rise: Rise,
    inside: tuple[float, float, Any],
    outside: tuple[float, float],
    threshold: float,
    how: str,
    xtol: float,
    polish: int,
) -> float:
    a, ra, state = inside
    b, rb = outside
    if how == "root":
        return optimize.brentq(
            lambda v: rise(v, state)[0] - threshold, min(a, b), max(a, b), xtol=xtol
        )
    f = math.sqrt if how == "sqrt" else float
    level, fa, fb = f(threshold), f(max(ra, 0.0)), f(max(rb, 0.0))
    for k in range(polish + 1):
        x = b if fb == fa else a + (level - fa) * (b - a) / (fb - fa)
        if k == polish:
            return x
        r, _ = rise(x, state)
        if r >= threshold:
            b, fb = x, f(max(r, 0.0))
        else:
            a, fa = x, f(max(r, 0.0))
    return x  # pragma: no cover - the loop returns
