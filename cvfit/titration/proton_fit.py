"""Weighted non-linear least squares of E½ on pH: the pKa of both forms, one candidate at a time.

A candidate has ``n_ox`` protonation steps of the oxidised form and ``n_red`` of the
reduced form; its parameters (:class:`lmfit.Parameters`) are ``E0_V`` (the unprotonated
couple) and ``pKa_ox_1 …``, ``pKa_red_1 …``, each pKa bounded to the measured pH range
widened by :data:`PKA_MARGIN` on both sides (a pKa further out leaves no trace in the data;
one that runs into its bound is reported as not determined). The model is
:func:`cvfit.chemistry.protonation.proton_half_wave_V`; the minimiser is lmfit's
Levenberg–Marquardt (``leastsq``) from several starts, the lowest residual sum winning.

The standard errors come from the Jacobian at the optimum with the scale estimated from
the residuals (s² = RSS/ν); the 95 % intervals of the pKa are profile-likelihood
intervals — the values whose profiled RSS exceeds the minimum by at most s²·F(1, ν) — which
are asymmetric where the data reach only one side of a pKa (the walk and the crossing of
:mod:`cvfit.likelihood`). The number of steps of each form is chosen as for the stepwise
constants (:func:`choose`): the smallest candidate no larger candidate containing it beats
by an extra-sum-of-squares F-test at 1 %.

lmfit is imported only when a pH series is fitted.

References
----------
Newville, M. et al. LMFIT: Non-Linear Least-Squares Minimization and Curve-Fitting for
Python; Zenodo, 2014, doi:10.5281/zenodo.11813.
Venzon, D. J.; Moolgavkar, S. H. Appl. Stat. 1988, 37, 87 (profile-likelihood intervals).
Bates, D. M.; Watts, D. G. Nonlinear Regression Analysis and Its Applications; Wiley:
New York, 1988; §3.10 (extra-sum-of-squares F-test for nested models).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from cvfit.chemistry.protonation import LN10, proton_half_wave_V, protonation_fractions
from cvfit.likelihood import profile_side
from cvfit.quantity import f_quantile, f_upper_tail

if TYPE_CHECKING:  # pragma: no cover
    import lmfit

__all__ = [
    "ProtonData",
    "ProtonCandidate",
    "fit_candidates",
    "choose",
    "profile_interval",
    "PKA_MARGIN",
    "ALPHA",
]

#: pH units beyond the measured range within which a pKa may lie.
PKA_MARGIN = 2.0
#: Level of the F-test that admits one more protonation step.
ALPHA = 0.01
#: Where a new pKa starts, as fractions of the measured pH range.
_START_FRACTIONS = (0.1, 0.37, 0.63, 0.9)


@dataclass(frozen=True)
class ProtonData:
    """The points of one pH series: pH, E½ (V), σ (V, relative weights) and RT/nF (V)."""

    pH: np.ndarray
    E_half_V: np.ndarray
    sigma_V: np.ndarray
    thermal_V: float
    electrons: int
    temperature_K: float

    @property
    def n(self) -> int:
        return int(self.pH.size)

    @property
    def bounds(self) -> tuple[float, float]:
        return float(self.pH.min()) - PKA_MARGIN, float(self.pH.max()) + PKA_MARGIN

    def model(self, E0: float, ox: np.ndarray, red: np.ndarray) -> np.ndarray:
        return proton_half_wave_V(
            E0,
            self.pH,
            pKa_ox=ox,
            pKa_red=red,
            electrons=self.electrons,
            temperature_K=self.temperature_K,
        )

    def jacobian(self, E0: float, ox: np.ndarray, red: np.ndarray) -> np.ndarray:
        """∂E½/∂(E0, pKa_ox_1 …, pKa_red_1 …) per point, weighted by 1/σ."""
        k = self.thermal_V * LN10
        cols = [np.ones(self.n)]
        for pKa, sign in ((ox, -1.0), (red, 1.0)):
            a = protonation_fractions(self.pH, pKa)  # (m + 1, n)
            tail = np.cumsum(a[::-1], axis=0)[::-1]  # Σ_{j >= i} α_j
            cols += [sign * k * tail[i] for i in range(1, len(pKa) + 1)]
        return np.column_stack(cols) / self.sigma_V[:, None]


def names(n_ox: int, n_red: int) -> list[str]:
    """Parameter names of a candidate: E0_V, pKa_ox_1 …, pKa_red_1 …."""
    ox = [f"pKa_ox_{j}" for j in range(1, n_ox + 1)]
    return ["E0_V", *ox, *(f"pKa_red_{j}" for j in range(1, n_red + 1))]


@dataclass(frozen=True)
class ProtonCandidate:
    """Least-squares optimum of one candidate (n_ox, n_red)."""

    n_ox: int
    n_red: int
    values: tuple[float, ...]  # in the order of names(n_ox, n_red)
    rss: float
    dof: int
    covariance: np.ndarray | None  # scaled by RSS/ν; None when singular or ν = 0
    at_bound: tuple[bool, ...]  # per pKa

    @property
    def names(self) -> list[str]:
        return names(self.n_ox, self.n_red)

    @property
    def size(self) -> int:
        return self.n_ox + self.n_red

    @property
    def E0(self) -> float:
        return self.values[0]

    @property
    def pKa_ox(self) -> np.ndarray:
        return np.asarray(self.values[1 : 1 + self.n_ox])

    @property
    def pKa_red(self) -> np.ndarray:
        return np.asarray(self.values[1 + self.n_ox :])

    def contains(self, other: ProtonCandidate) -> bool:
        """Whether *other* is nested in this one (fewer or as many steps of each form)."""
        return other.n_ox <= self.n_ox and other.n_red <= self.n_red and other != self


def _split(
    values: dict[str, float], n_ox: int, n_red: int
) -> tuple[float, np.ndarray, np.ndarray]:
    ox = np.array([values[f"pKa_ox_{j}"] for j in range(1, n_ox + 1)])
    red = np.array([values[f"pKa_red_{j}"] for j in range(1, n_red + 1)])
    return values["E0_V"], ox, red


def _residual(data: ProtonData, n_ox: int, n_red: int):
    def residual(params: lmfit.Parameters) -> np.ndarray:
        E0, ox, red = _split(params.valuesdict(), n_ox, n_red)
        return (data.E_half_V - data.model(E0, ox, red)) / data.sigma_V

    return residual


def _parameters(data: ProtonData, start: dict[str, float], fixed: dict[str, float]):
    import lmfit

    lo, hi = data.bounds
    params = lmfit.Parameters()
    for name, value in start.items():
        if name == "E0_V":
            params.add(name, value=float(value))
            continue
        v = float(fixed.get(name, value))
        v = min(max(v, lo + 1e-6), hi - 1e-6) if name not in fixed else v
        params.add(name, value=v, min=lo, max=hi, vary=name not in fixed)
    return params


def _solve(
    data: ProtonData, n_ox: int, n_red: int, start: dict[str, float], fixed=None
) -> tuple[dict[str, float], float]:
    """lmfit's Levenberg–Marquardt from *start*, with *fixed* parameters held."""
    import lmfit

    fixed = fixed or {}
    params = _parameters(data, start, fixed)
    varying = [k for k, name in enumerate(names(n_ox, n_red)) if name not in fixed]

    def jacobian(p: lmfit.Parameters) -> np.ndarray:
        E0, ox, red = _split(p.valuesdict(), n_ox, n_red)
        return -data.jacobian(E0, ox, red)[:, varying]

    out = lmfit.minimize(
        _residual(data, n_ox, n_red),
        params,
        method="leastsq",
        Dfun=jacobian,
        xtol=1e-12,
        ftol=1e-12,
    )
    values = {k: float(p.value) for k, p in out.params.items()}
    E0, ox, red = _split(values, n_ox, n_red)
    r = (data.E_half_V - data.model(E0, ox, red)) / data.sigma_V
    return values, float(np.sum(r * r))


def _starts(
    data: ProtonData, n_ox: int, n_red: int, parents: list[ProtonCandidate]
) -> list[dict[str, float]]:
    """The parents' optima with one more pKa at several places (each form's pKa sorted
    high to low, the usual order of successive protonations)."""
    lo, hi = float(data.pH.min()), float(data.pH.max())
    places = [lo + f * (hi - lo) for f in _START_FRACTIONS]
    if not parents:
        w = 1.0 / data.sigma_V**2
        return [{"E0_V": float(np.sum(w * data.E_half_V) / np.sum(w))}]
    starts = []
    for parent in parents:
        for q in places:
            ox, red = list(parent.pKa_ox), list(parent.pKa_red)
            (ox if n_ox > parent.n_ox else red).append(q)
            values = [parent.E0, *sorted(ox, reverse=True), *sorted(red, reverse=True)]
            starts.append(dict(zip(names(n_ox, n_red), values, strict=True)))
    return starts


def _covariance(data: ProtonData, cand_values, n_ox, n_red, rss: float, dof: int):
    E0, ox, red = _split(dict(zip(names(n_ox, n_red), cand_values, strict=True)), n_ox, n_red)
    J = data.jacobian(E0, ox, red)
    JTJ = J.T @ J
    if dof < 1 or np.linalg.cond(JTJ) > 1e14:
        return None
    return np.linalg.inv(JTJ) * (rss / dof)


def fit_candidate(
    data: ProtonData, n_ox: int, n_red: int, parents: list[ProtonCandidate]
) -> ProtonCandidate:
    """Best fit of the candidate (n_ox, n_red) over its starts."""
    best: tuple[dict[str, float], float] | None = None
    for start in _starts(data, n_ox, n_red, parents):
        values, rss = _solve(data, n_ox, n_red, start)
        if best is None or rss < best[1] - 1e-12 * max(best[1], 1.0):
            best = (values, rss)
    assert best is not None
    values, rss = best
    ordered = tuple(values[k] for k in names(n_ox, n_red))
    dof = data.n - (1 + n_ox + n_red)
    lo, hi = data.bounds
    tol = 1e-3
    at_bound = tuple(bool(v - lo < tol or hi - v < tol) for v in ordered[1:])
    cov = None if any(at_bound) else _covariance(data, ordered, n_ox, n_red, rss, dof)
    return ProtonCandidate(n_ox, n_red, ordered, rss, dof, cov, at_bound)


def fit_candidates(data: ProtonData, max_protons: int) -> list[ProtonCandidate]:
    """Every candidate with at most *max_protons* steps per form and at least one degree
    of freedom, in order of size."""
    done: dict[tuple[int, int], ProtonCandidate] = {}
    for size in range(0, 2 * max_protons + 1):
        for n_ox in range(max(0, size - max_protons), min(size, max_protons) + 1):
            n_red = size - n_ox
            if data.n - (1 + size) < 1:
                continue
            parents = [done[k] for k in ((n_ox - 1, n_red), (n_ox, n_red - 1)) if k in done]
            if size and not parents:
                continue
            done[(n_ox, n_red)] = fit_candidate(data, n_ox, n_red, parents)
    return list(done.values())


def f_p_value(small: ProtonCandidate, large: ProtonCandidate) -> float:
    """Extra-sum-of-squares F-test p-value of *small* against *large* (nested)."""
    extra = large.size - small.size
    if large.dof < 1 or large.rss <= 0:
        return 0.0 if small.rss > large.rss else 1.0
    F = (max(small.rss - large.rss, 0.0) / extra) / (large.rss / large.dof)
    return float(f_upper_tail(F, extra, large.dof))


def choose(fits: list[ProtonCandidate], *, alpha: float = ALPHA) -> ProtonCandidate:
    """The smallest candidate no larger candidate containing it beats at level *alpha*
    (of two of one size, the better fitting)."""
    for small in sorted(fits, key=lambda f: (f.size, f.rss)):
        larger = [f for f in fits if f.contains(small)]
        if all(f_p_value(small, large) >= alpha for large in larger):
            return small
    return max(fits, key=lambda f: f.size)


def profile_interval(
    data: ProtonData, fit: ProtonCandidate, name: str, *, level: float = 0.95
) -> tuple[float, float]:
    """Profile-likelihood interval of the pKa *name* of *fit* (module docstring).

    A side that reaches the pKa's bound without crossing the threshold is open (NaN).

    References
    ----------
    Venzon, D. J.; Moolgavkar, S. H. Appl. Stat. 1988, 37, 87.
    """
    if fit.dof < 1:
        return (math.nan, math.nan)
    s2 = max(fit.rss / fit.dof, 1e-300)
    crit = float(f_quantile(level, 1, fit.dof)) * s2
    index = fit.names.index(name)
    v0 = fit.values[index]
    se = math.sqrt(fit.covariance[index, index]) if fit.covariance is not None else math.nan
    lo, hi = data.bounds
    best = dict(zip(fit.names, fit.values, strict=True))

    def rise(v: float, start: dict[str, float]) -> tuple[float, dict[str, float]]:
        values, rss = _solve(data, fit.n_ox, fit.n_red, start, fixed={name: v})
        return rss - fit.rss, values

    # the first step goes to where a quadratic profile would cross; √(rise) is nearly
    # straight in v, so its root is found in few refits
    first = se * math.sqrt(crit / s2) if math.isfinite(se) else 0.3
    step = min(max(1.05 * first, 1e-3), 1.0)
    out = []
    for direction, bound in ((-1.0, lo), (1.0, hi)):
        side = profile_side(
            rise, v0, best, crit, direction=direction, step=step, bound=bound, crossing="root"
        )
        out.append(math.nan if side.open else side.limit)
    return (out[0], out[1])
