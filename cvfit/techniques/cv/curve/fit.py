"""Per-file curve fit: E½, k0 and α of a quasi-reversible voltammogram from the whole curve.

Weighted non-linear least squares (:func:`scipy.optimize.least_squares`, trust-region
reflective) over the non-linear parameters E½, log10 k0, α and optionally R_u (the
D_R/D_O ratio is given, 1 by default, ``[fit] curve_diffusion_ratio``; it is not fitted,
see below); for each trial the
current scale, C_dl and the linear background are solved in closed form
(:class:`cvfit.techniques.cv.curve.model.CurveModel`, variable projection), so a fit costs tens of
simulations. The search starts from the best of a few k0 values
(Λ = k0/√(D·nFv/RT) from 0.003 to 30) at the peak midpoint E½.

Background: a common polynomial b(E) of order 2 and a non-negative capacitance C(E) of
order 2 times dE/dt (:data:`CURVE_ORDERS`, :mod:`cvfit.techniques.cv.curve.linear`): a
sloping, gently curved charging current that differs between the two sweep directions.

Intervals: the Jacobian of the projected residual gives the marginal covariance of the
non-linear parameters (Golub and Pereyra), scaled by the reduced χ² when that exceeds 1.
Where k0 approaches the reversible limit the covariance is poor, and the interval of
log10 k0 comes from the profile of χ² (:mod:`cvfit.techniques.cv.curve.intervals`): an open upper
side is reported as a lower bound on k0. Where R_u is fitted and trades against k0
(correlation above :data:`K0_RU_CORRELATION`, near the reversible end) a flag says that
R_u must be given for k0 to mean more than the R_u the curve fixes; there the covariance
interval of k0 covered the truth in 95.0 % of 320 noise seeds (ψ 10, 100 Ω), the χ²
profile in 93.1 % (scripts/coverage_k0_resistance.py): the profile is not used. A fitted
R_u's interval never reaches below zero (its lower side from the χ² profile at R_u = 0).
The reduced χ²'s own interval (the range a correct model gives) is stated only where the
χ² test passes.

D_R/D_O cannot be fitted from a curve at a planar electrode: with the concentration of R
scaled by √(D_R/D_O) the diffusion problem becomes the equal-D one, and the Butler–Volmer
boundary of ratio r, formal potential E°' and k0 is identical to that of ratio 1 with
formal potential E½ = E°' + (RT/2nF)·ln r and rate constant k0·r^(−α/2). The curve (and
so χ²) depends on E½, k0·r^(−α/2) and α only: a fitted ratio walks a flat valley to
whichever limit it is given. Consequences: E½ (the reversible half-wave potential fitted
here) does not depend on the ratio assumed; k0 does, by the factor (r_assumed/r)^(α/2)
— a ratio of 0.6 left at 1 raises k0 by 13 % at α = 0.5 — which is why the ratio is a
manifest key.

Goodness of fit: the reduced χ² against the noise of the record and the Wald–Wolfowitz
runs test of the residual signs. The model describes the curve within the noise unless the
reduced χ² exceeds :data:`REFUSE_REDUCED_CHI2`, or exceeds :data:`STRUCTURE_REDUCED_CHI2`
with the residuals in long runs (z below :data:`REFUSE_RUNS_Z`). A real electrode is never
the ideal one: where the residuals are systematic, the fit is judged by how far its E½
moves when the background model or the fitted window changes
(:mod:`cvfit.techniques.cv.curve.stability`): it is used when that spread is at most
:data:`E_HALF_STABLE_RT_F`·RT/nF (flag ``CURVE_FIT_SYSTEMATIC_RESIDUALS``) and refused
otherwise (flag ``CURVE_FIT_REFUSED`` with the reason, no numbers used downstream); it is
refused too when the search did not converge. Wherever the χ² test fails, the spread is
added in quadrature to the E½ error (where it passes, the variants differ by the noise
the error already holds).

References
----------
Golub, G. H.; Pereyra, V. SIAM J. Numer. Anal. 1973, 10, 413.
Nicholson, R. S. Anal. Chem. 1965, 37, 1351.
Wald, A.; Wolfowitz, J. Ann. Math. Stat. 1940, 11, 147 (runs test).
Bates, D. M.; Watts, D. G. Nonlinear Regression Analysis and Its Applications; Wiley,
1988, ch. 6 (profile intervals).
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np
from scipy.optimize import least_squares

from cvfit.chemistry.randles_sevcik import RANDLES_SEVCIK_CONSTANT
from cvfit.errors import FitError
from cvfit.flags import Flag
from cvfit.quantity import Quantity, chi2_quantile, clean_number
from cvfit.techniques.cv.curve.intervals import (
    log_k0_interval,
    resistance_interval,
    runs_test_z,
)
from cvfit.techniques.cv.curve.model import CurveData, CurveModel
from cvfit.techniques.cv.curve.stability import model_spread
from cvfit.units import FARADAY

__all__ = [
    "CurveFit",
    "fit_curve",
    "CURVE_ORDERS",
    "E_HALF_STABLE_RT_F",
    "REFUSE_REDUCED_CHI2",
    "REFUSE_RUNS_Z",
]

#: Reduced χ² above which the model does not describe the curve (common practice: the
#: misfit then exceeds the noise by more than √4 = 2 in root-mean-square).
REFUSE_REDUCED_CHI2 = 4.0
#: A smaller excess that is refused when the residuals also come in long runs.
STRUCTURE_REDUCED_CHI2 = 1.5
#: Runs-test z below which the residual signs are structured (common practice).
REFUSE_RUNS_Z = -5.0
#: Λ = k0/√(D·nFv/RT) searched: below 1e-3 a peak pair has no usable reverse peak,
#: above 1e3 the curve is Nernstian within the noise (Nicholson 1965, ψ = Λ/√π).
LAMBDA_RANGE = (1e-3, 1e3)
#: α searched (common practice: outer values are not physical for one-step transfer).
ALPHA_RANGE = (0.1, 0.9)
#: Refits with the ohmic drop taken from the model's own current (R_u given or fitted);
#: a second changes a fitted 300 Ω by less than 1 Ω (six noise seeds).
DROP_ROUNDS = 1
#: Points of the fitted curve kept for figures.
FIGURE_POINTS = 600
#: Orders of the common background b(E) and of the capacitance C(E) (per sweep direction
#: a quadratic in E; :mod:`cvfit.techniques.cv.curve.linear`).
CURVE_ORDERS = (2, 2)
#: Largest E½ model spread, in units of RT/nF, of a fit with systematic residuals that is
#: still used: 0.04·RT/F = 1.0 mV at 25 °C. Common practice: at most comparable to the
#: 0.1–0.7 mV scatter of E½ between solutions of real titrations, and a 1 mV error moves
#: log10(β_ox/β_red) by 0.017, below the precision stability constants are quoted to.
E_HALF_STABLE_RT_F = 0.04
#: Largest root-mean-square misfit beyond the noise, as a fraction of the fitted
#: reversible peak current, of a fit with systematic residuals that may still be used
#: (common practice: a model that follows the curve to within a few per cent of the peak
#: describes it; two overlapping couples fitted as one leave about 8 %).
MAX_MISFIT_FRACTION = 0.03
#: |correlation| of log10 k0 and a fitted R_u above which a flag says that k0 needs a
#: given R_u (R_u then absorbs what k0 would say: r = 0.98 at ψ ≈ 10).
K0_RU_CORRELATION = 0.8


@dataclass(frozen=True)
class CurveFit:
    """Outcome of one curve fit.

    Attributes
    ----------
    E_half_V : Quantity
        Reversible half-wave potential (D-corrected), V.
    k0_cm_s : Quantity
        Standard rate constant, cm/s (for the D below); ``ci95[1]`` is NaN and
        ``k0_lower_bound_cm_s`` is set when the profile has no upper limit.
    k0_lower_bound_cm_s : float or None
        95 % lower bound of k0 when the data only say "k0 above this", cm/s.
    alpha : Quantity
        Transfer coefficient of the reduction.
    psi : float
        Nicholson's ψ = k0/√(π·D·nFv/RT) at the optimum (independent of the D assumed).
    reduced_chi2 : Quantity
        Σ(residual/σ)²/(N − p); stderr √(2/dof), ci95 the range a correct model gives.
    runs_z : float
        Runs-test z of the residual signs (near 0 for white residuals, very negative for
        a systematic misfit).
    resistance_ohm : Quantity or None
        R_u when fitted (None when given or not modelled).
    D_ratio : float
        D_R/D_O the model used (given, not fitted).
    D_cm2_s : float
        D of the bulk form k0 refers to, cm²/s; ``D_source`` says where it came from.
    scale_A, double_layer_F, background_offset_A, background_slope_A_per_V : float
        The closed-form coefficients at the optimum.
    sigma_A : float
        Standard deviation of a current sample the residuals are weighted with, A.
    reversible_peak_A : float
        The Randles–Ševčík peak current of the fitted scale, 0.4463·s·√(D·nFv/RT), A: the
        diffusion-limited peak the couple would give if fast (the measured peak of a slow
        couple is lower), for current ratios between files.
    accepted : bool
        False when the fit was refused (see ``flags``).
    flags : tuple of Flag
    simulations : int
        Model evaluations (simulations) the fit took, profile included.
    simulation_time_s, fit_time_s : float
        Time spent in the simulator and in the whole fit, s.
    figure : dict of ndarray
        ``potential_V``, ``current_A``, ``model_A`` of the analysed cycle, thinned to
        :data:`FIGURE_POINTS` (not written to results.json).
    E_half_model_spread_V : float
        Largest move of E½ when the background order or the fitted window changes, V
        (:mod:`cvfit.techniques.cv.curve.stability`); in ``E_half_V.stderr`` (in
        quadrature) where the χ² test fails.
    E_half_variants_V : dict of str to float
        E½ of each variant, V.
    systematic_residuals : bool
        The model leaves residuals above the noise (the fit is judged by the spread).
    bulk_form, bulk_form_source : str
        The form in the bulk the model started from ("ox" or "red") and how that was
        decided.
    quiet_time_s : float
        Hold at the first recorded potential before the record the model assumed, s.
    quiet_time_source : str
        Where it came from.
    background_orders : (int, int)
        Orders of the common background and of the capacitance.
    """

    E_half_V: Quantity
    k0_cm_s: Quantity
    k0_lower_bound_cm_s: float | None
    alpha: Quantity
    psi: float
    reduced_chi2: Quantity
    runs_z: float
    resistance_ohm: Quantity | None
    D_ratio: float
    D_cm2_s: float
    D_source: str
    scale_A: float
    double_layer_F: float
    background_offset_A: float
    background_slope_A_per_V: float
    sigma_A: float
    reversible_peak_A: float
    accepted: bool
    flags: tuple[Flag, ...]
    simulations: int
    simulation_time_s: float
    fit_time_s: float
    figure: dict = field(default_factory=dict, repr=False, compare=False)
    E_half_model_spread_V: float = math.nan
    E_half_variants_V: dict = field(default_factory=dict, compare=False)
    systematic_residuals: bool = False
    bulk_form: str = "ox"
    bulk_form_source: str = "given"
    quiet_time_s: float = 0.0
    quiet_time_source: str = "given"
    background_orders: tuple[int, int] = CURVE_ORDERS

    def to_dict(self) -> dict[str, object]:
        """The results.json ``curve_fit`` record."""
        k0 = self.k0_cm_s.to_dict()
        k0["lower_bound"] = clean_number(self.k0_lower_bound_cm_s)
        return {
            "E_half_V": self.E_half_V.to_dict(),
            "k0_cm_s": k0,
            "alpha": self.alpha.to_dict(),
            "psi": clean_number(self.psi),
            "reduced_chi2": self.reduced_chi2.to_dict(),
            "runs_z": clean_number(self.runs_z),
            "resistance_ohm": None
            if self.resistance_ohm is None
            else self.resistance_ohm.to_dict(),
            "D_ratio": clean_number(self.D_ratio),
            "D_cm2_s": clean_number(self.D_cm2_s),
            "D_source": self.D_source,
            "double_layer_F": clean_number(self.double_layer_F),
            "reversible_peak_A": clean_number(self.reversible_peak_A),
            "accepted": self.accepted,
            "simulations": self.simulations,
            "E_half_model_spread_V": clean_number(self.E_half_model_spread_V),
            "E_half_variants_V": {k: clean_number(v) for k, v in self.E_half_variants_V.items()},
            "systematic_residuals": self.systematic_residuals,
            "bulk_form": self.bulk_form,
            "bulk_form_source": self.bulk_form_source,
            "quiet_time_s": clean_number(self.quiet_time_s),
            "quiet_time_source": self.quiet_time_source,
            "background_orders": list(self.background_orders),
        }


def _thin(n: int, mask: np.ndarray) -> np.ndarray:
    idx = np.flatnonzero(mask)
    if idx.size <= n:
        return idx
    return idx[np.linspace(0, idx.size - 1, n).round().astype(int)]


def fit_curve(
    data: CurveData,
    *,
    E_half_start_V: float,
    D_cm2_s: float | None = None,
    area_cm2: float | None = None,
    concentration_M: float | None = None,
    resistance_ohm: float | None = 0.0,
    D_ratio: float = 1.0,
    backend: str = "auto",
    orders: tuple[int, int] = CURVE_ORDERS,
) -> CurveFit:
    """Fit one voltammogram with the simulator as the model.

    Parameters
    ----------
    data : CurveData
        The record (see :func:`cvfit.techniques.cv.curve.model.curve_data`).
    E_half_start_V : float
        Starting E½ (the peak midpoint), V.
    D_cm2_s : float, optional
        D of the bulk form, cm²/s, for k0 = Λ·√(D·nFv/RT). Without it, D follows from the
        fitted current scale when *area_cm2* and *concentration_M* are given
        (s = nFAC√D), else 1e-5 cm²/s is assumed and said in a flag.
    resistance_ohm : float or None
        Known R_u, Ω (0: none); None fits it.
    D_ratio : float
        D_R/D_O (given; 1 unless known). It changes k0 only (see the module notes).
    orders : (int, int)
        Orders of the common background and of the capacitance.

    Returns
    -------
    CurveFit

    Raises
    ------
    FitError
        Data the model cannot be evaluated on.
    """
    t_start = time.perf_counter()
    D_sim = D_cm2_s if D_cm2_s else 1e-5
    model = CurveModel(data, D_sim, backend=backend, orders=orders)
    nf = data.nf_per_V
    v = float(np.median(np.abs(np.diff(data.potential_V)))) / data.dt_s
    if not v > 0:
        raise FitError("curve data: the potential does not change")
    sqrt_Ds = math.sqrt(D_sim * nf * v)
    log_lo = math.log10(LAMBDA_RANGE[0] * sqrt_Ds)
    log_hi = math.log10(LAMBDA_RANGE[1] * sqrt_Ds)
    fit_R = resistance_ohm is None
    R_fixed = 0.0 if resistance_ohm is None else float(resistance_ohm)
    i_max = float(np.max(np.abs(data.current_A))) or 1.0

    names = ["E_half_V", "log10_k0", "alpha"]
    lower = [E_half_start_V - 0.3 / data.electrons, log_lo, ALPHA_RANGE[0]]
    upper = [E_half_start_V + 0.3 / data.electrons, log_hi, ALPHA_RANGE[1]]
    if fit_R:
        names.append("resistance_ohm")
        lower.append(0.0)
        upper.append(0.1 / i_max)  # at most 100 mV of ohmic drop at the largest current

    if not (D_ratio > 0 and math.isfinite(D_ratio)):
        raise FitError(f"D_R/D_O must be positive, got {D_ratio}")

    def unpack(x: np.ndarray) -> tuple[float, float, float, float, float]:
        R = float(x[3]) if fit_R else R_fixed
        return float(x[0]), float(x[1]), float(x[2]), R, float(D_ratio)

    def residual(x: np.ndarray) -> np.ndarray:
        return model.evaluate(*unpack(x)).residual

    # start: the best of a coarse Λ scan at the midpoint E½, α = 0.5
    x0 = np.array([E_half_start_V, 0.0, 0.5] + ([0.0] if fit_R else []))
    scan = []
    for lam in (0.003, 0.03, 0.3, 3.0, 30.0):
        x0[1] = math.log10(lam * sqrt_Ds)
        cost = float(np.sum(residual(x0) ** 2))
        scan.append((cost if math.isfinite(cost) else math.inf, x0[1]))
    x0[1] = min(scan, key=lambda point: point[0])[1]  # the first of equal costs
    if fit_R:
        x0[3] = 0.002 / i_max  # 2 mV of drop at the largest current: off the bound

    def solve(x_start: np.ndarray, free: np.ndarray | None = None):
        """least_squares over the parameters marked in *free* (the others held)."""
        mask = np.ones(x_start.size, bool) if free is None else free
        lo, hi = np.array(lower)[mask], np.array(upper)[mask]

        def fun(z: np.ndarray) -> np.ndarray:
            x = x_start.copy()
            x[mask] = z
            return residual(x)

        z0 = np.clip(x_start[mask], lo + 1e-12 * (hi - lo), hi - 1e-12 * (hi - lo))
        try:
            sol = least_squares(fun, z0, bounds=(lo, hi), x_scale="jac", method="trf")
        except ValueError as exc:  # residuals not finite: the record defeats the model
            raise FitError(f"the model could not be evaluated on this record ({exc})") from None
        x = x_start.copy()
        x[mask] = sol.x
        return sol, x

    sol, x = solve(x0)
    if fit_R or R_fixed > 0.0:
        # the drop from the model's own current (noise-free, no background), then refit
        # (see CurveModel.settle_drop)
        for _ in range(DROP_ROUNDS):
            p = unpack(x)
            model.settle_drop(*p)
            sol, x = solve(x)
    lin = model.evaluate(*unpack(x))
    m = data.fit_mask
    n_points = int(m.sum())
    n_par = len(names) + 1 + (orders[0] + 1) + (orders[1] + 1)
    dof = n_points - n_par
    ssr = float(np.sum(lin.residual**2))
    chi2 = ssr / dof
    z_runs = runs_test_z(lin.residual)
    inflate = max(1.0, chi2)
    J = sol.jac
    corr_kR = math.nan
    try:
        cov = np.linalg.inv(J.T @ J) * inflate
        se = np.sqrt(np.clip(np.diag(cov), 0.0, None))
        if fit_R and se[1] > 0 and se[3] > 0:
            corr_kR = float(cov[1, 3] / (se[1] * se[3]))
    except np.linalg.LinAlgError:
        se = np.full(len(names), math.nan)
    flags: list[Flag] = []

    def profile_cost(index: int):
        def cost(value: float, start: np.ndarray) -> tuple[float, np.ndarray]:
            xs = start.copy()
            xs[index] = value
            free = np.ones(xs.size, bool)
            free[index] = False
            s, xf = solve(xs, free)
            return float(np.sum(s.fun**2)), xf

        return cost

    lk = float(x[1])
    trade = fit_R and abs(corr_kR) > K0_RU_CORRELATION
    lk_lo, lk_hi, open_upper = log_k0_interval(
        lk, float(se[1]), ssr, inflate, profile_cost(1), x, bounds=(log_lo, log_hi)
    )
    if trade:
        flags.append(
            Flag(
                "CURVE_FIT_K0_NEEDS_RU",
                f"k0 and the fitted R_u trade against each other (correlation {corr_kR:.2f}): "
                "k0 rests on the R_u the curve itself fixes; give resistance_ohm (measured "
                "by the instrument) for k0 to mean more than that",
                "info",
            )
        )
    # D of the bulk form for k0
    coef = lin.coefficients
    D_used, D_source = D_sim, "manifest" if D_cm2_s else "assumed"
    if not D_cm2_s and area_cm2 and concentration_M:
        nFAC = data.electrons * FARADAY * area_cm2 * concentration_M / 1000.0
        D_used = D_sim * (abs(coef[0]) / nFAC) ** 2
        D_source = "current scale"
    if D_source == "assumed":
        flags.append(
            Flag(
                "CURVE_FIT_D_ASSUMED",
                "k0 assumes D = 1e-5 cm²/s (no diffusion_cm2_s, electrode_area_cm2 and "
                "analyte_M): the curve fixes k0/√D; k0 scales with √(D/1e-5)",
                "info",
            )
        )
    f = math.sqrt(D_used / D_sim)
    k0 = f * 10.0**lk
    k0_se = k0 * math.log(10.0) * float(se[1])
    k0_ci = (f * 10.0**lk_lo, math.nan if open_upper else f * 10.0**lk_hi)
    lower_bound = k0_ci[0] if open_upper else None
    if open_upper:
        k0_se = math.nan
        flags.append(
            Flag(
                "CURVE_FIT_K0_LOWER_BOUND",
                f"the χ² profile of k0 stays open towards the reversible limit: k0 above "
                f"{k0_ci[0]:.3g} cm/s (95 %), no upper limit from this curve",
                "info",
            )
        )
    # E½ against the background model and the window (module notes)
    at_bound = sol.active_mask != 0
    free_p = [not at_bound[k] for k in range(3)] + [fit_R and not at_bound[-1]]
    variants = model_spread(
        model,
        unpack(x)[:4],
        free_p,
        lambda p: model.shape(p[0], p[1], p[2], p[3], D_ratio),
    )
    spread = variants.spread_V
    chi_lo, chi_hi = (chi2_quantile(p, dof) / dof for p in (0.025, 0.975))
    chi_test_fails = chi2 > chi_hi
    misfit = math.sqrt(max(chi2 - 1.0, 0.0)) * data.sigma_A
    peak = RANDLES_SEVCIK_CONSTANT * abs(float(lin.coefficients[0])) * sqrt_Ds
    accepted, systematic, reason = _verdict(
        sol, chi2, z_runs, spread if free_p[0] else math.nan, E_HALF_STABLE_RT_F / nf,
        misfit / peak if peak > 0 else math.inf, flags,
    )  # fmt: skip
    if not accepted:
        flags.append(Flag("CURVE_FIT_REFUSED", f"curve fit refused: {reason}", "warning"))

    def q(k: int) -> Quantity:
        return Quantity.from_t(float(x[k]), float(se[k]), math.inf)

    E_q = q(0)
    if chi_test_fails and math.isfinite(spread):
        E_se = math.hypot(float(se[0]), spread)
        E_q = Quantity.from_t(float(x[0]), E_se, math.inf)
        E_q = Quantity(E_q.value, E_se, E_q.ci95, "covariance ⊕ model spread")
    R_q = None
    if fit_R:
        R_q = resistance_interval(float(x[3]), float(se[3]), ssr, inflate, profile_cost(3), x)
    idx = _thin(FIGURE_POINTS, m)
    return CurveFit(
        E_half_V=E_q,
        k0_cm_s=Quantity(k0, k0_se, k0_ci, "profile χ²" if open_upper else "covariance/profile"),
        k0_lower_bound_cm_s=lower_bound,
        alpha=q(2),
        psi=10.0**lk / (sqrt_Ds * math.sqrt(math.pi)),
        reduced_chi2=_reduced_chi2(chi2, dof, chi_lo, chi_hi),
        runs_z=z_runs,
        resistance_ohm=R_q,
        D_ratio=float(D_ratio),
        D_cm2_s=D_used,
        D_source=D_source,
        scale_A=float(coef[0]),
        double_layer_F=float(coef[1]),
        background_offset_A=float(coef[2]),
        background_slope_A_per_V=float(coef[3]),
        sigma_A=data.sigma_A,
        reversible_peak_A=RANDLES_SEVCIK_CONSTANT * abs(float(coef[0])) * sqrt_Ds,
        accepted=accepted,
        flags=tuple(flags),
        simulations=model.simulations,
        simulation_time_s=model.simulation_time_s,
        fit_time_s=time.perf_counter() - t_start,
        figure={
            "potential_V": data.potential_V[idx].copy(),
            "current_A": data.current_A[idx].copy(),
            "model_A": lin.model_A[idx].copy(),
        },
        E_half_model_spread_V=spread,
        E_half_variants_V={
            (f"{k} (rejected by the F test, not counted)" if k in variants.not_counted else k): e
            for k, e in variants.E_half_V.items()
        },
        systematic_residuals=systematic,
        bulk_form=data.bulk,
        bulk_form_source=data.bulk_source,
        quiet_time_s=data.quiet_time_s,
        quiet_time_source=data.quiet_source,
        background_orders=(int(orders[0]), int(orders[1])),
    )


def _reduced_chi2(chi2: float, dof: int, lo: float, hi: float) -> Quantity:
    """The reduced χ² with the range a correct model gives, stated only where it lies in
    that range (beside a value far outside it the range reads as an interval of the value)."""
    inside = lo <= chi2 <= hi
    how = "χ²/dof" if inside else "χ²/dof; outside the range a correct model gives"
    ci = (lo, hi) if inside else (math.nan, math.nan)
    return Quantity(chi2, math.sqrt(2.0 / dof), ci, how)


def _verdict(
    sol,
    chi2: float,
    z_runs: float,
    spread_V: float,
    stable_V: float,
    misfit_fraction: float,
    flags: list[Flag],
) -> tuple[bool, bool, str]:
    """(accepted, systematic residuals, reason of a refusal); adds the residuals' flag.

    *spread_V* is NaN where E½ ended on its bound (the fit found no E½ to judge);
    *misfit_fraction* the misfit beyond the noise over the fitted reversible peak.
    """
    if sol.status <= 0:
        return False, False, f"the search did not converge ({sol.message})"
    if chi2 > REFUSE_REDUCED_CHI2:
        misfit = (
            f"reduced χ² {chi2:.2f} > {REFUSE_REDUCED_CHI2:g}: the one-step model leaves a "
            "misfit well above the noise"
        )
    elif chi2 > STRUCTURE_REDUCED_CHI2 and z_runs < REFUSE_RUNS_Z:
        misfit = (
            f"reduced χ² {chi2:.2f} with structured residuals (runs test z = {z_runs:.1f}): "
            "the one-step model does not describe the curve"
        )
    else:
        return True, False, ""
    moved = (
        f"E½ moves by up to {1e3 * spread_V:.2f} mV when the background order or the fitted "
        f"window changes (stable: at most {1e3 * stable_V:.2f} mV = "
        f"{E_HALF_STABLE_RT_F:g}·RT/nF)"
    )
    if not misfit_fraction <= MAX_MISFIT_FRACTION:
        return (
            False,
            True,
            (
                f"{misfit}: the misfit beyond the noise is {100 * misfit_fraction:.1f} % of the "
                f"peak (more than {100 * MAX_MISFIT_FRACTION:g} %: another process, not a "
                "non-ideal electrode)"
            ),
        )
    if not spread_V <= stable_V:
        if math.isnan(spread_V):
            return False, True, f"{misfit}, and E½ ended on the edge of its search range"
        return False, True, f"{misfit}, and {moved}"
    flags.append(
        Flag(
            "CURVE_FIT_SYSTEMATIC_RESIDUALS",
            f"{misfit}; but {moved}: the fit is used, the spread added to its E½ error",
            "warning",
        )
    )
    return True, True, ""
