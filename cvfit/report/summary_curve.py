"""Terminal-summary lines of the curve fits and of the global curve fit."""

from __future__ import annotations

from cvfit.pipeline.results import SeriesResult
from cvfit.report.formatting import format_pm

__all__ = ["curve_lines", "global_lines"]


def curve_lines(result: SeriesResult) -> list[str]:
    """One line per curve-fitted file: the E½ used (or why not), k0, α, reduced χ²."""
    fitted = [f for f in result.files if f.measurement.curve_fit is not None]
    if not fitted:
        return []
    lines = ["Curve fits (E½ of these files from the whole curve where marked 'used'):"]
    for f in fitted:
        c = f.measurement.curve_fit
        if c.k0_lower_bound_cm_s is not None:
            k0 = f"k0 > {c.k0_lower_bound_cm_s:.3g} cm/s"
        else:
            k0 = "k0 " + format_pm(c.k0_cm_s.value, c.k0_cm_s.stderr, unit="cm/s")
        state = "used" if f.E_half_source == "curve" else "not used"
        name = f.file if len(f.file) <= 22 else "…" + f.file[-21:]
        lines.append(
            f"  {name:<22} E½ {format_pm(c.E_half_V.value, c.E_half_V.stderr, scale=1e3)} mV, "
            f"{k0}, α {c.alpha.value:.2f}, reduced χ² {c.reduced_chi2.value:.2f} — {state}"
        )
    lines.append("")
    return lines


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
