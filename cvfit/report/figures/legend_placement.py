"""Where to put a legend: the corner of the axes holding the fewest data points, or (its
box measured) a corner where it covers none.

matplotlib's ``loc="best"`` tests nine places against every vertex of every line at
drawing time, in Python: ~12 ms per legend with a 200-file series (a quarter of the time
of the diagnostics figure). The figures know their points, so one vectorised count per
corner does.
"""

from __future__ import annotations

from typing import Any, Literal

import numpy as np
from matplotlib.axes import Axes
from matplotlib.legend import Legend
from matplotlib.transforms import Bbox
from numpy.typing import ArrayLike

__all__ = ["quiet_corner", "legend_clear_of", "CORNERS"]

Corner = Literal["upper right", "upper left", "lower left", "lower right"]

#: Legend locations tried, in the order ties are settled.
CORNERS: tuple[Corner, ...] = ("upper right", "upper left", "lower left", "lower right")


def quiet_corner(
    ax: Axes, x: ArrayLike, y: ArrayLike, *, width: float = 0.45, height: float = 0.35
) -> Corner:
    """The corner of *ax* (a ``loc`` for ``Axes.legend``) holding the fewest points.

    Parameters
    ----------
    ax : matplotlib Axes
        With linear scales and its final limits (read here).
    x, y : array_like
        Data coordinates of what the legend should not hide (NaN ignored).
    width, height : float
        Size of a corner, as fractions of the axes.
    """
    x = np.asarray(x, dtype=float).ravel()
    y = np.asarray(y, dtype=float).ravel()
    (x0, x1), (y0, y1) = ax.get_xlim(), ax.get_ylim()
    fx = (x - x0) / (x1 - x0)
    fy = (y - y0) / (y1 - y0)
    right, left = fx >= 1.0 - width, fx <= width
    top, bottom = fy >= 1.0 - height, fy <= height
    inside = (fx >= 0) & (fx <= 1) & (fy >= 0) & (fy <= 1)  # NaN compares False
    counts = [
        int(np.count_nonzero(inside & across & up))
        for across, up in ((right, top), (left, top), (left, bottom), (right, bottom))
    ]
    return CORNERS[int(np.argmin(counts))]


def legend_clear_of(ax: Axes, x: ArrayLike, y: ArrayLike, **legend_kw: Any) -> Legend:
    """A legend of *ax* in a corner where its box covers none of the points (*x*, *y*).

    The box is measured (a drawn legend's size depends on its text, not on the axes), the
    corners tried from the emptiest (:func:`quiet_corner`); when every corner covers data,
    the y range is raised by the legend's height, so that the data leave the top corners
    free. Call it with the axes at their final size and limits.
    """
    xs = np.asarray(x, dtype=float).ravel()
    ys = np.asarray(y, dtype=float).ravel()
    keep = np.isfinite(xs) & np.isfinite(ys)
    xs, ys = xs[keep], ys[keep]
    renderer = ax.figure.canvas.get_renderer()  # type: ignore[attr-defined]  # Agg canvas
    first = quiet_corner(ax, xs, ys)
    order: list[Corner] = [first, *(c for c in CORNERS if c != first)]
    legend = ax.legend(loc=first, **legend_kw)
    for _ in range(3):
        for corner in order:
            legend = ax.legend(loc=corner, **legend_kw)
            if not _covers(legend.get_window_extent(renderer), ax, xs, ys):
                return legend
        # every corner covers data: room above it, one legend height
        box = legend.get_window_extent(renderer)
        height = min(0.6, (box.height + 6.0) / max(ax.get_window_extent(renderer).height, 1.0))
        y0, y1 = ax.get_ylim()
        ax.set_ylim(y0, y0 + (y1 - y0) / (1.0 - height))
        order = ["upper right", "upper left"]
    return legend


def _covers(box: Bbox, ax: Axes, x: np.ndarray, y: np.ndarray) -> bool:
    """Whether the display box *box* (2 px margin) holds any of the data points."""
    if x.size == 0:
        return False
    px = ax.transData.transform(np.column_stack([x, y]))
    inside = (
        (px[:, 0] >= box.x0 - 2) & (px[:, 0] <= box.x1 + 2)
        & (px[:, 1] >= box.y0 - 2) & (px[:, 1] <= box.y1 + 2)
    )  # fmt: skip
    return bool(inside.any())
