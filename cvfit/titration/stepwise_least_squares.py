"""Weighted non-linear least squares of E½ on stepwise overall constants, one N at a time.

The observation is the (current-corrected) half-wave potential itself,

    E½_i = E½(s) − s·(RT/nF)·[ln F0(L_i; β) − ln F0_other(L_i)],

with s = +1 when the constants fitted belong to the oxidised form (the other form's
F0_other given, 1 when it is not complexed) and s = −1 for the reduced form. E½(s) is a
parameter tied to its measured value by one more observation (weight 1/σ_ref²). The
β_j are fitted as log10 β_j within bounds (β_j [L]^j between 1e-8 and 1e10 over the
measured range), so positivity holds by construction and an undetermined constant runs
into its bound instead of going negative. Intervals come from the profile of the
weighted residual sum of squares with the scale estimated from the residuals (an
F(1, ν) threshold), which gives the asymmetric intervals these correlated constants have.

E½(s) is one more solution: its variance is its own error plus the between-solution
variance, known rather than scaled with the points (:func:`variance_parts`). Each
parameter's variance is then the points' part, estimated on ν degrees of freedom, plus the
reference's, known; the profile threshold of each parameter adds the two expanded parts in
quadrature, as the Lingane fit's intercept does (:func:`cvfit.quantity.combined_interval`).

References
----------
DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
Leden, I. Z. Phys. Chem. A 1941, 188, 160.
Grabarić, B. S. et al. Anal. Chim. Acta 1998, 363, 261 (direct fit of the measured
quantity rather than graphical extrapolation).
Venzon, D. J.; Moolgavkar, S. H. Appl. Stat. 1988, 37, 87 (profile-likelihood intervals).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy import optimize

from cvfit.chemistry.complexation import log_leden_F0
from cvfit.chemistry.speciation import species_fractions
from cvfit.likelihood import profile_side
from cvfit.quantity import chi2_quantile, f_quantile
from cvfit.titration import stepwise_parameters as lm

__all__ = [
    "StepwiseData",
    "CandidateFit",
    "VarianceParts",
    "fit_candidate",
    "variance_parts",
    "profile_interval",
]

LN10 = math.log(10.0)
#: β_j [L]^j at the largest / smallest measured [L] that bound log10 β_j.
MIN_TERM_AT_TOP = 1e-8
MAX_TERM_AT_BOTTOM = 1e10


@dataclass(frozen=True)
class StepwiseData:
    """Arrays of one fit: free ligand (mol/L), E½ (V), σ (V), reference and model sign."""

    ligand_M: np.ndarray
    E_half_V: np.ndarray
    sigma_V: np.ndarray
    reference_V: float
    reference_sigma_V: float
    thermal_V: float  # RT/nF
    sign: float  # +1: fitted constants are the oxidised form's; -1: the reduced form's
    ln_F0_other: np.ndarray
    #: The other form's given log10 β_j (ln_F0_other is their ln F0 at ligand_M).
    fixed_log10_beta: tuple[float, ...] = ()

    @property
    def n_obs(self) -> int:
        return int(self.ligand_M.size) + 1

    def bounds(self, N: int) -> tuple[np.ndarray, np.ndarray]:
        top = math.log10(float(self.ligand_M.max()))
        bottom = math.log10(float(self.ligand_M.min()))
        j = np.arange(1, N + 1)
        lo = math.log10(MIN_TERM_AT_TOP) - j * top
        hi = math.log10(MAX_TERM_AT_BOTTOM) - j * bottom
        return np.concatenate([[-np.inf], lo]), np.concatenate([[np.inf], hi])

    def model(self, p: np.ndarray) -> np.ndarray:
        lnF0 = log_leden_F0(self.ligand_M, p[1:])
        return p[0] - self.sign * self.thermal_V * (lnF0 - self.ln_F0_other)

    def residuals(self, p: np.ndarray) -> np.ndarray:
        r = (self.E_half_V - self.model(p)) / self.sigma_V
        return np.concatenate([r, [(self.reference_V - p[0]) / self.reference_sigma_V]])

    def jacobian(self, p: np.ndarray) -> np.ndarray:
        a = species_fractions(self.ligand_M, p[1:])[1:]  # (N, n)
        J = np.empty((self.n_obs, p.size))
        J[:-1, 0] = -1.0 / self.sigma_V
        J[:-1, 1:] = (self.sign * self.thermal_V * LN10 * a / self.sigma_V).T
        J[-1, :] = 0.0
        J[-1, 0] = -1.0 / self.reference_sigma_V
        return J


@dataclass(frozen=True)
class CandidateFit:
    """Least-squares optimum for one number of complexes N."""

    N: int
    params: np.ndarray  # [E½(s), log10 β_1 … β_N]
    rss: float  # weighted residual sum of squares
    dof: int
    covariance: np.ndarray | None  # scaled by rss/dof; None when singular or dof = 0
    at_bound: tuple[bool, ...]  # per log10 β_j
    #: The optimum as lmfit.Parameters (None where the fit did not run through lmfit).
    lmfit_params: Any = field(default=None, compare=False, repr=False)

    @property
    def scale(self) -> float:
        return self.rss / self.dof if self.dof > 0 else math.nan


def _solve(data: StepwiseData, p0: np.ndarray, lo: np.ndarray, hi: np.ndarray, fixed=None):
    """least_squares with optional (index, value) held fixed; returns (params, rss)."""
    if fixed is None:
        free = np.arange(p0.size)
    else:
        free = np.array([k for k in range(p0.size) if k != fixed[0]])
    full = p0.copy()
    if fixed is not None:
        full[fixed[0]] = fixed[1]

    def expand(q: np.ndarray) -> np.ndarray:
        out = full.copy()
        out[free] = q
        return out

    x0 = np.clip(full[free], lo[free] + 1e-9, hi[free] - 1e-9)
    x0 = np.where(np.isfinite(x0), x0, full[free])

    def residuals(q: np.ndarray) -> np.ndarray:
        return data.residuals(expand(q))

    def jacobian(q: np.ndarray) -> np.ndarray:
        return data.jacobian(expand(q))[:, free]

    sol = optimize.least_squares(
        residuals,
        x0,
        jac=jacobian,
        bounds=(lo[free], hi[free]),
        method="trf",
        x_scale="jac",
        xtol=1e-12,
        ftol=1e-12,
        gtol=1e-12,
        max_nfev=2000,
    )
    p = expand(sol.x)
    return p, float(np.sum(data.residuals(p) ** 2))


def _starts(data: StepwiseData, N: int, previous: np.ndarray | None) -> list[np.ndarray]:
    """Starting points: non-negative polynomial fit of F0, and the N − 1 optimum extended."""
    lo, hi = data.bounds(N)
    L = data.ligand_M
    ln_F0 = data.sign * (data.reference_V - data.E_half_V) / data.thermal_V + data.ln_F0_other
    F0 = np.exp(np.clip(ln_F0, -50, 300))
    w = 1.0 / np.maximum(F0, 1e-300)  # relative errors of F0 are ~constant
    A = np.column_stack([L**j for j in range(1, N + 1)]) * w[:, None]
    col = np.maximum(np.linalg.norm(A, axis=0), 1e-300)
    coef, _ = optimize.nnls(A / col, (F0 - 1.0) * w)
    coef = coef / col
    mid = 0.5 * (lo[1:] + hi[1:])
    nn = np.where(
        coef > 0, np.log10(np.where(coef > 0, coef, 1.0)), mid - 0.25 * (hi[1:] - lo[1:])
    )
    starts = [np.concatenate([[data.reference_V], nn])]
    if previous is not None:
        for frac in (0.25, 0.6):
            new = lo[N] + frac * (hi[N] - lo[N])
            starts.append(np.concatenate([previous, [new]]))
    return [np.clip(s, lo + 1e-6, hi - 1e-6) for s in starts]


def fit_candidate(data: StepwiseData, N: int, previous: np.ndarray | None = None) -> CandidateFit:
    """Best fit with N complexes by lmfit (several starts; the lowest residual sum wins)."""
    lo, hi = data.bounds(N)
    best: tuple[np.ndarray, float, Any] | None = None
    for p0 in _starts(data, N, previous):
        result = lm.minimise(data, lm.parameters(data, p0, lo, hi))
        p = lm.values(result.params, data, N)
        rss = float(np.sum(data.residuals(p) ** 2))
        if best is None or rss < best[1] - 1e-12:
            best = (p, rss, result.params)
    assert best is not None  # _starts gives at least one start
    p, rss, params = best
    dof = data.n_obs - (N + 1)
    tol = 1e-4 * (hi[1:] - lo[1:])
    at_bound = tuple(bool(x) for x in ((p[1:] - lo[1:] < tol) | (hi[1:] - p[1:] < tol)))
    cov = None
    if dof > 0 and not any(at_bound):
        J = data.jacobian(p)
        JTJ = J.T @ J
        if np.linalg.cond(JTJ) < 1e14:
            cov = np.linalg.inv(JTJ) * (rss / dof)
    return CandidateFit(N, p, rss, dof, cov, at_bound, params)


@dataclass(frozen=True)
class VarianceParts:
    """Each parameter's variance split by source, linearised at the optimum.

    With ``C = (JᵀJ)⁻¹`` and ``A = C Jᵀ`` (weighted rows: the points, then the reference),
    ``points = scale·Σ_points A_ki²`` (estimated from the residuals, ν dof),
    ``reference = (var(E½(s))/σ_ref²)·A_k,ref²`` (known) and ``unscaled = C_kk``, the
    curvature of the profile: its rise is about ``(v − v̂)²/C_kk``.
    """

    points: np.ndarray
    reference: np.ndarray
    unscaled: np.ndarray
    covariance: np.ndarray  # the sum of both parts' covariances


def variance_parts(
    data: StepwiseData, fit: CandidateFit, reference_variance_V2: float
) -> VarianceParts | None:
    """:class:`VarianceParts` of *fit* with E½(s) of variance *reference_variance_V2*.

    ``None`` where the fit has no covariance (a constant on its bound, no dof, singular).
    """
    if fit.covariance is None:
        return None
    J = data.jacobian(fit.params)
    C = np.linalg.inv(J.T @ J)
    A = C @ J.T
    a_pts, a_ref = A[:, :-1], A[:, -1]
    ref_scale = float(reference_variance_V2) / data.reference_sigma_V**2
    cov = fit.scale * (a_pts @ a_pts.T) + ref_scale * np.outer(a_ref, a_ref)
    return VarianceParts(
        fit.scale * np.sum(a_pts**2, axis=1), ref_scale * a_ref**2, np.diag(C).copy(), cov
    )


def _threshold(
    data: StepwiseData,
    fit: CandidateFit,
    index: int,
    level: float,
    reference_variance_V2: float | None,
) -> float:
    """The profile's rise that ends the interval of parameter *index*.

    Without a reference variance: ``s²·F(1, ν)``, s² = RSS/ν. With it: the points' part
    at F(1, ν) = t² and the known reference part at χ²(1) = z², ``(t²·V_points +
    z²·V_ref)/C_kk``: in the linear limit the half-width is ``√(t²V_points + z²V_ref)``.
    Without a covariance, the larger of the two scales for the whole (conservative).
    """
    s2 = fit.rss / fit.dof
    if s2 <= 0:
        s2 = 1e-30
    t2 = float(f_quantile(level, 1, fit.dof))
    if reference_variance_V2 is None:
        return t2 * s2
    parts = variance_parts(data, fit, reference_variance_V2)
    if parts is None:
        return t2 * max(s2, reference_variance_V2 / data.reference_sigma_V**2)
    known = float(chi2_quantile(level, 1)) * parts.reference[index]
    return (t2 * parts.points[index] + known) / parts.unscaled[index]


def profile_interval(
    data: StepwiseData,
    fit: CandidateFit,
    index: int,
    *,
    level: float = 0.95,
    sides: str = "both",
    reference_variance_V2: float | None = None,
) -> tuple[float, float]:
    """Profile-likelihood interval of parameter ``index`` (1 … N for log10 β_j).

    The set of values whose profiled residual sum of squares exceeds the minimum by at
    most a threshold: ``s²·F(1, ν; level)``, s² = RSS/ν; or, with
    *reference_variance_V2* (the variance of E½(s) as one more solution), the points'
    and the reference's expanded parts in quadrature (:func:`_threshold`). A side that
    reaches the parameter's bound without crossing the threshold is open and returned as
    NaN; ``sides="upper"`` skips the lower limit (returned as NaN).

    References
    ----------
    Venzon, D. J.; Moolgavkar, S. H. Appl. Stat. 1988, 37, 87.
    JCGM 100:2008 (GUM), annex G (expanded uncertainties in quadrature).
    """
    if fit.dof < 1:
        return (math.nan, math.nan)
    lo, hi = data.bounds(fit.N)
    crit = _threshold(data, fit, index, level, reference_variance_V2)
    v0 = float(fit.params[index])
    se = math.sqrt(fit.covariance[index, index]) if fit.covariance is not None else 0.5
    step0 = min(max(se, 0.02), 2.0)

    def rise(v: float, start: np.ndarray) -> tuple[float, np.ndarray]:
        p, rss = _solve(data, start, lo, hi, fixed=(index, v))
        return rss - fit.rss, p

    out = []
    for direction, bound in ((-1.0, lo[index]), (1.0, hi[index])):
        if sides == "upper" and direction < 0:
            out.append(math.nan)
            continue
        side = profile_side(
            rise, v0, fit.params.copy(), crit, direction=direction, step=step0, bound=bound
        )
        out.append(math.nan if side.open else side.limit)
    return (out[0], out[1])
