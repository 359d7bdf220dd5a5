"""Terminal-summary lines of the global curve fit."""

from __future__ import annotations

from cvfit.formatting import format_pm
from cvfit.pipeline.results import SeriesResult

__all__ = ["global_lines"]


def global_lines(result: SeriesResult) -> list[str]:
    """The global fit's constants beside the two-step ones (empty without a global fit)."""
    g = result.global_fit
    if g is None:
        return []

    def q(x) -> str:
        return f"{format_pm(x.value, x.stderr)}   95 % [{x.ci95[0]:.4f}, {x.ci95[1]:.4f}]"

    tie = "the DeFord–Hume model" if g.model == "stepwise" else "the Lingane line"
    lines = [
        f"Global curve fit of {len(g.files)} curves (E½ tied by {tie}, "
        f"{g.simulations} simulations, reduced χ² {g.reduced_chi2:.2f}):",
    ]
    if g.model == "stepwise":
        for j, b in enumerate(g.log10_beta, start=1):
            lines.append(f"  log10 β_{j} ({g.fitted_state})".ljust(24) + q(b))
    else:
        lines.append("  p − q                 " + q(g.delta_ligands))
        lines.append("  log10(β_ox/β_red)     " + q(g.log10_beta_ratio))
    if g.alpha is not None:
        lines.append("  α (shared)            " + q(g.alpha))
    if g.double_layer_F is not None:
        c = g.double_layer_F
        lines.append(f"  C_dl (shared)         {format_pm(c.value, c.stderr, scale=1e6)} µF")
    return lines
