"""Figures of a series: overlaid voltammograms and the E½ shift against log10[L].

Style of our own: a perceptually uniform colour map (cividis, readable with the common
colour-vision deficiencies), grey dotted curves and open markers for files that failed the
reversibility screen (the figure's legend says so), and curves
thinned to at most ``MAX_POINTS_DRAWN`` points (thousands of points do not show more).
"""

from __future__ import annotations

import math
import textwrap
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from contextvars import ContextVar
from pathlib import Path
from typing import TYPE_CHECKING, Any, cast

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from matplotlib import colors as mcolors  # noqa: E402
from matplotlib.collections import LineCollection  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402
from matplotlib.lines import Line2D  # noqa: E402
from matplotlib.ticker import FixedLocator, MaxNLocator, NullLocator  # noqa: E402

from cvfit.errors import printable  # noqa: E402
from cvfit.pipeline.results import SeriesResult  # noqa: E402
from cvfit.quantity import t_quantile  # noqa: E402
from cvfit.report.atomic import atomic_path  # noqa: E402
from cvfit.report.figures.legend_placement import legend_clear_of  # noqa: E402
from cvfit.report.figures.print_style import ONE_COLUMN_IN, PNG_DPI, formats_in_force  # noqa: E402
from cvfit.report.headline import constant_lines  # noqa: E402
from cvfit.report.imported_columns import potential_kind  # noqa: E402
from cvfit.techniques.curves import (
    MAX_POINTS_DRAWN,
    MAX_POINTS_PER_FIGURE,
    MIN_POINTS_DRAWN,
    points_per_curve,
)
from cvfit.titration.lingane import LinganeFit  # noqa: E402

if TYPE_CHECKING:
    from matplotlib.typing import RcKeyType

__all__ = [
    "plot_voltammograms",
    "plot_lingane",
    "MAX_POINTS_DRAWN",
    "MAX_POINTS_PER_FIGURE",
    "MIN_POINTS_DRAWN",
    "MAX_CURVES_DRAWN",
    "COLOUR_MAP",
    "keep_figures",
]

COLOUR_MAP = "cividis"
#: Colour and line style of a titration curve that failed the reversibility screen.
FLAGGED_COLOUR = "0.35"
FLAGGED_STYLE = (0, (1.5, 1.5))
_STYLE: dict[RcKeyType, Any] = {
    "font.size": 9,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.alpha": 0.25,
    "figure.dpi": 110,  # on screen (a notebook); the files: PNG_DPI
    "savefig.dpi": PNG_DPI,
    "pdf.fonttype": 42,  # TrueType in the PDF (editable text), not Type 3
    "svg.fonttype": "none",  # text in the SVG stays text (editable), not outlines
    # no mathtext: a "$" in a user's title is shown as typed, and units are written with
    # Unicode superscripts (parsing mathtext cost ~50 ms per figure)
    "text.parse_math": False,
}
#: "mol L⁻¹" without mathtext.
PER_LITRE = "mol L⁻¹"
#: The current axis of every figure of voltammograms (one source: overlay, curve fits).
CURRENT_LABEL = "i / µA  (anodic positive)"


def potential_label(kind: str | None = None, reference: str | None = None) -> str:
    """The potential axis of every figure of voltammograms: ``E / V vs Ag/AgCl``."""
    return (f"E ({kind}) / V" if kind else "E / V") + (f" vs {reference}" if reference else "")


_SUPERSCRIPT_DIGITS = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")


def _superscript(k: int) -> str:
    """``-k`` in Unicode superscripts (``⁻²``)."""
    return "⁻" + str(k).translate(_SUPERSCRIPT_DIGITS)


def _thin(
    x: np.ndarray, y: np.ndarray, max_points: int = MAX_POINTS_DRAWN
) -> tuple[np.ndarray, np.ndarray]:
    step = max(1, math.ceil(x.size / max_points))
    return x[::step], y[::step]


#: zlib level of the PNG files: level 1 writes them ~3x faster than the default 6 for
#: ~10 % more bytes (flat-coloured plots compress well at any level).
PNG_COMPRESS_LEVEL = 1


#: Options of each file format: no creation date in SVG and PDF (the same figure gives
#: the same bytes).
_FORMAT_OPTIONS: dict[str, dict[str, Any]] = {
    "png": {"pil_kwargs": {"compress_level": PNG_COMPRESS_LEVEL}},
    "svg": {"metadata": {"Date": None}},
    "pdf": {"metadata": {"CreationDate": None}},
}


#: Average advance of a character as a fraction of the font size (DejaVu Sans, mixed
#: text), to wrap titles to the figure width without measuring them.
_CHAR_EM = 0.6
#: Height of one title line at 9 pt (font size and line spacing), inches.
_TITLE_LINE_IN = 0.17


#: Most lines of a figure title; a longer title is cut with "…" (results.json keeps it all).
MAX_TITLE_LINES = 3


def figure_title(text: str, max_chars: int = 400) -> str:
    """*text* for a figure: control characters escaped, at most *max_chars* characters."""
    return printable(text, limit=max_chars)


def _set_title(
    ax: plt.Axes, text: str, *, fontsize: float = 9.0, extra: Sequence[str] = ()
) -> float:
    """Set a title wrapped to the figure's width; return the top margin it needs, inches.

    *extra* lines (the constants found) follow the title, each wrapped on its own.
    """
    # every axes here is drawn on a top-level figure, never a subfigure
    width_in = float(cast(Figure, ax.figure).get_size_inches()[0])
    per_line = max(20, int(0.95 * width_in * 72.0 / (_CHAR_EM * fontsize)))
    text = figure_title(text, per_line * MAX_TITLE_LINES + 1)
    lines = textwrap.wrap(text, per_line, break_long_words=True) or [""]
    if len(lines) > MAX_TITLE_LINES:
        lines = lines[:MAX_TITLE_LINES]
        lines[-1] = lines[-1][: per_line - 1] + "…"
    for line in extra:
        # a constant too long for one line breaks before its interval, not inside it
        head, sep, interval = line.partition(", 95 % CI ")
        parts = [head + ",", "95 % CI " + interval] if sep and len(line) > per_line else [line]
        for part in parts:
            lines += textwrap.wrap(part, per_line, break_long_words=True)
    # an explicit y: matplotlib then skips measuring every tick label of the axes to
    # place the title (~20 % of drawing a figure); no axes here has labels on top
    ax.set_title("\n".join(lines), fontsize=fontsize, y=1.0)
    return 0.12 + _TITLE_LINE_IN * len(lines) * fontsize / 9.0


def apply_margins(fig: Figure, margins_in: tuple[float, float, float, float]) -> None:
    """Space around the axes of *fig*: ``(left, right, bottom, top)``, inches."""
    width, height = fig.get_size_inches()
    left, right, bottom, top = margins_in
    fig.subplots_adjust(
        left=left / width,
        right=1.0 - right / width,
        bottom=bottom / height,
        top=1.0 - top / height,
    )


def _save(
    fig: plt.Figure, path: Path, *, margins_in: tuple[float, float, float, float] | None = None
) -> Path:
    """Write *fig* to *path* atomically and close it.

    ``margins_in = (left, right, bottom, top)`` in inches fixes the space around the axes,
    sized for our labels, so the figure is drawn once; without it the canvas is cropped
    to what was drawn (``bbox_inches="tight"``), which costs a second full drawing.
    """
    extra: dict[str, Any] = {}
    if margins_in is None:
        extra["bbox_inches"] = "tight"
    else:
        apply_margins(fig, margins_in)
    kept = _KEPT.get()
    if kept is not None:  # a notebook asked for the Figure object, not a file
        kept.append(fig)
        plt.close(fig)  # detached from pyplot: shown once, where the caller shows it
        return path
    own = path.suffix.lstrip(".").lower() or "png"
    for fmt in dict.fromkeys([own, *formats_in_force()]):
        target = path if fmt == own else path.with_suffix(f".{fmt}")
        with atomic_path(target) as tmp:
            fig.savefig(tmp, format=fmt, **extra, **_FORMAT_OPTIONS.get(fmt, {}))
    plt.close(fig)
    return path


#: Set by :func:`keep_figures`: the figures drawn are collected here instead of written.
_KEPT: ContextVar[list[Figure] | None] = ContextVar("cvfit_kept_figures", default=None)


@contextmanager
def keep_figures() -> Iterator[list[Figure]]:
    """Inside, the drawing functions write no file: each Figure is appended to the list."""
    kept: list[Figure] = []
    token = _KEPT.set(kept)
    try:
        yield kept
    finally:
        _KEPT.reset(token)


#: Most titration curves overlaid in one figure. Beyond it, curves spread evenly over the
#: ligand range are drawn and the figure says so: 250 overlaid curves already fill the
#: band the wave sweeps, and drawing costs ~0.25 ms per curve.
MAX_CURVES_DRAWN = 250


def _curves_drawn(files) -> set[int]:
    """Indices of the titration curves to draw (all, up to ``MAX_CURVES_DRAWN``)."""
    titrating = [k for k, f in enumerate(files) if f.ligand_M > 0 and f.curve is not None]
    if len(titrating) <= MAX_CURVES_DRAWN:
        return set(titrating)
    by_ligand = sorted(titrating, key=lambda k: (files[k].ligand_M, k))
    picks = np.linspace(0, len(by_ligand) - 1, MAX_CURVES_DRAWN).round().astype(int)
    return {by_ligand[p] for p in np.unique(picks)}


def _fate(recovered: list[bool], excluded: bool) -> str:
    """What became of the curves that failed the screen, for the legend."""
    if recovered and all(recovered):
        return "E½ from the whole-curve fit"
    fate = "left out of the fit" if excluded else "kept in the fit"
    return f"curve-fitted or {fate}" if any(recovered) else fate


def plot_voltammograms(result: SeriesResult, path: str | Path) -> Path:
    """Overlay the analysed cycle of every file, coloured by ligand concentration."""
    path = Path(path)
    with plt.rc_context(_STYLE):
        fig, ax = plt.subplots(figsize=(ONE_COLUMN_IN, 3.0))  # printed one column wide
        positive = [f.ligand_M for f in result.files if f.ligand_M > 0]
        cmap = plt.get_cmap(COLOUR_MAP)
        norm: mcolors.LogNorm | None = None
        if positive:
            lo, hi = min(positive), max(positive)
            if hi <= lo:
                lo, hi = lo / 2, hi * 2
            norm = mcolors.LogNorm(vmin=lo, vmax=hi)
        per_curve = points_per_curve(len(result.files))
        # the titration curves go into one LineCollection (one artist, not one per file);
        # the ligand-free curves stay lines of their own for the legend
        segments, ligands, flagged, recovered = [], [], [], []
        drawn = _curves_drawn(result.files)
        free_labelled = False
        for k, f in enumerate(result.files):
            if f.curve is None:  # a result built without its curves
                continue
            if f.ligand_M > 0 and k not in drawn:
                continue
            E, i = _thin(f.curve.potential_V, f.curve.current_A, per_curve)
            if f.ligand_M > 0 and norm is not None:
                segments.append(np.column_stack([E, i * 1e6]))
                ligands.append(f.ligand_M)
                flagged.append(f.reversible is not True)
                recovered.append(bool(f.used_in_fit) and f.E_half_source == "curve")
            else:  # one legend entry for the ligand-free curves, however many
                label = "no ligand" if f.ligand_M == 0 and not free_labelled else None
                free_labelled = free_labelled or label is not None
                ax.plot(E, i * 1e6, color="0.15", lw=1.0, ls="--", label=label)
        handles: list = []
        if segments and norm is not None:  # a titration curve is drawn only with a norm
            colours = cmap(norm(np.asarray(ligands)))  # one call for all curves
            # a curve that failed the screen: grey and dotted, whatever its ligand level
            # (the top of the colour map is a pale yellow that a fainter line would lose)
            flags = np.asarray(flagged)
            if not flags.all():  # when every curve failed, the colours still tell [L] apart
                colours[flags] = mcolors.to_rgba(FLAGGED_COLOUR)
            styles = [FLAGGED_STYLE if bad else "solid" for bad in flagged]
            widths = [1.3 if bad else 1.0 for bad in flagged]
            ax.add_collection(
                LineCollection(segments, colors=colours, linestyles=styles, linewidths=widths)
            )
            ax.autoscale_view()
            if flags.any():
                fate = _fate(
                    [r for r, bad in zip(recovered, flagged, strict=True) if bad],
                    result.exclude_non_nernstian,
                )
                levels = sorted({lig for lig, bad in zip(ligands, flagged, strict=True) if bad})
                which = ", ".join(f"{x:g}" for x in levels[:3]) + (" …" if len(levels) > 3 else "")
                handles.append(
                    Line2D(
                        [],
                        [],
                        color="0.35" if flags.all() else FLAGGED_COLOUR,
                        ls=FLAGGED_STYLE,
                        lw=1.5,
                        label=f"failed the screen,\n{fate}\n({which} {PER_LITRE})",
                    )  # fmt: skip
                )
        _draw_marks(ax, result.files, drawn, colours if segments else None)
        kind = potential_kind([f.imported_columns for f in result.files])
        ax.set_xlabel(potential_label(kind, result.series.reference_electrode))
        ax.set_ylabel(CURRENT_LABEL)
        if norm is not None:
            sm = plt.cm.ScalarMappable(norm=norm, cmap=cmap)
            cb = fig.colorbar(sm, ax=ax, pad=0.02)
            cb.set_label(f"total ligand [L] / {PER_LITRE}")
            # labelled ticks at 1, 2 and 5 times the powers of ten, plain decimals (the
            # default log labels need mathtext) and no minor ticks (a dozen tick objects)
            # the norm's limits are the floats it was made with
            values = _one_two_five(cast(float, norm.vmin), cast(float, norm.vmax))
            cb.ax.yaxis.set_major_locator(FixedLocator(values))
            cb.ax.yaxis.set_minor_locator(NullLocator())
            cb.ax.yaxis.set_ticklabels([f"{v:g}" for v in values])
        titrating = sum(f.ligand_M > 0 and f.curve is not None for f in result.files)
        if len(drawn) < titrating:
            ax.text(0.99, 0.01, f"{len(drawn)} of {titrating} titration curves drawn, evenly "
                    "over [L]", transform=ax.transAxes, ha="right", va="bottom", fontsize=7,
                    color="0.3")  # fmt: skip
        top = _set_title(ax, result.series.title or "voltammograms", fontsize=8.0)
        margins = (0.55, 0.6 if norm is not None else 0.15, 0.42, top)  # room: colour bar
        if any(f.ligand_M == 0 for f in result.files) or handles:
            apply_margins(fig, margins)  # the legend is measured at the final layout
            xy = [*segments, *(ln.get_xydata() for ln in ax.get_lines())]
            if len(drawn) < titrating:  # keep clear of the note in the lower right
                xy.append(np.array([[ax.get_xlim()[1], ax.get_ylim()[0]]]))
            drawn_xy = np.concatenate(xy) if xy else np.empty((0, 2))
            own, _ = ax.get_legend_handles_labels()
            legend_clear_of(ax, drawn_xy[:, 0], drawn_xy[:, 1], handles=[*own, *handles],
                            frameon=False, fontsize=7, handlelength=1.6)  # fmt: skip
        return _save(fig, path, margins_in=margins)


#: Most curves whose baselines are drawn (beyond, only the peaks are marked).
MAX_BASELINES_DRAWN = 12


def _draw_marks(ax: plt.Axes, files, drawn, colours) -> None:
    """The peaks of every drawn curve, and — for a dozen curves or fewer — the baselines
    their heights were measured from, each with a drop line from the baseline to its peak
    (the height the technique read), in the curve's colour: one collection of lines and
    one of markers, whatever the number of files."""
    shown = [
        (k, f)
        for k, f in enumerate(files)
        if f.curve is not None and (f.ligand_M == 0 or k in drawn)
    ]
    with_lines = len(shown) <= MAX_BASELINES_DRAWN
    segments, seg_colours, points, point_colours = [], [], [], []
    ligand_k = 0
    for _, f in shown:
        colour = mcolors.to_rgba("0.15")
        if f.ligand_M > 0 and colours is not None:
            colour = tuple(colours[ligand_k])
            ligand_k += 1
        lines, peaks = f.measurement.figure_marks()
        for E, level_i, i in ((p[0], p[2], p[1]) for p in peaks):
            points.append((E, i * 1e6))
            point_colours.append(colour)
            if with_lines:
                segments.append(np.array([[E, level_i * 1e6], [E, i * 1e6]]))
                seg_colours.append(colour)
        if with_lines:
            for E, i in lines:
                segments.append(np.column_stack([np.asarray(E), np.asarray(i) * 1e6]))
                seg_colours.append(colour)
    if segments:
        marks = LineCollection(segments, colors=seg_colours, linewidths=0.6, alpha=0.7,
                               linestyles=(0, (4, 3)))  # fmt: skip
        marks.set_gid("baselines")
        ax.add_collection(marks)
    if points:
        xy = np.asarray(points)
        ax.scatter(xy[:, 0], xy[:, 1], s=5, c=point_colours, zorder=3, gid="peaks")


def _one_two_five(lo: float, hi: float) -> list[float]:
    """1, 2 and 5 times the powers of ten within ``[lo, hi]`` (both > 0); at least *lo*
    and *hi* themselves when the range holds none of them."""
    values = [
        m * 10.0**k
        for k in range(math.floor(math.log10(lo)), math.ceil(math.log10(hi)) + 1)
        for m in (1.0, 2.0, 5.0)
    ]
    inside = [float(f"{v:.12g}") for v in values if lo * (1 - 1e-9) <= v <= hi * (1 + 1e-9)]
    return inside if len(inside) >= 2 else [lo, hi]


def _pair_ticks(ax: plt.Axes, axr: plt.Axes, *, y_bins: int = 8, r_bins: int = 4) -> None:
    """Tick density of a main panel above a smaller one sharing its x axis."""
    ax.yaxis.set_major_locator(MaxNLocator(nbins=y_bins))
    axr.yaxis.set_major_locator(MaxNLocator(nbins=r_bins))


def _points_with_bars(
    ax: plt.Axes,
    x: np.ndarray,
    y: np.ndarray,
    err: np.ndarray,
    *,
    color: str,
    ms: float,
    filled: bool = True,
    label: str | None = None,
) -> None:
    """Markers with ±err bars and caps in three artists, whatever the number of points.

    ``Axes.errorbar`` makes one path per bar (~0.25 ms each, 50 ms for a 200-file series);
    here the bars are one line broken by NaN and the caps one line of '_' markers.
    """
    x, y, err = (np.asarray(a, dtype=float) for a in (x, y, err))
    gap = np.full_like(x, np.nan)
    ax.plot(np.column_stack([x, x, gap]).ravel(),
            np.column_stack([y - err, y + err, gap]).ravel(), color=color, lw=1.0)  # fmt: skip
    ax.plot(np.concatenate([x, x]), np.concatenate([y - err, y + err]), ls="none",
            marker="_", ms=4, mew=1.0, color=color)  # fmt: skip
    ax.plot(x, y, ls="none", marker="o", ms=ms, color=color,
            mfc=color if filled else "none", label=label)  # fmt: skip


#: Left, right and bottom margins of the half-wave-shift figure, inches.
_LINGANE_MARGINS_IN = (0.75, 0.1, 0.45)


def plot_lingane(result: SeriesResult, path: str | Path) -> Path:
    """E½(c) − E½(s) against log10[L] with the fitted line, its 95 % band and residuals."""
    path = Path(path)
    ref = result.reference.E_half_V
    with plt.rc_context(_STYLE):
        fig, (ax, axr) = plt.subplots(
            2, 1, figsize=(ONE_COLUMN_IN, 3.8), sharex=True, gridspec_kw={"height_ratios": [3, 1]}
        )  # printed one column wide
        pts = [f for f in result.files if f.ligand_M > 0 and f.E_half_V is not None]
        if ref is None or not pts:
            ax.text(0.5, 0.5, "no E½ shift could be measured", ha="center", transform=ax.transAxes)
            _pair_ticks(ax, axr)
            top = _set_title(ax, result.series.title or "half-wave shift", fontsize=8.0)
            return _save(fig, path, margins_in=(*_LINGANE_MARGINS_IN, top))
        x = np.log10([f.free_ligand_M for f in pts])
        y = np.array([(cast(float, f.E_half_V) - ref) * 1e3 for f in pts])  # not None: pts
        yerr = np.array([(f.E_half_total_stderr_V or 0.0) * 1e3 for f in pts])
        used = np.array([f.used_in_fit for f in pts])
        _points_with_bars(
            ax, x[used], y[used], yerr[used], color="#1f4e79", ms=5, label="used in fit"
        )
        if np.any(~used):
            _points_with_bars(
                ax,
                x[~used],
                y[~used],
                yerr[~used],
                color="#b35900",
                ms=6,
                filled=False,
                label="flagged, not fitted",
            )
        fit = result.fit if isinstance(result.fit, LinganeFit) else None
        if fit is not None:
            xs = np.linspace(x.min() - 0.1, x.max() + 0.1, 200)
            b, a = fit.slope_V_per_decade.value, fit.intercept_V.value
            cov = np.asarray(fit.covariance, dtype=float)
            line = (a + b * xs) * 1e3
            var = cov[1, 1] + xs**2 * cov[0, 0] + 2 * xs * cov[0, 1]
            tq = t_quantile(0.975, fit.dof) if fit.dof > 0 else float("nan")
            half = tq * np.sqrt(np.clip(var, 0, None)) * 1e3
            ax.plot(
                xs,
                line,
                color="#1f4e79",
                lw=1.2,
                label=f"Lingane line, slope {b * 1e3:.1f} mV/decade",
            )
            ax.fill_between(
                xs,
                line - half,
                line + half,
                color="#1f4e79",
                alpha=0.15,
                lw=0,
                label="95 % band of the line",
            )
            res = np.asarray(fit.residuals_V) * 1e3
            axr.axhline(0, color="0.4", lw=0.8)
            _points_with_bars(axr, x[used], res, yerr[used], color="#1f4e79", ms=4)
        axr.set_ylabel("residual / mV")
        axr.set_xlabel(f"log10([L] / {PER_LITRE})")
        ax.set_ylabel("E½(c) − E½(s) / mV")
        _pair_ticks(ax, axr, r_bins=3)
        shown_x = np.concatenate([x, xs]) if fit is not None else x
        shown_y = np.concatenate([y, line]) if fit is not None else y
        # the result a reader looks for first, on the figure itself: under the title
        headline = constant_lines(fit.to_dict()) if fit is not None else []
        top = _set_title(ax, result.series.title or "half-wave shift", fontsize=8.0,
                         extra=headline)  # fmt: skip
        fig.set_size_inches(ONE_COLUMN_IN, 3.0 + top)  # the plot keeps its height
        # the legend is measured at the final layout
        apply_margins(fig, (*_LINGANE_MARGINS_IN, top))
        legend_clear_of(ax, shown_x, shown_y, frameon=False, fontsize=7)
        return _save(fig, path, margins_in=(*_LINGANE_MARGINS_IN, top))
