"""Figures and tables for a paper: file formats, resolution, lettering at print width,
legend placement, the curve-fit panels, and the supporting-information table.

One run of the demo series (``cvfit demo --figure-format png,svg,pdf``) serves every test.
The print rule checked here is common practice of journals (lettering 7-9 pt at the final
size; one column about 8.5 cm): not a value computed by cvfit.
"""

from __future__ import annotations

import csv
import io
import json
import math
import re
import shutil
import subprocess
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

from cvfit.cli import main
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report.figures.registry import draw_figure, figures_for
from cvfit.report.figures.titration import keep_figures
from cvfit.report.si_table import latex_text, si_csv, si_latex

FORMATS = ("png", "svg", "pdf")
ONE_COLUMN_IN = 8.5 / 2.54  # common practice of journals, not cvfit's constant
TWO_COLUMNS_IN = 17.8 / 2.54


@pytest.fixture(scope="module")
def demo(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("paper") / "demo"
    assert main(["demo", "--out", str(out), "--quiet", "--figure-format", "svg,pdf"]) == 0
    return out


@pytest.fixture(scope="module")
def drawn(demo) -> dict[str, object]:
    """The demo's figures as matplotlib Figure objects, by file name."""
    result = analyse_series(load_manifest(demo / "inputs" / "series.toml"))
    figures = {}
    for entry in figures_for(result):
        with keep_figures() as kept:
            draw_figure(entry, result, demo)
        if kept:
            figures[entry.file_name] = kept[0]
    return figures


def test_every_figure_in_every_format_and_valid(demo):
    pngs = sorted((demo / "results").glob("*.png"))
    assert {p.stem for p in pngs} >= {"voltammograms", "half_wave_shift", "curve_fits"}
    for png in pngs:
        assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
        with Image.open(png) as im:
            assert min(im.info["dpi"]) >= 199.5  # written as 200 dpi (a float round-trip)
        svg = png.with_suffix(".svg")
        assert ET.parse(svg).getroot().tag.endswith("svg")
        # text stays text (editable in a drawing program), not outlines
        assert "<text" in svg.read_text(encoding="utf-8")
        assert png.with_suffix(".pdf").read_bytes()[:5] == b"%PDF-"


def test_report_embeds_png_only(demo):
    page = (demo / "results" / "report.html").read_text(encoding="utf-8")
    assert "data:image/png;base64," in page
    assert "image/svg" not in page and "application/pdf" not in page


@pytest.mark.parametrize("value", ["tiff", "png,,svg", "png,svg,", "jpeg,pdf"])
def test_unknown_figure_format_is_one_line_error(tmp_path, capsys, value):
    status = main(["demo", "--out", str(tmp_path / "d"), "--figure-format", value])
    err = capsys.readouterr().err
    assert status == 2
    assert err.startswith("cvfit: error: <command line>: --figure-format")
    assert err.count("\n") == 1 and "Traceback" not in err
    assert not (tmp_path / "d").exists()  # refused before anything is written


def test_run_refuses_an_unknown_format_before_reading_the_manifest(tmp_path, capsys):
    status = main(["run", str(tmp_path / "absent.toml"), "--figure-format", "gif"])
    err = capsys.readouterr().err
    assert status == 2 and err.count("\n") == 1
    assert "--figure-format 'gif': 'gif' is not a figure format" in err


def test_batch_writes_each_series_figures_in_each_format(demo, tmp_path):
    """Several manifests (a batch, run by worker processes) pass the formats on."""
    manifests = []
    for k in range(2):
        shutil.copytree(demo / "inputs", tmp_path / f"s{k}")
        manifests.append(str(tmp_path / f"s{k}" / "series.toml"))
    out = tmp_path / "out"
    assert main(["run", *manifests, "--out", str(out), "--jobs", "2",
                 "--figure-format", "pdf"]) == 0  # fmt: skip
    for k in range(2):
        folder = next(p for p in out.iterdir() if p.is_dir() and p.name.startswith(f"s{k}"))
        assert (folder / "voltammograms.pdf").read_bytes()[:5] == b"%PDF-"
        assert (folder / "voltammograms.png").is_file()
        assert not (folder / "voltammograms.svg").exists()


def _printed_min_pt(fig, width_in: float) -> float:
    """The smallest visible text of *fig*, in points, once printed *width_in* wide:
    every text artist queried, independently of cvfit.report.figures.print_style."""
    from matplotlib.text import Text

    sizes = [t.get_fontsize() for t in fig.findobj(Text)
             if t.get_visible() and t.get_text().strip()]  # fmt: skip
    return min(sizes) * width_in / fig.get_size_inches()[0]


@pytest.mark.parametrize(
    "name, width_in",
    [
        ("voltammograms.png", ONE_COLUMN_IN),
        ("half_wave_shift.png", ONE_COLUMN_IN),
        ("curve_fits.png", TWO_COLUMNS_IN),
        ("diagnostics.png", TWO_COLUMNS_IN),
    ],
)
def test_lettering_at_least_7_pt_at_print_width(drawn, name, width_in):
    assert _printed_min_pt(drawn[name], width_in) >= 7.0


def test_paper_figures_are_one_column_wide(drawn):
    for name in ("voltammograms.png", "half_wave_shift.png"):
        assert drawn[name].get_size_inches()[0] == pytest.approx(ONE_COLUMN_IN, abs=0.01)


def _data_display_points(ax) -> np.ndarray:
    """Display coordinates of every vertex of the lines and collections of *ax*."""
    from matplotlib.collections import LineCollection, PathCollection

    xy = [ln.get_xydata() for ln in ax.get_lines() if len(ln.get_xydata())]
    for c in ax.collections:
        if isinstance(c, LineCollection):
            xy += [np.asarray(s) for s in c.get_segments() if len(s)]
        elif isinstance(c, PathCollection):
            xy.append(np.asarray(c.get_offsets()))
    pts = np.concatenate(xy).astype(float)
    pts = pts[np.isfinite(pts).all(axis=1)]
    return ax.transData.transform(pts)


@pytest.mark.parametrize("name", ["voltammograms.png", "half_wave_shift.png"])
def test_legend_box_covers_no_data(drawn, name):
    fig = drawn[name]
    fig.canvas.draw()
    ax = fig.axes[0]
    legend = ax.get_legend()
    assert legend is not None
    box = legend.get_window_extent()
    px = _data_display_points(ax)
    inside = (px[:, 0] > box.x0) & (px[:, 0] < box.x1) & (px[:, 1] > box.y0) & (px[:, 1] < box.y1)
    assert px.shape[0] > 200  # the traces themselves were found
    assert not inside.any(), f"{inside.sum()} data points under the legend"


def test_curve_fit_panels(drawn):
    fig = drawn["curve_fits.png"]
    ax = fig.axes[0]
    data, fit = (ln for ln in ax.get_lines() if ln.get_label() in ("data", "fit"))
    # the data a broader line beneath the thin fit: both visible
    assert data.get_zorder() < fit.get_zorder()
    assert data.get_linewidth() >= 2 * fit.get_linewidth()
    # the title carries the concentration with its unit
    assert re.search(r"\[L\] = 0\.35 mol L⁻¹", ax.get_title(loc="left"))
    # the same axis labels as the overlay of the voltammograms
    overlay = drawn["voltammograms.png"].axes[0]
    assert ax.get_ylabel() == overlay.get_ylabel()
    assert fig.axes[1].get_xlabel() == overlay.get_xlabel()


def test_constants_stand_under_the_half_wave_title_as_the_readme_says(drawn):
    ax = drawn["half_wave_shift.png"].axes[0]
    title = ax.get_title()
    legend = " ".join(t.get_text() for t in ax.get_legend().get_texts())
    assert "log10(β_ox/β_red) =" in title and "log10(β" not in legend
    readme = (Path(__file__).parents[1] / "README.md").read_text(encoding="utf-8")
    assert "under its title" in readme and "head the legend" not in readme


# --- the supporting-information table ----------------------------------------------------


def _results(demo: Path) -> dict:
    return json.loads((demo / "results" / "results.json").read_text(encoding="utf-8"))


def _decimals(text: str) -> int:
    return len(text.split(".")[1]) if "." in text else 0


def test_si_csv_numbers_are_those_of_results_json(demo):
    data = _results(demo)
    text = (demo / "results" / "si_table.csv").read_text(encoding="utf-8")
    files_block, constants_block = text.split("\n\n")
    rows = list(csv.DictReader(io.StringIO(files_block)))
    assert [r["file"] for r in rows] == [f["file"] for f in data["voltammograms"]]
    for row, f in zip(rows, data["voltammograms"], strict=True):
        value, err = row["E½ / mV"], row["u(E½) / mV"]
        d = _decimals(err)
        assert _decimals(value) == d  # rounded alike
        assert float(value) == pytest.approx(f["E_half_V"] * 1e3, abs=0.5 * 10**-d + 1e-12)
        assert float(err) == pytest.approx(f["E_half_stderr_V"] * 1e3, abs=0.5 * 10**-d)
        # two significant digits of the uncertainty (GUM 7.2.6, common practice)
        assert len(err.replace(".", "").lstrip("0")) == 2
        assert float(row["[L] total / mol L⁻¹"]) == pytest.approx(f["ligand_M"], rel=1e-3)
        # the ligand-free file that gave E½(s) is marked so, not "no" (not left out)
        gave = f["file"] in data["reference"]["files"]
        expected = "E½(s)" if gave else ("yes" if f["used_in_fit"] else "no")
        assert row["in fit"] == expected or row["in fit"].startswith("no:")
    constants = {r["constant"]: r for r in csv.DictReader(io.StringIO(constants_block))}
    ratio = constants["log10(βox/βred)"]
    q = data["fit"]["log10_beta_ratio"]
    d = _decimals(ratio["standard error"])
    assert float(ratio["value"]) == pytest.approx(q["value"], abs=0.5 * 10**-d)
    assert float(ratio["95 % CI low"]) == pytest.approx(q["ci95"][0], abs=0.5 * 10**-d)
    slope = constants["slope of E½ against log10[L]"]
    assert slope["unit"] == "mV/decade"
    assert float(slope["value"]) == pytest.approx(
        data["fit"]["slope_V_per_decade"]["value"] * 1e3, abs=0.01
    )


def test_si_latex_numbers_are_those_of_results_json(demo):
    data = _results(demo)
    tex = (demo / "results" / "si_table.tex").read_text(encoding="utf-8")
    found = re.findall(r"\$(-?\d+\.\d+) \\pm (\d+\.\d+)\$", tex)
    e_half = [(float(v), float(u)) for v, u in found[: len(data["voltammograms"])]]
    for (v, u), f in zip(e_half, data["voltammograms"], strict=True):
        assert v == pytest.approx(f["E_half_V"] * 1e3, abs=0.01)
        assert u == pytest.approx(f["E_half_stderr_V"] * 1e3, rel=0.06)
    shown = dict(
        re.findall(r"^(.*?) & \$(-?[\d.]+) \\pm [\d.]+\$ & ", tex.split("Constants")[1], re.M)
    )
    ratio = data["fit"]["log10_beta_ratio"]["value"]
    assert float(shown[r"log10($\beta$ox/$\beta$red)"]) == pytest.approx(ratio, abs=5e-4)
    assert r"\toprule" in tex and tex.count(r"\begin{tabular}") == 2


def test_latex_special_characters_are_escaped():
    name = "a_b&c%.csv"
    assert latex_text(name) == r"a\_b\&c\%.csv"
    assert latex_text("mol L⁻¹ #1 {x} ~ ^ $ \\") == (
        r"mol L\textsuperscript{-1} \#1 \{x\} \textasciitilde{} \textasciicircum{} \$ "
        r"\textbackslash{}"
    )


def _tiny_results(name: str) -> dict:
    q = {"value": 5.41, "stderr": 0.0037, "ci95": [5.3995, 5.4144]}
    files = [
        {"file": name, "label": "50% & more", "ligand_M": 0.01, "free_ligand_M": 0.01,
         "scan_rate_V_s": 0.1, "E_half_V": -0.1234567, "E_half_stderr_V": 0.00012,
         "E_half_source": "peaks", "used_in_fit": True},
    ]  # fmt: skip
    return {"series": {"title": "Title_with #special & $chars"}, "voltammograms": files,
            "fit": {"model": "lingane", "log10_beta_ratio": q}}  # fmt: skip


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="pdflatex not installed")
def test_si_latex_compiles(tmp_path):
    (tmp_path / "si.tex").write_text(si_latex(_tiny_results("a_b&c%.csv")), encoding="utf-8")
    proc = subprocess.run(
        ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "si.tex"],
        cwd=tmp_path, capture_output=True, text=True, timeout=60, check=False,
    )  # fmt: skip
    assert proc.returncode == 0, proc.stdout[-2000:]
    assert (tmp_path / "si.pdf").read_bytes()[:5] == b"%PDF-"


def test_si_csv_keeps_the_name_and_guards_formulas():
    data = _tiny_results("=cmd|x.csv")
    rows = list(csv.reader(io.StringIO(si_csv(data).split("\n\n")[0])))
    assert rows[1][0] == "'=cmd|x.csv"
    assert rows[1][rows[0].index("E½ / mV")] == "-123.46"
    assert math.isclose(float(rows[1][rows[0].index("u(E½) / mV")]), 0.12)


def _drawn_from(manifest: Path, folder: Path) -> dict[str, object]:
    result = analyse_series(load_manifest(manifest))
    figures = {}
    for entry in figures_for(result):
        with keep_figures() as kept:
            draw_figure(entry, result, folder)
        if kept:
            figures[entry.file_name] = kept[0]
    return figures


@pytest.mark.parametrize(
    "argv, name",
    [
        (["--temperatures-C", "15,25,35,45", "--entropy", "60"], "half_wave_temperature.png"),
        (["--technique", "wave", "--ligand-M", "0,0.001,0.003,0.01", "--log-beta-ox", "4"],
         "wave_log_plot.png"),
        (["--pH-values", "2,3,4,5,6,7,8", "--pKa-ox", "4.5"], "half_wave_pH.png"),
    ],
)  # fmt: skip
def test_single_plots_of_other_series_are_one_column_with_7_pt(tmp_path, argv, name):
    """The pH, temperature and wave-log figures were 6.0–6.4 in wide (under 5 pt printed
    one column wide): now drawn at one column, every text >= 7 pt."""
    series = tmp_path / "s"
    assert main(["simulate", "--series", "--e-half", "0.1", "--noise", "0.002",
                 "--seed", "1", "--out", str(series), *argv]) == 0  # fmt: skip
    fig = _drawn_from(series / "series.toml", tmp_path)[name]
    assert fig.get_size_inches()[0] == pytest.approx(ONE_COLUMN_IN, abs=0.01)
    assert _printed_min_pt(fig, ONE_COLUMN_IN) >= 7.0
