"""What a reader sees first and what a new user tripped over, checked on the bundled demo
series (8 files, cycle 2 analysed, the last file slowed and flagged; simulated truth
log10(β_ox/β_red) ≈ 5.4, p − q = 1 — see example_runs/make_demo.py):

- the headline (constants ± standard error with 95 % intervals, the screen's outcome in
  words) as the first lines of the summary, at the top of the HTML page, on the figure;
- ipa_A filled in voltammograms.csv, equal to results.json;
- the flagged curve drawn visibly and named in the figure's legend;
- the diagnostics legend looks like the markers drawn, the reference drawn as used;
- HTML headers in words, informational flags once per series.
"""

from __future__ import annotations

import csv
import html
import json
import math
import re
from dataclasses import replace
from html.parser import HTMLParser

import matplotlib.colors as mcolors
import matplotlib.pyplot as plt
import numpy as np
import pytest
from matplotlib.collections import LineCollection
from scipy import constants as sc

from cvfit.cli.batch import SeriesOutcome, format_batch_summary
from cvfit.cli.demo import copy_demo_inputs
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import format_summary, write_outputs
from cvfit.report.figures import diagnostics as figures_diagnostics
from cvfit.report.figures import titration as figures
from cvfit.report.headline import constant_lines, screen_sentence, screen_short
from cvfit.report.html import extra_header, render_html, series_notes
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.technique import _ratio_from_first_cycle

FLAGGED = "tazine_07.csv"  # the demo's slowed file (k0 = 0.004 cm/s), failing the screen


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo")
    manifest = copy_demo_inputs(folder / "inputs")
    result = analyse_series(load_manifest(manifest))
    out = folder / "results"
    write_outputs(result, out)
    return result, out


def _capture(monkeypatch):
    """Keep every figure that _save receives (and still write it)."""
    seen = []
    original = figures._save

    def keep(fig, path, **kw):
        seen.append(fig)
        return original(fig, path, **kw)

    monkeypatch.setattr(figures, "_save", keep)
    monkeypatch.setattr(figures_diagnostics, "_save", keep)
    return seen


# --- the headline -------------------------------------------------------------------------


def test_summary_starts_with_the_constants_and_the_screen_in_words(demo):
    result, _ = demo
    fit = result.fit
    lines = format_summary(result).splitlines()
    q = fit.log10_beta_ratio
    assert lines[0] == (
        f"log10(β_ox/β_red) = {q.value:.4f} ± {q.stderr:.4f}, "
        f"95 % CI [{q.ci95[0]:.4f}, {q.ci95[1]:.4f}]"
    )
    assert lines[1].startswith(f"p − q = {fit.delta_ligands.value:.4f} ± ")
    assert "95 % CI [" in lines[1]
    head = lines[: lines.index("")]
    # the demo's slowed file is recovered by the whole-curve fit (half_wave_source = "auto")
    assert (
        f"1 of 8 files failed the reversibility screen; E½ of {FLAGGED} came from a fit of "
        "the whole curve, which rejoined the titration fit." in head
    )
    text = "\n".join(lines)
    assert "Nernstian throughout" not in text
    # the simulated value lies inside the interval shown first
    assert q.ci95[0] < 5.4 + 0.02 and q.ci95[1] > 5.4 - 0.02  # log β2(ox) − log β1(red)


def test_html_page_opens_with_the_same_headline(demo):
    result, out = demo
    page = (out / "report.html").read_text(encoding="utf-8")
    body = page[page.index("</header>") :]
    assert re.match(r'</header>\s*<section class="headline"', body)
    summary = format_summary(result).splitlines()
    first = body[: body.index("</section>")]
    for line in summary[:2]:
        assert line in html.unescape(first)
    assert "1 of 8 files failed the reversibility screen" in first
    assert "Nernstian throughout" not in page


def test_half_wave_figure_carries_the_constants(demo, tmp_path, monkeypatch):
    result, _ = demo
    seen = _capture(monkeypatch)
    figures.plot_lingane(result, tmp_path / "l.png")
    title = seen[0].axes[0].get_title()
    # the headline's lines, wrapped to the one-column figure's width
    flowing = " ".join(title.split())
    head = [" ".join(line.split()) for line in format_summary(result).splitlines()[:2]]
    assert flowing.endswith(" ".join(head))
    plt.close("all")


def test_stepwise_headline_is_the_beta_table():
    fit = {
        "model": "stepwise",
        "n_points": 7,
        "log10_beta": [
            {"j": 1, "value": 4.98, "stderr": 0.031, "ci95": [4.9, 5.06], "determined": True},
            {"j": 2, "value": 9.1, "stderr": 0.5, "ci95": [7.9, None], "determined": False},
        ],
    }
    lines = constant_lines(fit)
    assert lines[0] == "log10 β1 = 4.980 ± 0.031, 95 % CI [4.900, 5.060]"
    assert lines[1].startswith("log10 β2 = 9.10 ± 0.50, 95 % CI [7.90, open]")
    assert lines[1].endswith("(not determined by this ligand range)")
    assert constant_lines({"log10_beta": [{"j": 1, "value": None, "stderr": None}]}) == []


def _files(*specs):
    return {
        "exclude_non_nernstian": True,
        "voltammograms": [
            {"file": name, "ligand_M": lig, "reversible": rev, "used_in_fit": used}
            for name, lig, rev, used in specs
        ],
    }


def test_screen_sentence_says_what_happened():
    ok = _files(("a", 0.0, True, False), ("b", 0.1, True, True))
    assert screen_sentence(ok) == "All 2 files passed the reversibility screen."
    assert screen_short(ok) == "all 2 passed"
    two = _files(("a", 0.0, True, False), ("b", 0.1, False, False), ("c", 0.2, None, False))
    assert screen_sentence(two) == (
        "1 of 3 files failed the reversibility screen and 1 could not be screened: "
        "b, c were left out of the fit."
    )
    assert screen_short(two) == "2 of 3 failed, left out"
    none = _files(("a", 0.0, True, False), ("b", 0.1, None, False), ("c", 0.2, True, True))
    assert screen_sentence(none) == (
        "1 of 3 files could not be screened for reversibility and was left out of the fit: b."
    )
    kept = _files(("a", 0.0, False, False), ("b", 0.1, False, True), ("c", 0.2, True, True))
    assert "still gave" not in screen_sentence(kept)  # a measured no E½: it gave nothing
    kept["voltammograms"][0]["E_half_V"] = 0.0
    kept["reference"] = {"E_half_V": 0.0, "files": ["a"]}
    text = screen_sentence(kept)
    assert text.startswith("2 of 3 files failed the reversibility screen: ")
    assert "b was kept in the fit (exclude_non_nernstian = false)" in text
    assert "a still gave E½(s)" in text
    kept["reference"] = {"E_half_V": 0.0, "files": ["z"]}  # E½(s) came from another file
    assert "still gave" not in screen_sentence(kept)
    assert screen_short(kept) == "2 of 3 failed, 1 kept"
    curve = _files(("a", 0.0, True, False), ("b", 0.1, False, True), ("c", 0.2, False, False))
    curve["voltammograms"][1]["E_half_source"] = "curve"
    assert screen_sentence(curve) == (
        "2 of 3 files failed the reversibility screen: c was left out of the fit; E½ of b "
        "came from a fit of the whole curve, used in the fit."
    )
    assert screen_short(curve) == "2 of 3 failed, 1 by curve fit"
    curve["voltammograms"][2]["E_half_source"] = "curve"
    curve["voltammograms"][2]["used_in_fit"] = True
    assert screen_sentence(curve) == (
        "2 of 3 files failed the reversibility screen; E½ of b, c came from a fit of the "
        "whole curve, which rejoined the titration fit."
    )


def test_batch_table_has_the_screen_column():
    ok = SeriesOutcome("a.toml", "a_cvfit", "ok", "A", 6.01, 0.012, 1.0, 0.004, 6,
                       screen="1 of 8 failed, left out")  # fmt: skip
    lines = format_batch_summary([ok]).splitlines()
    assert "screen" in lines[0].split()
    assert "1 of 8 failed, left out" in lines[2]


# --- ipa_A ----------------------------------------------------------------------------------


def test_table_ipa_is_filled_and_equals_results_json(demo):
    result, out = demo
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    with (out / "voltammograms.csv").open(encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    assert len(rows) == len(data["voltammograms"]) == 8
    for row, v in zip(rows, data["voltammograms"], strict=True):
        assert row["ipa_A"] != ""
        assert float(row["ipa_A"]) == pytest.approx(v["ipa_A"], rel=1e-9)
        # a diffusing reversible couple: ipa/ipc = 1 (Nicholson, Anal. Chem. 38 (1966) 1406);
        # his relation, an empirical fit, reads up to 0.03 high when the switch lies 300-600
        # mV past E½ as here (measured 1.010-1.033)
        assert 0.98 < v["ipa_A"] / v["ipc_A"] < 1.05


def test_oxidation_first_later_cycle_gets_its_ipc():
    v = simulate_cv(E_half_V=0.0, start_V=-0.35, switch_V=0.35, cycles=2, initial_species="red",
                    noise_fraction=0.003, seed=5)  # fmt: skip
    peaks = analyse_peaks(v, cycle=2)
    assert peaks.ipc_A is None and peaks.current_ratio is None  # later cycle: not at rest
    got = _ratio_from_first_cycle(peaks, v, 1, 298.15)
    assert got.ipa_A == peaks.ipa_A  # the forward (anodic) height is untouched
    # the reverse height of a reversible couple equals the forward one, both the
    # Randles–Ševčík current 0.4463 nFAC(nFvD/RT)^½ (Nicholson & Shain, Anal. Chem. 36
    # (1964) 706), computed here from CODATA constants: 1 mM, 0.0707 cm², 1e-5 cm²/s, 0.1 V/s
    F = sc.physical_constants["Faraday constant"][0]
    ip = 0.4463 * F * 0.0707 * 1e-6 * math.sqrt(F / (sc.R * 298.15) * 0.1 * 1e-5)
    assert got.ipc_A == pytest.approx(ip, rel=0.03)  # 0.3 % noise on a later cycle
    assert 0.97 < got.current_ratio < 1.05


# --- figures --------------------------------------------------------------------------------


def test_flagged_curve_is_grey_dotted_and_named_in_the_legend(demo, tmp_path, monkeypatch):
    result, _ = demo
    seen = _capture(monkeypatch)
    figures.plot_voltammograms(result, tmp_path / "v.png")
    ax = seen[0].axes[0]
    (curves,) = [
        c for c in ax.collections if isinstance(c, LineCollection) and c.get_gid() is None
    ]
    titrating = [f for f in result.files if f.ligand_M > 0]
    flagged = [f.reversible is not True for f in titrating]
    assert flagged.count(True) == 1
    colours = curves.get_colors()
    styles = curves.get_linestyles()
    grey = mcolors.to_rgba(figures.FLAGGED_COLOUR)
    for k, bad in enumerate(flagged):
        assert colours[k][3] == 1.0  # nothing faded
        is_grey = np.allclose(colours[k], grey)
        dotted = styles[k][1] is not None  # (offset, dashes); solid has no dashes
        assert is_grey == bad and dotted == bad
    texts = [t.get_text() for t in ax.get_legend().get_texts()]
    assert texts[0] == "no ligand"
    # the demo's flagged file is recovered by the whole-curve fit, and the legend says so
    assert any("failed the screen" in t and "E½ from the whole-curve fit" in t
               and "0.35 mol L⁻¹" in t for t in texts)  # fmt: skip
    plt.close("all")


def test_diagnostics_legend_matches_the_markers_drawn(demo, tmp_path, monkeypatch):
    result, _ = demo
    seen = _capture(monkeypatch)
    figures_diagnostics.plot_diagnostics(result, tmp_path / "d.png")
    ax = seen[0].axes[0]
    drawn = {
        (ln.get_marker(), ln.get_markerfacecolor() == "none", ln.get_color())
        for ln in ax.get_lines()
        if ln.get_linestyle() == "None"
    }
    shown = {
        (h.get_marker(), h.get_markerfacecolor() == "none", h.get_color())
        for h in ax.get_legend().legend_handles
        if hasattr(h, "get_marker") and h.get_marker() not in (None, "None", "")
    }
    assert shown == drawn  # every look drawn is explained, nothing else is
    # the ligand-free reference is drawn filled, with its own marker and legend label
    ref = [ln for ln in ax.get_lines() if ln.get_gid() and ln.get_gid().endswith(":reference")]
    assert len(ref) == 1 and ref[0].get_marker() == figures_diagnostics.REFERENCE_MARKER
    assert ref[0].get_markerfacecolor() != "none"
    labels = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "ligand-free reference, E½(s)" in labels
    assert "reversible" in labels and "quasi-reversible, E½ from the curve fit" in labels
    # filled points are most of the figure, and the legend shows them filled
    filled = [h for h in ax.get_legend().legend_handles
              if hasattr(h, "get_marker") and h.get_markerfacecolor() != "none"]  # fmt: skip
    assert len(filled) >= 2
    plt.close("all")


# --- HTML table -----------------------------------------------------------------------------

_IDENTIFIER = re.compile(r"\b[A-Za-z0-9]+_[A-Za-z0-9_]+\b")


class _Headers(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.inside = False
        self.headers: list[str] = []

    def handle_starttag(self, tag, attrs):
        if tag == "th":
            self.inside = True
            self.headers.append("")

    def handle_endtag(self, tag):
        if tag == "th":
            self.inside = False

    def handle_data(self, data):
        if self.inside:
            self.headers[-1] += data


def test_html_headers_are_words_with_units(demo):
    _, out = demo
    parser = _Headers()
    parser.feed((out / "report.html").read_text(encoding="utf-8"))
    assert "E½ (midpoint) / mV" in parser.headers
    assert "switching correction / mV" in parser.headers
    leaks = [h for h in parser.headers if _IDENTIFIER.search(h)]
    assert leaks == []
    # a value added to the records later gets a header in words too
    assert extra_header("E_half_vs_standard_V") == "E½ vs standard / mV"
    assert extra_header("resistance_ohm") == "uncompensated resistance / Ω"
    assert not _IDENTIFIER.search(extra_header("some_new_count"))


def test_informational_flags_are_listed_once_per_series(demo):
    result, out = demo
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    page = render_html(data)
    on_every_file = "CURRENT_RATIO_FROM_FIRST_CYCLE"
    assert all(
        any(fl["code"] == on_every_file for fl in v["flags"]) for v in data["voltammograms"]
    )
    assert page.count(on_every_file) == 1
    notes = {code: names for code, _, names in series_notes(data["voltammograms"])}
    assert notes[on_every_file] == [v["file"] for v in data["voltammograms"]]
    assert "(all 8 files)" in page
    # flags of higher severity stay with their file's row
    table = page[page.index('<table class="files">') : page.index('<div class="notes">')]
    assert "DELTA_EP_TOO_LARGE" in table and "CLASS_QUASI_REVERSIBLE" in table
    assert "CLASS_REVERSIBLE<" not in table


def test_page_without_constants_says_so_at_the_top(demo):
    result, _ = demo
    data = replace(result, fit=None).to_dict()
    page = render_html(data)
    assert "No constants" in page[: page.index("<h2>Conditions")]


# --- the demo says what it was simulated with ----------------------------------------------


def _make_demo_module():
    import importlib.util
    from pathlib import Path

    path = Path(__file__).resolve().parents[1] / "example_runs" / "make_demo.py"
    spec = importlib.util.spec_from_file_location("make_demo", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_demo_states_the_constants_it_was_simulated_with(tmp_path, capsys):
    import tomllib
    from importlib import resources

    from cvfit.cli import main
    from cvfit.cli.demo import SIMULATED_WITH

    make_demo = _make_demo_module()
    packaged = resources.files("cvfit.data.demo") / SIMULATED_WITH
    truth = tomllib.loads(packaged.read_text(encoding="utf-8"))["simulation"]
    # the packaged file is the one make_demo.py writes from its constants
    assert packaged.read_text(encoding="utf-8") == make_demo.truth_text()
    assert truth["log10_beta_ox"] == list(make_demo.LOG_BETA_OX)
    assert truth["log10_beta_red"] == list(make_demo.LOG_BETA_RED)
    assert truth["log10_beta_ratio"] == pytest.approx(9.6 - 4.2)
    assert truth["delta_ligands"] == 1

    assert main(["demo", "--out", str(tmp_path / "d")]) == 0
    out = capsys.readouterr().out
    tail = out[out.index("The demo was simulated with") :]
    assert all(line in tail for line in truth["lines"])
    assert "log10(β_ox/β_red) = 9.6 − 4.2 = 5.4" in tail
    assert (tmp_path / "d" / SIMULATED_WITH).read_text(encoding="utf-8") == packaged.read_text(
        encoding="utf-8"
    )
    assert not (tmp_path / "d" / "inputs" / SIMULATED_WITH).exists()  # not a manifest
    page = (tmp_path / "d" / "results" / "report.html").read_text(encoding="utf-8")
    assert 'id="simulated-with"' in page and "9.6 − 4.2 = 5.4" in page
    # the manifest says it too, and the example_runs README lists the same lines
    manifest = (tmp_path / "d" / "inputs" / "series.toml").read_text(encoding="utf-8")
    readme = (make_demo.ROOT / "example_runs" / "README.md").read_text(encoding="utf-8")
    for line in truth["lines"]:
        assert f"# Simulated with: {line}" in manifest
        assert f"- {line}" in readme


def test_a_report_of_measured_data_has_no_simulation_section(demo):
    _, out = demo
    assert 'id="simulated-with"' not in (out / "report.html").read_text(encoding="utf-8")


def test_conditions_name_the_screen_margins_in_words(demo):
    _, out = demo
    page = (out / "report.html").read_text(encoding="utf-8")
    conditions = page[page.index("<h2>Conditions") : page.index("<h2>Constants")]
    assert "n·ΔEp ± 10.0 mV" in conditions and "ipa/ipc ± 0.15" in conditions
    assert "margin_V" not in conditions
