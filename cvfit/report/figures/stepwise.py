"""Figures of the stepwise model: E½ shift with the fitted curve, Leden functions F0–F2,
species distribution of both oxidation states and the mean ligand number.

References
----------
Leden, I. Z. Phys. Chem. A 1941, 188, 160.
DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from cvfit.chemistry.complexation import log_leden_F0
from cvfit.chemistry.speciation import leden_F_functions, mean_ligand_number, species_fractions
from cvfit.pipeline.results import SeriesResult
from cvfit.report.figures.legend_placement import legend_clear_of
from cvfit.report.figures.print_style import ONE_COLUMN_IN, TWO_COLUMNS_IN
from cvfit.report.figures.titration import (
    _STYLE,
    COLOUR_MAP,
    PER_LITRE,
    _save,
    _set_title,
    _superscript,
    apply_margins,
    plt,
)
from cvfit.report.headline import constant_lines
from cvfit.titration.stepwise_result import StepwiseFit
from cvfit.units import thermal_voltage

__all__ = ["plot_stepwise_shift", "plot_leden", "plot_species"]

_BLUE = "#1f4e79"


def _message(path: Path, text: str) -> Path:
    with plt.rc_context(_STYLE):
        fig, ax = plt.subplots(figsize=(5.0, 3.0))
        ax.text(0.5, 0.5, text, ha="center", transform=ax.transAxes)
        ax.set_axis_off()
        return _save(fig, path)


def _shift(result: SeriesResult, fit: StepwiseFit, path: Path) -> Path:
    L = np.array(fit.free_ligand_M)
    k = thermal_voltage(result.series.temperature_K, result.series.electrons)
    E0 = fit.E_half_free.value
    sign = 1.0 if fit.fitted_state == "ox" else -1.0
    betas = fit.log10_beta_values
    obs = -sign * k * (np.array(fit.ln_F0_observed) - log_leden_F0(L, fit.fixed_log10_beta))
    xs = np.geomspace(L.min() / 2, L.max() * 2, 300)
    curve = -sign * k * (log_leden_F0(xs, betas) - log_leden_F0(xs, fit.fixed_log10_beta))
    yerr = np.array(fit.ln_F0_stderr) * k * 1e3
    with plt.rc_context(_STYLE):
        fig, (ax, axr) = plt.subplots(
            2, 1, figsize=(ONE_COLUMN_IN, 3.9), sharex=True, gridspec_kw={"height_ratios": [3, 1]}
        )  # printed one column wide, as the Lingane line's figure
        ax.errorbar(
            np.log10(L),
            obs * 1e3,
            yerr=yerr,
            fmt="o",
            color=_BLUE,
            ms=5,
            capsize=2,
            label="measured (free [L])",
        )
        ax.plot(
            np.log10(xs),
            curve * 1e3,
            color=_BLUE,
            lw=1.2,
            label=f"stepwise fit, N = {fit.n_complexes}",
        )
        axr.axhline(0, color="0.4", lw=0.8)
        axr.errorbar(
            np.log10(L),
            np.array(fit.residuals_V) * 1e3,
            yerr=yerr,
            fmt="o",
            color=_BLUE,
            ms=4,
            capsize=2,
        )
        axr.set_ylabel("residual / mV")
        axr.set_xlabel(f"log10([L] / {PER_LITRE})")
        ax.set_ylabel(f"E½(c) − E½(s) / mV\n(E½(s) = {E0 * 1e3:.1f} mV)")
        # the constants a reader looks for first, on the figure itself: under the title
        top = _set_title(ax, result.series.title or "half-wave shift", fontsize=8.0,
                         extra=constant_lines(fit.to_dict()))  # fmt: skip
        margins = (0.85, 0.1, 0.45, top)
        fig.set_size_inches(ONE_COLUMN_IN, 3.0 + top)  # the plot keeps its height
        apply_margins(fig, margins)  # the legend is measured at the final layout
        legend_clear_of(ax, np.concatenate([np.log10(L), np.log10(xs)]),
                        np.concatenate([obs, curve]) * 1e3, frameon=False, fontsize=7)  # fmt: skip
        return _save(fig, path, margins_in=margins)


def _leden(result: SeriesResult, fit: StepwiseFit, path: Path) -> Path:
    L = np.array(fit.free_ligand_M)
    betas = fit.log10_beta_values
    order = min(2, fit.n_complexes)
    F0 = np.exp(np.array(fit.ln_F0_observed))
    sF0 = F0 * np.array(fit.ln_F0_stderr)
    observed = leden_F_functions(L, F0, betas, order=order)
    xs = np.linspace(0.0, L.max() * 1.05, 300)[1:]
    model = leden_F_functions(xs, np.exp(log_leden_F0(xs, betas)), betas, order=order)
    with plt.rc_context(_STYLE):
        # three panels fill two journal columns (print_style): text stays >= 7 pt printed
        fig, axes = plt.subplots(
            1, order + 1, figsize=(TWO_COLUMNS_IN * (order + 1) / 3, 2.9), layout="constrained"
        )
        axes = np.atleast_1d(axes)
        for j, ax in enumerate(axes):
            err = sF0 / L**j
            ax.errorbar(L, observed[j], yerr=err, fmt="o", color=_BLUE, ms=4, capsize=2)
            ax.plot(xs, model[j], color=_BLUE, lw=1.2)
            ax.set_xlabel(f"[L] / {PER_LITRE}")
            unit = "" if j == 0 else f" / (mol/L){_superscript(j)}"
            ax.set_ylabel(f"F{j}{unit}")
            lo, hi = np.nanmin(model[j]), np.nanmax(model[j])
            pad = 0.25 * (hi - lo) if hi > lo else abs(hi) * 0.5 + 1.0
            ax.set_ylim(0.0 if j == 0 else lo - pad, hi + pad)  # F0 >= 1 by definition
        fig.suptitle("Leden functions: points from E½, curves from the fitted β_j", fontsize=9)
        return _save(fig, path)


def _species(result: SeriesResult, fit: StepwiseFit, path: Path) -> Path:
    L = np.array(fit.free_ligand_M)
    fitted = fit.log10_beta_values
    states = {"ox": fitted, "red": list(fit.fixed_log10_beta)}
    if fit.fitted_state == "red":
        states = {"ox": list(fit.fixed_log10_beta), "red": fitted}
    lo, hi = np.log10(L.min()) - 1.5, np.log10(L.max()) + 1.5
    xs = 10.0 ** np.linspace(lo, hi, 400)
    cmap = plt.get_cmap(COLOUR_MAP)
    with plt.rc_context(_STYLE):
        fig, axes = plt.subplots(1, 3, figsize=(TWO_COLUMNS_IN, 2.9), layout="constrained")
        for ax, (name, betas) in zip(axes[:2], states.items(), strict=True):
            a = species_fractions(xs, betas)
            for j in range(a.shape[0]):
                colour = cmap(j / max(a.shape[0] - 1, 1))
                ax.plot(
                    np.log10(xs), a[j], color=colour, lw=1.3, label="M" if j == 0 else f"ML{j}"
                )
            ax.axvspan(np.log10(L.min()), np.log10(L.max()), color="0.85", alpha=0.5, lw=0)
            ax.set_ylim(-0.02, 1.02)
            ax.set_xlabel(f"log10([L] / {PER_LITRE})")
            ax.set_ylabel("fraction of the metal")
            label = "oxidised" if name == "ox" else "reduced"
            note = "" if betas else " (not complexed)"
            ax.set_title(f"{label} form{note}", fontsize=9)
            ax.legend(loc="center left", frameon=False, fontsize=7)
        ax = axes[2]
        for name, betas, style in (("ox", states["ox"], "-"), ("red", states["red"], "--")):
            ax.plot(
                np.log10(xs),
                mean_ligand_number(xs, betas),
                style,
                color=_BLUE,
                lw=1.3,
                label="oxidised" if name == "ox" else "reduced",
            )
        ax.axvspan(
            np.log10(L.min()),
            np.log10(L.max()),
            color="0.85",
            alpha=0.5,
            lw=0,
            label="measured range",
        )
        ax.set_xlabel(f"log10([L] / {PER_LITRE})")
        ax.set_ylabel("mean ligand number n̄\n= d ln F0 / d ln[L]")
        ax.legend(loc="upper left", frameon=False, fontsize=7)
        return _save(fig, path)


def _drawn(draw):
    """A figure of the stepwise fit of *result*, or a note when there is no fit."""

    def plot(result: SeriesResult, path: str | Path) -> Path:
        fit = result.fit
        if not isinstance(fit, StepwiseFit):
            return _message(Path(path), "no stepwise fit: see the flags")
        return draw(result, fit, Path(path))

    plot.__doc__ = f"The stepwise figure drawn by ``{draw.__name__}``, or a note without a fit."
    return plot


#: The stepwise model's figures (entries of :mod:`cvfit.report.figures.registry`).
plot_stepwise_shift = _drawn(_shift)
plot_leden = _drawn(_leden)
plot_species = _drawn(_species)
