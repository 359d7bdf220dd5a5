"""The plan's figure: species distribution with the planned points, and the predicted
standard error of every constant for each design.

Returns a :class:`matplotlib.figure.Figure` (no pyplot state); the command line writes it.

References
----------
Leden, I. Z. Phys. Chem. A 1941, 188, 160 (species fractions from the overall constants).
"""

from __future__ import annotations

import math

import numpy as np
from matplotlib.figure import Figure

from cvfit.chemistry.speciation import species_fractions
from cvfit.plan.information import free_ligand
from cvfit.plan.planner import spec_of
from cvfit.plan.result import PlanResult
from cvfit.plan.words import constant_words

__all__ = ["plan_figure", "DESIGN_STYLE"]

#: Colour, marker and label of each design.
DESIGN_STYLE = {
    "recommended": ("#1f4e79", "v", "recommended"),
    "proposed": ("#c55a11", "o", "proposed"),
    "log_spaced": ("#7f7f7f", "|", "log-spaced"),
}


def _fractions(result: PlanResult, c: np.ndarray) -> tuple[np.ndarray, list[str]]:
    """Species fractions of the fitted form against total ligand (expected constants);
    Lingane: free ion and the one complex with β = β_ox/β_red (reduced form free)."""
    req = result.request
    theta = np.array(req.values)
    L = free_ligand(spec_of(req), theta, c)
    if req.model == "lingane":
        ratio, p = float(theta[0]), float(theta[1])
        with np.errstate(divide="ignore", invalid="ignore"):
            x = ratio + p * np.log10(L)
        cplx = 1.0 / (1.0 + 10.0 ** (-x))
        return np.array([1.0 - cplx, cplx]), ["M", f"ML$_{{{p:g}}}$"]
    a = species_fractions(L, list(theta))
    form = "ox" if req.fitted_state == "ox" else "red"
    labels = [f"M ({form})"] + [f"ML$_{{{j}}}$" for j in range(1, a.shape[0])]
    return a, labels


def plan_figure(result: PlanResult) -> Figure:
    """Two panels: (a) species fractions against total ligand with each design's points
    marked below the curves; (b) predicted standard error per constant and design, with
    the target as a line."""
    req = result.request
    fig = Figure(figsize=(9.0, 3.8), dpi=200)  # the PNG: 200 dpi, as the series' figures
    ax, bx = fig.subplots(1, 2, gridspec_kw={"width_ratios": [1.3, 1.0]})
    lo, hi = req.ligand_min_M, req.ligand_max_M
    pad = 10 ** (0.15 * math.log10(hi / lo))
    c = np.geomspace(lo / pad, hi * pad, 300)
    fractions, labels = _fractions(result, c)
    for row, label in zip(fractions, labels, strict=True):
        ax.plot(c, row, lw=1.5, label=label)
    ax.set_xscale("log")
    ax.set_xlabel("total ligand c$_L$ / (mol L$^{-1}$)")
    ax.set_ylabel("fraction of metal")
    ax.axvspan(lo, hi, color="#f2f2f2", zorder=0)
    designs = [d for d in result.designs]
    for k, d in enumerate(designs):
        colour, marker, name = DESIGN_STYLE[d.name]
        y = -0.08 - 0.08 * k
        ax.plot(
            d.ligand_M,
            [y] * len(d.ligand_M),
            ls="",
            marker=marker,
            color=colour,
            ms=6,
            label=name,
            clip_on=False,
        )
    ax.set_ylim(-0.08 - 0.08 * len(designs), 1.02)
    ax.set_yticks(np.linspace(0.0, 1.0, 6))
    ax.legend(fontsize=7, loc="center left", frameon=False)
    ax.set_title("(a) species and planned solutions", fontsize=9)

    width = 0.8 / max(len(designs), 1)
    x = np.arange(len(req.names))
    for k, d in enumerate(designs):
        colour, _, name = DESIGN_STYLE[d.name]
        se = np.array(d.stderr, dtype=float)
        worst = np.array(d.stderr_worst, dtype=float)
        pos = x - 0.4 + width * (k + 0.5)
        bx.bar(pos, np.where(np.isfinite(se), se, 0.0), width, color=colour, label=name)
        bx.plot(pos, worst, ls="", marker="_", color="black", ms=8)
    if req.target_stderr_log10 is not None:
        bx.axhline(req.target_stderr_log10, color="#a50021", lw=1, ls="--", label="target")
    tops = [v for d in designs for v in (*d.stderr, *d.stderr_worst) if math.isfinite(v)]
    if req.target_stderr_log10 is not None:
        tops.append(req.target_stderr_log10)
    if tops:
        bx.set_ylim(0.0, 1.35 * max(tops))  # room for the legend above the bars
    bx.set_xticks(x)
    bx.set_xticklabels([constant_words(n) for n in req.names], fontsize=7, rotation=20)
    bx.set_ylabel("predicted standard error")
    bx.set_title("(b) expected precision (bar: expected values; –: worst)", fontsize=9)
    bx.legend(fontsize=7, frameon=False)
    fig.tight_layout()
    return fig
