"""The series result in a notebook (issue 27 item 6): its HTML view, its figures as
matplotlib objects, and a results.json read back into records."""

from __future__ import annotations

import html
import json
import math
import re
from pathlib import Path

import pytest

import cvfit
from cvfit.errors import InputError


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    """A simulated five-file Lingane series, analysed, with its outputs written."""
    from cvfit.simulate.titration_series import simulate_series

    folder = tmp_path_factory.mktemp("nb")
    manifest = simulate_series(folder / "data", ligand_M=[0.0, 1e-3, 3e-3, 1e-2, 3e-2],
                               E_half_free_V=0.1, log10_beta_ox=[4.0], log10_beta_red=[],
                               noise_fraction=0.01, seed=3, start_V=0.45,
                               switch_V=-0.35)  # fmt: skip
    result = cvfit.analyse_manifest_file(manifest)
    out = folder / "out"
    cvfit.write_outputs(result, out)
    return result, out


def test_repr_html_shows_the_headline_constants_table_and_figures(run):
    result, out = run
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    page = html.unescape(result._repr_html_())
    # the headline states each constant as results.json has it: value ± standard error,
    # the error to two significant digits and the value to the same decimal place
    for key, label in (("log10_beta_ratio", "log10(β_ox/β_red)"), ("delta_ligands", "p − q")):
        q = data["fit"][key]
        places = max(0, 1 - math.floor(math.log10(q["stderr"])))
        assert f"{label} = {q['value']:.{places}f} ± {q['stderr']:.{places}f}" in page
    for f in data["voltammograms"]:
        assert f["file"] in page  # one table row per file
    n_png = len(list(out.glob("*.png")))
    assert n_png >= 2
    assert len(re.findall(r"<img [^>]*src=\"data:image/png;base64,", page)) == n_png
    assert len(page) < 4_500_000  # bounded: a cell of a few MB at most


def test_plot_returns_figures_with_their_axis_labels(run):
    from matplotlib.figure import Figure

    result, out = run
    figures = result.plot()
    assert set(figures) >= {"voltammograms", "lingane"}
    assert all(isinstance(fig, Figure) for fig in figures.values())
    labels = {ax.get_xlabel() for ax in result.plot("lingane").axes}
    assert any("log" in lab and "[L]" in lab for lab in labels), labels
    volts = result.plot("voltammograms").axes[0]
    assert "V" in volts.get_xlabel() and "A" in volts.get_ylabel()
    with pytest.raises(InputError, match="no figure 'nothing'"):
        result.plot("nothing")


def test_load_results_round_trip_equals_results_json(run):
    _, out = run
    path = out / "results.json"
    data = json.loads(path.read_text(encoding="utf-8"))
    loaded = cvfit.load_results(path)
    assert loaded.cvfit_version == data["cvfit_version"]
    for key in ("log10_beta_ratio", "delta_ligands", "slope_V_per_decade"):
        q, c = data["fit"][key], loaded.constants[key]
        assert (c.value, c.stderr, list(c.ci95)) == (q["value"], q["stderr"], q["ci95"])
    rows = [(f["file"], f["ligand_M"], f["E_half_V"], f["E_half_stderr_V"])
            for f in data["voltammograms"]]  # fmt: skip
    assert [(r.file, r.ligand_M, r.E_half_V, r.E_half_stderr_V) for r in loaded.files] == rows
    assert [fl.code for fl in loaded.flags] == [
        fl["code"] for fl in data["flags"] + (data["fit"].get("flags") or [])
    ]


@pytest.mark.parametrize(
    "content, says",
    [("{not json", "not JSON"), ('{"a": 1}', "not a cvfit results.json"), ("[1, 2]", "not a")],
)
def test_a_file_that_is_not_a_results_json_is_one_line(tmp_path: Path, content, says):
    bad = tmp_path / "other.json"
    bad.write_text(content, encoding="utf-8")
    with pytest.raises(InputError) as info:
        cvfit.load_results(bad)
    line = info.value.one_line()
    assert "\n" not in line and str(bad) in line and says in line
    with pytest.raises(InputError, match="cannot read"):
        cvfit.load_results(tmp_path / "missing.json")
