"""Global curve fit of a titration series: every curve at once, E½ tied by the titration model.

The E½ of every voltammogram is not a free parameter but follows from the constants through
a :class:`Tie`. The Lingane tie (:func:`lingane_tie`) is

    E½(c_i) = E½(s) − S·[log10(β_ox/β_red) + (p − q)·log10[L]_i],   S = ln10·RT/nF,

(E½(s) for the ligand-free files); the DeFord–Hume tie of the stepwise model is in
:mod:`cvfit.techniques.cv.curve.global_stepwise`. Each file keeps its own closed-form current
scale,
C_dl and background (variable projection, :class:`cvfit.techniques.cv.curve.model.CurveModel`); the
kinetic files (those the two-step analysis took from the curve fit) keep their own log10 k0
and α, the others are Nernstian; an R_u the per-file fit estimated (not given) is a
parameter again, so its uncertainty reaches the constants and a shared α. The search is
over the tie's parameters and those per-file parameters, started from the two-step
result. The Jacobian is built file by file: the shared parameters act only through E½ of
each file, so a derivative costs one simulation per file for E½ and one per per-file
parameter.

Sharing (``share``): ``"alpha"`` — one α for all kinetic files (its column collects each
file's derivative); ``"charging"`` — one double-layer capacitance for all files. C_dl is
linear: held at the shared value, each file solves its scale and background in closed form,
and the residual is exactly linear in C_dl with derivative −(the weighted charging column
with its projection on the file's other linear terms removed), so the shared C_dl is a
parameter of the search with an analytic Jacobian column.

Intervals: covariance of the Jacobian (scaled by the reduced χ² when above 1), and the χ²
profile of the tie's constants (the other parameters refitted; Δχ² = 3.84). The D term of
Lingane's equation is neglected, as in the two-step fit.

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
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import partial
from typing import cast

import numpy as np
from scipy.optimize import least_squares

from cvfit.errors import FitError
from cvfit.likelihood import profile_side
from cvfit.quantity import Quantity, chi2_quantile, clean_number
from cvfit.techniques.cv.curve.fit import ALPHA_RANGE
from cvfit.techniques.cv.curve.model import CurveModel
from cvfit.units import FARADAY, GAS_CONSTANT

__all__ = [
    "GlobalFile",
    "GlobalCurveFit",
    "Tie",
    "SHARED_NAMES",
    "fit_global",
    "fit_global_lingane",
    "lingane_tie",
]

#: Step of the finite-difference derivatives: E½ in V, log10 k0, α, R_u in Ω.
_STEP = (1e-6, 1e-5, 1e-5, 1e-2)
#: Largest ohmic drop a fitted R_u may give at the record's largest current, V (as the
#: per-file fit).
_MAX_DROP_V = 0.1
#: What ``[fit] global_shared`` may name.
SHARED_NAMES = ("alpha", "charging")


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
    fit_resistance : bool
        R_u is a parameter of the global search (started at *resistance_ohm*): the
        per-file fit estimated it and the manifest does not give it.
    """

    name: str
    ligand_M: float
    model: CurveModel
    resistance_ohm: float
    log10_k0: float | None
    alpha: float | None
    D_ratio: float = 1.0
    fit_resistance: bool = False


@dataclass(frozen=True)
class Tie:
    """How the series' constants set the E½ of every file.

    Attributes
    ----------
    model : {"lingane", "stepwise"}
    names : tuple of str
        Names of the tie's parameters (the first is E½(s), V).
    start, lower, upper : ndarray
        Start (the two-step result) and bounds.
    e_half : callable
        ``e_half(p) -> ndarray``: E½ of every file, V.
    gradient : callable
        ``gradient(p) -> ndarray (files, parameters)``: ∂E½/∂p.
    profiled : tuple of int
        Parameters whose 95 % interval comes from the χ² profile.
    fitted_state : str or None
        Stepwise: the form whose constants are fitted.
    """

    model: str
    names: tuple[str, ...]
    start: np.ndarray
    lower: np.ndarray
    upper: np.ndarray
    e_half: Callable[[np.ndarray], np.ndarray]
    gradient: Callable[[np.ndarray], np.ndarray]
    profiled: tuple[int, ...]
    fitted_state: str | None = None


@dataclass(frozen=True)
class GlobalCurveFit:
    """Result of the global curve fit.

    Attributes
    ----------
    model : {"lingane", "stepwise"}
    E_half_free_V : Quantity
        E½(s), V.
    delta_ligands, log10_beta_ratio : Quantity or None
        Lingane model: p − q and log10(β_ox/β_red), intervals from the χ² profile.
    log10_beta : tuple of Quantity
        Stepwise model: log10 β_1 … β_N of the fitted form (profile intervals); () else.
    fitted_state : str or None
        Stepwise model: the form whose constants are fitted ("ox" or "red").
    shared : tuple of str
        What was shared (:data:`SHARED_NAMES`).
    alpha : Quantity or None
        The shared α of the kinetic files.
    double_layer_F : Quantity or None
        The shared double-layer capacitance, F.
    reduced_chi2 : float
    files : tuple of str
    simulations : int
    fit_time_s : float
    converged : bool
    """

    E_half_free_V: Quantity
    delta_ligands: Quantity | None
    log10_beta_ratio: Quantity | None
    reduced_chi2: float
    files: tuple[str, ...]
    simulations: int
    fit_time_s: float
    converged: bool
    model: str = "lingane"
    log10_beta: tuple[Quantity, ...] = ()
    fitted_state: str | None = None
    shared: tuple[str, ...] = ()
    alpha: Quantity | None = None
    double_layer_F: Quantity | None = None

    def to_dict(self) -> dict[str, object]:
        def opt(q: Quantity | None) -> object:
            return None if q is None else q.to_dict()

        return {
            "model": self.model,
            "E_half_free_V": self.E_half_free_V.to_dict(),
            "delta_ligands": opt(self.delta_ligands),
            "log10_beta_ratio": opt(self.log10_beta_ratio),
            "log10_beta": [{"j": j, **q.to_dict()} for j, q in enumerate(self.log10_beta, 1)],
            "fitted_state": self.fitted_state,
            "shared": list(self.shared),
            "alpha": opt(self.alpha),
            "double_layer_F": opt(self.double_layer_F),
            "reduced_chi2": clean_number(self.reduced_chi2),
            "files": list(self.files),
            "simulations": self.simulations,
            "converged": self.converged,
        }


def lingane_tie(
    files: Sequence[GlobalFile],
    *,
    electrons: int,
    temperature_K: float,
    start: tuple[float, float, float],
) -> Tie:
    """The Lingane line as a tie: parameters E½(s), p − q, log10(β_ox/β_red)."""
    S = math.log(10.0) * GAS_CONSTANT * temperature_K / (electrons * FARADAY)
    logL = np.array([math.log10(f.ligand_M) if f.ligand_M > 0 else 0.0 for f in files])
    has_L = np.array([f.ligand_M > 0 for f in files], float)

    def e_half(p: np.ndarray) -> np.ndarray:
        return p[0] - S * has_L * (p[2] + p[1] * logL)

    def gradient(p: np.ndarray) -> np.ndarray:
        return np.column_stack([np.ones(len(files)), -S * has_L * logL, -S * has_L])

    s = np.array(start, float)
    return Tie(
        "lingane",
        ("E_half_free_V", "delta_ligands", "log10_beta_ratio"),
        s,
        s - np.array([0.2, 3.0, 5.0]),
        s + np.array([0.2, 3.0, 5.0]),
        e_half,
        gradient,
        (1, 2),
    )


def fit_global_lingane(
    files: Sequence[GlobalFile],
    *,
    electrons: int,
    temperature_K: float,
    start: tuple[float, float, float],
    share: Sequence[str] = (),
) -> GlobalCurveFit:
    """Fit all curves with E½ tied by the Lingane line.

    Parameters
    ----------
    files : sequence of GlobalFile
        At least one reference file (ligand 0) and two ligand concentrations.
    electrons, temperature_K
    start : (float, float, float)
        E½(s) (V), p − q and log10(β_ox/β_red) to start from (the two-step fit).
    share : sequence of str
        Names from :data:`SHARED_NAMES`.

    Raises
    ------
    FitError
        Too few files.
    """
    if not any(f.ligand_M == 0 for f in files) or len({f.ligand_M for f in files}) < 3:
        raise FitError("the global fit needs a ligand-free file and two ligand concentrations")
    tie = lingane_tie(files, electrons=electrons, temperature_K=temperature_K, start=start)
    return fit_global(files, tie, share=share)


def fit_global(
    files: Sequence[GlobalFile], tie: Tie, *, share: Sequence[str] = ()
) -> GlobalCurveFit:
    """Fit all curves with E½ tied by *tie* (see the module notes).

    Raises
    ------
    FitError
        An unknown name in *share*.
    """
    t0 = time.perf_counter()
    bad = [s for s in share if s not in SHARED_NAMES]
    if bad:
        raise FitError(f"cannot share {bad[0]!r}: choose from {', '.join(SHARED_NAMES)}")
    m = tie.start.size
    kinetic = [k for k, f in enumerate(files) if f.log10_k0 is not None]
    share_alpha = "alpha" in share and len(kinetic) > 0
    share_C = "charging" in share
    x0 = list(tie.start)
    lo, hi = list(tie.lower), list(tie.upper)
    i_alpha = i_C = -1
    if share_alpha:
        i_alpha = len(x0)
        x0.append(float(np.mean([files[k].alpha for k in kinetic])))
        lo.append(ALPHA_RANGE[0])
        hi.append(ALPHA_RANGE[1])
    if share_C:
        i_C = len(x0)
        starts = []
        e0 = tie.e_half(tie.start)
        for k, f in enumerate(files):
            lk = math.inf if f.log10_k0 is None else f.log10_k0
            lin = f.model.evaluate(e0[k], lk, f.alpha or 0.5, f.resistance_ohm, f.D_ratio)
            starts.append(lin.coefficients[1])
        x0.append(float(np.mean(starts)))
        lo.append(-np.inf)
        hi.append(np.inf)
    slot: dict[int, tuple[int, int]] = {}
    for k in kinetic:
        f = files[k]
        j = len(x0)
        log10_k0 = cast(float, f.log10_k0)  # a kinetic file has its k0
        x0.append(log10_k0)
        lo.append(log10_k0 - 3.0)
        hi.append(log10_k0 + 3.0)
        if share_alpha:
            slot[k] = (j, i_alpha)
        else:
            x0.append(f.alpha)
            lo.append(ALPHA_RANGE[0])
            hi.append(ALPHA_RANGE[1])
            slot[k] = (j, j + 1)
    r_slot: dict[int, int] = {}
    for k, f in enumerate(files):
        if f.fit_resistance:
            r_slot[k] = len(x0)
            x0.append(f.resistance_ohm)
            lo.append(0.0)
            i_max = float(np.max(np.abs(f.model.data.current_A))) or 1.0
            hi.append(max(f.resistance_ohm, 0.0) + _MAX_DROP_V / i_max)
    lo_a, hi_a = np.array(lo, float), np.array(hi, float)
    x0 = np.clip(np.array(x0, float), lo_a + 1e-9, hi_a - 1e-9)
    sizes = [int(f.model.data.fit_mask.sum()) for f in files]
    offsets = np.concatenate(([0], np.cumsum(sizes)))

    def file_params(x: np.ndarray, k: int, e_half: np.ndarray) -> list[float]:
        R = float(x[r_slot[k]]) if k in r_slot else files[k].resistance_ohm
        if k in slot:
            a, b = slot[k]
            return [float(e_half[k]), float(x[a]), float(x[b]), R]
        return [float(e_half[k]), math.inf, 0.5, R]

    def one(k: int, p: list[float], C: float | None):
        return files[k].model.evaluate(p[0], p[1], p[2], p[3], files[k].D_ratio, C)

    def moved(k: int, p: list[float], i: int, C: float | None) -> np.ndarray:
        q = list(p)
        q[i] += _STEP[i]
        return one(k, q, C).residual

    cache: dict[bytes, np.ndarray] = {}

    def C_of(x: np.ndarray) -> float | None:
        return float(x[i_C]) if share_C else None

    def fun(x: np.ndarray) -> np.ndarray:
        key = x.tobytes()
        if key not in cache:
            cache.clear()
            e = tie.e_half(x[:m])
            cache[key] = np.concatenate(
                [one(k, file_params(x, k, e), C_of(x)).residual for k in range(len(files))]
            )
        return cache[key]

    def jac(x: np.ndarray) -> np.ndarray:
        e = tie.e_half(x[:m])
        G = tie.gradient(x[:m])
        C = C_of(x)
        J = np.zeros((int(offsets[-1]), x.size))
        for k in range(len(files)):
            rows = slice(offsets[k], offsets[k + 1])
            p = file_params(x, k, e)
            base = one(k, p, C)
            r0 = base.residual
            dE = (moved(k, p, 0, C) - r0) / _STEP[0]
            J[rows, :m] = dE[:, None] * G[k][None, :]
            if share_C:
                J[rows, i_C] = -base.charging_projected
            if k in slot:
                a, b = slot[k]
                J[rows, a] = (moved(k, p, 1, C) - r0) / _STEP[1]
                J[rows, b] += (moved(k, p, 2, C) - r0) / _STEP[2]
            if k in r_slot:
                J[rows, r_slot[k]] = (moved(k, p, 3, C) - r0) / _STEP[3]
        return J

    bounds = (lo_a, hi_a)
    sol = least_squares(fun, x0, jac=jac, bounds=bounds, x_scale="jac", method="trf")
    x = sol.x
    ssr = float(np.sum(fun(x) ** 2))
    # closed-form terms per file: the scale, the common background and (unless shared)
    # the capacitance's coefficients
    n_linear = sum(
        1 + f.model.orders[0] + 1 + (0 if share_C else f.model.orders[1] + 1) for f in files
    )
    dof = int(offsets[-1]) - x.size - n_linear
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

            z0 = np.clip(xs[free], bounds[0][free] + 1e-9, bounds[1][free] - 1e-9)
            s = least_squares(
                f_sub, z0, jac=j_sub, bounds=(bounds[0][free], bounds[1][free]),
                x_scale="jac", method="trf",
            )  # fmt: skip
            out = xs.copy()
            out[free] = s.x
            return float(np.sum(s.fun**2)), out

        def rise(value: float, start_x: np.ndarray) -> tuple[float, np.ndarray]:
            cost, out = cost_at(value, start_x)
            return max(cost - ssr, 1e-12) / inflate, out

        # Δχ² is nearly quadratic near the optimum: the first trial at ±1.96 σ, the
        # crossing interpolated in √Δχ² and corrected once
        h = 1.959963984540054 * (se[index] if math.isfinite(se[index]) else 0.01)
        ends = [
            profile_side(
                rise, float(x[index]), x, threshold, direction=sign, step=h,
                bound=float(bounds[k][index]), max_steps=12, crossing="sqrt", polish=1,
            ).limit
            for k, sign in ((0, -1.0), (1, 1.0))
        ]  # fmt: skip
        return ends[0], ends[1]

    def q(k: int, ci: tuple[float, float] | None = None) -> Quantity:
        if ci is None:
            return Quantity.from_t(float(x[k]), float(se[k]), math.inf)
        return Quantity(float(x[k]), float(se[k]), ci, "profile χ²")

    constants = {k: q(k, profile(k)) for k in tie.profiled}
    made = partial(
        GlobalCurveFit,
        E_half_free_V=q(0),
        reduced_chi2=chi2,
        files=tuple(f.name for f in files),
        simulations=sum(f.model.simulations for f in files),
        fit_time_s=time.perf_counter() - t0,
        converged=sol.status > 0,
        model=tie.model,
        shared=tuple(s for s in SHARED_NAMES if s in share),
        alpha=q(i_alpha) if share_alpha else None,
        double_layer_F=q(i_C) if share_C else None,
    )
    if tie.model == "lingane":
        return made(delta_ligands=constants[1], log10_beta_ratio=constants[2])
    return made(
        delta_ligands=None,
        log10_beta_ratio=None,
        log10_beta=tuple(constants[k] for k in tie.profiled),
        fitted_state=tie.fitted_state,
    )
