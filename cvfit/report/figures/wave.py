"""The log plot of steady-state or sampled-current waves.

For every fitted wave: E against log10((i_l − i)/i), with the sloping baseline removed
and i_l the fitted wave height, over the part of the wave between 5 % and 95 % of its
height, coloured by the total ligand concentration; the straight line of each file's fit
(slope 2.303/g), and in the legend the reversible slope 2.303 RT/nF. A reversible wave
gives parallel straight lines of that slope (Heyrovský & Ilkovič 1935); a slow transfer
a steeper one.
"""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib import colors as mcolors  # noqa: E402

from cvfit.pipeline.results import SeriesResult  # noqa: E402
from cvfit.report.figures.legend_placement import quiet_corner  # noqa: E402
from cvfit.report.figures.print_style import ONE_COLUMN_IN  # noqa: E402
from cvfit.report.figures.titration import (  # noqa: E402
    _STYLE,
    COLOUR_MAP,
    FLAGGED_COLOUR,
    _save,
    _set_title,
)
from cvfit.techniques.wave.measurement import WaveMeasurement  # noqa: E402

__all__ = ["plot_wave_log"]


def plot_wave_log(result: SeriesResult, path: str | Path) -> Path | None:
    """Write the log plot of *result*'s waves to *path*; None when no wave was fitted."""
    drawn = [
        (f, m.fit, f.curve)
        for f in result.files
        if isinstance(m := f.measurement, WaveMeasurement)
        and m.fit is not None
        and f.curve is not None
    ]
    files = [f for f, _, _ in drawn]
    if not files:
        return None
    ligands = [f.ligand_M for f in files]
    norm = mcolors.Normalize(min(ligands), max(ligands) if max(ligands) > min(ligands) else 1.0)
    cmap = plt.get_cmap(COLOUR_MAP)
    with plt.rc_context(_STYLE):
        fig, ax = plt.subplots(figsize=(ONE_COLUMN_IN, 3.2))
        xs: list[np.ndarray] = []
        ys: list[np.ndarray] = []
        for f, fit, curve in drawn:
            z = fit.fraction(curve.potential_V, curve.current_A)
            keep = (z > 0.05) & (z < 0.95)
            x = np.log10((1.0 - z[keep]) / z[keep])
            E = 1e3 * curve.potential_V[keep]
            colour = cmap(norm(f.ligand_M)) if f.reversible else FLAGGED_COLOUR
            ax.plot(x, E, ".", ms=3, color=colour)
            xs.append(x)
            ys.append(E)
            line = np.array([-1.2, 1.2])
            ax.plot(line, 1e3 * (fit.E_half_V + fit.log_slope_V * line), "-", lw=0.8,
                    color=colour)  # fmt: skip
        n = result.series.electrons
        slope = 1e3 * float(files[0].measurement.to_dict()["expected_log_slope_V"])
        ax.plot(
            [],
            [],
            "-",
            color="0.3",
            label=f"fitted lines\n(reversible: {slope:.1f} mV/decade, n = {n})",
        )
        if not all(f.reversible for f in files):
            ax.plot([], [], ".", color=FLAGGED_COLOUR, label="failed the wave screen")
        ax.set_xlabel("log10((i_l − i)/i)")
        ax.set_ylabel("E / mV")
        corner = quiet_corner(ax, np.concatenate(xs), np.concatenate(ys))
        ax.legend(loc=corner, fontsize=7, frameon=False)
        sm = plt.cm.ScalarMappable(norm=norm, cmap=cmap)
        fig.colorbar(sm, ax=ax, label="total ligand / mol L⁻¹")
        _set_title(ax, f"{result.series.title}: log plot of the waves")
        return _save(fig, Path(path))
