"""Internal-standard figure: the drift of the reference electrode along the series.

Top panel: the internal standard's E½ in every file, on the electrode's scale, less its
mean over the series (mV), with ±1 standard error — the drift that quoting the analyte
against the standard removes. Bottom panel: the titration points' E½ less a straight line
in log10 of the free ligand, on the electrode's scale and against the standard, with their
rms: how much scatter quoting against the standard removed. Filled markers: the standard
passed its own reversibility screen; open: it did not (or was not found).
"""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402

from cvfit.pipeline.results import SeriesResult  # noqa: E402
from cvfit.report.figures.diagnostics import MAX_TICK_LABELS  # noqa: E402
from cvfit.report.figures.print_style import TWO_COLUMNS_IN  # noqa: E402
from cvfit.report.figures.titration import _STYLE, _save, _set_title  # noqa: E402
from cvfit.report.output_names import INTERNAL_STANDARD_NAME  # noqa: E402

__all__ = ["plot_internal_standard", "FILE_NAME"]

#: File name of the figure in the output folder.
FILE_NAME = INTERNAL_STANDARD_NAME
_STD_COLOUR = "#2b4c7e"
_RAW_COLOUR = "#b5532a"


def _nan(x: float | None) -> float:
    return np.nan if x is None else float(x)


def plot_internal_standard(result: SeriesResult, path: str | Path) -> Path:
    """Write the internal-standard figure of *result* to *path* (PNG).

    Raises ``ValueError`` when no file of *result* carries an internal standard.
    """
    path = Path(path)
    files = list(result.files)
    stds = [f.internal_standard for f in files]
    if all(s is None for s in stds):
        raise ValueError("the series has no internal standard to plot")
    x = np.arange(len(files))
    e_std = np.array([_nan(None if s is None else s.E_half_V) for s in stds])
    se_std = np.array([_nan(None if s is None else s.E_half_stderr_V) for s in stds])
    ok = np.array([s is not None and s.reversible is True for s in stds])
    # no standard found in any file (its window outside the data): nothing to centre on,
    # and the files carry INTERNAL_STANDARD_NOT_FOUND
    centre = np.nanmean(e_std) if np.any(np.isfinite(e_std)) else 0.0
    drift = 1e3 * (e_std - centre)
    referenced = np.array([_nan(f.E_half_V) for f in files])
    raw = referenced + e_std  # E½ on the electrode scale up to the assigned constant
    labels = [f"{f.ligand_M * 1e3:g}" for f in files]
    with plt.rc_context(_STYLE):
        fig, (ax, bx) = plt.subplots(
            2,
            1,
            figsize=(min(TWO_COLUMNS_IN, max(6.0, 0.45 * len(files) + 2.5)), 5.6),
            sharex=True,
        )
        ax.errorbar(x, drift, yerr=1e3 * np.nan_to_num(se_std), fmt="none", ecolor="0.45")
        ax.plot(x, drift, color=_STD_COLOUR, lw=1.0)
        ax.plot(x[ok], drift[ok], "o", color=_STD_COLOUR, label="passed its screen")
        if np.any(~ok):
            ax.plot(x[~ok], drift[~ok], "o", mfc="white", color=_STD_COLOUR,
                    label="failed its screen")  # fmt: skip
        ax.axhline(0.0, color="0.6", lw=0.8)
        ax.set_ylabel("E½(standard) − mean / mV")
        spread = np.nanmax(drift) - np.nanmin(drift) if np.any(np.isfinite(drift)) else np.nan
        top = _set_title(
            ax,
            f"Internal standard: drift of the reference electrode along the series "
            f"(range {spread:.2f} mV)",
        )
        ax.legend(loc="best", fontsize=8)
        fitted = np.array([f.free_ligand_M > 0 for f in files]) & np.isfinite(referenced)
        if np.count_nonzero(fitted) >= 3 and np.any(np.isfinite(raw[fitted])):
            lx = np.log10(np.array([f.free_ligand_M if f.free_ligand_M > 0 else np.nan
                                    for f in files]))  # fmt: skip
            for values, colour, label in (
                (raw, _RAW_COLOUR, "on the electrode's scale"),
                (referenced, _STD_COLOUR, "against the standard"),
            ):
                ok_pts = fitted & np.isfinite(values)
                if np.count_nonzero(ok_pts) < 3:
                    continue  # too few points for a line (the standard missing in most files)
                coef = np.polyfit(lx[ok_pts], values[ok_pts], 1)
                resid = 1e3 * (values - np.polyval(coef, lx))
                rms = float(np.sqrt(np.mean(resid[ok_pts] ** 2)))
                bx.plot(x[ok_pts], resid[ok_pts], "o-", color=colour, lw=1.0, ms=5,
                        label=f"analyte E½ {label} (rms {rms:.2f} mV)")  # fmt: skip
            bx.axhline(0.0, color="0.6", lw=0.8)
            bx.set_ylabel("E½ − straight line in log10[L] / mV")
            if bx.get_legend_handles_labels()[0]:
                bx.legend(loc="best", fontsize=8)
        else:
            bx.text(0.5, 0.5, "fewer than three titration points", ha="center",
                    transform=bx.transAxes)  # fmt: skip
        bx.set_xlabel("total ligand / mmol L⁻¹ (files in series order)")
        # at most MAX_TICK_LABELS labels: the figure stays two columns wide (lettering >= 7 pt)
        step = max(1, -(-len(files) // MAX_TICK_LABELS))
        bx.set_xticks(x[::step], labels[::step], rotation=45 if len(files) > 10 else 0)
        fig.subplots_adjust(top=1 - top / 5.6, hspace=0.12)
        return _save(fig, path)
