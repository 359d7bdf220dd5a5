"""Terminal summary lines of a stepwise fit (used by :mod:`cvfit.report.summary`)."""

from __future__ import annotations

import math

from cvfit.report.formatting import format_pm
from cvfit.titration.stepwise_result import StepwiseFit

__all__ = ["stepwise_lines"]


def _ci(lo: float, hi: float) -> str:
    def side(x: float) -> str:
        return f"{x:.2f}" if math.isfinite(x) else "open"

    return f"[{side(lo)}, {side(hi)}]"


def stepwise_lines(fit: StepwiseFit) -> list[str]:
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
        lines.append(f"  log10 β{j:<2}  {text:>16}   95 % CI {_ci(*q.ci95)}{mark}")
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
