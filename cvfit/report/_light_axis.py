"""Axis ticks, tick labels and grid lines drawn as a few artists per axis.

matplotlib draws every tick as an object of five artists (two marks, two labels and a grid
line) and creates them anew for each figure: about 1 ms per tick, a third of the time of
drawing one of our figures. The series figures need only marks, labels and grid lines at
round values, so :func:`light_ticks` draws one line of tick marks, one collection of grid
lines and one text per label instead, and places the axis label beside the measured tick
labels. The look follows the figure's rcParams (tick size and pad, grid colour).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

import matplotlib as mpl
import numpy as np
from matplotlib import lines as mlines
from matplotlib import transforms as mtransforms
from matplotlib.collections import LineCollection
from matplotlib.ticker import MaxNLocator, NullLocator

__all__ = ["light_ticks", "tick_values", "tick_labels", "TICK_LABEL_GID", "GRID_GID", "MARKS_GID"]

#: ``gid`` of the artists drawn, followed by "x" or "y": the tick-label texts, the grid
#: lines (one collection) and the tick marks (one line).
TICK_LABEL_GID = "cvfit-tick-label-"
GRID_GID = "cvfit-grid-"
MARKS_GID = "cvfit-tick-marks-"
#: Round steps between ticks, as matplotlib's own locator uses.
_STEPS = (1, 2, 2.5, 5, 10)
_MINUS = "\u2212"


def tick_values(lo: float, hi: float, nbins: int) -> np.ndarray:
    """Round tick positions within ``[lo, hi]``: about *nbins* intervals, and at least
    three ticks where a round step gives them."""
    lo, hi = min(lo, hi), max(lo, hi)
    slack = 1e-9 * max(hi - lo, abs(hi), abs(lo), 1e-300)
    values = np.array([])
    for n in range(max(1, nbins), 2 * max(1, nbins) + 2):
        values = MaxNLocator(nbins=n, steps=list(_STEPS)).tick_values(lo, hi)
        values = values[(values >= lo - slack) & (values <= hi + slack)]
        if values.size >= 3:
            break
    return values


def tick_labels(values: Sequence[float]) -> list[str]:
    """Labels of *values* with the fewest decimals that tell them apart exactly.

    Plain decimals up to six places, else three significant figures; a typographic minus,
    and no "−0".
    """
    v = np.asarray(values, dtype=float)
    if v.size == 0:
        return []
    scale = float(np.max(np.abs(v)))
    step = float(np.min(np.diff(v))) if v.size > 1 else (scale or 1.0)
    decimals = next(
        (d for d in range(7) if np.all(np.abs(np.round(v, d) - v) <= 1e-6 * step)), None
    )
    if decimals is None or scale >= 1e6:
        texts = [f"{x:.3g}" for x in v]
    else:
        texts = [f"{0.0 if abs(x) < 0.5 * 10.0**-decimals else x:.{decimals}f}" for x in v]
    return [t.replace("-", _MINUS) for t in texts]


def light_ticks(
    ax,
    which: str,
    *,
    nbins: int = 8,
    labels: bool = True,
    ticks: Sequence[float] | None = None,
    texts: Sequence[str] | None = None,
    format_tick: Callable[[Sequence[float]], list[str]] = tick_labels,
    fontsize: float | None = None,
    rotation: float = 0.0,
    grid: bool = True,
) -> list:
    """Draw the ticks of *ax*'s ``which`` ("x" or "y") axis in a few artists.

    Call it when everything is plotted: the axis' current limits are kept as they are.
    The ticks are at round values (*nbins* intervals at most), or at *ticks* with the
    labels *texts*. ``labels=False`` draws marks and grid lines only (an axis sharing its
    labels with another). Returns the label texts (``gid`` ``TICK_LABEL_GID + which``).
    """
    if which not in ("x", "y"):
        raise ValueError(f"which must be 'x' or 'y', got {which!r}")
    axis = ax.xaxis if which == "x" else ax.yaxis
    lo, hi = ax.get_xlim() if which == "x" else ax.get_ylim()
    (ax.set_xlim if which == "x" else ax.set_ylim)(lo, hi)  # keep them: nothing may move
    if ticks is None:
        values = tick_values(lo, hi, nbins)
        words = format_tick(values)
    else:
        values = np.asarray(ticks, dtype=float)
        words = list(texts) if texts is not None else format_tick(values)
    axis.set_major_locator(NullLocator())
    axis.set_minor_locator(NullLocator())
    rc = mpl.rcParams
    along = ax.get_xaxis_transform() if which == "x" else ax.get_yaxis_transform()
    fig = ax.figure
    if grid and len(values):
        across = np.array([0.0, 1.0])
        segments = [
            np.column_stack([[v, v], across] if which == "x" else [across, [v, v]]) for v in values
        ]
        ax.add_collection(
            LineCollection(
                segments,
                transform=along,
                colors=rc["grid.color"],
                linewidths=rc["grid.linewidth"],
                alpha=rc["grid.alpha"],
                zorder=1.5,  # below the data, as matplotlib's grid with axisbelow="line"
                gid=GRID_GID + which,
            ),
            autolim=False,
        )
    size = rc[f"{which}tick.major.size"]
    pad = rc[f"{which}tick.major.pad"]
    # the marks belong to the figure, not the axes: they are not data (the "best" legend
    # place, Axes.lines) and sit outside the axes
    fig.add_artist(
        mlines.Line2D(
            values if which == "x" else np.zeros(len(values)),
            np.zeros(len(values)) if which == "x" else values,
            transform=along,
            ls="none",
            marker=mlines.TICKDOWN if which == "x" else mlines.TICKLEFT,
            markersize=size,
            markeredgewidth=rc[f"{which}tick.major.width"],
            color=rc[f"{which}tick.color"],
            clip_on=False,
            gid=MARKS_GID + which,
        )
    )
    if not labels:
        return []
    fontsize = fontsize if fontsize is not None else rc[f"{which}tick.labelsize"]
    gap = size + pad
    offset = mtransforms.offset_copy(
        along,
        fig=fig,
        x=0 if which == "x" else -gap,
        y=-gap if which == "x" else 0,
        units="points",
    )
    placed = []
    for v, word in zip(values, words, strict=True):
        xy = (v, 0.0) if which == "x" else (0.0, v)
        if which == "x":
            align = {"ha": "right" if rotation else "center", "va": "top"}
        else:
            align = {"ha": "right", "va": "center"}
        placed.append(
            ax.text(
                *xy,
                word,
                transform=offset,
                fontsize=fontsize,
                rotation=rotation,
                clip_on=False,
                gid=TICK_LABEL_GID + which,
                **align,
            )
        )
    # the axis label beyond the widest (or tallest) tick label, as matplotlib places it
    renderer = fig.canvas.get_renderer()
    extents = [t.get_window_extent(renderer) for t in placed]
    depth_px = max((e.height if which == "x" else e.width for e in extents), default=0.0)
    depth_pt = depth_px * 72.0 / fig.dpi + gap + rc["axes.labelpad"]
    label_at = mtransforms.offset_copy(
        ax.transAxes,
        fig=fig,
        x=0 if which == "x" else -depth_pt,
        y=-depth_pt if which == "x" else 0,
        units="points",
    )
    if which == "x":
        axis.set_label_coords(0.5, 0.0, transform=label_at)
    else:
        axis.set_label_coords(0.0, 0.5, transform=label_at)
    return placed
