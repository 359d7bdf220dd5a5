"""Where to put a legend: the corner of the axes holding the fewest data points.

matplotlib's ``loc="best"`` tests nine places against every vertex of every line at
drawing time, in Python: ~12 ms per legend with a 200-file series (a quarter of the time
of the diagnostics figure). The figures know their points, so one vectorised count per
corner does.
"""

from __future__ import annotations

from typing import Literal

import numpy as np
from matplotlib.axes import Axes
from numpy.typing import ArrayLike

__all__ = ["quiet_corner", "CORNERS"]

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
