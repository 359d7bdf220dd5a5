"""The stepwise model's parameters as :class:`lmfit.Parameters`, fitted by lmfit's minimiser.

One candidate number of complexes N has the parameters

* ``E_half_free_V`` — E½(s) of the ligand-free couple, free (tied to its measured value
  by the reference observation of :class:`~cvfit.titration.stepwise_least_squares.StepwiseData`);
* ``log10_beta_<form>_1 … _N`` — the fitted form's overall constants, bounded so that
  β_j [L]^j lies between 1e-8 at the largest and 1e10 at the smallest measured [L];
* ``log10_beta_<other form>_j`` — the other form's constants given in the manifest
  (``fixed_log10_beta_ox`` / ``fixed_log10_beta_red``), held with ``vary=False``.

The minimiser is lmfit's ``least_squares`` (trust-region reflective within the bounds) with
the model's analytic Jacobian. lmfit is imported only when a stepwise fit runs: a series
fitted by Lingane's line never loads it.

References
----------
Newville, M. et al. LMFIT: Non-Linear Least-Squares Minimization and Curve-Fitting for
Python; Zenodo, 2014, doi:10.5281/zenodo.11813.
Branch, M. A.; Coleman, T. F.; Li, Y. SIAM J. Sci. Comput. 1999, 21, 1 (trust-region
reflective least squares within bounds).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any, Protocol

import numpy as np

if TYPE_CHECKING:  # pragma: no cover
    import lmfit


class StepwiseData(Protocol):
    """What is needed of :class:`cvfit.titration.stepwise_least_squares.StepwiseData`."""

    @property
    def sign(self) -> float: ...

    @property
    def fixed_log10_beta(self) -> tuple[float, ...]: ...

    def residuals(self, p: np.ndarray) -> np.ndarray: ...

    def jacobian(self, p: np.ndarray) -> np.ndarray: ...


__all__ = ["E_HALF_NAME", "beta_names", "parameters", "values", "minimise"]

E_HALF_NAME = "E_half_free_V"
#: Tolerances of the trust-region search (far below any measurable change of E½).
TOLERANCE = 1e-12
MAX_EVALUATIONS = 2000


def beta_names(data: StepwiseData, N: int) -> list[str]:
    """Names of the fitted constants, ``log10_beta_ox_1`` … (or ``_red_``)."""
    form = "ox" if data.sign > 0 else "red"
    return [f"log10_beta_{form}_{j}" for j in range(1, N + 1)]


def parameters(
    data: StepwiseData, start: np.ndarray, lower: np.ndarray, upper: np.ndarray
) -> lmfit.Parameters:
    """Parameters at *start* ([E½(s), log10 β_1 … β_N]) within (*lower*, *upper*).

    The start is moved 1e-9 inside its bounds (the minimiser needs a strictly feasible
    start); the other form's given constants are added with ``vary=False``.
    """
    import lmfit

    N = start.size - 1
    x0 = np.clip(start, lower + 1e-9, upper - 1e-9)
    x0 = np.where(np.isfinite(x0), x0, start)
    params = lmfit.Parameters()
    params.add(E_HALF_NAME, value=float(x0[0]))
    for name, v, lo, hi in zip(beta_names(data, N), x0[1:], lower[1:], upper[1:], strict=True):
        params.add(name, value=float(v), min=float(lo), max=float(hi))
    other = "red" if data.sign > 0 else "ox"
    for j, b in enumerate(data.fixed_log10_beta, start=1):
        params.add(f"log10_beta_{other}_{j}", value=float(b), vary=False)
    return params


def values(params: lmfit.Parameters, data: StepwiseData, N: int) -> np.ndarray:
    """[E½(s), log10 β_1 … β_N] of the fitted form from *params*."""
    names = [E_HALF_NAME, *beta_names(data, N)]
    return np.array([params[n].value for n in names])


def minimise(data: StepwiseData, params: lmfit.Parameters) -> lmfit.minimizer.MinimizerResult:
    """Weighted least squares of *data* from *params* (lmfit ``least_squares``)."""
    import lmfit

    N = sum(1 for n in params if n.startswith("log10_beta_") and params[n].vary)

    def residual(p: lmfit.Parameters) -> np.ndarray:
        return data.residuals(values(p, data, N))

    def jacobian(p: lmfit.Parameters) -> Any:
        return data.jacobian(values(p, data, N))

    fitter = lmfit.Minimizer(residual, params)
    return fitter.least_squares(
        max_nfev=MAX_EVALUATIONS,
        jac=jacobian,
        x_scale="jac",
        xtol=TOLERANCE,
        ftol=TOLERANCE,
        gtol=TOLERANCE,
    )
