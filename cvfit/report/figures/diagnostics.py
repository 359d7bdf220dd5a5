"""Diagnostics figure: ΔEp and the current ratio of every file against the Nernstian band.

Top panel: n·ΔEp of each voltammogram with the band the screen allows (Nernstian n·ΔEp for
that file's switch, Nicholson & Shain 1964, plus/minus the manifest's margin scaled with
T/298.15 K). Bottom panel: the reverse/forward current ratio (Nicholson 1966) with the band
1 ± margin. Marker shape and colour give the class of the electron transfer; filled markers
were used (a diamond: the ligand-free reference that gives E½(s)), open markers were left out
of the fit. The legend shows each look drawn.
"""

from __future__ import annotations

from pathlib import Path
from typing import cast

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib.lines import Line2D  # noqa: E402
from matplotlib.ticker import FixedLocator, MaxNLocator  # noqa: E402

from cvfit.pipeline.results import FileResult, SeriesResult  # noqa: E402
from cvfit.report.figures.legend_placement import quiet_corner  # noqa: E402
from cvfit.report.figures.print_style import TWO_COLUMNS_IN  # noqa: E402
from cvfit.report.figures.titration import _STYLE, _save, _set_title  # noqa: E402
from cvfit.techniques.cv.measurement import CVMeasurement  # noqa: E402

__all__ = ["plot_diagnostics"]

#: Widest figure, inches (two columns: lettering >= 7 pt printed), and most files labelled
#: on the axis (a large series labels every k-th file and stays readable).
MAX_WIDTH_IN = TWO_COLUMNS_IN
MAX_TICK_LABELS = 20

_MARKERS = {
    "reversible": ("o", "#1f4e79"),
    "quasi-reversible": ("s", "#b35900"),
    "irreversible": ("v", "#7a1f1f"),
    "not determinable": ("x", "0.35"),
}


#: Marker of the ligand-free file(s) that give E½(s) (colour still gives the class).
REFERENCE_MARKER = "D"


def _role(f: FileResult, used: bool) -> str:
    """The file's role in the figure: ``fit`` (E½ from the peaks, fitted), ``curve`` (E½
    from the whole-curve fit, fitted) or ``out`` (left out of the fit)."""
    if not used:
        return "out"
    return "curve" if getattr(f, "E_half_source", "peaks") == "curve" else "fit"


def _legend_handles(kinds: list[str], roles: list[str]) -> list[Line2D]:
    """Legend entries that look like the markers drawn: each class present as a filled
    marker, the reference as a filled diamond, and an open marker when files were left out."""
    handles = []
    for kind in dict.fromkeys(k for k, r in zip(kinds, roles, strict=True) if r == "fit"):
        marker, colour = _MARKERS[kind]
        handles.append(Line2D([], [], marker=marker, color=colour, mfc=colour, ls="none",
                              ms=6, label=kind))  # fmt: skip
    for kind in dict.fromkeys(k for k, r in zip(kinds, roles, strict=True) if r == "curve"):
        marker, colour = _MARKERS[kind]
        handles.append(Line2D([], [], marker=marker, color=colour, mfc=colour, ls="none",
                              ms=6, label=f"{kind}, E½ from the curve fit"))  # fmt: skip
    for kind in dict.fromkeys(k for k, r in zip(kinds, roles, strict=True) if r == "out"):
        marker, colour = _MARKERS[kind]
        handles.append(Line2D([], [], marker=marker, color=colour, mfc="none", ls="none",
                              ms=6, label=f"{kind}, left out of the fit"))  # fmt: skip
    ref_kinds = [k for k, r in zip(kinds, roles, strict=True) if r == "reference"]
    if ref_kinds:
        colour = _MARKERS[ref_kinds[0]][1]
        handles.append(Line2D([], [], marker=REFERENCE_MARKER, color=colour, mfc=colour,
                              ls="none", ms=6, label="ligand-free reference, E½(s)"))  # fmt: skip
    return handles


def _cv(f: FileResult) -> CVMeasurement:
    """The file's measurement: this figure is the cyclic-voltammetry technique's, drawn
    from the files of the series' own technique."""
    return cast(CVMeasurement, f.measurement)


def _kind(f: FileResult) -> str:
    classification = _cv(f).classification
    return "not determinable" if classification is None else classification.kind


def plot_diagnostics(result: SeriesResult, path: str | Path) -> Path:
    """Write the diagnostics figure of *result* to *path* (PNG)."""
    path = Path(path)
    n = result.series.electrons
    scale = result.series.temperature_K / 298.15
    crit = result.criteria
    margin_mV = 1e3 * crit.n_delta_Ep_margin_V * scale
    ratio_margin = crit.current_ratio_margin
    # the technique's own files ([[point]] entries of a table have no voltammogram)
    files = [f for f in result.files if f.measurement.technique == result.series.technique]
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
                if (expected := _cv(f).screen.expected_delta_Ep_V) is None
                else 1e3 * n * expected
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
            [np.nan if _cv(f).peaks.delta_Ep_V is None else _cv(f).peaks.delta_Ep_V for f in files]
        )
        ratio = np.array(
            [
                np.nan if _cv(f).peaks.current_ratio is None else _cv(f).peaks.current_ratio
                for f in files
            ]
        )
        # each file's role: fitted (filled), the ligand-free reference that gives E½(s)
        # (filled diamond), or left out (open); one call per (class, role) group instead of
        # one per file, and a legend built to show exactly the looks drawn
        refs = set(result.reference.files) if result.reference.source == "file" else set()
        roles = [
            "reference" if f.ligand_M == 0 and f.file in refs else _role(f, u)
            for f, u in zip(files, used.tolist(), strict=True)
        ]
        groups: list[tuple[str, str]] = []
        for group in zip(kinds, roles, strict=True):
            if group not in groups:
                groups.append(group)
        for kind, role in groups:
            marker, colour = _MARKERS[kind]
            marker = REFERENCE_MARKER if role == "reference" else marker
            face = "none" if role == "out" else colour
            member = np.array([k == kind and r == role for k, r in zip(kinds, roles, strict=True)])
            top = member & np.isfinite(dEp)
            if np.any(top):
                ax.plot(x[top], 1e3 * n * dEp[top], marker=marker, color=colour, mfc=face,
                        ms=6, ls="none", gid=f"diagnostics:{kind}:{role}")  # fmt: skip
            bottom = member & np.isfinite(ratio)
            if np.any(bottom):
                axr.plot(x[bottom], ratio[bottom], marker=marker, color=colour, mfc=face,
                         ms=6, ls="none", gid=f"diagnostics:{kind}:{role}")  # fmt: skip
        handles = _legend_handles(kinds, roles)
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
        axr.xaxis.set_major_locator(FixedLocator(shown.tolist()))
        axr.set_xticklabels(texts, rotation=60, fontsize=7)
        ax.tick_params(labelbottom=False)
        axr.yaxis.set_major_locator(MaxNLocator(nbins=4))
        only_rate = next(iter(rates)) if not per_file_rate else None
        axr.set_xlabel(
            "voltammogram (total ligand"
            + (", scan rate" if per_file_rate else "")
            + ")"
            + (f" at {only_rate:.3g} V/s" if only_rate else "")
            + "; open markers: left out of the fit"
        )
        # the band is drawn across the whole width: its edges are what to keep clear
        top_y = np.concatenate([1e3 * n * dEp, exp - margin_mV, exp + margin_mV])
        gaps = ~np.isfinite(dEp)  # the "no ΔEp" notes
        top_y[: len(files)][gaps] = level
        band, _ = ax.get_legend_handles_labels()
        ax.legend(handles=[*band, *handles], loc=quiet_corner(ax, np.tile(x, 3), top_y),
                  frameon=False, fontsize=7)  # fmt: skip
        bottom_y = np.concatenate(
            [ratio, np.full(len(files), 1 - ratio_margin), np.full(len(files), 1 + ratio_margin)]
        )
        axr.legend(loc=quiet_corner(axr, np.tile(x, 3), bottom_y), frameon=False, fontsize=7)
        top = _set_title(ax, (result.series.title or "") + " — reversibility diagnostics")
        # bottom: two-line tick labels at 60° and the axis label
        return _save(fig, path, margins_in=(0.8, 0.2, 1.0, top))
