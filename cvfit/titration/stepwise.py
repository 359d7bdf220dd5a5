"""Stepwise overall constants β_1 … β_N from the half-wave shift (DeFord–Hume model).

For a couple whose reduced form is not complexed (metal deposition, amalgam, weakly
binding reduced state) DeFord and Hume's relation

    F0([L]) = exp{(nF/RT)[E½(s) − E½(c)] + ln(Is/Ic)} = Σ_{j≥0} β_j [L]^j

is fitted as E½ itself (weighted non-linear least squares, see
:mod:`cvfit.titration.stepwise_least_squares`), with N chosen by an F-test
(:mod:`cvfit.titration.stepwise_model_choice`). In the general ratio model both
forms are complexed, E½ shift = −(RT/nF) ln(F0,ox/F0,red) + (RT/2nF)
ln[(D_O,s·D_R,c)/(D_R,s·D_O,c)], and the constants of one form are given to obtain the
other's; ln(Is/Ic) measures the D_O half of the diffusion term, the D_R half is modelled
with a complex-to-free D fraction shared by both forms (see ``_diffusion_term``).
With ``metal_total_M`` the free ligand at every point
comes from the mass balance with the fitted constants, iterated to self-consistency; with
ligand pKa values and the pH the fit gives absolute constants (free unprotonated ligand)
and the conditional ones are derived at every pH measured.

Usage::

    fit = fit_stepwise(points, electrons=1, temperature_K=298.15,
                       reference_E_half_V=Es, reference_stderr_V=sEs, max_complexes=4)
    fit.log10_beta[0].value, fit.log10_beta[0].ci95

References
----------
DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
Leden, I. Z. Phys. Chem. A 1941, 188, 160.
Lingane, J. J. Chem. Rev. 1941, 29, 1.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from cvfit.chemistry.activity import (
    WATER_PERMITTIVITY_RANGE_K,
    debye_huckel_A,
    thermodynamic_log10_beta,
)
from cvfit.chemistry.complexation import log_leden_F0
from cvfit.chemistry.speciation import (
    BOUND_LIGAND_SHARE_MAX,
    free_ligand_M,
    ligand_fraction_unprotonated,
)
from cvfit.flags import FitRefused, Flag
from cvfit.quantity import Quantity
from cvfit.titration.error_budget import extra_scatter_variance, linearised_budgets
from cvfit.titration.stepwise_least_squares import StepwiseData, profile_interval
from cvfit.titration.stepwise_model_choice import (
    ALPHA,
    choose_candidate,
    fit_all_candidates,
    summarise,
)
from cvfit.titration.stepwise_result import (
    ConditionalConstants,
    StepwiseFit,
    UndeterminedConstant,
    verdicts,
)
from cvfit.units import thermal_voltage

__all__ = [
    "StepwisePoint",
    "SolutionConditions",
    "StepwiseFit",
    "fit_stepwise",
    "MIN_STEPWISE_POINTS",
]

#: Fewest titration points for one constant with one degree of freedom left.
MIN_STEPWISE_POINTS = 2
_MAX_ITERATIONS = 50


@dataclass(frozen=True)
class StepwisePoint:
    """One titration point for the stepwise fit.

    Attributes
    ----------
    label : str
        Where the point came from (file name).
    ligand_M : float
        Analytical (total) ligand concentration, mol/L (> 0).
    E_half_V : float
        Half-wave potential, V.
    E_half_stderr_V : float or None
        Its standard error, V (None: unknown, the median of the others is used).
    ln_current_ratio : float or None
        ln(Is/Ic), the DeFord–Hume correction from the peak currents (None: not applied).
    pH : float or None
        pH of this solution (None: the series-wide value).
    bulk_form : {"ox", "red"}
        Form the metal is in the bulk solution (the one the first sweep consumes: "red"
        for an oxidation first); its constants enter the free-ligand mass balance.
    """

    label: str
    ligand_M: float
    E_half_V: float
    E_half_stderr_V: float | None = None
    ln_current_ratio: float | None = None
    pH: float | None = None
    bulk_form: str = "ox"

    def __post_init__(self) -> None:
        if self.bulk_form not in ("ox", "red"):
            raise ValueError(f"{self.label}: bulk_form must be 'ox' or 'red'")
        for name in ("ligand_M", "E_half_V"):
            v = float(getattr(self, name))
            if not math.isfinite(v):
                raise ValueError(f"{self.label}: {name} must be finite, got {v!r}")
            object.__setattr__(self, name, v)
        if self.ligand_M <= 0:
            raise ValueError(f"{self.label}: ligand_M must be > 0 for the stepwise fit")
        for name in ("E_half_stderr_V", "ln_current_ratio", "pH"):
            v = getattr(self, name)
            if v is not None:
                v = float(v)
                object.__setattr__(self, name, v if math.isfinite(v) else None)
        s = self.E_half_stderr_V
        if s is not None and s <= 0:
            object.__setattr__(self, "E_half_stderr_V", None)


@dataclass(frozen=True, kw_only=True)
class SolutionConditions:
    """Solution chemistry of the series (all optional).

    Attributes
    ----------
    metal_total_M : float or None
        Analytical metal concentration, mol/L: turns on the free-ligand mass balance.
    bound_ligand_number : float or None
        Ligands bound per metal, given by the user: [L] = α_L (L_T − n M_T) instead of
        the self-consistent mass balance.
    ligand_pKa : tuple of float
        Acid dissociation pKa values of the ligand's conjugate acids.
    pH : float or None
        Series-wide pH (points may carry their own).
    ionic_strength_M : float or None
        Ionic strength, mol/L (recorded; with the charges, Davies corrections).
    metal_charge, ligand_charge : int or None
        Charge numbers of the free oxidised metal ion and of the free ligand.
    """

    metal_total_M: float | None = None
    bound_ligand_number: float | None = None
    ligand_pKa: tuple[float, ...] = ()
    pH: float | None = None
    ionic_strength_M: float | None = None
    metal_charge: int | None = None
    ligand_charge: int | None = None
    extra: dict = field(default_factory=dict, compare=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "ligand_pKa", tuple(float(p) for p in self.ligand_pKa))
        if self.metal_total_M is not None and not self.metal_total_M > 0:
            raise ValueError("metal_total_M must be > 0")
        if self.bound_ligand_number is not None and self.metal_total_M is None:
            raise ValueError("bound_ligand_number needs metal_total_M")
        if self.ionic_strength_M is not None and not self.ionic_strength_M >= 0:
            raise ValueError("ionic_strength_M must be >= 0")


def _alpha_L(points: Sequence[StepwisePoint], cond: SolutionConditions) -> np.ndarray:
    if not cond.ligand_pKa:
        return np.ones(len(points))
    pHs = []
    for p in points:
        pH = p.pH if p.pH is not None else cond.pH
        if pH is None:
            raise ValueError(f"{p.label}: ligand pKa values are given but no pH for this point")
        pHs.append(pH)
    return ligand_fraction_unprotonated(np.array(pHs), cond.ligand_pKa)


def _sigmas(points: Sequence[StepwisePoint], reference_stderr_V: float | None):
    s = np.array([np.nan if p.E_half_stderr_V is None else p.E_half_stderr_V for p in points])
    known = s[np.isfinite(s)]
    fill = float(np.median(known)) if known.size else 1e-3
    s = np.where(np.isfinite(s), s, fill)
    ref = reference_stderr_V if reference_stderr_V and reference_stderr_V > 0 else fill
    return s, float(ref), bool(known.size)


def fit_stepwise(
    points: Sequence[StepwisePoint],
    *,
    electrons: int,
    temperature_K: float,
    reference_E_half_V: float,
    reference_stderr_V: float | None = None,
    max_complexes: int = 4,
    fixed_log10_beta_ox: Sequence[float] | None = None,
    fixed_log10_beta_red: Sequence[float] | None = None,
    conditions: SolutionConditions | None = None,
    alpha: float = ALPHA,
) -> StepwiseFit | FitRefused:
    """Fit stepwise overall constants to a titration (see the module docstring).

    Parameters
    ----------
    points : sequence of StepwisePoint
        Titration points with ligand (total ligand when ``conditions.metal_total_M`` or
        pKa values are given, else free ligand).
    electrons, temperature_K
        n of the couple and the temperature, K.
    reference_E_half_V, reference_stderr_V
        E½(s) of the ligand-free couple and its standard error, V.
    max_complexes : int
        Highest N tried.
    fixed_log10_beta_ox, fixed_log10_beta_red : sequence of float, optional
        Known constants of one form (general ratio model); the other form's are fitted.
        Neither: the reduced form is taken as not complexed and the oxidised form's
        constants are fitted. Both: ValueError.
    conditions : SolutionConditions, optional
        Metal concentration, protonation, ionic strength.
    alpha : float
        Level of the F-test that admits one more complex.

    Returns
    -------
    StepwiseFit or FitRefused
        The fit; a :class:`cvfit.flags.FitRefused` (``TOO_FEW_POINTS``) when fewer than
        ``MIN_STEPWISE_POINTS`` points are given.

    References
    ----------
    DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
    """
    cond = conditions or SolutionConditions()
    if fixed_log10_beta_ox is not None and fixed_log10_beta_red is not None:
        raise ValueError("give the fixed constants of one oxidation state only")
    state = "red" if fixed_log10_beta_ox is not None else "ox"
    fixed = tuple(float(x) for x in (fixed_log10_beta_ox or fixed_log10_beta_red or ()))
    sign = 1.0 if state == "ox" else -1.0
    k = thermal_voltage(temperature_K, electrons)
    pts = list(points)
    if len(pts) < MIN_STEPWISE_POINTS:
        return FitRefused(
            (
                Flag(
                    "TOO_FEW_POINTS",
                    f"{len(pts)} titration point(s); the stepwise fit needs at least "
                    f"{MIN_STEPWISE_POINTS} — no constants reported",
                    "error",
                ),
            )
        )
    L_T = np.array([p.ligand_M for p in pts])
    E = np.array([p.E_half_V for p in pts])
    corr = np.array([0.0 if p.ln_current_ratio is None else p.ln_current_ratio for p in pts])
    y = E - k * corr
    sig, ref_sig, weighted = _sigmas(pts, reference_stderr_V)
    aL = _alpha_L(pts, cond)
    flags: list[Flag] = []
    MT = cond.metal_total_M
    if cond.bound_ligand_number is not None:
        L = aL * (L_T - cond.bound_ligand_number * MT)
        if np.any(L <= 0):
            raise ValueError("bound_ligand_number × metal_total_M exceeds the total ligand")
    else:
        L = aL * L_T

    def data_for(L_free: np.ndarray, y_obs: np.ndarray) -> StepwiseData:
        other = log_leden_F0(L_free, fixed)
        return StepwiseData(L_free, y_obs, sig, float(reference_E_half_V), ref_sig, k, sign, other)

    # Both forms complexed: the reduction peaks measure only D_O,c/D_O,s; the reduced form's
    # ratio comes from the shared complex-to-free ratio r (see _diffusion_term).
    has_ratio = any(p.ln_current_ratio is not None for p in pts)
    both_complexed = bool(fixed) and has_ratio
    bulk_red = np.array([p.bulk_form == "red" for p in pts])
    iterations = 0
    self_consistent = MT is not None and cond.bound_ligand_number is None
    shared_r = math.nan
    while True:
        data = data_for(L, y)
        fits = fit_all_candidates(data, max_complexes)
        chosen = choose_candidate(fits, alpha=alpha)
        iterations += 1
        if not (self_consistent or both_complexed):
            break
        ox_b, red_b = (chosen.params[1:], fixed) if state == "ox" else (fixed, chosen.params[1:])
        change = 0.0
        if self_consistent:
            new = np.array(
                [
                    free_ligand_M(lt, MT, red_b if r else ox_b, alpha_L=a)
                    for lt, a, r in zip(L_T, aL, bulk_red, strict=True)
                ]
            )
            change = float(np.max(np.abs(np.log(new / L))))
            L = new
        if both_complexed:
            term, shared_r = _diffusion_term(corr, L, ox_b, red_b)
            y_new = E - k * term
            change = max(change, float(np.max(np.abs(y_new - y))) / k)
            y = y_new
        if change < 1e-7:
            break
        if iterations >= _MAX_ITERATIONS:
            flags.append(
                Flag(
                    "FREE_LIGAND_NOT_CONVERGED",
                    f"free ligand and constants did not settle in {_MAX_ITERATIONS} rounds "
                    f"(last change {change:.2g} in ln[L])",
                )
            )
            break
    if both_complexed:
        flags.append(
            Flag(
                "DIFFUSION_TERM_SHARED_RATIO",
                "both forms complexed: the diffusion term ½ ln[(D_O,s·D_R,c)/(D_R,s·D_O,c)] "
                "needs the reduced form's D ratio, which reduction peak currents do not "
                f"measure; its complexes were taken to diffuse at the same fraction "
                f"(r = {shared_r:.3g}, from the currents) of the free ion's D as the "
                "oxidised form's",
                "info",
            )
        )
    if MT is not None:
        # Bound share of the ligand, MT·n̄/L_T = 1 − [L]/(α_L L_T), and what the correction
        # does to each point's E½ under the chosen model.
        share = 1.0 - L / (aL * L_T)
        shift = np.abs(data_for(aL * L_T, y).model(chosen.params) - data.model(chosen.params))
        low = [p.label for p, x in zip(pts, share, strict=True) if x > BOUND_LIGAND_SHARE_MAX]
        moved = [p.label for p, d, s in zip(pts, shift, sig, strict=True) if d > s]
        how = (
            "free ligand from the mass balance with the fitted constants"
            if self_consistent
            else f"free ligand with {cond.bound_ligand_number:g} bound ligands per metal"
        )
        if low:
            flags.append(
                Flag(
                    "LOW_LIGAND_EXCESS",
                    f"more than {100 * BOUND_LIGAND_SHARE_MAX:g} % of the ligand is bound to "
                    f"the metal in {len(low)} point(s) ({', '.join(low)}; up to "
                    f"{100 * float(share.max()):.1f} %); {how} was used (the correction is "
                    "exact only if the constants are; common practice: >= 10-fold excess "
                    "per bound ligand)",
                )
            )
        if moved:
            flags.append(
                Flag(
                    "LIGAND_DEPLETION_CORRECTED",
                    f"the bound-ligand correction moves {len(moved)} point(s) "
                    f"({', '.join(moved)}) by more than their E½ noise (up to "
                    f"{1e3 * float(shift.max()):.2f} mV); {how} was used",
                )
            )
    if not weighted:
        flags.append(
            Flag(
                "UNWEIGHTED_STEPWISE",
                "no per-file E½ errors: equal weights, scale from the residual scatter",
                "info",
            )
        )
    summaries = summarise(data, fits)
    intervals = [profile_interval(data, chosen, j) for j in range(1, chosen.N + 1)]
    N = chosen.N
    cov = chosen.covariance
    se = [math.sqrt(cov[j, j]) if cov is not None else math.nan for j in range(1, N + 1)]
    betas = [
        Quantity(
            float(chosen.params[j]), se[j - 1], intervals[j - 1], "profile likelihood, F(1, ν)"
        )
        for j in range(1, N + 1)
    ]
    larger = [f for f in fits if f.N > N]
    uppers = [profile_interval(data, f, f.N, sides="upper")[1] for f in larger]
    determined, max_frac, undetermined, more_flags = verdicts(
        data, chosen, intervals, larger, uppers
    )
    flags.extend(more_flags)
    E0_se = math.sqrt(cov[0, 0]) if cov is not None else math.nan
    E0 = Quantity.from_t(float(chosen.params[0]), E0_se, chosen.dof)
    ln_F0_obs = sign * (chosen.params[0] - y) / k + data.ln_F0_other
    conditional = []
    if cond.ligand_pKa:
        pHs = sorted({p.pH if p.pH is not None else cond.pH for p in pts})
        for pH in pHs:
            la = float(np.log10(ligand_fraction_unprotonated(pH, cond.ligand_pKa)))
            qs = [_shift(b, j * la) for j, b in enumerate(betas, start=1)]
            conditional.append(ConditionalConstants(pH, la, tuple(qs)))
    thermo = None
    if (
        cond.ionic_strength_M is not None
        and cond.metal_charge is not None
        and cond.ligand_charge is not None
    ):
        lo, hi = WATER_PERMITTIVITY_RANGE_K
        if lo <= temperature_K <= hi:
            z = cond.metal_charge - (electrons if state == "red" else 0)
            vals = [b.value for b in betas]
            t = thermodynamic_log10_beta(
                vals,
                metal_charge=z,
                ligand_charge=cond.ligand_charge,
                ionic_strength_M=cond.ionic_strength_M,
                A=debye_huckel_A(temperature_K),
            )
            thermo = tuple(_shift(b, tv - b.value) for b, tv in zip(betas, t, strict=True))
        else:
            flags.append(
                Flag(
                    "ACTIVITY_TEMPERATURE_OUT_OF_RANGE",
                    f"{temperature_K - lo:.1f} °C lies outside 0–100 °C, where the "
                    "permittivity of water (and so the Davies A) is known; no thermodynamic "
                    "constants are reported",
                )
            )
    cov_beta = None if cov is None else tuple(tuple(float(x) for x in r) for r in cov[1:, 1:])
    budget, extra = None, None
    if cov is not None:
        J = data.jacobian(chosen.params)
        budget = tuple(linearised_budgets(J, len(pts), chosen.scale, weighted, "log10 units")[1:])
        if weighted:
            sig_all = np.concatenate([sig, [ref_sig]])
            resid = np.concatenate(
                [y - data.model(chosen.params), [data.reference_V - chosen.params[0]]]
            )
            extra = math.sqrt(
                extra_scatter_variance(J * sig_all[:, None], 1 / sig_all**2, resid, sig_all)
            )
    return StepwiseFit(
        error_budget=budget,
        extra_scatter_V=extra,
        fitted_state=state,
        fixed_log10_beta=fixed,
        n_complexes=N,
        log10_beta=tuple(betas),
        determined=tuple(determined),
        max_fraction=tuple(max_frac),
        covariance=cov_beta,
        E_half_free=E0,
        candidates=tuple(summaries),
        alpha=alpha,
        undetermined=tuple(undetermined),
        labels=tuple(p.label for p in pts),
        free_ligand_M=tuple(float(x) for x in L),
        log10_alpha_L=tuple(float(x) for x in np.log10(aL)),
        ln_F0_observed=tuple(float(x) for x in ln_F0_obs),
        ln_F0_stderr=tuple(float(x) for x in sig / k),
        residuals_V=tuple(float(x) for x in (y - data.model(chosen.params))),
        conditional=tuple(conditional),
        thermodynamic_log10_beta=thermo,
        ionic_strength_M=cond.ionic_strength_M,
        free_ligand_iterations=iterations,
        n_points=len(pts),
        dof=chosen.dof,
        weighted=weighted,
        flags=tuple(flags),
    )


def _diffusion_term(
    ln_ratio_ox: np.ndarray,
    L_free: np.ndarray,
    log10_beta_ox: Sequence[float],
    log10_beta_red: Sequence[float],
) -> tuple[np.ndarray, float]:
    """½ ln[(D_O,s·D_R,c)/(D_R,s·D_O,c)] when both forms are complexed.

    The reduction peak current of a reversible voltammogram depends on D_O only, so
    ``ln_ratio_ox`` = ln(Is/Ic) = ½ ln(D_O,s/D_O,c) is measured and D_R,c/D_R,s is not.
    Each form's D is taken as the mole-fraction mean of free ion and complexes, with the
    complexes of both forms at one common fraction r of their free ion's D:
    D_c/D_s = f + r(1 − f), f = 1/F0 the free fraction. r is the least-squares value from
    the measured D_O,c/D_O,s; the reduced form's ratio follows with its own f.

    Returns
    -------
    term : ndarray
        ln(Is/Ic) + ½ ln(D_R,c/D_R,s) per point.
    r : float
        The common ratio used.

    References
    ----------
    Lingane, J. J. Chem. Rev. 1941, 29, 1.
    DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
    """
    f_ox = np.exp(-log_leden_F0(L_free, log10_beta_ox))
    f_red = np.exp(-log_leden_F0(L_free, log10_beta_red))
    rho_ox = np.exp(-2.0 * ln_ratio_ox)
    x = 1.0 - f_ox
    denom = float(np.sum(x * x))
    r = float(np.sum(x * (rho_ox - f_ox)) / denom) if denom > 1e-12 else 1.0
    r = min(max(r, 1e-3), 1e3)
    rho_red = f_red + r * (1.0 - f_red)
    return ln_ratio_ox + 0.5 * np.log(rho_red), r


def _shift(q: Quantity, delta: float) -> Quantity:
    lo, hi = q.ci95
    return Quantity(q.value + delta, q.stderr, (lo + delta, hi + delta), q.method)


__all__ += ["UndeterminedConstant", "ConditionalConstants"]


def complex_standard_potential_V(
    E_standard_V: float,
    *,
    log10_beta_ox: float = 0.0,
    log10_beta_red: float = 0.0,
    electrons: int = 1,
    temperature_K: float = 298.15,
) -> float:
    """Standard potential of the couple of two complexes from the free couple's.

    E°(ML_p/ML_q) = E°(M/M) − (RT/nF)·ln(β_p,ox/β_q,red), all species at unit activity
    (unit ligand activity too); a form that is not complexed has log10 β = 0.

    References
    ----------
    Lingane, J. J. Chem. Rev. 1941, 29, 1.
    """
    k = thermal_voltage(temperature_K, electrons)
    return float(E_standard_V) - k * math.log(10.0) * (log10_beta_ox - log10_beta_red)


__all__ += ["complex_standard_potential_V"]
