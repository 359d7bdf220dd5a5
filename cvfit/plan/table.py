"""The plan as text for the terminal: designs, predicted standard errors, warnings."""

from __future__ import annotations

import math

from cvfit.plan.result import PlanResult
from cvfit.plan.words import constant_words, design_words

__all__ = ["plan_table"]

_ORDER = ("recommended", "proposed", "log_spaced")


def _se(x: float) -> str:
    return f"{x:.3g}" if math.isfinite(x) else "n.d."


def plan_table(result: PlanResult) -> str:
    """Plain-text summary: the recommended concentrations, then one row per constant with
    its predicted standard error (expected values / worst scenario) for each design."""
    req = result.request
    designs = [d for name in _ORDER for d in result.designs if d.name == name]
    rec = result.design("recommended")
    if rec is None:  # every plan has one (planner.plan_titration); a plain check for mypy
        raise ValueError("the plan result has no recommended design")
    lines = [
        f"cvfit plan: {req.title}  ({req.model} model, {req.points} solutions + ligand-free "
        f"reference, E½ noise {1e3 * req.E_half_stderr_V:.3g} mV, criterion {req.criterion})",
        "recommended total ligand / (mol/L): " + ", ".join(f"{c:.3g}" for c in rec.ligand_M),
        "",
    ]
    head = ["constant", "expected"] + [design_words(d.name) for d in designs]
    rows = [head]
    for i, (n, v) in enumerate(zip(req.names, req.values, strict=True)):
        mark = "*" if n in req.optimise_for else " "
        rows.append(
            [f"{constant_words(n)}{mark}", f"{v:g}"]
            + [f"{_se(d.stderr[i])} / {_se(d.stderr_worst[i])}" for d in designs]
        )
    widths = [max(len(r[k]) for r in rows) for k in range(len(head))]
    for r in rows:
        lines.append("  ".join(cell.ljust(w) for cell, w in zip(r, widths, strict=True)))
    lines.append(
        "standard errors: at the expected constants / worst over their ranges; * = optimised for"
    )
    if req.target_stderr_log10 is not None:
        needed = "not reachable" if result.points_needed is None else str(result.points_needed)
        lines.append(
            f"points needed for a standard error <= {req.target_stderr_log10:g}: {needed}"
        )
    for w in result.warnings:
        lines.append(f"warning [{w.kind}]: {w.message}")
    return "\n".join(lines)
