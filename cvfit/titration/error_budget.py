"""Error budget of a fitted constant: within-file noise, solution-to-solution scatter, reference.

A titration point's E½ has two independent errors: the noise of its own voltammogram
(the peak analysis' standard error σᵢ) and an error of its solution that the voltammogram
cannot see — reference-electrode drift, junction potential, a slightly different
concentration — which shows only as scatter of the points about the fitted line. With a
linear estimator ``θ̂ = A y`` (any weights) and ``var(yᵢ) = σᵢ² + s²`` the variance of a
constant splits exactly::

    var(θ̂) = A diag(σ²) Aᵀ  +  s² A Aᵀ
             (within-file)     (between solutions)

and ``s²`` is estimated from the residuals ``r = (I − X A) y`` by the method of moments,
``s² = max(0, (rᵀr − tr(M diag(σ²) Mᵀ)) / tr(M Mᵀ))`` with ``M = I − X A`` (unbiased before
the truncation at zero; for an unweighted line it is ``Σ(rᵢ² − (1 − hᵢᵢ)σᵢ²)/(N − 2)``).
The reference E½(s) is a third, separate part. It is one more solution: the variance of
the ligand-free mean of M files is its own standard error (its file noise, including the
spread of several ligand-free files; never scaled below it, even when the titration points
happen to agree better than their errors predict) plus the solution-to-solution variance
s² the points show, divided by M (:func:`reference_solution_variance`).

References
----------
Searle, S. R.; Casella, G.; McCulloch, C. E. Variance Components; Wiley: New York, 1992,
ch. 4 (moment estimators of variance components).
DerSimonian, R.; Laird, N. Controlled Clinical Trials 7 (1986) 177 (the same estimator for
a weighted mean).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np
from numpy.typing import NDArray

from cvfit.quantity import clean_number

__all__ = [
    "ErrorBudget",
    "extra_scatter_variance",
    "within_file_variance",
    "budget_of",
    "reference_mean",
    "reference_solution_variance",
    "linearised_budgets",
]


def _nonneg(name: str, value: float | None) -> float | None:
    if value is None:
        return None
    v = float(value)
    if not (math.isfinite(v) and v >= 0.0):
        raise ValueError(f"{name} must be >= 0 and finite (or None), got {value!r}")
    return v


@dataclass(frozen=True)
class ErrorBudget:
    """Standard uncertainties of one fitted constant, by source, in the constant's unit.

    Attributes
    ----------
    unit : str
        Unit of every entry (``"V"``, ``"V/decade"``, ``"log10 units"``, ``"ligands"``).
    within_file : float or None
        From the noise inside each voltammogram (None when the files gave no errors).
    between_solutions : float
        From the scatter of the points beyond that noise.
    reference : float
        From E½(s) of the ligand-free files (0 for the slope and p − q).
    total : float
        ``√(within² + between² + reference²)``: the standard error the interval uses.
    """

    unit: str
    within_file: float | None
    between_solutions: float
    reference: float
    total: float

    def __post_init__(self) -> None:
        object.__setattr__(self, "within_file", _nonneg("within_file", self.within_file))
        for name in ("between_solutions", "reference", "total"):
            object.__setattr__(self, name, _nonneg(name, getattr(self, name)))
        parts = (self.within_file or 0.0) ** 2 + self.between_solutions**2 + self.reference**2
        if not math.isclose(math.sqrt(parts), self.total, rel_tol=1e-6, abs_tol=1e-15):
            raise ValueError(f"budget parts {math.sqrt(parts)} do not add up to {self.total}")

    def scaled(self, factor: float, unit: str) -> ErrorBudget:
        """The same budget for ``factor · constant`` (a change of unit)."""
        f = abs(float(factor))
        w = None if self.within_file is None else f * self.within_file
        return ErrorBudget(unit, w, f * self.between_solutions, f * self.reference, f * self.total)

    def to_dict(self) -> dict[str, Any]:
        return {
            "unit": self.unit,
            "within_file": clean_number(self.within_file),
            "between_solutions": clean_number(self.between_solutions),
            "reference": clean_number(self.reference),
            "total": clean_number(self.total),
        }


def budget_of(
    unit: str, fit_variance: float, within_variance: float | None, reference_variance: float
) -> ErrorBudget:
    """Budget of a constant whose fitted variance (without the reference) is *fit_variance*.

    The within-file part is *within_variance* (None: unknown), at most the fitted
    variance; the rest of the fitted variance is the between-solutions part. When the
    points scatter less than their errors predict, the fitted variance is all within-file.
    """
    fit_var = max(float(fit_variance), 0.0)
    within = None if within_variance is None else min(max(float(within_variance), 0.0), fit_var)
    between = fit_var - (within or 0.0)
    total = math.sqrt(fit_var + reference_variance)
    return ErrorBudget(
        unit,
        None if within is None else math.sqrt(within),
        math.sqrt(max(between, 0.0)),
        math.sqrt(max(reference_variance, 0.0)),
        total,
    )


def _estimator(design: NDArray[np.float64], weights: NDArray[np.float64]) -> NDArray[np.float64]:
    """``A`` of the weighted least-squares estimator ``θ̂ = A y`` (rows: parameters)."""
    xtw = design.T * weights
    return np.asarray(np.linalg.solve(xtw @ design, xtw), dtype=np.float64)


def within_file_variance(
    design: NDArray[np.float64], weights: NDArray[np.float64], sigma: NDArray[np.float64]
) -> NDArray[np.float64]:
    """Covariance of the parameters from the per-file noise alone, ``A diag(σ²) Aᵀ``."""
    a = _estimator(design, weights)
    return (a * np.asarray(sigma, dtype=float) ** 2) @ a.T


def extra_scatter_variance(
    design: NDArray[np.float64],
    weights: NDArray[np.float64],
    residuals: NDArray[np.float64],
    sigma: NDArray[np.float64],
    *,
    share: NDArray[np.float64] | None = None,
) -> float:
    """Moment estimate of the solution-to-solution variance s² (module docstring), V².

    Parameters
    ----------
    design : ndarray, shape (N, P)
        Design matrix of the linear fit.
    weights : ndarray, shape (N,)
        The weights the fit used (ones for an unweighted fit).
    residuals : ndarray, shape (N,)
        Observed minus fitted.
    sigma : ndarray, shape (N,)
        Per-point standard errors from the files.
    share : ndarray, shape (N,), optional
        How much of s² each observation carries (default 1 each): a mean of M solutions,
        such as the reference E½(s) of M ligand-free files, carries s²/M. With
        ``var(rᵢ) = σᵢ² + shareᵢ·s²`` the estimate is
        ``(rᵀr − tr(M diag(σ²) Mᵀ)) / tr(M diag(share) Mᵀ)``.
    """
    design = np.asarray(design, dtype=float)
    a = _estimator(design, np.asarray(weights, dtype=float))
    m = np.eye(design.shape[0]) - design @ a
    noise = float(np.sum((m * np.asarray(sigma, dtype=float) ** 2) * m))
    extra = float(np.sum(np.asarray(residuals, dtype=float) ** 2)) - noise
    d = np.ones(design.shape[0]) if share is None else np.asarray(share, dtype=float)
    return max(extra / float(np.sum((m * d) * m)), 0.0)


def reference_mean(
    values: NDArray[np.float64], stderrs: NDArray[np.float64]
) -> tuple[float, float | None, float | None]:
    """E½(s) from one or more ligand-free files: weighted mean, its standard error, spread.

    With M >= 2 files whose standard errors are all known, the files scatter by
    ``σⱼ² + s_ref²``, s_ref² the moment estimate ``max(0, SD² − mean σⱼ²)`` of their extra
    spread (before and after a series, say); they are weighted by ``1/(σⱼ² + s_ref²)``.
    Otherwise (some σⱼ unknown) the mean is unweighted. The standard error is the larger of
    the weighted mean's ``1/√Σw`` and ``SD/√M`` from their scatter, so it includes their
    spread whichever is larger.

    Returns
    -------
    mean, stderr, spread : float, float or None, float or None
        The mean (V), its standard error (None with one file of unknown error) and the
        sample standard deviation of the files (None with one file), V.

    References
    ----------
    DerSimonian, R.; Laird, N. Controlled Clinical Trials 7 (1986) 177.
    """
    e = np.asarray(values, dtype=float)
    s = np.asarray(stderrs, dtype=float)
    m = e.size
    if m == 0:
        raise ValueError("reference_mean needs at least one value")
    spread = float(e.std(ddof=1)) if m > 1 else None
    known = bool(np.all(np.isfinite(s) & (s > 0)))
    if known:
        extra = 0.0 if spread is None else max(spread**2 - float(np.mean(s**2)), 0.0)
        w = 1.0 / (s**2 + extra)
        mean = float(np.sum(w * e) / np.sum(w))
        from_errors = 1.0 / math.sqrt(float(np.sum(w)))
    else:
        mean = float(e.mean())
        from_errors = math.nan
    from_scatter = math.nan if spread is None else spread / math.sqrt(m)
    candidates = [x for x in (from_errors, from_scatter) if math.isfinite(x)]
    return mean, (max(candidates) if candidates else None), spread


def reference_solution_variance(
    own_stderr_V: float, between_variance_V2: float, count: int = 1
) -> float:
    """Variance of E½(s) as one more solution: ``σ_s² + s²/M``, V².

    Parameters
    ----------
    own_stderr_V : float
        Standard error of the ligand-free mean from its own files (their noise and, with
        several files, their spread: :func:`reference_mean`). Used as given, never scaled.
    between_variance_V2 : float
        Solution-to-solution variance s² the titration points show beyond their own noise
        (:func:`extra_scatter_variance`), V².
    count : int
        Number M of ligand-free files averaged: each carries its own solution's offset,
        so their mean carries s²/M.

    Notes
    -----
    Before, a weighted fit multiplied σ_s² by the points' reduced χ²: a series whose points
    agreed well (χ² ≈ 0.2) counted a ligand-free file 2.7σ off at 0.06 mV instead of its
    own 0.14 mV, and log10(β_ox/β_red) landed 6.2 standard errors from the truth.
    """
    own = float(own_stderr_V)
    between = float(between_variance_V2)
    if not (math.isfinite(own) and own >= 0.0 and math.isfinite(between) and between >= 0.0):
        raise ValueError(f"need finite σ_s >= 0 and s² >= 0, got {own_stderr_V}, {between}")
    return own * own + between / max(int(count), 1)


def linearised_budgets(
    jacobian: NDArray[np.float64],
    n_points: int,
    scale: float,
    weighted: bool,
    unit: str,
    *,
    reference_scale: float | None = None,
) -> list[ErrorBudget]:
    """Budgets of the parameters of a weighted non-linear fit, from its Jacobian.

    *jacobian* is that of the weighted residuals (rows: the *n_points* titration points,
    then the reference observation; columns: parameters), so ``C = (JᵀJ)⁻¹``.
    Linearised, parameter k is ``Σ A_ki y_i`` with ``A = C Jᵀ`` and each weighted
    observation of unit variance: the points give the within-file part ``Σ_points A_ki²``
    and the reference row ``A_k,ref²``. The points' share is multiplied by ``scale`` =
    RSS/ν, whose excess over 1 is the between-solutions part (unweighted, ``weighted``
    false, all of it is counted as between solutions). The reference row's share is
    multiplied by *reference_scale*: ``var(E½(s))/σ_row²`` with σ_row the error its row
    was weighted by — E½(s) as one more solution (:func:`reference_solution_variance`),
    never scaled with the points; ``None`` gives it ``scale`` as well. Returned for every
    parameter, in *unit*; the totals are ``√(scale·P_kk + reference_scale·R_kk)``.
    """
    J = np.asarray(jacobian, dtype=float)
    C = np.linalg.inv(J.T @ J)
    A = C @ J.T
    points = np.sum(A[:, :n_points] ** 2, axis=1)
    ref = np.sum(A[:, n_points:] ** 2, axis=1)
    ref_scale = scale if reference_scale is None else float(reference_scale)
    out = []
    for k in range(J.shape[1]):
        fit_var = scale * points[k]
        within = points[k] if weighted else None
        out.append(budget_of(unit, fit_var, within, ref_scale * ref[k]))
    return out
