"""Global curve fit of a titration series: every curve at once, E½ tied by the Lingane line.

The E½ of every voltammogram is not a free parameter but follows from the constants,

    E½(c_i) = E½(s) − S·[log10(β_ox/β_red) + (p − q)·log10[L]_i],   S = ln10·RT/nF,

(E½(s) for the ligand-free files). Each file keeps its own closed-form current scale, C_dl
and background (variable projection, :class:`cvfit.fit.curve_model.CurveModel`); the
kinetic files (those the two-step analysis took from the curve fit) keep their own log10
k0 and α, the others are Nernstian. The search is over E½(s), p − q, log10(β_ox/β_red) and
those kinetic parameters, started from the two-step result. The Jacobian is built file by
file: the shared parameters act only through E½ of each file, so a derivative costs one
simulation per file for E½ and one per kinetic parameter.

Intervals: covariance of the Jacobian (scaled by the reduced χ² when above 1), and the χ²
profile of p − q and of log10(β_ox/β_red) (the other parameters refitted; Δχ² = 3.84).
The D term of Lingane's equation is neglected, as in the two-step fit.

References
----------
Lingane, J. J. Chem. Rev. 1941, 29, 1.
Golub, G. H.; Pereyra, V. SIAM J. Numer. Anal. 1973, 10, 413.
Bates, D. M.; Watts, D. G. Nonlinear Regression Analysis and Its Applications; Wiley,
1988, ch. 6.
"""

from __future__ import annotations

import math
import time
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

from cvfit.errors import FitError
from cvfit.quantity import Quantity, chi2_quantile, clean_number
from cvfit.units import FARADAY, GAS_CONSTANT

from .curve_fit import ALPHA_RANGE
from .curve_model import CurveModel

__all__ = ["GlobalFile", "GlobalCurveFit", "fit_global_lingane"]

#: Step of the finite-difference derivatives: E½ in V, log10 k0, α.
_STEP = (1e-6, 1e-5, 1e-5)


@dataclass(frozen=True)
class GlobalFile:
    """One voltammogram of the global fit.

    Attributes
    ----------
    name : str
    ligand_M : float
        Free ligand, mol/L (0 for a reference file).
    model : CurveModel
        The record's model (its R_u fixed).
    resistance_ohm : float
        R_u used for the drop, Ω.
    log10_k0, alpha : float or None
        Start of the kinetic parameters; None for a Nernstian file.
    D_ratio : float
        D_R/D_O of the model (given).
    """

    name: str
    ligand_M: float
    model: CurveModel
    resistance_ohm: float
    log10_k0: float | None
    alpha: float | None
    D_ratio: float = 1.0


@dataclass(frozen=True)
class GlobalCurveFit:
    """Result of the global curve fit.

    Attributes
    ----------
    E_half_free_V, delta_ligands, log10_beta_ratio : Quantity
        E½(s), p − q and log10(β_ox/β_red); the constants' intervals from the χ² profile.
    reduced_chi2 : float
    files : tuple of str
    simulations : int
    fit_time_s : float
    converged : bool
    """

    E_half_free_V: Quantity
    delta_ligands: Quantity
    log10_beta_ratio: Quantity
    reduced_chi2: float
    files: tuple[str, ...]
    simulations: int
    fit_time_s: float
    converged: bool

    def to_dict(self) -> dict[str, object]:
        return {
            "model": "lingane",
            "E_half_free_V": self.E_half_free_V.to_dict(),
            "delta_ligands": self.delta_ligands.to_dict(),
            "log10_beta_ratio": self.log10_beta_ratio.to_dict(),
            "reduced_chi2": clean_number(self.reduced_chi2),
            "files": list(self.files),
            "simulations": self.simulations,
            "converged": self.converged,
        }


def fit_global_lingane(
    files: Sequence[GlobalFile],
    *,
    electrons: int,
    temperature_K: float,
    start: tuple[float, float, float],
) -> GlobalCurveFit:
    """Fit all curves with E½ tied by the Lingane line.

    Parameters
    ----------
    files : sequence of GlobalFile
        At least one reference file (ligand 0) and two ligand concentrations.
    electrons, temperature_K
    start : (float, float, float)
        E½(s) (V), p − q and log10(β_ox/β_red) to start from (the two-step fit).

    Raises
    ------
    FitError
        Too few files.
    """
    t0 = time.perf_counter()
    if not any(f.ligand_M == 0 for f in files) or len({f.ligand_M for f in files}) < 3:
        raise FitError("the global fit needs a ligand-free file and two ligand concentrations")
    S = math.log(10.0) * GAS_CONSTANT * temperature_K / (electrons * FARADAY)
    kinetic = [k for k, f in enumerate(files) if f.log10_k0 is not None]
    slot = {k: 3 + 2 * j for j, k in enumerate(kinetic)}
    x0 = [*start]
    lo = [start[0] - 0.2, start[1] - 3.0, start[2] - 5.0]
    hi = [start[0] + 0.2, start[1] + 3.0, start[2] + 5.0]
    for k in kinetic:
        f = files[k]
        x0 += [f.log10_k0, f.alpha]
        lo += [f.log10_k0 - 3.0, ALPHA_RANGE[0]]
        hi += [f.log10_k0 + 3.0, ALPHA_RANGE[1]]
    x0 = np.clip(np.array(x0, float), np.array(lo) + 1e-9, np.array(hi) - 1e-9)
    logL = np.array([math.log10(f.ligand_M) if f.ligand_M > 0 else 0.0 for f in files])
    has_L = np.array([f.ligand_M > 0 for f in files], float)
    sizes = [int(f.model.data.fit_mask.sum()) for f in files]
    offsets = np.concatenate(([0], np.cumsum(sizes)))

    def file_params(x: np.ndarray, k: int) -> tuple[float, float, float]:
        e_half = x[0] - S * has_L[k] * (x[2] + x[1] * logL[k])
        if k in slot:
            return e_half, float(x[slot[k]]), float(x[slot[k] + 1])
        return e_half, math.inf, 0.5

    def one(k: int, p: tuple[float, float, float]) -> np.ndarray:
        f = files[k]
        return f.model.evaluate(p[0], p[1], p[2], f.resistance_ohm, f.D_ratio).residual

    cache: dict[bytes, np.ndarray] = {}

    def fun(x: np.ndarray) -> np.ndarray:
        key = x.tobytes()
        if key not in cache:
            cache.clear()
            cache[key] = np.concatenate([one(k, file_params(x, k)) for k in range(len(files))])
        return cache[key]

    def jac(x: np.ndarray) -> np.ndarray:
        base = fun(x)
        J = np.zeros((base.size, x.size))
        for k in range(len(files)):
            rows = slice(offsets[k], offsets[k + 1])
            p = file_params(x, k)
            r0 = base[rows]
            dE = (one(k, (p[0] + _STEP[0], p[1], p[2])) - r0) / _STEP[0]
            J[rows, 0] = dE
            J[rows, 1] = dE * (-S * has_L[k] * logL[k])
            J[rows, 2] = dE * (-S * has_L[k])
            if k in slot:
                j = slot[k]
                J[rows, j] = (one(k, (p[0], p[1] + _STEP[1], p[2])) - r0) / _STEP[1]
                J[rows, j + 1] = (one(k, (p[0], p[1], p[2] + _STEP[2])) - r0) / _STEP[2]
        return J

    bounds = (np.array(lo), np.array(hi))
    sol = least_squares(fun, x0, jac=jac, bounds=bounds, x_scale="jac", method="trf")
    x = sol.x
    ssr = float(np.sum(fun(x) ** 2))
    n_par = x.size + 4 * len(files)
    dof = int(offsets[-1]) - n_par
    chi2 = ssr / dof
    inflate = max(1.0, chi2)
    J = jac(x)
    try:
        se = np.sqrt(np.clip(np.diag(np.linalg.inv(J.T @ J)) * inflate, 0.0, None))
    except np.linalg.LinAlgError:
        se = np.full(x.size, math.nan)
    threshold = float(chi2_quantile(0.95, 1))

    def profile(index: int) -> tuple[float, float]:
        """Δχ² = 3.84 on both sides of x[index], the other parameters refitted."""
        free = np.ones(x.size, bool)
        free[index] = False

        def cost_at(value: float, start_x: np.ndarray) -> tuple[float, np.ndarray]:
            xs = start_x.copy()
            xs[index] = value

            def f_sub(z: np.ndarray) -> np.ndarray:
                full = xs.copy()
                full[free] = z
                return fun(full)

            def j_sub(z: np.ndarray) -> np.ndarray:
                full = xs.copy()
                full[free] = z
                return jac(full)[:, free]

            s = least_squares(
                f_sub, xs[free], jac=j_sub, bounds=(bounds[0][free], bounds[1][free]),
                x_scale="jac", method="trf",
            )  # fmt: skip
            out = xs.copy()
            out[free] = s.x
            return float(np.sum(s.fun**2)), out

        ends = []
        for sign in (-1.0, 1.0):
            # Δχ² is quadratic near the optimum: try ±1.96 σ, then correct once
            h = 1.959963984540054 * (se[index] if math.isfinite(se[index]) else 0.01)
            cost, xs = cost_at(x[index] + sign * h, x)
            d = max(cost - ssr, 1e-12) / inflate
            h2 = h * math.sqrt(threshold / d)
            cost2, _ = cost_at(x[index] + sign * h2, xs)
            d2 = max(cost2 - ssr, 1e-12) / inflate
            # secant between the two trials in √Δχ² (linear for a quadratic profile)
            a, b = math.sqrt(d), math.sqrt(d2)
            step = h2 if a == b else h + (math.sqrt(threshold) - a) * (h2 - h) / (b - a)
            ends.append(x[index] + sign * step)
        return ends[0], ends[1]

    def q(k: int, ci: tuple[float, float] | None = None) -> Quantity:
        if ci is None:
            return Quantity.from_t(float(x[k]), float(se[k]), math.inf)
        return Quantity(float(x[k]), float(se[k]), ci, "profile χ²")

    return GlobalCurveFit(
        E_half_free_V=q(0),
        delta_ligands=q(1, profile(1)),
        log10_beta_ratio=q(2, profile(2)),
        reduced_chi2=chi2,
        files=tuple(f.name for f in files),
        simulations=sum(f.model.simulations for f in files),
        fit_time_s=time.perf_counter() - t0,
        converged=sol.status > 0,
    )
