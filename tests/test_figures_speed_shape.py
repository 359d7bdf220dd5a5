"""What the series figures draw: one artist for the titration curves, thinned curves,
a bounded number of axis labels, and user text shown as typed (no mathtext)."""

from __future__ import annotations

from dataclasses import replace

import matplotlib.pyplot as plt
import numpy as np
import pytest
from matplotlib.collections import LineCollection
from seriesfactory import write_small_series

from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report.figures import diagnostics as figures_diagnostics
from cvfit.report.figures import titration as figures
from cvfit.report.figures.diagnostics import plot_diagnostics
from cvfit.report.figures.titration import plot_lingane, plot_voltammograms

TITLE = r"Zn $x^2$ in 0.1 M KNO3 ($\frac$ batch)"  # as mathtext: a ParseSyntaxException


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    manifest = write_small_series(tmp_path_factory.mktemp("figs"), 5, seed=700)
    got = analyse_series(load_manifest(manifest))
    settings = replace(got.series.settings, title=TITLE)
    return replace(got, series=replace(got.series, settings=settings))


def _capture(monkeypatch):
    """Keep the figure that _save receives (and still write it)."""
    seen = []
    original = figures._save

    def keep(fig, path, **kw):
        seen.append(fig)
        return original(fig, path, **kw)

    monkeypatch.setattr(figures, "_save", keep)
    monkeypatch.setattr(figures_diagnostics, "_save", keep)
    return seen


def test_titration_curves_are_one_thinned_collection(result, tmp_path, monkeypatch):
    seen = _capture(monkeypatch)
    assert plot_voltammograms(result, tmp_path / "v.png").stat().st_size > 0
    ax = seen[0].axes[0]
    collections = [
        c for c in ax.collections if isinstance(c, LineCollection) and c.get_gid() is None
    ]  # the others are grid lines
    assert len(collections) == 1
    segments = collections[0].get_segments()
    titrating = [f for f in result.files if f.ligand_M > 0]
    assert len(segments) == len(titrating)
    assert all(len(s) <= figures.MAX_POINTS_DRAWN for s in segments)
    # the ligand-free curve keeps its own dashed line and legend entry
    assert [ln.get_label() for ln in ax.get_lines()] == ["no ligand"]
    assert ax.get_title() == TITLE


def test_very_large_series_draws_curves_spread_over_the_ligand_range(
    result, tmp_path, monkeypatch
):
    copies = -(-(figures.MAX_CURVES_DRAWN + 50) // (len(result.files) - 1))
    files = []
    for c in range(copies):  # distinct ligand levels, as in a long titration
        files += [replace(f, ligand_M=f.ligand_M * (1 + 1e-3 * c)) for f in result.files]
    big = replace(result, files=tuple(files))
    titrating = [f for f in big.files if f.ligand_M > 0]
    assert len(titrating) > figures.MAX_CURVES_DRAWN
    seen = _capture(monkeypatch)
    plot_voltammograms(big, tmp_path / "v.png")
    ax = seen[0].axes[0]
    (curves,) = [
        c for c in ax.collections if isinstance(c, LineCollection) and c.get_gid() is None
    ]
    assert len(curves.get_segments()) == figures.MAX_CURVES_DRAWN
    # the lowest and the highest ligand level are among those drawn (the colour scale's ends)
    colours = curves.get_colors()[:, :3]
    cmap = plt.get_cmap(figures.COLOUR_MAP)
    for end in (0.0, 1.0):
        assert np.min(np.abs(colours - np.asarray(cmap(end))[:3]).sum(axis=1)) < 1e-6
    # the copies' ligand-free curves are all drawn, under one legend entry
    free = [ln for ln in ax.get_lines() if ln.get_linestyle() == "--"]
    assert len(free) == copies
    assert [t.get_text() for t in ax.get_legend().get_texts()] == ["no ligand"]
    notes = [t.get_text() for t in ax.texts if "curves drawn" in t.get_text()]
    assert notes == [
        f"{figures.MAX_CURVES_DRAWN} of {len(titrating)} titration curves drawn, evenly over [L]"
    ]
    plt.close("all")


def test_large_series_draws_fewer_points_per_curve():
    per_curve = max(
        figures.MIN_POINTS_DRAWN,
        min(figures.MAX_POINTS_DRAWN, figures.MAX_POINTS_PER_FIGURE // 200),
    )
    assert per_curve == figures.MIN_POINTS_DRAWN == 300  # 200 files: 300 points each


def test_diagnostics_labels_at_most_the_cap(result, tmp_path, monkeypatch):
    many = replace(result, files=tuple(result.files) * 12)  # 60 files
    seen = _capture(monkeypatch)
    plot_diagnostics(many, tmp_path / "d.png")
    fig = seen[0]
    bottom = fig.axes[1]
    labels = [t.get_text() for t in bottom.get_xticklabels() if t.get_text()]
    assert 0 < len(labels) <= figures_diagnostics.MAX_TICK_LABELS
    # one scan rate for the whole series: named once in the axis label, not per file
    assert all(label.endswith(" M") for label in labels)
    assert "V/s" in bottom.get_xlabel()
    # two columns (17.8 cm, common journal practice) at most, every text >= 7 pt there
    width = fig.get_size_inches()[0]
    assert width <= 17.8 / 2.54 + 1e-9
    from matplotlib.text import Text

    sizes = [t.get_fontsize() for t in fig.findobj(Text) if t.get_visible() and t.get_text()]
    assert min(sizes) * (17.8 / 2.54) / width >= 7.0
    # every file is still plotted: one marker per file with a measured ΔEp
    top = fig.axes[0]
    plotted = sum(len(ln.get_xdata()) for ln in top.get_lines() if ln.get_linestyle() == "None")
    assert plotted == sum(f.measurement.peaks.delta_Ep_V is not None for f in many.files)
    plt.close("all")


def test_user_text_with_dollars_is_drawn_as_typed(result, tmp_path):
    for plot, name in ((plot_voltammograms, "v"), (plot_diagnostics, "d"), (plot_lingane, "l")):
        assert plot(result, tmp_path / f"{name}.png").stat().st_size > 0
