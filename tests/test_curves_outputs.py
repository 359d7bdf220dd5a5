"""The thinned analysed cycle kept on each file result, and the outputs written from it."""

from __future__ import annotations

import hashlib

import numpy as np
import pytest
from seriesfactory import write_small_series

from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import OUTPUT_NAMES, write_outputs
from cvfit.report.figures import titration as figures_module
from cvfit.report.ownership import MARKER_NAME
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.curves import CycleCurve, cycle_curve, points_per_curve


def test_cycle_curve_keeps_the_analysed_cycle_thinned():
    v = simulate_cv(E_half_V=0.0, start_V=0.3, switch_V=-0.3, step_V=0.0005, cycles=2)
    cyc = v.cycle(2)
    n = cyc.reverse.stop + 1 - cyc.forward.start
    curve = cycle_curve(v, 2, max_points=300)
    assert curve.potential_V.size <= 300
    assert curve.stride == -(-n // 300)
    # every stride-th recorded point of cycle 2, from its first point on
    assert curve.potential_V[0] == v.potential_V[cyc.forward.start]
    np.testing.assert_array_equal(
        curve.current_A, v.current_A[cyc.forward.start : cyc.reverse.stop + 1 : curve.stride]
    )
    whole = cycle_curve(v, 1, max_points=10**6)
    assert whole.stride == 1 and whole.potential_V.size == v.cycle(1).reverse.stop + 1
    with pytest.raises(ValueError, match="read-only"):
        curve.current_A[0] = 1.0
    with pytest.raises(ValueError, match="max_points"):
        cycle_curve(v, 1, max_points=1)


def test_cycle_curve_checks_itself():
    with pytest.raises(ValueError, match="one length"):
        CycleCurve(np.zeros(3), np.zeros(4))
    with pytest.raises(ValueError, match="stride"):
        CycleCurve(np.zeros(3), np.zeros(3), stride=0)


def test_points_per_curve_budget():
    assert points_per_curve(1) == 1500
    assert points_per_curve(40) == 1500
    assert points_per_curve(200) == 300  # 60 000 points for the figure
    assert points_per_curve(10_000) == 300  # never below the floor


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    manifest = write_small_series(tmp_path_factory.mktemp("par"), 5, seed=900)
    return analyse_series(load_manifest(manifest))


def _digests(folder):
    return {p.name: hashlib.sha256(p.read_bytes()).hexdigest() for p in folder.iterdir()}


def test_outputs_are_deterministic_and_complete(result, tmp_path):
    one = write_outputs(result, tmp_path / "one")
    two = write_outputs(result, tmp_path / "two")
    assert list(one) == list(two)  # same outputs, same order (html and results.json last)
    assert list(one)[-2:] == ["html_report", "results"]
    assert set(p.name for p in one.values()) == set(OUTPUT_NAMES.values())
    assert _digests(tmp_path / "one") == _digests(tmp_path / "two")
    # nothing but the outputs: no temporary file left behind
    names = sorted(p.name for p in (tmp_path / "two").iterdir())
    assert names == sorted([*OUTPUT_NAMES.values(), MARKER_NAME])  # and the set's record


def test_long_title_wraps_and_gets_room(result, tmp_path, monkeypatch):
    seen = []
    original = figures_module._save

    def keep(fig, path, **kw):
        seen.append((fig, kw))
        return original(fig, path, **kw)

    monkeypatch.setattr(figures_module, "_save", keep)
    from dataclasses import replace

    settings = replace(result.series.settings, title="M(III)/M(II) " * 20)
    long = replace(result, series=replace(result.series, settings=settings))
    figures_module.plot_voltammograms(long, tmp_path / "v.png")
    fig, kw = seen[0]
    title = fig.axes[0].get_title()
    assert title.count("\n") >= 1  # wrapped, not cut at the figure edge
    top = kw["margins_in"][3]
    size = fig.axes[0].title.get_fontsize() / 9.0  # 0.17 in a line of 9 pt
    assert top >= 0.12 + 0.17 * size * (title.count("\n") + 1) - 1e-12
    # the wrapped title lies inside the canvas, above the axes
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    box = fig.axes[0].title.get_window_extent(FigureCanvasAgg(fig).get_renderer())
    assert 0 <= box.x0 and box.x1 <= fig.bbox.width and box.y1 <= fig.bbox.height
    assert box.y0 >= fig.axes[0].get_window_extent().y1
