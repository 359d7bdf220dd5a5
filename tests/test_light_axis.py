"""Ticks drawn as a few artists per axis: round positions inside the limits, exact and
distinct labels, and axis labels clear of the tick labels once drawn."""

from __future__ import annotations

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

from cvfit.report._light_axis import (  # noqa: E402
    GRID_GID,
    MARKS_GID,
    TICK_LABEL_GID,
    light_ticks,
    tick_labels,
    tick_values,
)


def _number(text: str) -> float:
    return float(text.replace("\u2212", "-"))


def test_tick_values_are_round_and_inside():
    v = tick_values(-0.7512, 0.2503, 8)
    assert v[0] >= -0.7512 and v[-1] <= 0.2503
    assert 4 <= v.size <= 9
    # a short axis still gets three ticks: 41.8 units in 4 bins would leave only −20 and 0
    assert tick_values(-22.9, 18.9, 4).size >= 3
    steps = np.diff(v)
    assert np.allclose(steps, steps[0])
    assert np.any(np.isclose(steps[0], [0.1, 0.2, 0.25]))  # 1, 2, 2.5 or 5 times 10^k


def test_tick_labels_fewest_decimals_and_typographic_minus():
    assert tick_labels([-0.75, -0.5, -0.25, 0.0]) == [
        "\u22120.75",
        "\u22120.50",
        "\u22120.25",
        "0.00",
    ]
    assert tick_labels([-20.0, -10.0, 0.0, 10.0]) == ["\u221220", "\u221210", "0", "10"]
    # a zero that arithmetic left a hair below 0 is not shown as "−0"
    assert tick_labels([-0.2, -0.1, -1e-17, 0.1]) == ["\u22120.2", "\u22120.1", "0.0", "0.1"]
    assert tick_labels([2e6, 4e6]) == ["2e+06", "4e+06"]
    assert tick_labels([]) == []


@settings(max_examples=200, deadline=None)
@given(
    lo=st.floats(-1e5, 1e5, allow_nan=False),
    span=st.floats(1e-4, 1e5, allow_nan=False),
    nbins=st.integers(2, 9),
)
def test_labels_read_back_as_their_ticks(lo, span, nbins):
    values = tick_values(lo, lo + span, nbins)
    labels = tick_labels(values)
    assert len(set(labels)) == len(labels) == values.size
    if values.size > 1:
        step = float(np.min(np.diff(values)))
        back = np.array([_number(t) for t in labels])
        # plain decimals read back exactly; three significant figures only for huge values
        tolerance = 1e-6 * step if max(abs(values)) < 1e6 else 5e-3 * max(abs(values))
        assert np.all(np.abs(back - values) <= tolerance)


@pytest.fixture
def axes():
    fig, ax = plt.subplots(figsize=(5, 4), dpi=100)
    ax.plot([-0.75, 0.25], [-21.0, 17.0])
    yield fig, ax
    plt.close(fig)


def test_light_ticks_replace_matplotlib_ticks_and_keep_limits(axes):
    fig, ax = axes
    limits = ax.get_xlim(), ax.get_ylim()
    xs = light_ticks(ax, "x")
    ys = light_ticks(ax, "y", nbins=4)
    assert (ax.get_xlim(), ax.get_ylim()) == limits
    assert len(ax.get_xticks()) == len(ax.get_yticks()) == 0  # no matplotlib tick objects
    assert [t.get_gid() for t in xs] == [TICK_LABEL_GID + "x"] * len(xs)
    for texts, (lo, hi), k in ((xs, limits[0], 0), (ys, limits[1], 1)):
        positions = [t.get_position()[k] for t in texts]
        assert all(lo <= p <= hi for p in positions) and len(positions) >= 3
        assert [t.get_text() for t in texts] == tick_labels(positions)
    grids = [c.get_gid() for c in ax.collections]
    assert grids == [GRID_GID + "x", GRID_GID + "y"]
    marks = [a for a in fig.artists if a.get_gid() in (MARKS_GID + "x", MARKS_GID + "y")]
    assert [len(m.get_xdata()) for m in marks] == [len(xs), len(ys)]
    assert ax.get_lines()[0].get_label() != "_nolegend_"  # data lines untouched
    assert len(ax.get_lines()) == 1  # marks are not data: not among the axes' lines


@pytest.mark.parametrize("rotation", [0.0, 60.0])
def test_axis_labels_clear_the_tick_labels(axes, rotation):
    fig, ax = axes
    ax.set_xlabel("E / V")
    ax.set_ylabel("i / µA")
    fig.subplots_adjust(left=0.2, bottom=0.3)
    texts = ["0.005 M\n0.1 V/s", "0.01 M\n0.1 V/s", "0.02 M\n0.1 V/s"]
    xs = light_ticks(ax, "x", ticks=[-0.5, -0.2, 0.1], texts=texts, rotation=rotation)
    ys = light_ticks(ax, "y")
    fig.canvas.draw()
    renderer = fig.canvas.get_renderer()
    xlabel = ax.xaxis.label.get_window_extent(renderer)
    ylabel = ax.yaxis.label.get_window_extent(renderer)
    assert [t.get_text() for t in xs] == texts
    assert all(xlabel.y1 <= t.get_window_extent(renderer).y0 for t in xs)
    assert all(ylabel.x1 <= t.get_window_extent(renderer).x0 for t in ys)
    spine = ax.get_window_extent(renderer)
    assert all(t.get_window_extent(renderer).y1 < spine.y0 for t in xs)  # below the axes
    assert all(t.get_window_extent(renderer).x1 < spine.x0 for t in ys)  # left of it


def test_which_must_be_x_or_y(axes):
    with pytest.raises(ValueError, match="'x' or 'y'"):
        light_ticks(axes[1], "z")


def test_legend_goes_to_the_corner_with_fewest_points(axes):
    from cvfit.report._placement import CORNERS, quiet_corner

    _, ax = axes
    ax.set_xlim(0, 10)
    ax.set_ylim(0, 10)
    # two points in the upper right, one in each other corner but the lower left
    x = np.array([9.5, 9.0, 0.5, 9.5, np.nan])
    y = np.array([9.5, 9.0, 9.5, 0.5, 0.2])
    assert quiet_corner(ax, x, y) == "lower left"
    assert quiet_corner(ax, [], []) == CORNERS[0] == "upper right"  # ties: in CORNERS order
    assert quiet_corner(ax, [20.0], [20.0]) == "upper right"  # points off the axes ignored
    many_left = np.array([1.0] * 5 + [9.0] * 3)
    many_bottom = np.array([1.0] * 5 + [1.0] * 3)
    assert quiet_corner(ax, many_left, many_bottom) == "upper right"
    assert quiet_corner(ax, [9.0, 1.0, 1.0], [9.0, 9.0, 1.0]) == "lower right"
