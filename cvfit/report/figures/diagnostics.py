"""Diagnostics figure: ΔEp and the current ratio of every file against the Nernstian band.

Top panel: n·ΔEp of each voltammogram with the band the screen allows (Nernstian n·ΔEp for
that file's switch, Nicholson & Shain 1964, plus/minus the manifest's margin scaled with
T/298.15 K). Bottom panel: the reverse/forward current ratio (Nicholson 1966) with the band
1 ± margin. Marker shape gives the class of the electron transfer; open markers were left
out of the fit.
"""

from __future__ import annotations

from pathlib import Path

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.ticker import FixedLocator, MaxNLocator  # noqa: E402

from cvfit.pipeline.results import SeriesResult  # noqa: E402

from .legend_placement import quiet_corner  # noqa: E402
from .titration import _STYLE, _save, _set_title  # noqa: E402

__all__ = ["plot_diagnostics"]

#: Widest figure, inches, and most files labelled on the axis (a large series labels
#: every k-th file and keeps the figure readable in the report).
MAX_WIDTH_IN = 14.0
MAX_TICK_LABELS = 20

_MARKERS = {
    "reversible": ("o", "#1f4e79"),
    "quasi-reversible": ("s", "#b35900"),
    "irreversible": ("v", "#7a1f1f"),
    "not determinable": ("x", "0.35"),
}


def _kind(f) -> str:
    return "not determinable" if f.classification is None else f.classification.kind


def plot_diagnostics(result: SeriesResult, path: str | Path) -> Path:
    """Write the diagnostics figure of *result* to *path* (PNG)."""
    path = Path(path)
    n = result.series.electrons
    scale = result.series.temperature_K / 298.15
    crit = result.criteria
    margin_mV = 1e3 * crit.n_delta_Ep_margin_V * scale
    ratio_margin = crit.current_ratio_margin
    files = list(result.files)
    x = np.arange(len(files))
    with plt.rc_context(_STYLE):
        fig, (ax, axr) = plt.subplots(
            2,
            1,
            figsize=(min(MAX_WIDTH_IN, max(6.0, 0.45 * len(files) + 2)), 5.4),
            sharex=True,
            gridspec_kw={"height_ratios": [3, 2]},
        )
        exp = np.array(
            [
                np.nan
                if f.screen.expected_delta_Ep_V is None
                else 1e3 * n * f.screen.expected_delta_Ep_V
                for f in files
            ]
        )
        ok = np.isfinite(exp)
        if np.any(ok):
            ax.fill_between(
                x,
                exp - margin_mV,
                exp + margin_mV,
                where=ok,
                step="mid",
                color="#1f4e79",
                alpha=0.13,
                lw=0,
                label=f"Nernstian n·ΔEp ± {margin_mV:.1f} mV",
            )
            ax.step(x, exp, where="mid", color="#1f4e79", lw=0.8, alpha=0.6)
        axr.axhspan(
            1 - ratio_margin,
            1 + ratio_margin,
            color="#1f4e79",
            alpha=0.13,
            lw=0,
            label=f"1 ± {ratio_margin:g}",
        )
        axr.axhline(1.0, color="#1f4e79", lw=0.8, alpha=0.6)
        kinds = [_kind(f) for f in files]
        used = np.array([bool(f.used_in_fit) for f in files])
        dEp = np.array(
            [np.nan if f.peaks.delta_Ep_V is None else f.peaks.delta_Ep_V for f in files]
        )
        ratio = np.array(
            [np.nan if f.peaks.current_ratio is None else f.peaks.current_ratio for f in files]
        )
        # one call per (class, fitted) group instead of one per file; the legend names a
        # class once, with the look of its first file, in order of first appearance
        groups: list[tuple[str, bool]] = []
        for kind, u in zip(kinds, used.tolist(), strict=True):
            if (kind, u) not in groups:
                groups.append((kind, u))
        seen: set[str] = set()
        for kind, u in groups:
            marker, colour = _MARKERS[kind]
            face = colour if u else "none"
            label = kind if kind not in seen else None
            seen.add(kind)
            member = np.array([k == kind for k in kinds]) & (used == u)
            top = member & np.isfinite(dEp)
            if np.any(top) or label is not None:
                ax.plot(x[top], 1e3 * n * dEp[top], marker=marker, color=colour, mfc=face,
                        ms=6, ls="none", label=label)  # fmt: skip
            bottom = member & np.isfinite(ratio)
            if np.any(bottom):
                axr.plot(x[bottom], ratio[bottom], marker=marker, color=colour, mfc=face,
                         ms=6, ls="none")  # fmt: skip
        level = np.nanmean(exp) if np.any(ok) else 60.0
        for k in np.nonzero(~np.isfinite(dEp))[0]:
            ax.annotate("no ΔEp", (int(k), level), ha="center", fontsize=7,
                        color=_MARKERS[kinds[k]][1])  # fmt: skip
        ax.set_ylabel("n·ΔEp / mV")
        axr.set_ylabel("ipa/ipc (Nicholson)")
        # a large series labels every k-th file: 200 labels side by side are unreadable;
        # the scan rate is named per file only when it is not the same for all
        step = max(1, -(-len(files) // MAX_TICK_LABELS))
        shown = x[::step]
        rates = {f.scan_rate_V_s for f in files}
        per_file_rate = len(rates) > 1
        texts = [
            f"{files[k].ligand_M:.3g} M"
            + (
                f"\n{files[k].scan_rate_V_s:.3g} V/s"
                if per_file_rate and files[k].scan_rate_V_s
                else ""
            )
            for k in shown
        ]
        ax.set_xlim(-0.5 - 0.01 * len(files), len(files) - 0.5 + 0.01 * len(files))
        axr.xaxis.set_major_locator(FixedLocator(shown))
        axr.set_xticklabels(texts, rotation=60, fontsize=7)
        ax.tick_params(labelbottom=False)
        axr.yaxis.set_major_locator(MaxNLocator(nbins=4))
        only_rate = next(iter(rates)) if not per_file_rate else None
        axr.set_xlabel(
            "voltammogram (total ligand"
            + (", scan rate" if per_file_rate else "")
            + ")"
            + (f" at {only_rate:.3g} V/s" if only_rate else "")
            + "; open markers: not fitted"
        )
        # the band is drawn across the whole width: its edges are what to keep clear
        top_y = np.concatenate([1e3 * n * dEp, exp - margin_mV, exp + margin_mV])
        gaps = ~np.isfinite(dEp)  # the "no ΔEp" notes
        top_y[: len(files)][gaps] = level
        ax.legend(loc=quiet_corner(ax, np.tile(x, 3), top_y), frameon=False, fontsize=7)
        bottom_y = np.concatenate(
            [ratio, np.full(len(files), 1 - ratio_margin), np.full(len(files), 1 + ratio_margin)]
        )
        axr.legend(loc=quiet_corner(axr, np.tile(x, 3), bottom_y), frameon=False, fontsize=7)
        top = _set_title(ax, (result.series.title or "") + " — reversibility diagnostics")
        # bottom: two-line tick labels at 60° and the axis label
        return _save(fig, path, margins_in=(0.8, 0.2, 1.0, top))
