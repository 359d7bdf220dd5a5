"""Figure of the temperature model: E½ against temperature with the fitted line and band.

References
----------
Yee, E. L.; Cave, R. J.; Guyer, K. L.; Tyma, P. D.; Weaver, M. J. J. Am. Chem. Soc. 1979,
101, 1131.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from cvfit.pipeline.results import SeriesResult
from cvfit.quantity import t_quantile
from cvfit.report.figures.legend_placement import quiet_corner
from cvfit.report.figures.print_style import ONE_COLUMN_IN
from cvfit.report.figures.titration import _STYLE, _points_with_bars, _save, _set_title, plt
from cvfit.report.headline import constant_lines
from cvfit.titration.temperature_model import TemperatureFit
from cvfit.units import ZERO_CELSIUS_K

__all__ = ["plot_temperature_half_wave"]

_BLUE = "#1f4e79"
_MARGINS_IN = (0.8, 0.2, 0.55)


def plot_temperature_half_wave(result: SeriesResult, path: str | Path) -> Path:
    """E½ against T (°C) with the fitted line, its 95 % band and the residuals."""
    path = Path(path)
    fit = result.fit if isinstance(result.fit, TemperatureFit) else None
    with plt.rc_context(_STYLE):
        fig, (ax, axr) = plt.subplots(
            2, 1, figsize=(ONE_COLUMN_IN, 3.9), sharex=True, gridspec_kw={"height_ratios": [3, 1]}
        )
        pts = [f for f in result.files if f.temperature_K is not None and f.E_half_V is not None]
        if not pts:
            ax.text(0.5, 0.5, "no E½ with a temperature of its own", ha="center",
                    transform=ax.transAxes)  # fmt: skip
            top = _set_title(ax, result.series.title or "E½ against temperature")
            return _save(fig, path, margins_in=(*_MARGINS_IN, top))
        x = np.array([f.temperature_K for f in pts], dtype=float) - ZERO_CELSIUS_K
        y = np.array([f.E_half_V for f in pts]) * 1e3
        err = np.array([(f.E_half_total_stderr_V or 0.0) * 1e3 for f in pts])
        used = np.array([f.used_in_fit for f in pts])
        _points_with_bars(ax, x[used], y[used], err[used], color=_BLUE, ms=5, label="used in fit")
        if np.any(~used):
            _points_with_bars(ax, x[~used], y[~used], err[~used], color="#b35900", ms=6,
                              filled=False, label="flagged, not fitted")  # fmt: skip
        shown_x, shown_y = x, y
        if fit is not None:
            Tm = fit.mean_temperature_K - ZERO_CELSIUS_K
            xs = np.linspace(x.min() - 1, x.max() + 1, 100)
            a, b = fit.E_half_mean, fit.slope
            line = (a.value + b.value * (xs - Tm)) * 1e3
            tq = t_quantile(0.975, fit.dof) if fit.dof > 0 else float("nan")
            half = tq * np.sqrt(a.stderr**2 + (xs - Tm) ** 2 * b.stderr**2) * 1e3
            ax.plot(xs, line, color=_BLUE, lw=1.2,
                    label=f"line, {b.value * 1e3:+.3f} mV/K")  # fmt: skip
            ax.fill_between(xs, line - half, line + half, color=_BLUE, alpha=0.15, lw=0,
                            label="95 % band of the line")  # fmt: skip
            axr.axhline(0, color="0.4", lw=0.8)
            rx = np.array(fit.temperature_K) - ZERO_CELSIUS_K
            axr.plot(rx, np.array(fit.residuals_V) * 1e3, "o", color=_BLUE, ms=4)
            shown_x, shown_y = np.concatenate([x, xs]), np.concatenate([y, line])
        ref = (
            f" vs {result.series.reference_electrode}" if result.series.reference_electrode else ""
        )
        ax.set_ylabel(f"E½ / mV{ref}")
        axr.set_ylabel("residual / mV")
        axr.set_xlabel("temperature / °C")
        ax.legend(loc=quiet_corner(ax, shown_x, shown_y), frameon=False, fontsize=8)
        headline = constant_lines(fit.to_dict()) if fit is not None else []
        top = _set_title(ax, result.series.title or "E½ against temperature", extra=headline)
        return _save(fig, path, margins_in=(*_MARGINS_IN, top))
