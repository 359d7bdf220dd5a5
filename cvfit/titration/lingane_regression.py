"""Regression arithmetic behind the Lingane fit (pure functions on arrays, no flags).

The straight line, the one-parameter refit at a fixed slope and the quadratic used by
the curvature test are linear least squares, done in closed form: they need no iteration.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from cvfit.quantity import chi2_quantile, combined_interval, f_upper_tail

__all__ = [
    "LineFit",
    "fit_line",
    "fit_fixed_slope",
    "curvature_p_value",
    "combined_interval",
    "weights_credible",
]

#: Residual rms below which a line counts as exact (far below any measurable E½ noise);
#: guards the curvature F-test against ratios of rounding errors on noise-free data.
EXACT_RMS_V = 1e-9


@dataclass(frozen=True)
class LineFit:
    """Weighted least-squares line ``y = intercept + slope·x``.

    Attributes
    ----------
    slope, intercept : float
        Best-fit parameters.
    covariance : ndarray, shape (2, 2)
        Unscaled covariance of (slope, intercept), ``(XᵀWX)⁻¹`` with ``W = diag(1/σ²)``
        (σ = 1 for an unweighted fit).
    residuals : ndarray
        ``y − fitted``, in the unit of ``y``.
    chi_square : float
        ``Σ (residual/σ)²``.
    dof : int
        ``N − 2``.
    """

    slope: float
    intercept: float
    covariance: NDArray[np.float64]
    residuals: NDArray[np.float64]
    chi_square: float
    dof: int

    @property
    def reduced_chi_square(self) -> float:
        return self.chi_square / self.dof


def fit_line(
    x: NDArray[np.float64], y: NDArray[np.float64], sigma: NDArray[np.float64] | None = None
) -> LineFit:
    """Weighted least-squares straight line, in closed form.

    Parameters
    ----------
    x, y : ndarray
        Abscissa and ordinate, at least three points and two distinct ``x``.
    sigma : ndarray, optional
        Standard deviation of each ``y``; weights ``1/σ²``. ``None`` → unit weights.

    Returns
    -------
    LineFit
        With the *unscaled* covariance ``(XᵀWX)⁻¹``; the caller decides how to scale it.

    Raises
    ------
    ValueError
        A residual is not finite (NaN or infinite data).

    References
    ----------
    Draper & Smith, Applied Regression Analysis, 3rd ed., Wiley (1998), sections 1.2
    and 9.2 (the straight line and weighted least squares).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    inv_sigma = np.ones_like(y) if sigma is None else 1.0 / np.asarray(sigma, dtype=float)
    w = inv_sigma**2
    sw = np.sum(w)
    xm = np.sum(w * x) / sw
    ym = np.sum(w * y) / sw
    sxx = np.sum(w * (x - xm) ** 2)
    slope = float(np.sum(w * (x - xm) * (y - ym)) / sxx)
    intercept = float(ym - slope * xm)
    residuals = y - (intercept + slope * x)
    if not np.all(np.isfinite(residuals * inv_sigma)):
        raise ValueError("the line fit met a NaN or infinite residual")
    cov = np.array([[1.0 / sxx, -xm / sxx], [-xm / sxx, 1.0 / sw + xm**2 / sxx]])
    chi_square = float(np.sum((residuals * inv_sigma) ** 2))
    return LineFit(slope, intercept, cov, residuals, chi_square, int(x.size - 2))


def fit_fixed_slope(
    x: NDArray[np.float64],
    y: NDArray[np.float64],
    slope: float,
    sigma: NDArray[np.float64] | None = None,
) -> tuple[float, float, float]:
    """Intercept of ``y = intercept + slope·x`` with the slope held fixed.

    Returns
    -------
    intercept, unscaled_variance, chi_square : float
        ``Σwᵢ(yᵢ − slope·xᵢ)/Σwᵢ``, ``1/Σwᵢ`` and ``Σwᵢ rᵢ²`` (dof = N − 1).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    w = np.ones_like(y) if sigma is None else 1.0 / np.asarray(sigma, dtype=float) ** 2
    z = y - slope * x
    sw = float(np.sum(w))
    intercept = float(np.sum(w * z) / sw)
    chi_square = float(np.sum(w * (z - intercept) ** 2))
    return intercept, 1.0 / sw, chi_square


def curvature_p_value(
    x: NDArray[np.float64],
    y: NDArray[np.float64],
    line: LineFit,
    sigma: NDArray[np.float64] | None = None,
) -> float | None:
    """Extra-sum-of-squares F-test of a quadratic term added to the line.

    ``F = (χ²_line − χ²_quad) / (χ²_quad / (N − 3))`` on (1, N − 3) degrees of freedom;
    the p-value is the upper tail. ``None`` when N < 4 or fewer than three distinct ``x``.
    The ratio does not depend on a common scale of σ, so it is valid whether or not the
    per-point errors are right in absolute terms.

    References
    ----------
    Draper & Smith, Applied Regression Analysis, 3rd ed., Wiley (1998), section 6.1
    (extra sum of squares principle).
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=float)
    n = x.size
    if n < 4 or np.unique(x).size < 3:
        return None
    if math.sqrt(float(np.mean(line.residuals**2))) < EXACT_RMS_V:
        return 1.0
    inv_sigma = np.ones_like(y) if sigma is None else 1.0 / np.asarray(sigma, dtype=float)
    u = (x - x.mean()) / max(float(np.ptp(x)), 1e-300)
    design = np.column_stack([np.ones_like(u), u, u**2]) * inv_sigma[:, None]
    coef, *_ = np.linalg.lstsq(design, y * inv_sigma, rcond=None)
    chi_quad = float(np.sum((y * inv_sigma - design @ coef) ** 2))
    dof_quad = n - 3
    if chi_quad <= 0.0:
        return 0.0
    f_value = max(line.chi_square - chi_quad, 0.0) / (chi_quad / dof_quad)
    return float(f_upper_tail(f_value, 1, dof_quad))


def weights_credible(reduced_chi_square: float, dof: int, *, max_ratio: float = 4.0) -> bool:
    """Whether per-point standard errors describe the scatter well enough to weight by.

    Credible when the reduced χ² of the weighted line is at most
    ``max(max_ratio, χ²₀.₉₉(ν)/ν)``: the scatter is no more than about twice what the
    stated errors predict, or within what chance gives at the 1 % level on ν dof. When the
    scatter is much larger, something other than each file's noise dominates (ligand
    concentration errors, reference drift) and its size is unrelated to the per-file
    errors, so weighting by them would mislead. (Rule of thumb; common practice.)
    """
    if dof < 1 or not math.isfinite(reduced_chi_square):
        return False
    limit = max(max_ratio, chi2_quantile(0.99, dof) / dof)
    return reduced_chi_square <= limit
