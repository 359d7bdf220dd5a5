"""Result record of the stepwise fit, its verdicts on each constant and its JSON form."""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from cvfit.chemistry.speciation import (
    fraction_peak_ligand_M,
    ligand_for_fraction_M,
    species_fractions,
)
from cvfit.flags import Flag
from cvfit.formatting import format_pm
from cvfit.quantity import Quantity, clean_number
from cvfit.titration.error_budget import ErrorBudget
from cvfit.titration.stepwise_least_squares import CandidateFit, StepwiseData
from cvfit.titration.stepwise_model_choice import CandidateSummary

__all__ = [
    "StepwiseFit",
    "UndeterminedConstant",
    "ConditionalConstants",
    "verdicts",
    "null_stepwise_dict",
]

#: A complex whose largest fraction over the measured range stays below this is flagged.
MIN_MAX_FRACTION = 0.05
#: Share of the metal a complex must reach for its constant to be determined: the advice
#: of BETA_UNDETERMINED names the ligand concentration where it does (common practice).
DETERMINING_FRACTION = 0.2
#: Highest free ligand concentration taken as reachable, mol/L: a neat liquid ligand is
#: about 10–20 mol/L, and solutions beyond ~10 M are not a titration (common practice).
REACHABLE_LIGAND_M = 10.0


def _advice(u: UndeterminedConstant, log10_beta: list[float], measured_max_M: float) -> str:
    """What would determine β_j, computed from the model: where ML_j reaches 20 %."""
    j, share = u.j, f"{100 * DETERMINING_FRACTION:g} %"
    need = u.suggested_ligand_M
    if need is None:
        peak = float(np.max(species_fractions(np.geomspace(1e-30, 1e5, 3501), log10_beta)[j]))
        return (
            f"ML{j} never exceeds {100 * peak:.1f} % of the metal at any ligand concentration "
            "(its neighbours dominate): no ligand range will determine it"
        )
    if need > REACHABLE_LIGAND_M:
        return (
            f"ML{j} would reach {share} of the metal only at [L] ≈ {need:.2g} M, beyond any "
            "reachable concentration: no ligand range will determine it"
        )
    if need > measured_max_M:
        return f"extend the series to [L] ≈ {need:.2g} M, where ML{j} reaches {share} of the metal"
    return (
        f"ML{j} reaches {share} of the metal at [L] ≈ {need:.2g} M, inside the measured range: "
        "more points near there or less E½ noise, not a wider range"
    )


@dataclass(frozen=True)
class UndeterminedConstant:
    """A β_j the measured ligand range does not determine.

    Attributes
    ----------
    j : int
    upper_limit_95 : float or None
        One-sided 95 % profile upper limit of log10 β_j, when the data give one.
    reason : str
    suggested_ligand_M : float or None
        Free ligand concentration at which ML_j reaches 20 % of the metal (at the fitted
        constants, or at its upper limit beyond the chosen N): what the series should
        reach to determine it. None when no reachable concentration (<= 10 M) will do.
    """

    j: int
    upper_limit_95: float | None
    reason: str
    suggested_ligand_M: float | None

    def to_dict(self) -> dict[str, Any]:
        return {
            "j": self.j,
            "upper_limit_95": clean_number(self.upper_limit_95),
            "reason": self.reason,
            "suggested_ligand_M": clean_number(self.suggested_ligand_M),
        }


@dataclass(frozen=True)
class ConditionalConstants:
    """Conditional constants at one pH: log10 β'_j = log10 β_j + j log10 α_L."""

    pH: float
    log10_alpha_L: float
    log10_beta: tuple[Quantity, ...]

    def to_dict(self) -> dict[str, Any]:
        return {
            "pH": self.pH,
            "log10_alpha_L": clean_number(self.log10_alpha_L),
            "log10_beta": [
                {"j": j, **q.to_dict()} for j, q in enumerate(self.log10_beta, start=1)
            ],
        }


@dataclass(frozen=True, kw_only=True)
class StepwiseFit:
    """Result of :func:`cvfit.titration.stepwise.fit_stepwise` (all constants as log10, [L] in
    mol/L).

    Per-point tuples follow the order of the points given. ``error_budget`` holds one
    :class:`~cvfit.titration.error_budget.ErrorBudget` per log10 β_j (linearised at the optimum;
    its totals are the standard errors; the intervals are profile-likelihood), or None when
    the covariance is not available; ``extra_scatter_V`` the moment estimate of the
    solution-to-solution scatter beyond the per-file noise, V (None unweighted).
    """

    fitted_state: str
    fixed_log10_beta: tuple[float, ...]
    n_complexes: int
    log10_beta: tuple[Quantity, ...]
    determined: tuple[bool, ...]
    max_fraction: tuple[float, ...]
    covariance: tuple[tuple[float, ...], ...] | None
    E_half_free: Quantity
    candidates: tuple[CandidateSummary, ...]
    alpha: float
    undetermined: tuple[UndeterminedConstant, ...]
    labels: tuple[str, ...]
    free_ligand_M: tuple[float, ...]
    log10_alpha_L: tuple[float, ...]
    ln_F0_observed: tuple[float, ...]
    ln_F0_stderr: tuple[float, ...]
    residuals_V: tuple[float, ...]
    conditional: tuple[ConditionalConstants, ...]
    thermodynamic_log10_beta: tuple[Quantity, ...] | None
    ionic_strength_M: float | None
    free_ligand_iterations: int
    n_points: int
    dof: int
    weighted: bool
    flags: tuple[Flag, ...] = ()
    model: str = "stepwise"
    error_budget: tuple[ErrorBudget, ...] | None = None
    extra_scatter_V: float | None = None
    #: The chosen optimum as :class:`lmfit.Parameters` (E½(s), the fitted log10 β_j with
    #: their bounds and lmfit's standard errors, the other form's given constants with
    #: ``vary=False``), for Python users; not compared, not written to results.json.
    lmfit_params: Any = field(default=None, compare=False, repr=False)

    def __post_init__(self) -> None:
        if self.fitted_state not in ("ox", "red"):
            raise ValueError(f"fitted_state must be 'ox' or 'red', got {self.fitted_state!r}")
        n = len(self.labels)
        for name in ("free_ligand_M", "log10_alpha_L", "ln_F0_observed", "residuals_V"):
            if len(getattr(self, name)) != n:
                raise ValueError(f"{name} needs one value per point")
        if len(self.log10_beta) != self.n_complexes:
            raise ValueError("log10_beta needs one Quantity per complex")

    @property
    def log10_beta_values(self) -> list[float]:
        return [q.value for q in self.log10_beta]

    def summary_lines(self) -> list[str]:
        """Its lines in the terminal summary: the chosen N and why, each log10 β_j with its
        interval, the rest."""
        return _summary_lines(self)

    def to_dict(self) -> dict[str, Any]:
        """The results.json ``fit`` record of the stepwise model."""
        betas = []
        for j, (q, det, mf) in enumerate(
            zip(self.log10_beta, self.determined, self.max_fraction, strict=True), start=1
        ):
            betas.append(
                {"j": j, **q.to_dict(), "determined": det, "max_fraction": clean_number(mf)}
            )
        budget = None
        if self.error_budget is not None:
            budget = {f"log10_beta_{j}": b.to_dict() for j, b in enumerate(self.error_budget, 1)}
        return {
            "model": "stepwise",
            "error_budget": budget,
            "extra_scatter_V": clean_number(self.extra_scatter_V),
            "fitted_state": self.fitted_state,
            "fixed_log10_beta": list(self.fixed_log10_beta),
            "n_complexes": self.n_complexes,
            "log10_beta": betas,
            "covariance": None
            if self.covariance is None
            else [[clean_number(x) for x in row] for row in self.covariance],
            "E_half_free_V": self.E_half_free.to_dict(),
            "selection": {
                "criterion": "extra-sum-of-squares F-test",
                "alpha": self.alpha,
                "candidates": [c.to_dict() for c in self.candidates],
            },
            "undetermined": [u.to_dict() for u in self.undetermined],
            "points": [
                {
                    "file": lab,
                    "free_ligand_M": clean_number(L),
                    "log10_alpha_L": clean_number(a),
                    "ln_F0": clean_number(f),
                    "ln_F0_stderr": clean_number(s),
                    "residual_V": clean_number(r),
                }
                for lab, L, a, f, s, r in zip(
                    self.labels,
                    self.free_ligand_M,
                    self.log10_alpha_L,
                    self.ln_F0_observed,
                    self.ln_F0_stderr,
                    self.residuals_V,
                    strict=True,
                )
            ],
            "conditional": [c.to_dict() for c in self.conditional],
            "thermodynamic_log10_beta": None
            if self.thermodynamic_log10_beta is None
            else [
                {"j": j, **q.to_dict()}
                for j, q in enumerate(self.thermodynamic_log10_beta, start=1)
            ],
            "ionic_strength_M": clean_number(self.ionic_strength_M),
            "free_ligand_iterations": self.free_ligand_iterations,
            "n_points": self.n_points,
            "dof": self.dof,
            "weighted": self.weighted,
            "flags": [f.to_dict() for f in self.flags],
        }


def verdicts(
    data: StepwiseData,
    chosen: CandidateFit,
    intervals: list[tuple[float, float]],
    larger: list[CandidateFit],
    uppers: list[float],
):
    """Which constants the range determines, their largest fractions, and advice.

    A constant is determined when its profile interval is closed on both sides; the
    largest fraction of each complex over the measured free-ligand range is reported and
    flagged below ``MIN_MAX_FRACTION``. For the first complex beyond the chosen N the
    complexes beyond the chosen N (every larger candidate fitted) the profile of that
    candidate's top constant gives a one-sided upper limit, and the ligand concentration
    where that complex would be half-formed at its upper limit is suggested.
    """
    N = chosen.N
    vals = [float(x) for x in chosen.params[1:]]
    grid = np.geomspace(float(data.ligand_M.min()), float(data.ligand_M.max()), 200)
    frac = species_fractions(grid, vals)[1:]
    max_frac = [float(frac[j].max()) for j in range(N)]
    determined, undetermined, flags = [], [], []
    for j in range(1, N + 1):
        lo, hi = intervals[j - 1]
        ok = math.isfinite(lo) and math.isfinite(hi) and not chosen.at_bound[j - 1]
        determined.append(ok)
        if not ok:
            target = ligand_for_fraction_M(vals, j, DETERMINING_FRACTION)
            why = "its profile-likelihood interval is open (runs into the bound)"
            undetermined.append(UndeterminedConstant(j, clean_number(hi), why, target))
        elif max_frac[j - 1] < MIN_MAX_FRACTION:
            flags.append(
                Flag(
                    "COMPLEX_BARELY_FORMED",
                    f"ML{j} never exceeds {100 * max_frac[j - 1]:.1f} % of the metal over the "
                    f"measured range; β{j} rests on a small effect (centre the range near "
                    f"[L] = {fraction_peak_ligand_M(vals, j):.2g} M)",
                )
            )
    for fit_j, raw_upper in zip(larger, uppers, strict=True):
        j = fit_j.N
        up = clean_number(raw_upper)
        target = None
        if up is not None:  # at its upper limit: the least ligand that could do
            target = ligand_for_fraction_M([*vals, *[up] * (j - N)], j, DETERMINING_FRACTION)
        why = (
            f"adding ML{j} does not improve the fit significantly over the measured "
            f"range (up to {float(data.ligand_M.max()):.3g} M free ligand)"
        )
        undetermined.append(UndeterminedConstant(j, up, why, target))
    if undetermined:
        parts = []
        top = float(data.ligand_M.max())
        for u in undetermined:
            lim = (
                f"log10 β{u.j} < {u.upper_limit_95:.2f}"
                if u.upper_limit_95 is not None
                else "no upper limit"
            )
            model = vals if u.j <= N else [*vals, *[u.upper_limit_95 or 0.0] * (u.j - N)]
            sug = "" if u.upper_limit_95 is None and u.j > N else f"; {_advice(u, model, top)}"
            parts.append(f"β{u.j} ({lim}{sug})")
        # a concentration no solution can reach is no suggestion
        undetermined = [
            replace(u, suggested_ligand_M=None)
            if (u.suggested_ligand_M or 0.0) > REACHABLE_LIGAND_M
            else u
            for u in undetermined
        ]
        flags.append(
            Flag(
                "BETA_UNDETERMINED",
                "not determined by the ligand range measured: " + "; ".join(parts),
                "info" if all(u.j > N for u in undetermined) else "warning",
            )
        )
    return determined, max_frac, undetermined, flags


def null_stepwise_dict(n_points: int, flags) -> dict[str, Any]:
    """The ``fit`` record of a stepwise series that could not be fitted (flags say why)."""
    return {
        "model": "stepwise",
        "error_budget": None,
        "extra_scatter_V": None,
        "fitted_state": None,
        "fixed_log10_beta": [],
        "n_complexes": None,
        "log10_beta": [],
        "covariance": None,
        "E_half_free_V": {"value": None, "stderr": None, "ci95": [None, None]},
        "selection": {"criterion": "extra-sum-of-squares F-test", "alpha": None, "candidates": []},
        "undetermined": [],
        "points": [],
        "conditional": [],
        "thermodynamic_log10_beta": None,
        "ionic_strength_M": None,
        "free_ligand_iterations": 0,
        "n_points": int(n_points),
        "dof": None,
        "weighted": False,
        "flags": [f.to_dict() for f in flags],
    }


def _ci(lo: float, hi: float, shown: str = "0.00") -> str:
    """The interval in the digits of the value as *shown* (an open side: "open")."""
    digits = len(shown.split(" ± ")[0].split(".")[-1]) if "." in shown else 0

    def side(x: float) -> str:
        return f"{x:.{digits}f}" if math.isfinite(x) else "open"

    return f"[{side(lo)}, {side(hi)}]"


def _summary_lines(fit: StepwiseFit) -> list[str]:
    """A few lines: chosen N and why, each log10 β_j with its interval, the rest."""
    form = "oxidised" if fit.fitted_state == "ox" else "reduced"
    other = (
        "other form fixed at log10 β = " + ", ".join(f"{b:g}" for b in fit.fixed_log10_beta)
        if fit.fixed_log10_beta
        else "other form not complexed"
    )
    lines = [
        f"Stepwise fit ({form} form; {other}) on {fit.n_points} points, "
        f"N = {fit.n_complexes} complexes chosen by an F-test at {fit.alpha:g} "
        f"({fit.dof} degrees of freedom):"
    ]
    for j, (q, det) in enumerate(zip(fit.log10_beta, fit.determined, strict=True), start=1):
        text = format_pm(q.value, q.stderr)
        mark = "" if det else "   NOT DETERMINED by this ligand range"
        lines.append(f"  log10 β{j:<2}  {text:>16}   95 % CI {_ci(*q.ci95, text)}{mark}")
    for u in fit.undetermined:
        if u.j > fit.n_complexes:
            lim = f"< {u.upper_limit_95:.2f}" if u.upper_limit_95 is not None else "no limit"
            lines.append(f"  log10 β{u.j:<2}  not resolved ({lim})")
    for c in fit.conditional:
        vals = ", ".join(f"{q.value:.2f}" for q in c.log10_beta)
        lines.append(f"  conditional at pH {c.pH:g} (log10 α_L = {c.log10_alpha_L:.2f}): {vals}")
    if fit.thermodynamic_log10_beta is not None:
        vals = ", ".join(f"{q.value:.2f}" for q in fit.thermodynamic_log10_beta)
        lines.append(f"  at I → 0 (Davies, approximate; I = {fit.ionic_strength_M:g} M): {vals}")
    lines.append("  (β_j in (mol/L)^-j; [L] = free ligand in mol/L)")
    return lines
