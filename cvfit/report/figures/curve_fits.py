"""Curve-fit figure: for every curve-fitted voltammogram the data, the fitted curve and the
weighted residuals, one panel pair per file in one figure for the series.

Top of each pair: the measured current of the analysed cycle (grey) and the model
(simulated faradaic current plus charging and background, coloured; dashed when the fit
was refused). Bottom: residual/σ with the ±2 band; long runs on one side show a misfit.
"""

from __future__ import annotations

import math
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from cvfit.pipeline.results import SeriesResult  # noqa: E402
from cvfit.report.figures.titration import _STYLE, _save  # noqa: E402
from cvfit.report.output_names import CURVE_FITS_NAME  # noqa: E402

__all__ = ["plot_curve_fits", "COLUMNS", "CURVE_FITS_FIGURE"]

#: File name of the figure (written only when some file was curve-fitted).
CURVE_FITS_FIGURE = CURVE_FITS_NAME

#: Panel pairs per row of the figure.
COLUMNS = 3


def plot_curve_fits(result: SeriesResult, path: str | Path) -> Path | None:
    """Write the curve-fit figure of *result* to *path* (PNG); None when no file has one."""
    fitted = [
        f
        for f in result.files
        if f.measurement.curve_fit is not None and f.measurement.curve_fit.figure
    ]
    if not fitted:
        return None
    path = Path(path)
    cols = min(COLUMNS, len(fitted))
    rows = math.ceil(len(fitted) / cols)
    with plt.rc_context(_STYLE):
        fig = plt.figure(figsize=(4.2 * cols, 3.6 * rows))
        grid = fig.add_gridspec(2 * rows, cols, height_ratios=[3, 1] * rows, hspace=0.08)
        for k, f in enumerate(fitted):
            r, c = divmod(k, cols)
            ax = fig.add_subplot(grid[2 * r, c])
            axr = fig.add_subplot(grid[2 * r + 1, c], sharex=ax)
            fit = f.measurement.curve_fit
            d = fit.figure
            E = 1e3 * np.asarray(d["potential_V"])
            i = 1e6 * np.asarray(d["current_A"])
            model = 1e6 * np.asarray(d["model_A"])
            sigma = 1e6 * fit.sigma_A
            ax.plot(E, i, color="0.55", lw=0.8, label="data")
            ax.plot(
                E, model, color="#b35900" if fit.accepted else "#7a1f1f", lw=1.2,
                ls="-" if fit.accepted else "--", label="fit" if fit.accepted else "refused",
            )  # fmt: skip
            k0 = fit.k0_cm_s.value
            k0_text = (
                f"k0 > {fit.k0_lower_bound_cm_s:.2g}"
                if fit.k0_lower_bound_cm_s is not None
                else f"k0 {k0:.2g} cm/s"
            )
            ax.set_title(
                f"{f.file}: E½ {1e3 * fit.E_half_V.value:.1f} mV, {k0_text}, "
                f"α {fit.alpha.value:.2f}, χ²ν {fit.reduced_chi2.value:.2f}",
                fontsize=7.5,
            )
            ax.tick_params(labelbottom=False, labelsize=7)
            ax.legend(fontsize=7, frameon=False, loc="best")
            if c == 0:
                ax.set_ylabel("I / µA", fontsize=8)
                axr.set_ylabel("res./σ", fontsize=8)
            axr.plot(E, (i - model) / sigma, color="0.3", lw=0.5)
            axr.axhspan(-2, 2, color="#1f4e79", alpha=0.1, lw=0)
            axr.axhline(0, color="0.2", lw=0.6)
            axr.set_xlabel("E applied / mV", fontsize=8)
            axr.tick_params(labelsize=7)
        return _save(fig, path)
