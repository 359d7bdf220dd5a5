"""The HTML report: self-contained, escapes hostile text, shows the numbers of results.json.

Checked twice: with Python's html.parser (always) and, where Debian's chromium is
installed, in a real browser engine (headless, ``--dump-dom``).
"""

from __future__ import annotations

import base64
import html
import json
import re
import subprocess
import tempfile
from html.parser import HTMLParser
from pathlib import Path

import pytest
from seriesfactory import LIGAND_M, simulate_point, write_manifest, write_plain_csv

from cvfit.cli import main
from cvfit.report import OUTPUT_NAMES
from cvfit.report.html import render_html

HOSTILE_TITLE = "<script>alert(1)</script> & \"quoted\" 'series'"
HOSTILE_FILE = "f<img src=x onerror=alert(2)>&'q\".csv"
HOSTILE_LABEL = "</td></tr><b>bold</b>"
CHROMIUM = Path("/usr/bin/chromium")


class _Page(HTMLParser):
    """Collects tags, attributes and text of a page."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.tags: list[tuple[str, dict[str, str | None]]] = []
        self.text: list[str] = []
        self._stack: list[str] = []
        self.h1 = ""
        self.title = ""

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))
        self._stack.append(tag)

    def handle_endtag(self, tag):
        if self._stack and self._stack[-1] == tag:
            self._stack.pop()

    def handle_data(self, data):
        self.text.append(data)
        if "h1" in self._stack:
            self.h1 += data
        if self._stack and self._stack[-1] == "title":
            self.title += data


def parse(text: str) -> _Page:
    page = _Page()
    page.feed(text)
    page.close()
    return page


@pytest.fixture(scope="module")
def run_folder(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("html")
    entries = []
    for k, ligand in enumerate(LIGAND_M[:5]):
        name = HOSTILE_FILE if k == 2 else f"h{k}.csv"
        write_plain_csv(folder / name, simulate_point(ligand, seed=300 + k, step_V=0.002))
        entry = {"file": name, "ligand_M": ligand}
        if k == 3:
            entry["label"] = HOSTILE_LABEL
        entries.append(entry)
    manifest = write_manifest(
        folder / "series.toml",
        entries,
        series={
            "electrons": 1,
            "title": HOSTILE_TITLE,
            "reference_electrode": "Ag/AgCl <3 M KCl>",
        },
    )
    out = folder / "out"
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 0
    return out


def test_report_is_written_beside_results(run_folder):
    assert OUTPUT_NAMES["html_report"] == "report.html"
    assert (run_folder / "report.html").stat().st_size > 0


def test_page_parses_and_loads_nothing_from_outside(run_folder):
    text = (run_folder / "report.html").read_text(encoding="utf-8")
    assert text.startswith("<!DOCTYPE html>")
    page = parse(text)
    names = [t for t, _ in page.tags]
    assert "script" not in names and "link" not in names and "iframe" not in names
    for tag, attrs in page.tags:
        assert not any(k.startswith("on") for k in attrs), (tag, attrs)
        for key in ("src", "href"):
            if key in attrs:
                assert attrs[key].startswith("data:image/png;base64,"), (tag, attrs)
    assert "http://" not in text and "https://" not in text and "@import" not in text


def test_hostile_text_is_escaped(run_folder):
    text = (run_folder / "report.html").read_text(encoding="utf-8")
    assert "<script>" not in text and "<img src=x" not in text and "<b>bold" not in text
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in text
    page = parse(text)
    # the parser gives the text back exactly as written: shown, not interpreted
    assert page.h1 == HOSTILE_TITLE
    assert page.title.startswith(HOSTILE_TITLE)
    joined = "".join(page.text)
    assert HOSTILE_FILE in joined and HOSTILE_LABEL in joined and "Ag/AgCl <3 M KCl>" in joined
    imgs = [a for t, a in page.tags if t == "img"]
    assert all(set(a) == {"alt", "src"} for a in imgs)


def test_constants_are_those_of_results_json(run_folder):
    data = json.loads((run_folder / "results.json").read_text(encoding="utf-8"))
    page = parse((run_folder / "report.html").read_text(encoding="utf-8"))
    cells = {}
    rows = {}
    current = None
    for tag, attrs in page.tags:
        if tag == "tr" and "data-key" in attrs:
            current = attrs["data-key"]
        if tag == "td" and "data-value" in attrs and current is not None:
            cells[current] = attrs
            rows[current] = True
            current = None
    fit = data["fit"]
    quantities = [k for k, v in fit.items() if isinstance(v, dict) and "ci95" in v]
    assert "log10_beta_ratio" in quantities and "delta_ligands" in quantities
    assert sorted(cells) == sorted(quantities)
    for key in quantities:
        q, a = fit[key], cells[key]
        assert json.loads(a["data-value"]) == q["value"]
        assert json.loads(a["data-stderr"]) == q["stderr"]
        assert [json.loads(a["data-ci-low"]), json.loads(a["data-ci-high"])] == q["ci95"]
    shown = "".join(page.text)
    q = fit["log10_beta_ratio"]
    assert abs(q["value"] - 6.0) < 0.05  # seriesfactory truth: log10 ratio 6.0
    assert f"{q['value']:.3f}" in shown


def test_every_written_figure_is_embedded(run_folder):
    page = parse((run_folder / "report.html").read_text(encoding="utf-8"))
    embedded = [base64.b64decode(a["src"].split(",", 1)[1]) for t, a in page.tags if t == "img"]
    pngs = sorted(run_folder.glob("*.png"))
    assert len(pngs) >= 2 and len(embedded) == len(pngs)
    assert sorted(embedded) == sorted(p.read_bytes() for p in pngs)


def test_stepwise_constants_appear_when_present():
    """A ``log10_beta`` list (stepwise model) gets its own rows, with escaped extras."""
    data = {
        "cvfit_version": "x",
        "manifest": "m.toml",
        "series": {"title": "t", "electrons": 2, "temperature_K": 298.15},
        "nernstian": False,
        "voltammograms": [{"file": "a&b.csv", "ligand_M": 0.0, "flags": [], "class": "<quasi>"}],
        "fit": {
            "model": "stepwise",
            "n_points": 6,
            "dof": 4,
            "log10_beta": [
                {"j": 1, "value": 3.25, "stderr": 0.04, "ci95": [3.1, 3.4]},
                {"j": 2, "value": 5.5, "stderr": 0.1, "ci95": [5.2, 5.8]},
                {"j": 3, "value": None, "stderr": None, "ci95": [None, None], "determined": False},
            ],
        },
        "flags": [{"code": "SOME_FLAG", "message": "file <x>.csv", "severity": "warning"}],
    }
    text = render_html(data)
    page = parse(text)
    values = [json.loads(a["data-value"]) for t, a in page.tags if "data-value" in a]
    assert values == [3.25, 5.5, None]
    joined = "".join(page.text)
    assert "log10 β2 (overall)" in joined and "DeFord" in joined
    assert "log10 β3 (overall) — not determined by these data" in joined
    assert "βj in (mol/L)^−j" in joined
    assert "<quasi>" in joined and "file <x>.csv" in joined and "a&b.csv" in joined
    assert "<quasi>" not in text and "<x>" not in text


def test_null_constants_are_shown_as_not_determined():
    data = {
        "series": {"title": "t", "electrons": 1, "temperature_K": 298.15},
        "fit": {
            "model": "lingane",
            "log10_beta_ratio": {"value": None, "stderr": None, "ci95": [None, None]},
        },
        "voltammograms": [],
        "flags": [],
    }
    page = parse(render_html(data))
    cell = [a for t, a in page.tags if "data-value" in a]
    assert cell and cell[0]["data-value"] == "null"
    assert "n/d" in "".join(page.text)


def test_in_a_browser_engine(run_folder):
    if not CHROMIUM.exists():
        pytest.skip("/usr/bin/chromium is not installed (apt-get install chromium)")
    page = run_folder / "report.html"
    with tempfile.TemporaryDirectory() as profile:
        proc = subprocess.run(
            [
                str(CHROMIUM),
                "--headless",
                "--no-sandbox",
                "--disable-gpu",
                "--disable-quic",
                "--no-first-run",
                "--disable-background-networking",
                "--disable-component-update",
                "--disable-sync",
                f"--user-data-dir={profile}",
                "--dump-dom",
                page.as_uri(),
            ],
            capture_output=True,
            text=True,
            timeout=60,
        )
    dom = proc.stdout
    assert proc.returncode == 0 and "</html>" in dom, proc.stderr[-2000:]
    parsed = parse(dom)
    # the engine built the page as written: no script or hostile image element, text intact
    assert "script" not in [t for t, _ in parsed.tags]
    assert parsed.h1 == HOSTILE_TITLE
    imgs = [a for t, a in parsed.tags if t == "img"]
    assert len(imgs) == len(list(run_folder.glob("*.png")))
    assert all(a["src"].startswith("data:image/png;base64,") for a in imgs)
    data = json.loads((run_folder / "results.json").read_text(encoding="utf-8"))
    shown = {json.loads(a["data-value"]) for t, a in parsed.tags if "data-value" in a}
    assert data["fit"]["log10_beta_ratio"]["value"] in shown


def test_report_shows_the_manifest_relative_to_its_folder(run_folder):
    """Issue 27 item 7: the absolute path may name a person's home folder."""
    page = (run_folder / "report.html").read_text(encoding="utf-8")
    data = json.loads((run_folder / "results.json").read_text(encoding="utf-8"))
    assert Path(data["manifest"]).is_absolute()  # results.json keeps the full path
    assert str(run_folder.parent) not in page
    assert "<dd>../series.toml</dd>" in page


@pytest.mark.parametrize(
    ("manifest", "folder", "shown"),
    [
        ("/data/alice/t1/series.toml", "/data/alice/t1/series_cvfit", "../series.toml"),
        ("/data/alice/t1/series.toml", "/data/out/t1", "../../alice/t1/series.toml"),
        ("/data/alice/t1/series.toml", None, "/data/alice/t1/series.toml"),
        ("series.toml", "/data/out", "series.toml"),
    ],
)
def test_shown_manifest(manifest, folder, shown):
    from cvfit.report.html_view import shown_manifest

    assert shown_manifest(manifest, folder) == shown


#: Injected into a copy of a report: measures, once laid out, every element whose content
#: is wider than its box — cut (overflow hidden or clipped, or an ellipsis), spilling out
#: of a table cell, or (the per-file table) behind a horizontal scroll bar — and writes the
#: verdict as JSON. A wide table in a scroll box cuts nothing: its text is all reachable.
_MEASURE = """<script>
(function () {
  var cut = [], scrolled = [], spilled = [];
  var all = document.querySelectorAll('body *');
  for (var k = 0; k < all.length; k++) {
    var el = all[k], cs = getComputedStyle(el);
    if (el.scrollWidth <= el.clientWidth + 1) continue;
    var what = el.tagName + '.' + el.className + ': ' + el.textContent.slice(0, 80);
    if (cs.overflowX === 'hidden' || cs.overflowX === 'clip' || cs.textOverflow === 'ellipsis') {
      cut.push(what);
    } else if (cs.overflowX === 'auto' || cs.overflowX === 'scroll') {
      if (el.querySelector('table.files')) scrolled.push(what);
    } else if (el.tagName === 'TD' || el.tagName === 'TH') {
      spilled.push(what);
    }
  }
  var text = document.body.innerText;
  var out = document.createElement('pre');
  out.id = 'layout-verdict';
  out.textContent = JSON.stringify({
    cut: cut, scrolled: scrolled, spilled: spilled,
    dict_repr: text.indexOf("{'") >= 0 || text.indexOf("[{'") >= 0,
    page_wider_than_window: document.documentElement.scrollWidth > window.innerWidth,
    cells: document.querySelectorAll('table.files td').length,
    heads: Array.prototype.map.call(document.querySelectorAll('table.files th'),
                                    function (h) { return h.textContent; })
  });
  document.body.appendChild(out);
})();
</script>"""


def _chromium(*args: str) -> subprocess.CompletedProcess:
    with tempfile.TemporaryDirectory() as profile:
        return subprocess.run(
            [str(CHROMIUM), "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
             "--no-first-run", "--disable-background-networking", "--disable-component-update",
             "--disable-sync", "--hide-scrollbars", f"--user-data-dir={profile}",
             "--window-size=1280,900", *args],
            capture_output=True, text=True, timeout=90, check=False,
        )  # fmt: skip


@pytest.fixture(scope="module")
def curve_fitted_report(tmp_path_factory) -> Path:
    """The report of the demo series, some of whose files were curve-fitted."""
    out = tmp_path_factory.mktemp("browser") / "demo"
    assert main(["demo", "--out", str(out), "--quiet"]) == 0
    return out / "results" / "report.html"


def test_report_cuts_no_text_and_shows_no_dict_in_a_browser(curve_fitted_report, tmp_path):
    """Issue 27 item 7: the per-file table printed a raw dict for curve-fitted files, had
    columns empty in every row and cut flag text at the edge of a scroll box."""
    if not CHROMIUM.exists():
        pytest.skip("/usr/bin/chromium is not installed (apt-get install chromium)")
    page = curve_fitted_report.read_text(encoding="utf-8")
    assert "curve_fit" in (curve_fitted_report.parent / "results.json").read_text()
    copy = tmp_path / "report.html"
    # the copy's policy lets the one inline script run (the report itself allows none)
    measured = page.replace(
        "style-src 'unsafe-inline'", "style-src 'unsafe-inline'; script-src 'unsafe-inline'"
    ).replace("</body>", _MEASURE + "</body>")
    assert measured.count("script-src 'unsafe-inline'") == 1
    copy.write_text(measured, encoding="utf-8")
    proc = _chromium("--dump-dom", copy.as_uri())
    assert proc.returncode == 0 and "</html>" in proc.stdout, proc.stderr[-2000:]
    found = re.search(r'<pre id="layout-verdict">(.*?)</pre>', proc.stdout, re.S)
    assert found, "the measuring script did not run"
    verdict = json.loads(html.unescape(found.group(1)))
    assert verdict["cells"] > 0
    assert verdict["cut"] == [] and verdict["spilled"] == []
    assert verdict["scrolled"] == []  # the per-file table fits a 1 280 px window
    assert not verdict["page_wider_than_window"]
    assert not verdict["dict_repr"] and "{&#39;" not in page
    # the whole-curve fit shows as numbers; no column says nothing in every row
    heads = verdict["heads"]
    assert "curve fit: E½ / mV; k0 / cm s⁻¹" in heads and "curve fit" not in heads
    assert "internal standard" not in heads and "uncompensated resistance / Ω" not in heads
    assert re.search(
        r"-142\.\d+\xa0±\xa00\.\d+; 0\.00\d+\xa0±\xa00\.0000\d+", html.unescape(proc.stdout)
    )
    shot = tmp_path / "report.png"
    proc = _chromium(f"--screenshot={shot}", curve_fitted_report.as_uri())
    assert proc.returncode == 0, proc.stderr[-2000:]
    assert shot.stat().st_size > 10_000 and shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


_PINNED = """<script>
(function () {
  var out = [], boxes = document.querySelectorAll('.scroll');
  for (var b = 0; b < boxes.length; b++) {
    var box = boxes[b].getBoundingClientRect();
    var notes = boxes[b].querySelectorAll('tr.flags .flag, tr.flags .excluded-reason');
    for (var k = 0; k < notes.length; k++) {
      var r = notes[k].getBoundingClientRect();
      out.push({right: r.right, box_right: box.right, left: r.left, box_left: box.left,
                table_wider: boxes[b].scrollWidth > boxes[b].clientWidth + 1});
    }
  }
  var pre = document.createElement('pre');
  pre.id = 'pinned-verdict';
  pre.textContent = JSON.stringify(out);
  document.body.appendChild(pre);
})();
</script>"""


def test_a_file_messages_wrap_in_view_when_the_table_scrolls(tmp_path):
    """A titration by additions adds three columns: the per-file table is wider than the
    window and scrolls; each file's messages under its row must still wrap inside the
    visible part of the box (before, they ran on behind the scroll edge)."""
    if not CHROMIUM.exists():
        pytest.skip("/usr/bin/chromium is not installed (apt-get install chromium)")
    series = tmp_path / "s"
    assert main([
        "simulate", "--series", "--e-half", "-0.2", "--log-beta-ox=-5,10",
        "--added-mL", "0,0.5,1,2,3", "--start-volume-mL", "10", "--metal-M", "1e-3",
        "--ligand-stock-M", "0.1", "--noise", "0.003", "--seed", "2", "--out", str(series),
    ]) == 0  # fmt: skip
    assert main(["run", str(series / "series.toml"), "--out", str(tmp_path / "o"),
                 "--quiet"]) == 0  # fmt: skip
    page = (tmp_path / "o" / "report.html").read_text(encoding="utf-8")
    copy = tmp_path / "measured.html"
    copy.write_text(
        page.replace("style-src 'unsafe-inline'",
                     "style-src 'unsafe-inline'; script-src 'unsafe-inline'")
        .replace("</body>", _PINNED + "</body>"),
        encoding="utf-8",
    )  # fmt: skip
    proc = _chromium("--dump-dom", copy.as_uri())
    found = re.search(r'<pre id="pinned-verdict">(.*?)</pre>', proc.stdout, re.S)
    assert found, proc.stderr[-2000:]
    notes = json.loads(html.unescape(found.group(1)))
    assert notes and any(n["table_wider"] for n in notes)  # the case the test is about
    for n in notes:
        assert n["box_left"] - 1 <= n["left"] and n["right"] <= n["box_right"] + 1, n
