"""Curve-fit figure: for every curve-fitted voltammogram the data, the fitted curve and the
weighted residuals, one panel pair per file in one figure for the series.

Top of each pair: the measured current of the analysed cycle (a broad light-grey line) under
the model (simulated faradaic current plus charging and background, a thin coloured line;
dashed when the fit was refused), so that neither hides the other. Bottom: residual/σ with
the ±2 band; long runs on one side show a misfit. Three panels to a row, two columns of a
journal page wide (:mod:`cvfit.report.figures.print_style`); the axes are labelled as in
the overlay of the voltammograms.
"""

from __future__ import annotations

import math
from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from cvfit.formatting import format_pm  # noqa: E402
from cvfit.pipeline.results import SeriesResult  # noqa: E402
from cvfit.report.figures.print_style import TWO_COLUMNS_IN  # noqa: E402
from cvfit.report.figures.titration import (  # noqa: E402
    _STYLE,
    CURRENT_LABEL,
    PER_LITRE,
    _save,
    potential_label,
)
from cvfit.report.imported_columns import potential_kind  # noqa: E402
from cvfit.report.output_names import CURVE_FITS_NAME  # noqa: E402
from cvfit.techniques.cv.measurement import CVMeasurement  # noqa: E402

__all__ = ["plot_curve_fits", "COLUMNS", "CURVE_FITS_FIGURE"]

#: File name of the figure (written only when some file was curve-fitted).
CURVE_FITS_FIGURE = CURVE_FITS_NAME

#: Panel pairs per row of the figure.
COLUMNS = 3


def _panel_title(f, fit) -> str:
    """Three short lines: the file; its ligand concentration; E½ ± σ, k0, α, χ²ν of the fit."""
    k0 = (
        f"k0 > {fit.k0_lower_bound_cm_s:.2g} cm/s"
        if fit.k0_lower_bound_cm_s is not None
        else f"k0 {fit.k0_cm_s.value:.2g} cm/s"
    )
    e = fit.E_half_V
    name = f.file if len(f.file) <= 36 else "…" + f.file[-35:]
    return (
        f"{name}\n[L] = {f.ligand_M:.4g} {PER_LITRE}\n"
        f"E½ {format_pm(e.value, e.stderr, scale=1e3, unit='mV')}, {k0},\n"
        f"α {fit.alpha.value:.2f}, χ²ν {fit.reduced_chi2.value:.2f}"
    )


def plot_curve_fits(result: SeriesResult, path: str | Path) -> Path | None:
    """Write the curve-fit figure of *result* to *path* (PNG); None when no file has one."""
    fitted = [
        (f, m.curve_fit)
        for f in result.files
        if isinstance(m := f.measurement, CVMeasurement)
        and m.curve_fit is not None
        and m.curve_fit.figure
    ]
    if not fitted:
        return None
    path = Path(path)
    cols = min(COLUMNS, len(fitted))
    rows = math.ceil(len(fitted) / cols)
    x_label = potential_label(
        potential_kind([f.imported_columns for f, _ in fitted]), result.series.reference_electrode
    )
    with plt.rc_context({**_STYLE, "font.size": 7}):
        # three panels fill two journal columns: text stays >= 7 pt printed
        fig = plt.figure(figsize=(TWO_COLUMNS_IN * cols / COLUMNS, 3.1 * rows))
        grid = fig.add_gridspec(2 * rows, cols, height_ratios=[3, 1] * rows, hspace=0.08)
        for k, (f, fit) in enumerate(fitted):
            r, c = divmod(k, cols)
            ax = fig.add_subplot(grid[2 * r, c])
            axr = fig.add_subplot(grid[2 * r + 1, c], sharex=ax)
            d = fit.figure
            E = np.asarray(d["potential_V"])
            i = 1e6 * np.asarray(d["current_A"])
            model = 1e6 * np.asarray(d["model_A"])
            sigma = 1e6 * fit.sigma_A
            # the data a broad light line beneath, the fit a thin line on top: each visible
            # where they agree
            ax.plot(E, i, color="0.72", lw=2.6, solid_capstyle="round", label="data", zorder=2)
            ax.plot(
                E, model, color="#b35900" if fit.accepted else "#7a1f1f", lw=0.8,
                ls="-" if fit.accepted else "--", label="fit" if fit.accepted else "refused",
                zorder=3,
            )  # fmt: skip
            ax.set_title(_panel_title(f, fit), fontsize=7, loc="left")
            ax.tick_params(labelbottom=False)
            ax.legend(frameon=False, loc="best")
            if c == 0:
                ax.set_ylabel(CURRENT_LABEL)
                axr.set_ylabel("residual / σ")
            axr.plot(E, (i - model) / sigma, color="0.3", lw=0.5)
            axr.axhspan(-2, 2, color="#1f4e79", alpha=0.1, lw=0)
            axr.axhline(0, color="0.2", lw=0.6)
            axr.set_xlabel(x_label)
        fig.subplots_adjust(hspace=0.7 if rows > 1 else 0.2, wspace=0.35)
        return _save(fig, path)
