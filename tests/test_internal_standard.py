"""Internal reference couple: two waves in one file, the standard's drift, E½ against it.

Simulated two-wave files are the sum of two runs of cvfit's simulator on one waveform
(:mod:`cvfit.simulate.internal_standard`). The requirement checked: an adjacent standard
250–400 mV away moves the analyte's E½ by less than 0.3 mV (issue requirement). Truth of
the titration as in example_runs/internal_standard: p − q = 1 and log10(β_ox/β_red) = 5.4
where ML2 and ML dominate (Lingane, Chem. Rev. 29 (1941) 1).
"""

from __future__ import annotations

import csv
import json
import math

import jsonschema
import numpy as np
import pytest

from cvfit.cli import main as cvfit_main
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import write_outputs
from cvfit.report.results_json import load_schema
from cvfit.simulate.internal_standard import (
    simulate_internal_standard_series,
    simulate_two_waves,
)
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.switching import corrected_half_wave_V

CV = dict(scan_rate_V_s=0.1, step_V=0.001, double_layer_F=5e-6, background_slope_A_per_V=2e-6)


def corrected(peaks):
    return corrected_half_wave_V(peaks, electrons=1, temperature_K=298.15)[0]


def two_wave_case(distance_V, noise=0.0, seed=None):
    """Analyte at 0 V, standard *distance_V* away; windows meet half-way between them."""
    e_std = distance_V
    start = max(0.0, e_std) + 0.3
    switch = min(0.0, e_std) - 0.35
    mid = 0.5 * e_std
    side = math.copysign(1.0, e_std)
    analyte_w = tuple(sorted((mid, -side)))
    standard_w = tuple(sorted((mid, e_std + side)))
    kw = dict(start_V=start, switch_V=switch, noise_fraction=noise, seed=seed, **CV)
    alone = simulate_cv(E_half_V=0.0, **kw)
    both = simulate_two_waves(E_half_V=0.0, standard_E_half_V=e_std, **kw)
    std_alone = simulate_cv(E_half_V=e_std, **kw)
    return alone, both, std_alone, analyte_w, standard_w


@pytest.mark.parametrize("distance_V", [0.25, 0.30, 0.40, -0.25, -0.30, -0.40])
def test_adjacent_standard_moves_analyte_E_half_by_less_than_0p3_mV(distance_V):
    alone, both, std_alone, analyte_w, standard_w = two_wave_case(distance_V)
    own = corrected(analyse_peaks(alone))
    windowed = analyse_peaks(both, window_V=analyte_w)
    shift = corrected(windowed) - own
    assert abs(shift) < 0.3e-3, shift
    # and the standard, measured in its own window, is not moved by the analyte either
    std_own = corrected(analyse_peaks(std_alone))
    std_two = analyse_peaks(both, window_V=standard_w)
    assert abs(corrected(std_two) - std_own) < 0.3e-3
    # the peaks themselves stay put (each within 0.5 mV), so ΔEp and the screen hold
    base = analyse_peaks(alone)
    assert abs(windowed.Epc_V - base.Epc_V) < 0.5e-3
    assert abs(windowed.Epa_V - base.Epa_V) < 0.5e-3


def test_with_noise_the_shift_stays_within_the_noise():
    # same noise in both records: the difference is what the second wave does
    shifts = []
    for seed in range(6):
        alone, both, _, analyte_w, _ = two_wave_case(0.3, noise=0.005, seed=seed)
        a = analyse_peaks(alone)
        b = analyse_peaks(both, window_V=analyte_w)
        shifts.append(corrected(b) - corrected(a))
        assert b.E_half_stderr_V is not None and b.E_half_stderr_V < 1e-3
    assert abs(np.mean(shifts)) < 0.3e-3, shifts


def test_without_a_second_wave_the_window_changes_nothing_but_the_range():
    alone, *_ = two_wave_case(0.3)
    full = analyse_peaks(alone)
    windowed = analyse_peaks(alone, window_V=(-1.0, 0.15))
    assert windowed.E_half_V == pytest.approx(full.E_half_V, abs=0.1e-3)
    # a window that misses the wave finds no peak (and says so)
    empty = analyse_peaks(alone, window_V=(0.3, 0.6))
    assert empty.E_half_V is None
    assert any(f.code == "NO_FORWARD_PEAK" for f in empty.flags)


def test_two_wave_record_is_the_sum_of_its_waves():
    kw = dict(start_V=0.5, switch_V=-0.4, **CV)
    both = simulate_two_waves(E_half_V=0.0, standard_E_half_V=0.3, **kw)
    a = simulate_cv(E_half_V=0.0, **kw)
    s = simulate_cv(E_half_V=0.3, start_V=0.5, switch_V=-0.4, scan_rate_V_s=0.1, step_V=0.001)
    assert np.allclose(both.current_A, a.current_A + s.current_A, rtol=0, atol=1e-15)
    assert both.metadata["standard_E_half_V"] == "0.3"


@pytest.fixture(scope="module")
def drifting_series(tmp_path_factory):
    folder = tmp_path_factory.mktemp("istd")
    series = simulate_internal_standard_series(
        ligand_M=(0.0, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.35, 0.0),
        E_half_free_V=-0.050,
        log10_beta_ox=(5.0, 9.6),
        log10_beta_red=(4.2,),
        standard_E_half_V=0.250,
        drift_step_V=0.003,
        noise_fraction=0.005,
        seed=7,
        out_dir=folder,
        analyte_window_V=(-0.9, 0.10),
        standard_window_V=(0.10, 0.8),
        start_V=0.55,
        switch_V=-0.70,
        **CV,
    )
    result = analyse_series(load_manifest(series.manifest))
    return series, result, folder


def test_standard_tracks_the_drift_and_the_analyte_is_quoted_against_it(drifting_series):
    series, result, _ = drifting_series
    assert np.ptp(series.drift_V) > 3e-3  # the electrode really drifts by millivolts
    for f, drift, truth in zip(
        result.files, series.drift_V, series.E_half_vs_standard_V, strict=True
    ):
        std = f.internal_standard
        assert std is not None and std.reversible is True
        assert std.E_half_V - 0.250 == pytest.approx(drift, abs=0.6e-3)
        # 0.5 % noise: SD of a file's E½ about 0.25 mV; 4 SD
        assert f.E_half_V == pytest.approx(truth, abs=1.0e-3)
        own, s = f.measurement.peaks.E_half_stderr_V, std.E_half_stderr_V
        assert f.E_half_total_stderr_V == pytest.approx(math.hypot(own, s))
    fit = result.fit
    lo, hi = fit.log10_beta_ratio.ci95
    assert lo <= 5.4 <= hi or abs(fit.log10_beta_ratio.value - 5.4) < 0.02
    assert result.reference.files == ("istd_00.csv", "istd_08.csv")
    assert result.reference.spread_V is not None


def test_outputs_carry_the_standard_and_its_figure(drifting_series):
    _, result, folder = drifting_series
    written = write_outputs(result, folder / "out")
    assert written["internal_standard_figure"].name == "internal_standard.png"
    data = json.loads(written["results"].read_text(encoding="utf-8"))
    jsonschema.validate(data, load_schema("results"))
    first = data["voltammograms"][0]["internal_standard"]
    assert set(first) >= {"E_half_V", "E_half_stderr_V", "reversible"}
    page = written["html_report"].read_text(encoding="utf-8")
    assert "<h2>Internal standard</h2>" in page
    assert page.count("internal_standard.png") == 1  # in its section, not twice
    # the per-file table carries the standard's E½ beside the analyte's
    with written["table"].open(encoding="utf-8", newline="") as fh:
        rows = list(csv.DictReader(fh))
    for row, f in zip(rows, result.files, strict=True):
        assert float(row["standard_E_half_V"]) == pytest.approx(f.internal_standard.E_half_V)
        assert float(row["standard_E_half_stderr_V"]) > 0
        assert row["standard_reversible"] == "true"


def _manifest(tmp_path, series_extra="", table="", file_ok=True):
    csv = tmp_path / "a.csv"
    if file_ok:
        v = simulate_cv(E_half_V=0.0, start_V=0.4, switch_V=-0.4, **CV)
        csv.write_text(
            "time_s,potential_V,current_A\n"
            + "\n".join(f"{t},{e},{i}" for t, e, i in zip(v.time_s, v.potential_V,
                                                        v.current_A, strict=True)),
            encoding="utf-8",
        )  # fmt: skip
    text = "[series]\nelectrons = 1\n" + series_extra + "\n" + table + "\n"
    text += "".join(f'[[voltammogram]]\nfile = "a.csv"\nligand_M = {c}\n' for c in (0.0,))
    path = tmp_path / "series.toml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.mark.parametrize(
    "series_extra, table, key",
    [
        ("", "[internal_standard]\nwindow_V = [0.1, 0.8]", "series.analyte_window_V"),
        (
            "analyte_window_V = [-0.5, 0.2]",
            "[internal_standard]\nwindow_V = [0.1, 0.8]",
            "internal_standard.window_V",
        ),
        ("analyte_window_V = [-0.5, 0.0]", "[internal_standard]\nwindow_V = [0.8, 0.1]",
         "internal_standard.window_V"),
        ("analyte_window_V = [-0.5, 0.0]", "[internal_standard]\nwindow_V = [0.1]",
         "internal_standard.window_V"),
        ("analyte_window_V = [-0.5, 0.0]", "[internal_standard]\nE_half_V = 0.0",
         "internal_standard.window_V"),
        ("analyte_window_V = [-0.5, 0.0]",
         "[internal_standard]\nwindow_V = [0.1, 0.8]\nelectrons = 0",
         "internal_standard.electrons"),
        ("analyte_window_V = [-0.5, 0.0]",
         "[internal_standard]\nwindow_V = [0.1, 0.8]\nE_half = 0.0",
         "internal_standard.E_half"),
        ("analyte_window_V = 0.2", "", "series.analyte_window_V"),
    ],
)  # fmt: skip
def test_bad_internal_standard_keys_are_one_line_errors_naming_the_key(
    tmp_path, capsys, series_extra, table, key
):
    path = _manifest(tmp_path, series_extra, table)
    code = cvfit_main(["run", str(path), "--out", str(tmp_path / "out")])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert len(err.splitlines()) == 1, err
    assert key in err and "series.toml" in err
    assert "Traceback" not in err


def test_manifest_defaults_and_results_without_a_standard(tmp_path):
    path = _manifest(
        tmp_path, "analyte_window_V = [-0.5, 0.0]", "[internal_standard]\nwindow_V = [0.1, 0.8]"
    )
    m = load_manifest(path)
    assert m.internal_standard.E_half_V == 0.0 and m.internal_standard.electrons == 1
    assert m.series.analyte_window_V == (-0.5, 0.0)
    plain = load_manifest(_manifest(tmp_path / ".." / tmp_path.name, "", "", file_ok=False))
    assert plain.internal_standard is None and plain.series.analyte_window_V is None


def test_series_without_ligand_free_file_states_E_half_free_on_the_standard_scale(tmp_path):
    series = simulate_internal_standard_series(
        ligand_M=(0.01, 0.1, 0.3),
        E_half_free_V=-0.05,
        log10_beta_ox=(5.0, 9.6),
        log10_beta_red=(4.2,),
        standard_E_half_V=0.25,
        seed=1,
        out_dir=tmp_path,
        analyte_window_V=(-0.9, 0.1),
        standard_window_V=(0.1, 0.8),
        start_V=0.55,
        switch_V=-0.7,
        **CV,
    )
    m = load_manifest(series.manifest)
    assert m.series.E_half_free_V == pytest.approx(-0.30)
    assert series.drift_V[0] == 0.0 and len(series.records) == 3


def test_curve_fits_are_refused_with_a_standard_in_the_file(drifting_series):
    """The curve model holds one couple: with the standard's wave in every file neither the
    per-file nor the global curve fit is made, each says why, and E½ stays the peaks'."""
    series, _, _ = drifting_series
    text = series.manifest.read_text(encoding="utf-8")
    assert "[fit]" not in text
    asked = series.manifest.with_name("curve_asked.toml")
    asked.write_text(text + '\n[fit]\nhalf_wave_source = "curve"\nglobal = true\n', "utf-8")
    result = analyse_series(load_manifest(asked))
    for f in result.files:
        assert f.E_half_source == "peaks" and f.measurement.curve_fit is None
        why = [fl.message for fl in f.flags if fl.code == "CURVE_FIT_NOT_POSSIBLE"]
        assert why and "internal standard" in why[0], f.flags
    assert result.global_fit is None
    why = [fl.message for fl in result.flags if fl.code == "GLOBAL_FIT_NOT_POSSIBLE"]
    assert why and "internal standard" in why[0], result.flags


def test_summary_says_potentials_are_against_the_standard_and_its_drift(drifting_series):
    from cvfit.report.summary import format_summary

    series, result, _ = drifting_series
    text = format_summary(result)
    line = next(ln for ln in text.splitlines() if ln.startswith("E½ quoted against"))
    spans = [f.internal_standard.E_half_V for f in result.files]
    assert f"spans {1e3 * (max(spans) - min(spans)):.2f} mV" in line
    assert abs((max(spans) - min(spans)) - np.ptp(series.drift_V)) < 1e-3


def test_a_long_series_keeps_its_standard_figure_two_columns_wide(drifting_series, tmp_path):
    """60 files: the figure was 0.45 in per file wide (29 in; lettering under 3 pt once
    printed two columns wide, 17.8 cm — common journal practice); now at most two
    columns, every text >= 7 pt there, and at most 20 files labelled."""
    from dataclasses import replace

    from matplotlib.text import Text

    from cvfit.report.figures.internal_standard import plot_internal_standard
    from cvfit.report.figures.titration import keep_figures

    _, result, _ = drifting_series
    many = replace(result, files=tuple(result.files) * 7)  # 63 files
    with keep_figures() as kept:
        plot_internal_standard(many, tmp_path / "i.png")
    fig = kept[0]
    width = fig.get_size_inches()[0]
    assert width <= 17.8 / 2.54 + 1e-9
    sizes = [t.get_fontsize() for t in fig.findobj(Text) if t.get_visible() and t.get_text()]
    assert min(sizes) * (17.8 / 2.54) / width >= 7.0
    labels = [t.get_text() for t in fig.axes[1].get_xticklabels() if t.get_text()]
    assert 0 < len(labels) <= 20
