"""Predicted covariance of the fitted constants for a planned set of ligand concentrations.

The observations are the E½ of every planned solution plus the ligand-free reference
E½(s), all with the same per-file standard error σ. The parameters are E½(s) and the
constants the fit reports: (log10 β_ox/β_red, p − q) for the Lingane line, log10 β_1 … β_N
of the fitted form for the stepwise model. Rows of the weighted Jacobian come from the
project's own model functions: :class:`cvfit.titration.stepwise_least_squares.StepwiseData`
(the stepwise fit's model and Jacobian) and the line of :mod:`cvfit.titration.lingane`.

Without bound ligand the covariance is the inverse Fisher information σ²(JᵀJ)⁻¹. With
``metal_total_M`` both fits use the free ligand [L](θ) from the mass balance with the
fitted constants, iterated to a fixed point: the estimate θ̂ minimises the residuals at
[L](θ̂) held fixed. Linearising that fixed point gives the sandwich
σ² A⁻¹(JᵀJ)A⁻ᵀ with A = JᵀJ_tot, J at fixed [L] and J_tot including d[L]/dθ.

References
----------
Atkinson, A. C.; Donev, A. N. Optimum Experimental Designs; Oxford University Press, 1992
(the Fisher information of a non-linear model at a guessed parameter value; from memory).
Seber, G. A. F.; Wild, C. J. Nonlinear Regression; Wiley, 1989 (the linearised covariance
of a least-squares estimate; from memory).
Bjerrum, J. Metal Ammine Formation in Aqueous Solution; Haase: Copenhagen, 1941 (mass
balance of the bound ligand).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cvfit.chemistry.complexation import log_leden_F0
from cvfit.chemistry.speciation import free_ligand_M, mean_ligand_number, species_fractions
from cvfit.titration.stepwise_least_squares import StepwiseData
from cvfit.units import nernst_slope_V_per_decade, thermal_voltage

__all__ = ["ModelSpec", "free_ligand", "jacobian_rows", "covariance_from_sums"]

LN10 = math.log(10.0)
#: Points of the free-ligand table (ln c against ln [L]) used while optimising.
_TABLE_POINTS = 4000


@dataclass(frozen=True)
class ModelSpec:
    """What the information needs of a plan: the model and the solution conditions.

    The metal is taken to be in the oxidised form in the bulk (reduction first), so the
    mass balance uses the oxidised form's constants: the fitted ones when the oxidised
    form's constants are determined, else the known ones.
    """

    model: str
    electrons: int
    temperature_K: float
    metal_total_M: float | None = None
    fitted_state: str | None = None
    fixed_log10_beta: tuple[float, ...] = ()


def _bulk_betas(spec: ModelSpec, theta: np.ndarray) -> tuple[float, ...]:
    if spec.fitted_state == "ox":
        return tuple(float(x) for x in theta)
    return tuple(spec.fixed_log10_beta) if spec.fitted_state == "red" else ()


def _lingane_bound(theta: np.ndarray) -> float:
    """Ligands bound per metal in the Lingane pipeline: p − q, at least 0."""
    return max(float(theta[1]), 0.0)


def free_ligand(
    spec: ModelSpec, theta: np.ndarray, total_M: np.ndarray, *, exact: bool = True
) -> np.ndarray:
    """Free ligand at each total concentration (the total itself without metal_total_M).

    Lingane: [L] = c_L − (p − q)·c_M (NaN where nothing is left). Stepwise: the mass
    balance c_L = [L] + c_M·n̄([L]) with :func:`cvfit.chemistry.speciation.free_ligand_M`
    (``exact``), or by interpolating c_L([L]) tabulated with
    :func:`cvfit.chemistry.speciation.mean_ligand_number` (monotone, relative error
    ~1e-6; used inside the optimiser).
    """
    c = np.asarray(total_M, dtype=float)
    M = spec.metal_total_M
    if M is None:
        return c.copy()
    if spec.model == "lingane":
        L = c - _lingane_bound(theta) * M
        return np.where(L > 0, L, np.nan)
    betas = _bulk_betas(spec, theta)
    if not betas:
        return c.copy()
    if exact:
        return np.array([free_ligand_M(float(x), M, betas) for x in c.ravel()]).reshape(c.shape)
    lo = math.log(float(np.min(c))) - 30.0
    lnL = np.linspace(lo, math.log(float(np.max(c))), _TABLE_POINTS)
    L = np.exp(lnL)
    ln_c = np.log(L + M * mean_ligand_number(L, betas))
    return np.exp(np.interp(np.log(c), ln_c, lnL))


def jacobian_rows(
    spec: ModelSpec, theta: np.ndarray, total_M: np.ndarray, *, exact: bool = True
) -> tuple[np.ndarray, np.ndarray]:
    """Weighted residual Jacobian rows (σ = 1) of the planned points.

    Returns
    -------
    J, J_total : ndarray, shape (n, k + 1)
        Derivatives of each point's residual with respect to [E½(s), constants…] at fixed
        free ligand, and including the free ligand's dependence on the constants (equal
        without ``metal_total_M``). Rows are NaN where no free ligand is left.
    """
    theta = np.asarray(theta, dtype=float)
    c = np.asarray(total_M, dtype=float)
    L = free_ligand(spec, theta, c, exact=exact)
    M = spec.metal_total_M
    if spec.model == "lingane":
        S = nernst_slope_V_per_decade(spec.temperature_K, spec.electrons)
        J = np.column_stack([-np.ones_like(c), np.full_like(c, S), S * np.log10(L)])
        Jt = J.copy()
        if M is not None and theta[1] > 0:
            Jt[:, 2] -= S * theta[1] * M / (L * LN10)
        return J, Jt
    k = thermal_voltage(spec.temperature_K, spec.electrons)
    sign = 1.0 if spec.fitted_state == "ox" else -1.0
    fixed = tuple(spec.fixed_log10_beta)
    ok = np.isfinite(L) & (L > 0)
    Ls = np.where(ok, L, 1.0)
    data = StepwiseData(
        Ls, np.zeros_like(Ls), np.ones_like(Ls), 0.0, 1.0, k, sign, log_leden_F0(Ls, fixed)
    )
    J = data.jacobian(np.concatenate([[0.0], theta]))[:-1]
    Jt = J.copy()
    betas = _bulk_betas(spec, theta)
    if M is not None and spec.fitted_state == "ox" and betas:
        a = species_fractions(Ls, theta)  # (N + 1, n)
        j = np.arange(a.shape[0])[:, None]
        nbar = np.sum(j * a, axis=0)
        var = np.sum(j * j * a, axis=0) - nbar**2
        dlnL = -M * LN10 * a[1:] * (j[1:] - nbar) / (Ls + M * var)  # (N, n)
        nbar_other = mean_ligand_number(Ls, fixed) if fixed else 0.0
        dm_dlnL = -sign * k * (nbar - nbar_other)
        # residual = (E − m)/σ: its total derivative subtracts dm/dlnL · dlnL/dθ
        Jt[:, 1:] -= (dm_dlnL * dlnL).T
    J[~ok] = np.nan
    Jt[~ok] = np.nan
    return J, Jt


def reference_row(n_constants: int) -> np.ndarray:
    """Residual derivative of the ligand-free reference observation (σ = 1)."""
    row = np.zeros(n_constants + 1)
    row[0] = -1.0
    return row


def covariance_from_sums(A: np.ndarray, B: np.ndarray) -> np.ndarray:
    """Sandwich A⁻¹BA⁻ᵀ for a stack of (p, p) matrices; NaN where A is singular.

    Parameters
    ----------
    A, B : ndarray, shape (..., p, p)
        Σ JᵀJ_total and Σ JᵀJ over the observations (reference included).
    """
    A = np.asarray(A, dtype=float)
    B = np.asarray(B, dtype=float)
    out = np.full(A.shape, np.nan)
    good = np.all(np.isfinite(A), axis=(-2, -1)) & np.all(np.isfinite(B), axis=(-2, -1))
    if not np.any(good):
        return out
    Ag, Bg = A[good], B[good]
    cond = np.linalg.cond(Ag)
    fine = cond < 1e13
    if np.any(fine):
        Ainv = np.linalg.inv(Ag[fine])
        sub = Ainv @ Bg[fine] @ np.swapaxes(Ainv, -1, -2)
        tmp = out[good]
        tmp[fine] = sub
        out[good] = tmp
    return out


def constants_covariance(
    spec: ModelSpec,
    theta: np.ndarray,
    total_M: np.ndarray,
    sigma_V: float,
    *,
    exact: bool = True,
    references: int = 1,
) -> np.ndarray:
    """Predicted covariance of the constants (k × k) for one design and one θ, in their
    units (log10 for β, plain for p − q); NaN when the design cannot determine them.
    ``exact=False`` takes the free ligand from the table (see :func:`free_ligand`);
    ``references`` ligand-free solutions are measured (each one more observation of
    E½(s))."""
    J, Jt = jacobian_rows(spec, theta, total_M, exact=exact)
    r = reference_row(len(theta))
    A = J.T @ Jt + references * np.outer(r, r)
    B = J.T @ J + references * np.outer(r, r)
    cov = covariance_from_sums(A, B)
    return float(sigma_V) ** 2 * cov[1:, 1:]


__all__ += ["reference_row", "constants_covariance"]
