"""The analysed cycle of a voltammogram, thinned for drawing.

A series result keeps, per file, only the cycle its peaks were measured on, at a bounded
number of points: enough for a figure (a few hundred points per curve show no more than
twenty thousand on a page), small enough that a thousand-file series fits in memory and
that results computed in worker processes travel back cheaply.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from cvfit.voltammogram import Voltammogram

__all__ = [
    "CycleCurve",
    "cycle_curve",
    "points_per_curve",
    "MAX_POINTS_DRAWN",
    "MIN_POINTS_DRAWN",
    "MAX_POINTS_PER_FIGURE",
]

#: Most points kept for one curve.
MAX_POINTS_DRAWN = 1500
#: Points kept for all the curves of a series together: a large series keeps each curve
#: more thinly (200 overlaid curves 6 inches wide show no more at 300 points each than at
#: 1500), never below ``MIN_POINTS_DRAWN``.
MAX_POINTS_PER_FIGURE = 60_000
MIN_POINTS_DRAWN = 300


def points_per_curve(n_curves: int) -> int:
    """Points to keep per curve when *n_curves* curves are overlaid in one figure."""
    return max(MIN_POINTS_DRAWN, min(MAX_POINTS_DRAWN, MAX_POINTS_PER_FIGURE // max(1, n_curves)))


@dataclass(frozen=True)
class CycleCurve:
    """One cycle of a record (forward and reverse sweep), every k-th point.

    Attributes
    ----------
    potential_V, current_A : ndarray
        Read-only arrays, V and A (IUPAC sign), in recording order.
    stride : int
        Every ``stride``-th recorded point was kept (1: all of them).
    """

    potential_V: np.ndarray
    current_A: np.ndarray
    stride: int = 1

    def __post_init__(self) -> None:
        E = np.array(self.potential_V, dtype=float)
        i = np.array(self.current_A, dtype=float)
        if E.ndim != 1 or E.shape != i.shape:
            raise ValueError(f"potential and current must be 1-D of one length, got {E.shape}, "
                             f"{i.shape}")  # fmt: skip
        if isinstance(self.stride, bool) or int(self.stride) < 1:
            raise ValueError(f"stride must be a whole number >= 1, got {self.stride!r}")
        E.setflags(write=False)
        i.setflags(write=False)
        object.__setattr__(self, "potential_V", E)
        object.__setattr__(self, "current_A", i)
        object.__setattr__(self, "stride", int(self.stride))


def cycle_curve(v: Voltammogram, cycle_number: int, *, max_points: int) -> CycleCurve:
    """The forward and reverse sweep of cycle *cycle_number* of *v*, at most *max_points*.

    Parameters
    ----------
    v : Voltammogram
        The record; it is not modified.
    cycle_number : int
        1-based cycle, as :meth:`Voltammogram.cycle` takes it.
    max_points : int
        Upper bound on the points kept (every k-th point, the first always kept).
    """
    if max_points < 2:
        raise ValueError(f"max_points must be at least 2, got {max_points}")
    cyc = v.cycle(cycle_number)
    stop = cyc.reverse.stop if cyc.reverse is not None else cyc.forward.stop
    start = cyc.forward.start
    stride = max(1, math.ceil((stop + 1 - start) / max_points))
    return CycleCurve(
        v.potential_V[start : stop + 1 : stride], v.current_A[start : stop + 1 : stride], stride
    )
