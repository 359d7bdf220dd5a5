"""Make a plan: optimise the design, assess it against the log-spaced and the proposed
designs, count the points a target needs, and say what could go wrong.

Usage::

    from cvfit.plan import load_plan, make_plan
    result = make_plan(load_plan("PLAN.toml"))
    result.design("recommended").ligand_M
"""

from __future__ import annotations

import math

import numpy as np

from cvfit.chemistry.speciation import (
    BOUND_LIGAND_SHARE_MAX,
    fraction_peak_ligand_M,
    mean_ligand_number,
)
from cvfit.plan.design import exchange_design, log_spaced, scenarios, stretched_design
from cvfit.plan.information import ModelSpec, constants_covariance, free_ligand, reference_row
from cvfit.plan.information import jacobian_rows as _rows
from cvfit.plan.inputs import PlanInput
from cvfit.plan.result import DesignAssessment, PlanResult, PlanWarning
from cvfit.plan.words import constant_words

__all__ = ["make_plan", "spec_of", "assess", "MAX_POINTS_SEARCHED", "IMPRECISE_LOG10"]

#: Largest design searched for the points needed to reach a target.
MAX_POINTS_SEARCHED = 2000
#: Predicted standard error above which a constant is called imprecise (rule of thumb:
#: a factor of two in β; common practice).
IMPRECISE_LOG10 = 0.3
#: β·[L]^Δ below which the Lingane complex does not dominate (1 % free; common practice).
_DOMINANT = 100.0
#: Largest shift of E½ by the free ion, as a share of the per-file noise σ, at which the
#: Lingane line is still taken to hold: the recommended design stays where
#: (RT/nF)·ln(1 + 1/(β·[L]^Δ)) <= this·σ (with 0.2 the bend moves p − q by at most about a
#: third of its standard error even with half the points at the low end).
LINGANE_BEND_SHARE = 0.2


def lingane_valid_min_M(req: PlanInput, thetas: np.ndarray) -> float:
    """Lowest total ligand at which the Lingane line holds for every scenario, mol/L.

    The line neglects the free ion: E½ lies (RT/nF)·ln(1 + 1/(β·[L]^Δ)) above it (the
    reduced form taken as uncomplexed). That shift must stay below
    ``LINGANE_BEND_SHARE``·σ; the bound ligand Δ·c_M is added as the Lingane fit's mass
    balance does. NaN when no scenario has Δ > 0.
    """
    from cvfit.units import thermal_voltage

    rt_nf = thermal_voltage(req.temperature_K, req.electrons)
    level = -math.log10(math.expm1(LINGANE_BEND_SHARE * req.E_half_stderr_V / rt_nf))
    out = []
    for ratio, delta in thetas:
        if delta > 0:
            free = 10.0 ** ((level - ratio) / delta)
            out.append(free + delta * (req.metal_total_M or 0.0))
    return max(out) if out else math.nan


def _design_range(req: PlanInput, thetas: np.ndarray) -> tuple[float, float]:
    """The range the recommended design is searched in: the plan's, raised for a Lingane
    plan to where the fitted model holds (:func:`lingane_valid_min_M`)."""
    lo, hi = req.ligand_min_M, req.ligand_max_M
    if req.model == "lingane":
        valid = lingane_valid_min_M(req, thetas)
        if math.isfinite(valid) and lo < valid < hi / 1.5:
            lo = valid
    return lo, hi


def spec_of(req: PlanInput) -> ModelSpec:
    return ModelSpec(
        model=req.model,
        electrons=req.electrons,
        temperature_K=req.temperature_K,
        metal_total_M=req.metal_total_M,
        fitted_state=req.fitted_state,
        fixed_log10_beta=req.fixed_log10_beta,
    )


def _stderrs(
    spec: ModelSpec, theta: np.ndarray, c: np.ndarray, sigma: float, *, exact: bool = True
) -> np.ndarray:
    cov = constants_covariance(spec, theta, c, sigma, exact=exact)
    return np.sqrt(np.where(np.diagonal(cov) >= 0, np.diagonal(cov), np.nan))


def _criterion(spec, theta, c, interest, kind) -> float:
    from cvfit.plan.design import criterion_values
    from cvfit.plan.information import covariance_from_sums

    J, Jt = _rows(spec, theta, c)
    r = reference_row(theta.size)
    A = J.T @ Jt + np.outer(r, r)
    B = J.T @ J + np.outer(r, r)
    return float(criterion_values(covariance_from_sums(A, B), interest, kind))


def assess(name: str, req: PlanInput, thetas: np.ndarray, total_M: np.ndarray) -> DesignAssessment:
    """Predicted standard errors and criterion of one design (exact free ligand)."""
    spec = spec_of(req)
    c = np.sort(np.asarray(total_M, dtype=float))
    se = np.array([_stderrs(spec, t, c, req.E_half_stderr_V) for t in thetas])
    crit = np.array([_criterion(spec, t, c, req.interest, req.criterion) for t in thetas])
    worst = np.where(np.all(np.isfinite(se), axis=0), np.max(se, axis=0), np.nan)
    return DesignAssessment(
        name=name,
        ligand_M=tuple(float(x) for x in c),
        free_ligand_M=tuple(float(x) for x in free_ligand(spec, thetas[0], c)),
        stderr=tuple(float(x) for x in se[0]),
        stderr_worst=tuple(float(x) for x in worst),
        criterion_mean=float(np.mean(crit)),
        criterion_worst=float(np.max(crit)),
    )


def _points_needed(req: PlanInput, thetas: np.ndarray, design: np.ndarray) -> int | None:
    target = req.target_stderr_log10
    if target is None:
        return None
    spec = spec_of(req)
    idx = list(req.interest)

    def worst(n: int) -> float:
        c = stretched_design(design, n)
        # tabulated free ligand: the search evaluates hundreds of points per size
        se = [_stderrs(spec, t, c, req.E_half_stderr_V, exact=False)[idx] for t in thetas]
        arr = np.array(se)
        return float(np.max(arr)) if np.all(np.isfinite(arr)) else math.inf

    lo = len(req.names) + 1
    if worst(lo) <= target:
        return lo
    hi = lo
    while worst(hi) > target:
        if hi >= MAX_POINTS_SEARCHED:
            return None
        lo, hi = hi, min(2 * hi, MAX_POINTS_SEARCHED)
    while hi - lo > 1:  # worst(lo) > target >= worst(hi)
        mid = (lo + hi) // 2
        if worst(mid) <= target:
            hi = mid
        else:
            lo = mid
    return hi


def _fmt(c: float) -> str:
    return f"{c:.3g} M"


def _warnings(req: PlanInput, thetas: np.ndarray, designs, needed) -> list[PlanWarning]:
    out: list[PlanWarning] = []
    spec = spec_of(req)
    theta = thetas[0]
    names = req.names
    decades = math.log10(req.ligand_max_M / req.ligand_min_M)
    if req.model == "lingane" and decades < 1.0:
        out.append(
            PlanWarning(
                "short_ligand_range",
                f"the ligand range spans {decades:.2f} decades; p − q needs about one or "
                "more (common practice)",
            )
        )
    for d in designs:
        if d.name == "log_spaced":  # a comparison, not a design anyone will make
            continue
        c = np.array(d.ligand_M)
        L = np.array(d.free_ligand_M)
        if req.metal_total_M is not None:
            share = 1.0 - L / c
            low = c[~(share <= BOUND_LIGAND_SHARE_MAX)]
            if low.size:
                out.append(
                    PlanWarning(
                        "low_ligand_excess",
                        f"{d.name}: more than {100 * BOUND_LIGAND_SHARE_MAX:g} % of the "
                        f"ligand is bound at {low.size} point(s) ({', '.join(map(_fmt, low))}; "
                        f"metal {req.metal_total_M:.3g} M); the fit corrects for it with the "
                        "mass balance, which is only as good as the constants (common "
                        "practice: >= 10-fold excess per bound ligand)",
                    )
                )
            # E½ moves by the model difference between free and total ligand
            shift = _shift_V(spec, theta, c, L)
            moved = c[shift > req.E_half_stderr_V]
            if moved.size:
                out.append(
                    PlanWarning(
                        "ligand_depletion",
                        f"{d.name}: bound ligand moves E½ by up to "
                        f"{1e3 * float(np.nanmax(shift)):.2f} mV (more than the "
                        f"{1e3 * req.E_half_stderr_V:.2f} mV noise) at {moved.size} point(s); "
                        "give metal_total_M in the series manifest so the fit uses the free "
                        "ligand (included in these predictions)",
                    )
                )
        if d.name == "proposed" and not all(math.isfinite(s) for s in d.stderr):
            out.append(
                PlanWarning(
                    "proposed_singular",
                    "the proposed design cannot determine "
                    + ", ".join(
                        n for n, s in zip(names, d.stderr, strict=True) if not math.isfinite(s)
                    ),
                )
            )
    rec = designs[0]
    out.extend(_model_range_warnings(req, thetas, designs))
    if req.model == "stepwise":
        betas = [float(x) for x in theta]
        L_lo = float(free_ligand(spec, theta, np.array([req.ligand_min_M]))[0])
        L_hi = float(free_ligand(spec, theta, np.array([req.ligand_max_M]))[0])
        for j in range(1, len(betas) + 1):
            Lj = fraction_peak_ligand_M(betas, j)
            if not L_lo <= Lj <= L_hi:
                total = Lj
                if req.metal_total_M is not None and spec.fitted_state == "ox":
                    total = Lj + req.metal_total_M * float(mean_ligand_number(Lj, betas))
                where = "above" if Lj > L_hi else "below"
                what = "peaks" if j < len(betas) else "is half-formed (n̄ = N − ½)"
                out.append(
                    PlanWarning(
                        "unresolved_constant",
                        f"{names[j - 1]}: ML_{j} {what} at free [L] = {Lj:.3g} M, {where} the "
                        f"planned range ({L_lo:.3g}–{L_hi:.3g} M free); a total ligand near "
                        f"{total:.3g} M would resolve it",
                    )
                )
    for n, s in zip(names, rec.stderr_worst, strict=True):
        if not math.isfinite(s):
            continue  # said by no_free_ligand or proposed_singular with the reason
        if not s <= IMPRECISE_LOG10:
            out.append(
                PlanWarning(
                    "imprecise_constant",
                    f"{constant_words(n)}: predicted standard error {s:.3g} (worst scenario) "
                    f"with the recommended {req.points} points, above {IMPRECISE_LOG10} "
                    "(common practice)",
                )
            )
    if req.model == "lingane":
        ratio, delta = float(theta[0]), float(theta[1])
        L_min = float(np.nanmin(rec.free_ligand_M))
        level = ratio + delta * math.log10(L_min)
        if level < math.log10(_DOMINANT):
            out.append(
                PlanWarning(
                    "line_bends",
                    f"at {L_min:.3g} M free ligand β_ox/β_red·[L]^(p−q) ≈ 10^{level:.1f} < "
                    f"{_DOMINANT:g} (reduced form taken as uncomplexed): the free ion is not "
                    "negligible and the Lingane line bends there; raise ligand_min_M to about "
                    f"{10 ** ((math.log10(_DOMINANT) - ratio) / delta):.3g} M or use the "
                    "stepwise model",
                )
            )
    second = _second_reference_warning(req, thetas, rec)
    if second is not None:
        out.append(second)
    if req.target_stderr_log10 is not None and needed is None:
        out.append(
            PlanWarning(
                "target_unreachable",
                f"no design of up to {MAX_POINTS_SEARCHED} points gives every constant of "
                f"interest a standard error <= {req.target_stderr_log10:g}; the ligand-free "
                "reference limits constants tied to E½(s) — replicate it, or widen the "
                "ligand range",
            )
        )
    return out


def _second_reference_warning(
    req: PlanInput, thetas: np.ndarray, rec: DesignAssessment
) -> PlanWarning | None:
    """How much a second ligand-free solution would narrow the constants tied to E½(s)."""
    spec = spec_of(req)
    c = np.array(rec.ligand_M)
    one = _stderrs(spec, thetas[0], c, req.E_half_stderr_V)
    cov = constants_covariance(spec, thetas[0], c, req.E_half_stderr_V, references=2)
    two = np.sqrt(np.abs(np.diagonal(cov)))
    gains = [
        (n, a, b)
        for n, a, b in zip(req.names, one, two, strict=True)
        if math.isfinite(a) and math.isfinite(b) and b < a * 0.99
    ]
    if not gains:
        return None
    said = "; ".join(
        f"{constant_words(n)} {a:.3g} → {b:.3g} ({100 * (1 - b / a):.0f} % narrower)"
        for n, a, b in gains
    )
    return PlanWarning(
        "second_reference",
        "measure a second ligand-free solution (one before and one after the titration): "
        "E½(s) is one more solution, and a single one that is off (a drifting reference "
        "electrode, a different junction potential) moves every constant tied to it "
        "unseen, while two show it as their difference; with the planned noise alone the "
        f"predicted standard errors would shrink: {said}",
    )


def _model_range_warnings(req: PlanInput, thetas: np.ndarray, designs) -> list[PlanWarning]:
    """Where the fitted model cannot hold: no free ligand left, or a Lingane line that bends."""
    out: list[PlanWarning] = []
    for d in designs:
        c = np.array(d.ligand_M)
        dry = c[~np.isfinite(np.array(d.free_ligand_M))]
        if dry.size and req.metal_total_M is not None:
            bound = float(thetas[0][1]) if req.model == "lingane" else len(req.values)
            out.append(
                PlanWarning(
                    "no_free_ligand",
                    f"{d.name}: by the mass balance no ligand is left free at {dry.size} "
                    f"point(s) ({', '.join(map(_fmt, dry))}): {req.metal_total_M:.3g} M metal "
                    f"binds up to {bound:g} ligand(s) each, {bound * req.metal_total_M:.3g} M; "
                    "those points determine nothing and the constants cannot be predicted "
                    "(every error is n.d.): raise ligand_min_M above "
                    f"{bound * req.metal_total_M:.3g} M or lower the metal concentration",
                )
            )
    if req.model != "lingane":
        return out
    valid = lingane_valid_min_M(req, thetas)
    if not math.isfinite(valid) or valid <= req.ligand_min_M:
        return out
    if valid < req.ligand_max_M / 1.5:
        out.append(
            PlanWarning(
                "lingane_range_restricted",
                f"recommended: placed from {_fmt(valid)} up, not from ligand_min_M = "
                f"{_fmt(req.ligand_min_M)}: below it the free ion shifts E½ by more than "
                f"{LINGANE_BEND_SHARE:g}·σ ({1e3 * LINGANE_BEND_SHARE * req.E_half_stderr_V:.2f}"
                " mV) off the Lingane line (worst scenario), and points there would bias "
                "p − q; to use the lower concentrations, plan and fit the stepwise model",
            )
        )
    else:
        out.append(
            PlanWarning(
                "lingane_range_restricted",
                f"the Lingane line holds only from about {_fmt(valid)} total ligand (the free "
                f"ion shifts E½ by more than {LINGANE_BEND_SHARE:g}·σ below it), above most of "
                "the planned range: plan and fit the stepwise model instead",
            )
        )
    return out


def _shift_V(spec: ModelSpec, theta: np.ndarray, c: np.ndarray, L: np.ndarray) -> np.ndarray:
    """|E½(free [L]) − E½(total c)| at the expected constants."""
    from cvfit.chemistry.complexation import log_leden_F0
    from cvfit.units import nernst_slope_V_per_decade, thermal_voltage

    if spec.model == "lingane":
        S = nernst_slope_V_per_decade(spec.temperature_K, spec.electrons)
        return np.abs(S * float(theta[1]) * np.log10(c / L))
    k = thermal_voltage(spec.temperature_K, spec.electrons)
    fixed = tuple(spec.fixed_log10_beta)

    def lnratio(x: np.ndarray) -> np.ndarray:
        fit = log_leden_F0(x, theta)
        other = log_leden_F0(x, fixed)
        return fit - other

    return np.abs(k * (lnratio(c) - lnratio(L)))


def make_plan(req: PlanInput) -> PlanResult:
    """Recommended design, its assessment beside the log-spaced and proposed designs, the
    points a target needs, and the warnings (see docs/plan.md)."""
    spec = spec_of(req)
    thetas = scenarios(req.values, req.ranges)
    lo, hi = _design_range(req, thetas)
    rec = exchange_design(spec, thetas, lo, hi, req.points, req.interest, req.criterion)
    logd = log_spaced(req.ligand_min_M, req.ligand_max_M, req.points)
    designs = [assess("recommended", req, thetas, rec), assess("log_spaced", req, thetas, logd)]
    habit = assess("recommended", req, thetas, log_spaced(lo, hi, req.points))
    if habit.criterion_mean < designs[0].criterion_mean:
        # the search runs on the tabulated free ligand; never recommend worse than habit
        # (log-spaced over the range where the fitted model holds)
        designs[0] = habit
    if req.proposed_ligand_M:
        designs.append(assess("proposed", req, thetas, np.array(req.proposed_ligand_M)))
    needed = _points_needed(req, thetas, np.array(designs[0].ligand_M))
    warnings = _warnings(req, thetas, designs, needed)
    return PlanResult(
        request=req,
        scenarios=tuple(tuple(float(x) for x in t) for t in thetas),
        designs=tuple(designs),
        points_needed=needed,
        warnings=tuple(warnings),
    )
