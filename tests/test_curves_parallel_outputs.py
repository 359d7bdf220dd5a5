"""The thinned analysed cycle kept on each file result, and outputs written in parallel."""

from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np
import pytest
from seriesfactory import write_small_series

from cvfit.curves import CycleCurve, cycle_curve, points_per_curve
from cvfit.io import load_manifest
from cvfit.pipeline import analyse_series
from cvfit.report import OUTPUT_NAMES, results_to_json, write_file_table, write_outputs
from cvfit.report import figures as figures_module
from cvfit.simulate import simulate_cv


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


def test_outputs_drawn_in_workers_are_the_serial_ones(result, tmp_path):
    one = write_outputs(result, tmp_path / "one", jobs=1)
    two = write_outputs(result, tmp_path / "two", jobs=2)
    assert list(one) == list(two)  # same outputs, same order (html and results.json last)
    assert list(one)[-2:] == ["html_report", "results"]
    assert set(p.name for p in one.values()) == set(OUTPUT_NAMES.values())
    assert _digests(tmp_path / "one") == _digests(tmp_path / "two")
    # nothing but the outputs: no temporary file left behind by a worker
    assert sorted(p.name for p in (tmp_path / "two").iterdir()) == sorted(OUTPUT_NAMES.values())


def test_tasks_handed_to_a_worker_through_a_file_leave_no_file(result, tmp_path, monkeypatch):
    import tempfile

    spare = tmp_path / "tmp"
    spare.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(spare))
    made = []
    original = tempfile.mkstemp

    def recorded(*args, **kwargs):
        made.append(original(*args, **kwargs))
        return made[-1]

    monkeypatch.setattr(tempfile, "mkstemp", recorded)
    write_outputs(result, tmp_path / "two", jobs=2)
    handed = [path for _, path in made if Path(path).name.startswith("cvfit-tasks-")]
    assert len(handed) == 1 and handed[0].startswith(str(spare))  # the tasks' file ...
    assert list(spare.iterdir()) == []  # ... is gone
    with pytest.raises(RuntimeError, match="shutdown"):  # also when the hand-over fails
        from cvfit._workers import worker_pool

        with worker_pool(2) as pool:
            pool.executor.shutdown()
            write_outputs(result, tmp_path / "three", pool=pool)
    handed = [path for _, path in made if Path(path).name.startswith("cvfit-tasks-")]
    assert len(handed) == 2 and list(spare.iterdir()) == []


def test_a_worker_removes_the_tasks_file_once_read(tmp_path):
    """So a run killed while its worker draws leaves nothing in the temporary folder."""
    import pickle

    from cvfit.report import _in_turn_from

    path = tmp_path / "cvfit-tasks-x.pickle"
    path.write_bytes(pickle.dumps([(max, (1, 3)), (min, (1, 3))]))
    assert _in_turn_from(str(path)) == [3, 1]
    assert not path.exists()


def test_outputs_from_a_result_without_curves_are_the_same(result, tmp_path):
    """Workers get the result without its curves (a fifth of the bytes); every output but
    the voltammogram figure must come out the same from it."""
    from cvfit.report import _without_curves
    from cvfit.report.figures import plot_lingane
    from cvfit.report.figures_diagnostics import plot_diagnostics

    light = _without_curves(result)
    assert all(f.curve is None for f in light.files)
    assert all(f.curve is not None for f in result.files)
    assert results_to_json(light) == results_to_json(result)
    for name, write in (
        ("t.csv", write_file_table),
        ("d.png", plot_diagnostics),
        ("l.png", plot_lingane),
    ):
        full = write(result, tmp_path / f"full_{name}").read_bytes()
        assert write(light, tmp_path / f"light_{name}").read_bytes() == full, name


def test_long_title_wraps_and_gets_room(result, tmp_path, monkeypatch):
    seen = []
    original = figures_module._save

    def keep(fig, path, **kw):
        seen.append((fig, kw))
        return original(fig, path, **kw)

    monkeypatch.setattr(figures_module, "_save", keep)
    from dataclasses import replace

    long = replace(result, series={**result.series, "title": "M(III)/M(II) " * 20})
    figures_module.plot_voltammograms(long, tmp_path / "v.png")
    fig, kw = seen[0]
    title = fig.axes[0].get_title()
    assert title.count("\n") >= 1  # wrapped, not cut at the figure edge
    top = kw["margins_in"][3]
    assert top >= 0.12 + 0.17 * (title.count("\n") + 1) - 1e-12
    # the wrapped title lies inside the canvas, above the axes
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    box = fig.axes[0].title.get_window_extent(FigureCanvasAgg(fig).get_renderer())
    assert 0 <= box.x0 and box.x1 <= fig.bbox.width and box.y1 <= fig.bbox.height
    assert box.y0 >= fig.axes[0].get_window_extent().y1
