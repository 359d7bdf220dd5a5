"""A self-contained HTML report of a series: one file to hand on, readable in any browser.

The page is built from the same mapping that becomes results.json (``SeriesResult.to_dict``),
so its numbers are the file's numbers; figures are embedded as base64 PNG data URIs and the
style sheet is inline — the page loads nothing from anywhere. The page is a jinja2 template
(``cvfit/report/templates/report.html.j2``) fed with text formatted in
:mod:`cvfit.report.html_view`; autoescape escapes every string (title, file names, labels,
flag messages) once, in text and attributes alike.

Each constant's cell carries the exact results.json value in ``data-value`` (and
``data-stderr``, ``data-ci-low``, ``data-ci-high``) so that the page can be checked against
the file by a program.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

from cvfit.pipeline.results import SeriesResult
from cvfit.report.atomic import atomic_write_text
from cvfit.report.global_fit_html import global_fit_view
from cvfit.report.headline import headline_lines
from cvfit.report.html_sections import budget_view, standard_view
from cvfit.report.html_view import (
    EXTRA_HEADERS,
    FIGURE_CAPTIONS,
    conditions_view,
    constants_view,
    extra_header,
    figures_view,
    file_table_view,
    flag_view,
    method_view,
    series_notes,
    text,
)
from cvfit.report.imported_columns import columns_view
from cvfit.report.methods_text import CAUTIONS
from cvfit.report.templating import render_template
from cvfit.techniques import technique_of_name

__all__ = [
    "EXTRA_HEADERS",
    "FIGURE_CAPTIONS",
    "extra_header",
    "render_html",
    "series_notes",
    "write_html_report",
]


def _technique(data: Mapping[str, Any]) -> str:
    """The technique of the series a results.json mapping describes (cv when not said)."""
    return str((data.get("series") or {}).get("technique") or "cv")


def _headline(data: Mapping[str, Any]) -> dict[str, Any]:
    lines = headline_lines(data)
    screen = lines[-1]
    return {
        "lines": [("note" if line.startswith("(") else "lead", line) for line in lines[:-1]],
        "screen": screen,
        "ok": screen.startswith("All "),
    }


def render_html(
    data: Mapping[str, Any],
    figures: Sequence[str | Path] = (),
    *,
    simulated_with: Sequence[str] = (),
    folder: str | Path | None = None,
) -> str:
    """The report page for a results mapping (the results.json content).

    Parameters
    ----------
    data : mapping
        ``SeriesResult.to_dict()`` — the same mapping written to results.json.
    figures : sequence of path
        PNG files to embed, in order (other suffixes and missing files are skipped).
    simulated_with : sequence of str
        For simulated data only (the demo): the constants they were simulated with, in
        words, shown below the headline. Empty for measured data.
    folder : path, optional
        The folder the page is written to: the manifest is shown relative to it (an
        absolute path may name a person's home folder); None: as results.json has it.

    Returns
    -------
    str
        A complete HTML5 document with no external resources.
    """
    fit = data.get("fit") or {}
    files = data.get("voltammograms") or []
    standard, rest = standard_view(data, [Path(p) for p in figures])
    technique = technique_of_name(_technique(data))
    return render_template(
        "report.html.j2",
        title=text((data.get("series") or {}).get("title") or "untitled series"),
        version=text(data.get("cvfit_version")),
        headline=_headline(data),
        simulated_with=[text(line) for line in simulated_with],
        conditions=conditions_view(data, folder=folder),
        constants=constants_view(fit),
        budget=budget_view(data),
        standard=standard,
        global_fit=global_fit_view(data),
        series_flags=flag_view(list(data.get("flags") or []) + list(fit.get("flags") or [])),
        columns=columns_view(files),
        files=file_table_view(files, technique.name),
        technique_sections=technique.report_sections(data),
        figures=figures_view(rest),
        method=method_view(fit),
        cautions=list(CAUTIONS),
    )


def write_html_report(
    result: SeriesResult | Mapping[str, Any],
    path: str | Path,
    *,
    figures: Sequence[str | Path] = (),
    simulated_with: Sequence[str] = (),
) -> Path:
    """Write the report page atomically; returns the path."""
    path = Path(path)
    data = result.to_dict() if isinstance(result, SeriesResult) else result
    page = render_html(data, figures, simulated_with=simulated_with, folder=path.parent)
    atomic_write_text(path, page)
    return path
