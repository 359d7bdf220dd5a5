"""Figures of the pH model: E½ against pH with the fitted curve, the pKa marked and each
region's slope labelled; the fractions of each protonation state of both forms.

References
----------
Clark, W. M. Oxidation-Reduction Potentials of Organic Systems; Williams & Wilkins, 1960.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from cvfit.chemistry.protonation import proton_half_wave_V, protonation_fractions
from cvfit.pipeline.results import FileResult, SeriesResult
from cvfit.report.figures.legend_placement import quiet_corner
from cvfit.report.figures.print_style import ONE_COLUMN_IN
from cvfit.report.figures.titration import _STYLE, _points_with_bars, _save, _set_title, plt
from cvfit.report.headline import constant_lines
from cvfit.titration.proton_result import ProtonFit

__all__ = ["plot_proton_half_wave", "plot_proton_fractions"]

_BLUE, _ORANGE, _OX, _RED = "#1f4e79", "#b35900", "#7a1f5c", "#2a7f62"
#: Left, right and bottom margins, inches.
_MARGINS_IN = (0.8, 0.2, 0.55)


def _points(result: SeriesResult) -> list[FileResult]:
    return [f for f in result.files if f.pH is not None and f.E_half_V is not None]


def _message(ax: plt.Axes, text: str) -> None:
    ax.text(0.5, 0.5, text, ha="center", va="center", transform=ax.transAxes)


def _mark_pka(ax: plt.Axes, fit: ProtonFit) -> None:
    """A vertical line at every pKa (oxidised form dashed, reduced form dotted), named in
    the legend: a label on the line itself collides with the slope labels at one column."""
    for pkas, style, colour, form in (
        (fit.pKa_ox, "--", _OX, "ox"),
        (fit.pKa_red, ":", _RED, "red"),
    ):
        for p in pkas:
            x = p.value.value
            ax.axvline(x, color=colour, ls=style, lw=1.0, label=f"pKa{p.j},{form} = {x:.2f}")


def _label_slopes(ax: plt.Axes, fit: ProtonFit, E0: float) -> None:
    """Each region's slope, written at its middle above the curve."""
    for r in fit.regions:
        mid = 0.5 * (r.pH_low + r.pH_high)
        y = proton_half_wave_V(
            E0,
            mid,
            pKa_ox=fit.pKa_ox_values,
            pKa_red=fit.pKa_red_values,
            electrons=fit.electrons,
            temperature_K=fit.temperature_K,
        )
        flat = r.protons == 0  # a flat region: above the curve; a sloped one: beside it
        ax.annotate(
            f"{1e3 * r.slope_V_per_pH:+.0f} mV/pH\n{r.protons:+d} H⁺/{fit.electrons} e⁻",
            (mid, float(y) * 1e3),
            textcoords="offset points",
            xytext=(0, 8) if flat else (8, 4),
            ha="center" if flat else "left",
            va="bottom",
            fontsize=7,
            color="0.25",
        )


def plot_proton_half_wave(result: SeriesResult, path: str | Path) -> Path:
    """E½ against pH with the fitted curve, the pKa marked, the slopes labelled, residuals."""
    path = Path(path)
    fit = result.fit if isinstance(result.fit, ProtonFit) else None
    with plt.rc_context(_STYLE):
        fig, (ax, axr) = plt.subplots(
            2, 1, figsize=(ONE_COLUMN_IN, 4.0), sharex=True, gridspec_kw={"height_ratios": [3, 1]}
        )
        pts = _points(result)
        if not pts:
            _message(ax, "no E½ with a pH to draw")
            top = _set_title(ax, result.series.title or "E½ against pH")
            return _save(fig, path, margins_in=(*_MARGINS_IN, top))
        x = np.array([f.pH for f in pts], dtype=float)
        y = np.array([f.E_half_V for f in pts]) * 1e3
        err = np.array([(f.E_half_total_stderr_V or 0.0) * 1e3 for f in pts])
        used = np.array([f.used_in_fit for f in pts])
        _points_with_bars(ax, x[used], y[used], err[used], color=_BLUE, ms=5, label="used in fit")
        if np.any(~used):
            _points_with_bars(ax, x[~used], y[~used], err[~used], color=_ORANGE, ms=6,
                              filled=False, label="flagged, not fitted")  # fmt: skip
        shown_x, shown_y = x, y
        if fit is None:
            _message(ax, "no fit (see the flags)")
        else:
            xs = np.linspace(x.min() - 0.3, x.max() + 0.3, 400)
            curve = 1e3 * proton_half_wave_V(
                fit.E0.value,
                xs,
                pKa_ox=fit.pKa_ox_values,
                pKa_red=fit.pKa_red_values,
                electrons=fit.electrons,
                temperature_K=fit.temperature_K,
            )
            ax.plot(xs, curve, color=_BLUE, lw=1.2, label="fit")
            low, high = float(min(y.min(), curve.min())), float(max(y.max(), curve.max()))
            span = max(high - low, 1.0)
            ax.set_ylim(low - 0.08 * span, high + 0.35 * span)  # room for the labels on top
            _mark_pka(ax, fit)
            _label_slopes(ax, fit, fit.E0.value)
            axr.axhline(0, color="0.4", lw=0.8)
            fx = np.array(fit.pH)
            _points_with_bars(axr, fx, np.array(fit.residuals_V) * 1e3, err[used], color=_BLUE,
                              ms=4)  # fmt: skip
            shown_x, shown_y = np.concatenate([x, xs]), np.concatenate([y, curve])
        ref = (
            f" vs {result.series.reference_electrode}" if result.series.reference_electrode else ""
        )
        ax.set_ylabel(f"E½ / mV{ref}")
        axr.set_ylabel("residual / mV")
        axr.set_xlabel("pH  ([H⁺] = 10^−pH, an activity)")
        ax.legend(loc=quiet_corner(ax, shown_x, shown_y), frameon=False, fontsize=7)
        headline = constant_lines(fit.to_dict()) if fit is not None else []
        top = _set_title(ax, result.series.title or "E½ against pH", extra=headline)
        return _save(fig, path, margins_in=(*_MARGINS_IN, top))


def plot_proton_fractions(result: SeriesResult, path: str | Path) -> Path:
    """Fractions of H_jOx and H_jRed against pH from the fitted pKa values."""
    path = Path(path)
    fit = result.fit if isinstance(result.fit, ProtonFit) else None
    with plt.rc_context(_STYLE):
        fig, axes = plt.subplots(2, 1, figsize=(ONE_COLUMN_IN, 3.8), sharex=True)
        if fit is None:
            _message(axes[0], "no fit: no protonation states to draw")
            top = _set_title(axes[0], result.series.title or "protonation states")
            return _save(fig, path, margins_in=(*_MARGINS_IN, top))
        lo, hi = min(fit.pH), max(fit.pH)
        xs = np.linspace(lo - 1.0, hi + 1.0, 400)
        for ax, pkas, name, colour in (
            (axes[0], fit.pKa_ox_values, "Ox", _OX),
            (axes[1], fit.pKa_red_values, "Red", _RED),
        ):
            frac = protonation_fractions(xs, pkas)
            shades = np.linspace(1.0, 0.45, frac.shape[0])
            for j, (row, alpha) in enumerate(zip(frac, shades, strict=True)):
                label = f"H{j if j > 1 else ''}{name}" if j else name
                ax.plot(xs, row, color=colour, alpha=float(alpha), lw=1.3 + 0.4 * j, label=label)
            ax.axvspan(lo, hi, color="0.9", zorder=0, lw=0)
            ax.set_ylim(-0.02, 1.02)
            ax.set_ylabel(f"fraction of {name}")
            ax.legend(loc="center right", frameon=False, fontsize=8)
        axes[1].set_xlabel("pH  (grey: the pH range measured)")
        top = _set_title(axes[0], result.series.title or "protonation states")
        return _save(fig, path, margins_in=(*_MARGINS_IN, top))
