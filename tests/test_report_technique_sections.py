"""The technique's own report sections (per-file kinetics, scan-rate studies) against
results.json of the same run, read with an HTML parser (independent of the template), and
the escaping of hostile text in the title.

Every value cell carries ``data-key`` (its results.json path) and ``data-value``; the tests
look the key up in results.json themselves and check both the exact value and the printed
``value ± standard error`` (digits: two significant digits of the standard error, common
practice).
"""

from __future__ import annotations

import json
import math
import re
from html import unescape
from html.parser import HTMLParser

import pytest
from test_diagnostics_series import AREA, CONC, _series  # noqa: E402

from cvfit.cli.demo import copy_demo_inputs
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import write_outputs
from cvfit.report.html import render_html


class _Tables(HTMLParser):
    """Rows of the table inside each <section id=...>: cells as (text, attributes)."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.sections: dict[str, list[list[tuple[str, dict]]]] = {}
        self.text: list[str] = []
        self._section: str | None = None
        self._cell: list[str] | None = None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "section":
            self._section = a.get("id")
        elif tag == "tr" and self._section:
            self.sections.setdefault(self._section, []).append([])
        elif tag == "td" and self._section:
            self._cell = []
            self.sections[self._section][-1].append(("", a))

    def handle_endtag(self, tag):
        if tag == "td" and self._cell is not None and self._section:
            row = self.sections[self._section][-1]
            row[-1] = ("".join(self._cell).strip(), row[-1][1])
            self._cell = None

    def handle_data(self, data):
        self.text.append(data)
        if self._cell is not None:
            self._cell.append(data)


def _tables(page: str) -> _Tables:
    p = _Tables()
    p.feed(page)
    p.close()
    return p


def _lookup(record: dict, key: str):
    """The results.json value at a dotted path with [i] indices."""
    x = record
    for part in key.split("."):
        m = re.fullmatch(r"(\w+)\[(\d+)\]", part)
        x = x[m.group(1)][int(m.group(2))] if m else x[part]
    return x


_SCALE = {"E_half_V": 1e3, "D_cm2_s": 1e6, "_V_per_decade": 1e3}


def _check_cell(text: str, attrs: dict, record: dict) -> None:
    """The cell shows the results.json quantity at its data-key, rounded as its error says."""
    found = _lookup(record, attrs["data-key"])
    value = found["value"] if isinstance(found, dict) else found
    assert json.loads(attrs["data-value"]) == value
    if not isinstance(found, dict) or found.get("stderr") is None:
        return
    scale = next((s for k, s in _SCALE.items() if attrs["data-key"].endswith(k)), 1.0)
    shown, err = text.split(" ± ")
    s = found["stderr"] * scale
    digits = max(0, 1 - math.floor(math.log10(s)))
    decimals = len(shown.split(".")[1]) if "." in shown else 0
    assert decimals == digits, (text, found)
    assert float(shown) == pytest.approx(value * scale, abs=0.51 * 10**-digits)
    assert float(err) == pytest.approx(s, abs=0.51 * 10**-digits)


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    folder = tmp_path_factory.mktemp("demo")
    result = analyse_series(load_manifest(copy_demo_inputs(folder / "inputs")))
    write_outputs(result, folder / "out")
    data = json.loads((folder / "out" / "results.json").read_text(encoding="utf-8"))
    return data, (folder / "out" / "report.html").read_text(encoding="utf-8")


def test_kinetics_table_shows_the_results_json_values(demo):
    data, page = demo
    rows = _tables(page).sections["cv-kinetics"]
    rows = [r for r in rows if r]  # the header row has no <td>
    by_file = {f["file"]: f for f in data["voltammograms"]}
    assert [r[0][0] for r in rows] == list(by_file)
    checked = set()
    for row in rows:
        record = by_file[row[0][0]]
        assert row[1][0] == record["classification"]["kind"]
        for text, attrs in row[1:]:
            if "data-key" in attrs:
                _check_cell(text, attrs, record)
                checked.add(attrs["data-key"])
    # the demo's slow file: ψ and k0 from ΔEp, and its curve fit's E½, k0 and α
    assert {"kinetics.psi", "kinetics.k0_cm_s", "curve_fit.E_half_V", "curve_fit.alpha"} <= checked
    slow = next(r for r in rows if by_file[r[0][0]].get("curve_fit"))
    assert slow[-1][0] == (
        "used" if by_file[slow[0][0]]["E_half_source"] == "curve" else "not used"
    )


def test_scan_rate_study_numbers_in_the_report(tmp_path):
    manifest = _series(
        tmp_path, study={}, series_extra={"electrode_area_cm2": AREA, "analyte_M": CONC}
    )
    result = analyse_series(load_manifest(manifest))
    write_outputs(result, tmp_path / "out")
    data = json.loads((tmp_path / "out" / "results.json").read_text(encoding="utf-8"))
    page = (tmp_path / "out" / "report.html").read_text(encoding="utf-8")
    (study,) = data["scan_rate_studies"]
    (row,) = [r for r in _tables(page).sections["cv-scan-rate"] if r]
    assert float(row[0][0]) == study["ligand_M"]
    assert int(row[1][0]) == len(study["files"])
    rates = [float(x) / 1e3 for x in row[2][0].split(", ")]
    assert rates == pytest.approx(study["scan_rates_V_s"], rel=1e-3)
    keys = set()
    for text, attrs in row[3:]:
        if "data-key" in attrs:
            _check_cell(text, attrs, data)
            keys.add(attrs["data-key"].rsplit(".", 1)[1])
    assert {"log_log_slope", "D_cm2_s", "delta_Ep_slope_V_per_decade"} <= keys
    assert row[-2][0] == ("ΔEp grows with v" if study["delta_Ep_grows"] else "ΔEp steady")


def test_hostile_title_is_escaped_once(demo):
    data, _ = demo
    title = "a < b & \"c\" 'd' </title><script>x()</script>"
    hostile = {**data, "series": {**data["series"], "title": title}}
    page = render_html(hostile)
    assert "<script>" not in page and "</title><script>" not in page
    assert "&amp;amp;" not in page and "&amp;lt;" not in page  # escaped once, not twice
    p = _tables(page)
    heading = page[page.index("<h1>") + 4 : page.index("</h1>")]
    assert unescape(heading) == title
    assert title + " — cvfit report" in "".join(p.text)
