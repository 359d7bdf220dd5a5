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
from dataclasses import dataclass

import numpy as np

from cvfit.chemistry.activity import (
    WATER_PERMITTIVITY_RANGE_K,
    debye_huckel_A,
    thermodynamic_log10_beta,
)
from cvfit.chemistry.complexation import complex_standard_potential_V, log_leden_F0
from cvfit.chemistry.speciation import (
    BOUND_LIGAND_SHARE_MAX,
    free_ligand_M,
    ligand_fraction_unprotonated,
)
from cvfit.flags import FitRefused, Flag
from cvfit.quantity import Quantity
from cvfit.titration import stepwise_flags as sf
from cvfit.titration.error_budget import (
    extra_scatter_variance,
    linearised_budgets,
    reference_solution_variance,
)
from cvfit.titration.stepwise_inputs import (
    Observations,
    SolutionConditions,
    StepwisePoint,
    observations,
)
from cvfit.titration.stepwise_least_squares import (
    CandidateFit,
    StepwiseData,
    VarianceParts,
    profile_interval,
    variance_parts,
)
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
    reference_count: int = 1,
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
        E½(s) of the ligand-free couple and its standard error, V (its own: the noise of
        its file(s) and their spread). E½(s) is one more solution: its variance is this
        error, never scaled with the points, plus the between-solution variance the points
        show over *reference_count* (:func:`_reference_variance`); it enters every
        constant's standard error and interval as a known part.
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
    reference_count : int
        Number M of ligand-free files averaged into E½(s).

    Returns
    -------
    StepwiseFit or FitRefused
        The fit (its ``lmfit_params`` the chosen optimum as :class:`lmfit.Parameters`);
        a :class:`cvfit.flags.FitRefused` (``TOO_FEW_POINTS``) when fewer than
        ``MIN_STEPWISE_POINTS`` points are given.

    References
    ----------
    DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
    """
    cond = conditions or SolutionConditions()
    if fixed_log10_beta_ox is not None and fixed_log10_beta_red is not None:
        raise ValueError("give the fixed constants of one oxidation state only")
    pts = list(points)
    if len(pts) < MIN_STEPWISE_POINTS:
        return sf.too_few_points(len(pts), MIN_STEPWISE_POINTS)
    state = "red" if fixed_log10_beta_ox is not None else "ox"
    fixed = tuple(float(x) for x in (fixed_log10_beta_ox or fixed_log10_beta_red or ()))
    a = observations(pts, cond, reference_stderr_V)
    model = _Model(
        thermal_voltage(temperature_K, electrons),
        1.0 if state == "ox" else -1.0,
        fixed,
        float(reference_E_half_V),
        a.sigma_V,
        a.reference_sigma_V,
    )
    s = _solve(a, cond, model, state, max_complexes, alpha)
    flags = list(s.flags)
    if a.metal_total_M is not None:
        flags.extend(_ligand_flags(pts, a, cond, model, s))
    if not a.weighted:
        flags.append(sf.unweighted())
    chosen, data = s.chosen, s.data
    ref_var, between = _reference_variance(s, a, reference_stderr_V, reference_count)
    parts = variance_parts(data, chosen, ref_var)
    betas, determined, max_frac, undetermined, more = _constants(
        data, chosen, s.candidates, ref_var, parts
    )
    flags.extend(more)
    thermo, more = _thermodynamic(betas, cond, temperature_K, electrons, state)
    flags.extend(more)
    cov = None if parts is None else parts.covariance
    ln_F0_obs = model.sign * (chosen.params[0] - s.y) / model.thermal_V + data.ln_F0_other
    budget = _budget(data, chosen, a, ref_var)
    extra = math.sqrt(between) if a.weighted else None
    return StepwiseFit(
        error_budget=budget,
        extra_scatter_V=extra,
        fitted_state=state,
        fixed_log10_beta=fixed,
        n_complexes=chosen.N,
        log10_beta=tuple(betas),
        determined=tuple(determined),
        max_fraction=tuple(max_frac),
        covariance=None if cov is None else tuple(tuple(float(x) for x in r) for r in cov[1:, 1:]),
        E_half_free=_free_half_wave(chosen, parts),
        candidates=tuple(summarise(data, s.candidates)),
        alpha=alpha,
        undetermined=tuple(undetermined),
        labels=tuple(p.label for p in pts),
        free_ligand_M=tuple(float(x) for x in s.L),
        log10_alpha_L=tuple(float(x) for x in np.log10(a.alpha_L)),
        ln_F0_observed=tuple(float(x) for x in ln_F0_obs),
        ln_F0_stderr=tuple(float(x) for x in a.sigma_V / model.thermal_V),
        residuals_V=tuple(float(x) for x in (s.y - data.model(chosen.params))),
        conditional=_conditional(pts, cond, betas),
        thermodynamic_log10_beta=thermo,
        ionic_strength_M=cond.ionic_strength_M,
        free_ligand_iterations=s.iterations,
        n_points=len(pts),
        dof=chosen.dof,
        weighted=a.weighted,
        flags=tuple(flags),
        lmfit_params=chosen.lmfit_params,
    )


@dataclass(frozen=True)
class _Model:
    """What every round's :class:`StepwiseData` shares: RT/nF, sign, given constants."""

    thermal_V: float
    sign: float
    fixed: tuple[float, ...]
    reference_V: float
    sigma_V: np.ndarray
    reference_sigma_V: float

    def data(self, L_free: np.ndarray, y_obs: np.ndarray) -> StepwiseData:
        other = log_leden_F0(L_free, self.fixed)
        return StepwiseData(
            L_free, y_obs, self.sigma_V, self.reference_V, self.reference_sigma_V,
            self.thermal_V, self.sign, other, self.fixed,
        )  # fmt: skip


@dataclass(frozen=True)
class _Solved:
    """The chosen candidate after the free ligand and the diffusion term settled."""

    data: StepwiseData
    candidates: list[CandidateFit]
    chosen: CandidateFit
    L: np.ndarray  # free ligand, mol/L
    y: np.ndarray  # E½ less the current-ratio (diffusion) term, V
    iterations: int
    self_consistent: bool
    flags: tuple[Flag, ...]


def _solve(
    a: Observations,
    cond: SolutionConditions,
    model: _Model,
    state: str,
    max_complexes: int,
    alpha: float,
) -> _Solved:
    """Candidates N = 1 … max_complexes and the choice, repeated until the free ligand
    (mass balance with the fitted constants) and the diffusion term (both forms complexed:
    the reduced form's D ratio from the shared complex-to-free ratio, see
    :func:`_diffusion_term`) stop changing."""
    MT = a.metal_total_M  # each solution's own (a titration by additions dilutes it)
    k = model.thermal_V
    y = a.E_half_V - k * a.ln_current_ratio
    L = a.alpha_L * a.ligand_total_M
    if cond.bound_ligand_number is not None:
        if MT is None:  # the manifest asks for both (bound_ligand_number needs metal_total_M)
            raise ValueError("bound_ligand_number needs metal_total_M")
        L = a.alpha_L * (a.ligand_total_M - cond.bound_ligand_number * MT)
        if np.any(L <= 0):
            raise ValueError("bound_ligand_number × metal_total_M exceeds the total ligand")
    both_complexed = bool(model.fixed) and a.has_ratio
    self_consistent = MT is not None and cond.bound_ligand_number is None
    flags: list[Flag] = []
    shared_r = math.nan
    iterations = 0
    while True:
        data = model.data(L, y)
        fits = fit_all_candidates(data, max_complexes)
        chosen = choose_candidate(fits, alpha=alpha)
        iterations += 1
        if not (self_consistent or both_complexed):
            break
        fitted = tuple(chosen.params[1:])
        ox_b, red_b = (fitted, model.fixed) if state == "ox" else (model.fixed, fitted)
        change = 0.0
        if self_consistent and MT is not None:  # (self_consistent says MT is given)
            new = np.array(
                [
                    free_ligand_M(lt, mt, red_b if r else ox_b, alpha_L=al)
                    for lt, mt, al, r in zip(
                        a.ligand_total_M, MT, a.alpha_L, a.bulk_red, strict=True
                    )
                ]
            )
            change = float(np.max(np.abs(np.log(new / L))))
            L = new
        if both_complexed:
            term, shared_r = _diffusion_term(a.ln_current_ratio, L, ox_b, red_b)
            y_new = a.E_half_V - k * term
            change = max(change, float(np.max(np.abs(y_new - y))) / k)
            y = y_new
        if change < 1e-7:
            break
        if iterations >= _MAX_ITERATIONS:
            flags.append(sf.free_ligand_not_converged(_MAX_ITERATIONS, change))
            break
    if both_complexed:
        flags.append(sf.diffusion_term_shared_ratio(shared_r))
    return _Solved(data, fits, chosen, L, y, iterations, self_consistent, tuple(flags))


def _ligand_flags(
    pts: Sequence[StepwisePoint],
    a: Observations,
    cond: SolutionConditions,
    model: _Model,
    s: _Solved,
) -> list[Flag]:
    """Bound share of the ligand, MT·n̄/L_T = 1 − [L]/(α_L L_T), and what the correction
    does to each point's E½ under the chosen model."""
    total = a.alpha_L * a.ligand_total_M
    share = 1.0 - s.L / total
    p = s.chosen.params
    shift = np.abs(model.data(total, s.y).model(p) - s.data.model(p))
    low = [q.label for q, x in zip(pts, share, strict=True) if x > BOUND_LIGAND_SHARE_MAX]
    moved = [q.label for q, d, e in zip(pts, shift, a.sigma_V, strict=True) if d > e]
    how = sf.bound_ligand_method(s.self_consistent, cond.bound_ligand_number)
    flags = []
    if low:
        flags.append(sf.low_ligand_excess(low, float(share.max()), how))
    if moved:
        flags.append(sf.ligand_depletion_corrected(moved, float(shift.max()), how))
    return flags


def _constants(
    data: StepwiseData,
    chosen: CandidateFit,
    fits: list[CandidateFit],
    reference_variance_V2: float,
    parts: VarianceParts | None,
):
    """log10 β_j with profile intervals (E½(s) a known part, see
    :func:`cvfit.titration.stepwise_least_squares.profile_interval`); verdicts, and upper
    limits of the larger N."""
    N = chosen.N
    ref = reference_variance_V2
    intervals = [
        profile_interval(data, chosen, j, reference_variance_V2=ref) for j in range(1, N + 1)
    ]
    se = [math.sqrt(parts.covariance[j, j]) if parts else math.nan for j in range(1, N + 1)]
    betas = [
        Quantity(
            float(chosen.params[j]),
            se[j - 1],
            intervals[j - 1],
            "profile likelihood, F(1, ν), reference E½(s) known (normal) in quadrature",
        )
        for j in range(1, N + 1)
    ]
    larger = [f for f in fits if f.N > N]
    uppers = [
        profile_interval(data, f, f.N, sides="upper", reference_variance_V2=ref)[1] for f in larger
    ]
    determined, max_frac, undetermined, flags = verdicts(data, chosen, intervals, larger, uppers)
    return betas, determined, max_frac, undetermined, flags


def _free_half_wave(chosen: CandidateFit, parts: VarianceParts | None) -> Quantity:
    """E½(s) as fitted: the points' part on ν dof and the reference's known part."""
    value = float(chosen.params[0])
    if parts is None:
        return Quantity.from_t(value, math.nan, chosen.dof)
    q, _ = Quantity.combined(value, parts.points[0], chosen.dof, parts.reference[0])
    return q


def _conditional(
    pts: Sequence[StepwisePoint], cond: SolutionConditions, betas: list[Quantity]
) -> tuple[ConditionalConstants, ...]:
    """log10 β'_j = log10 β_j + j log10 α_L at every pH measured (pKa values given)."""
    if not cond.ligand_pKa:
        return ()
    out = []
    pHs = {p.pH if p.pH is not None else cond.pH for p in pts}
    for pH in sorted(v for v in pHs if v is not None):  # alpha_L refused a point without pH
        la = float(np.log10(ligand_fraction_unprotonated(pH, cond.ligand_pKa)))
        out.append(
            ConditionalConstants(
                pH, la, tuple(b.shifted(j * la) for j, b in enumerate(betas, start=1))
            )
        )
    return tuple(out)


def _thermodynamic(
    betas: list[Quantity],
    cond: SolutionConditions,
    temperature_K: float,
    electrons: int,
    state: str,
) -> tuple[tuple[Quantity, ...] | None, list[Flag]]:
    """Davies-corrected constants when the ionic strength and both charges are given."""
    if cond.ionic_strength_M is None or cond.metal_charge is None or cond.ligand_charge is None:
        return None, []
    lo, hi = WATER_PERMITTIVITY_RANGE_K
    if not lo <= temperature_K <= hi:
        return None, [sf.activity_temperature_out_of_range(temperature_K - lo)]
    z = cond.metal_charge - (electrons if state == "red" else 0)
    t = thermodynamic_log10_beta(
        [b.value for b in betas],
        metal_charge=z,
        ligand_charge=cond.ligand_charge,
        ionic_strength_M=cond.ionic_strength_M,
        A=debye_huckel_A(temperature_K),
    )
    return tuple(b.shifted(tv - b.value) for b, tv in zip(betas, t, strict=True)), []


def _reference_variance(
    s: _Solved, a: Observations, own_stderr_V: float | None, count: int
) -> tuple[float, float]:
    """Variance of E½(s) as one more solution, ``σ_s² + s²/M``, and s², V².

    s² is the moment estimate of the between-solution variance from the residuals of the
    chosen fit, the reference observation included as a mean of M solutions
    (:func:`cvfit.titration.error_budget.extra_scatter_variance`), linearised at the
    optimum with the constants on their bounds left out. σ_s is the reference's own
    standard error; not given, a typical point's (the median σᵢ), or none when the points
    have no errors either (then all their scatter is between solutions).
    """
    data, chosen = s.data, s.chosen
    m = max(int(count), 1)
    if own_stderr_V is not None and own_stderr_V > 0:
        own = float(own_stderr_V)
    else:
        own = data.reference_sigma_V if a.weighted else 0.0
    sig = np.concatenate([data.sigma_V, [data.reference_sigma_V]])
    free = [0, *(j + 1 for j, b in enumerate(chosen.at_bound) if not b)]
    design = (data.jacobian(chosen.params) * sig[:, None])[:, free]
    resid = np.concatenate(
        [s.y - data.model(chosen.params), [data.reference_V - chosen.params[0]]]
    )
    noise = np.concatenate([data.sigma_V if a.weighted else np.zeros_like(s.y), [own]])
    share = np.concatenate([np.ones_like(s.y), [1.0 / m]])
    try:
        between = extra_scatter_variance(design, 1 / sig**2, resid, noise, share=share)
    except np.linalg.LinAlgError:
        between = 0.0
    return reference_solution_variance(own, between, m), between


def _budget(data: StepwiseData, chosen: CandidateFit, a: Observations, ref_var: float):
    """Linearised error budget per log10 β_j, E½(s) one more solution of variance
    *ref_var*."""
    if chosen.covariance is None:
        return None
    J = data.jacobian(chosen.params)
    n = a.E_half_V.size
    ref_scale = ref_var / data.reference_sigma_V**2
    return tuple(
        linearised_budgets(
            J, n, chosen.scale, a.weighted, "log10 units", reference_scale=ref_scale
        )[1:]
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


__all__ += ["UndeterminedConstant", "ConditionalConstants"]


# the Hess-cycle potential lives with the chemistry; kept importable from here
__all__ += ["complex_standard_potential_V"]
