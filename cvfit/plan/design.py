"""Choosing the ligand concentrations: the design criterion, robust over the rough
constants, minimised by point exchange over a log grid of candidate concentrations.

Criterion of a design ξ at one guess θ of the constants (σ = 1; σ only scales it):

- ``"D"``: log det of the predicted covariance of the constants of interest, divided by
  their number (Ds-optimality; all constants → D-optimality);
- ``"A"``: log of the mean of their predicted variances.

Robustness: the criterion is averaged over scenarios of θ — the expected values and, for
every constant given a range, its two ends with the others at their expected values (a
star of 2d + 1 points for d ranged constants). The worst scenario is reported as well.

Search: Fedorov-type exchange. The design starts as the log-spaced one; each point in turn
is moved to the candidate (a grid of ≥ 24 per decade and ≥ 3 per point that contains the
log-spaced points, each used at most once, so the concentrations stay distinct) that lowers
the criterion most, until a sweep changes nothing. The criterion never rises, so the
result is never worse than the log-spaced design by the plan's own criterion.

References
----------
Atkinson, A. C.; Donev, A. N. Optimum Experimental Designs; Oxford University Press, 1992
(D-, Ds- and A-optimality; exchange algorithms; from memory).
Chaloner, K.; Verdinelli, I. Stat. Sci. 1995, 10, 273 (averaging the criterion over a
prior on the parameters of a non-linear model; from memory).
Fedorov, V. V. Theory of Optimal Experiments; Academic Press, 1972 (the exchange idea;
from memory).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from cvfit.plan.information import ModelSpec, covariance_from_sums, jacobian_rows, reference_row

__all__ = [
    "scenarios",
    "criterion_values",
    "design_criterion",
    "exchange_design",
    "log_spaced",
    "stretched_design",
    "CANDIDATES_PER_DECADE",
]

#: Candidate concentrations per decade of the ligand range.
CANDIDATES_PER_DECADE = 24
#: Criterion value of a design that cannot determine the constants.
_SINGULAR = 1e300


def scenarios(values: Sequence[float], ranges: Sequence[tuple[float, float]]) -> np.ndarray:
    """The guesses of θ the criterion is averaged over: the centre, and each ranged
    constant at its two ends. Shape (S, k)."""
    centre = np.asarray(values, dtype=float)
    out = [centre]
    for i, (lo, hi) in enumerate(ranges):
        if hi > lo:
            for end in (lo, hi):
                t = centre.copy()
                t[i] = end
                out.append(t)
    return np.array(out)


def log_spaced(lo: float, hi: float, n: int) -> np.ndarray:
    """The habitual design: n concentrations equally spaced in log10 from lo to hi."""
    return np.geomspace(lo, hi, n)


def criterion_values(cov: np.ndarray, interest: Sequence[int], kind: str) -> np.ndarray:
    """Criterion of a stack of covariances of [E½(s), constants…] (σ = 1).

    Parameters
    ----------
    cov : ndarray, shape (..., k + 1, k + 1)
    interest : sequence of int
        Indices of the constants of interest (0-based among the constants).
    kind : {"D", "A"}
    """
    idx = np.asarray(interest, dtype=int) + 1
    sub = cov[..., idx[:, None], idx[None, :]]
    out = np.full(cov.shape[:-2], _SINGULAR)
    finite = np.all(np.isfinite(sub), axis=(-2, -1))
    if kind == "D":
        sign, logdet = np.linalg.slogdet(np.where(finite[..., None, None], sub, np.eye(idx.size)))
        good = finite & (sign > 0)
        out = np.where(good, logdet / idx.size, _SINGULAR)
    elif kind == "A":
        diag = np.diagonal(sub, axis1=-2, axis2=-1)
        mean = np.mean(diag, axis=-1)
        good = finite & (mean > 0)
        out = np.where(good, np.log(np.where(good, mean, 1.0)), _SINGULAR)
    else:
        raise ValueError(f"criterion must be 'D' or 'A', got {kind!r}")
    return out


def _sums(rows: tuple[np.ndarray, np.ndarray], k: int) -> tuple[np.ndarray, np.ndarray]:
    J, Jt = rows
    r = reference_row(k)
    ref = np.outer(r, r)
    return J.T @ Jt + ref, J.T @ J + ref


def design_criterion(
    spec: ModelSpec,
    thetas: np.ndarray,
    total_M: np.ndarray,
    interest: Sequence[int],
    kind: str,
) -> np.ndarray:
    """Criterion of one design at each scenario (shape (S,)), exact free ligand."""
    out = []
    k = thetas.shape[1]
    for theta in thetas:
        A, B = _sums(jacobian_rows(spec, theta, total_M), k)
        out.append(criterion_values(covariance_from_sums(A, B), interest, kind))
    return np.array(out)


def exchange_design(
    spec: ModelSpec,
    thetas: np.ndarray,
    lo: float,
    hi: float,
    n: int,
    interest: Sequence[int],
    kind: str,
    *,
    max_sweeps: int = 30,
) -> np.ndarray:
    """Concentrations (sorted, mol/L) minimising the mean criterion over ``thetas``.

    See the module docstring. The free ligand inside the search comes from the tabulated
    mass balance (:func:`cvfit.plan.information.free_ligand` with ``exact=False``).
    """
    decades = math.log10(hi / lo)
    m = max(25, int(round(CANDIDATES_PER_DECADE * decades)) + 1, 3 * n)
    start = log_spaced(lo, hi, n)
    cand = np.unique(np.concatenate([np.geomspace(lo, hi, m), start]))
    S, k = thetas.shape
    p = k + 1
    # per scenario and candidate: the outer products JᵀJ_total and JᵀJ of its row
    outer_A = np.empty((S, cand.size, p, p))
    outer_B = np.empty((S, cand.size, p, p))
    for s, theta in enumerate(thetas):
        J, Jt = jacobian_rows(spec, theta, cand, exact=False)
        outer_A[s] = J[:, :, None] * Jt[:, None, :]
        outer_B[s] = J[:, :, None] * J[:, None, :]
    bad = ~np.all(np.isfinite(outer_A), axis=(0, 2, 3))
    outer_A[:, bad] = np.nan
    outer_B[:, bad] = np.nan
    r = reference_row(k)
    ref = np.outer(r, r)
    chosen = [int(np.argmin(np.abs(cand - x))) for x in start]
    A = outer_A[:, chosen].sum(axis=1) + ref
    B = outer_B[:, chosen].sum(axis=1) + ref
    current = float(np.mean(criterion_values(covariance_from_sums(A, B), interest, kind)))
    for _ in range(max_sweeps):
        changed = False
        for slot in range(n):
            old = chosen[slot]
            A_try = (A - outer_A[:, old])[:, None] + outer_A  # (S, C, p, p)
            B_try = (B - outer_B[:, old])[:, None] + outer_B
            crit = criterion_values(covariance_from_sums(A_try, B_try), interest, kind)
            mean = np.mean(crit, axis=0)
            taken = np.zeros(cand.size, dtype=bool)
            taken[chosen] = True
            taken[old] = False
            mean = np.where(taken, np.inf, mean)
            best = int(np.argmin(mean))
            if mean[best] < current - 1e-9 * max(1.0, abs(current)):
                chosen[slot] = best
                A = A_try[:, best]
                B = B_try[:, best]
                current = float(mean[best])
                changed = True
        if not changed:
            break
    return np.sort(cand[chosen])


def stretched_design(design: np.ndarray, n: int) -> np.ndarray:
    """A design of n points with the same distribution over log[L] as ``design`` (its
    quantile function interpolated), for asking how many points reach a target."""
    u = np.sort(np.log(np.asarray(design, dtype=float)))
    q = np.interp(np.linspace(0.0, 1.0, n), np.linspace(0.0, 1.0, u.size), u)
    return np.exp(q)
