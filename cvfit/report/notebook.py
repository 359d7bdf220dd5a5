"""A series result in a notebook: its HTML view and its figures as matplotlib objects.

:class:`~cvfit.pipeline.results.SeriesResult` shows itself with :func:`notebook_html` and
draws with :func:`plot_figures`; the pipeline sits below the outputs, so this module hands
both to it when imported (:func:`cvfit.pipeline.results.set_notebook_view`), which the
public API ``import cvfit`` does.
"""

from __future__ import annotations

import tempfile
from pathlib import Path
from typing import TYPE_CHECKING

from cvfit.errors import InputError
from cvfit.pipeline.results import SeriesResult, set_notebook_view
from cvfit.report.figures.registry import FIGURES, draw_figure, figure_keys_for
from cvfit.report.html import _headline
from cvfit.report.html_view import figure_view, file_table_view, text
from cvfit.report.templating import render_template
from cvfit.techniques import technique_of_name

if TYPE_CHECKING:
    from matplotlib.figure import Figure

__all__ = ["MAX_INLINE_BYTES", "notebook_html", "plot_figures"]

#: Most bytes of PNG a notebook view embeds: a cell stays a few MB however many figures
#: the series has; the figures beyond it are named, not shown.
MAX_INLINE_BYTES = 4_000_000


def notebook_html(result: SeriesResult) -> str:
    """The headline, the per-file table and the figures (embedded PNG) of *result*."""
    data = result.to_dict()
    figures, left_out, total = [], [], 0
    with tempfile.TemporaryDirectory(prefix="cvfit-nb-") as tmp:
        for key in figure_keys_for(result):
            entry = FIGURES[key]
            path = draw_figure(entry, result, Path(tmp))
            if path is None:
                continue
            size = path.stat().st_size
            if total + size > MAX_INLINE_BYTES:
                left_out.append(entry.file_name)
                continue
            total += size
            figures.append(figure_view(path, entry.caption))
    omitted = ""
    if left_out:
        omitted = f"Not shown, to keep the cell small: {', '.join(left_out)} (use plot())."
    technique = technique_of_name(str(data["series"].get("technique") or "cv"))
    return render_template(
        "notebook.html.j2",
        title=text(data["series"].get("title") or "untitled series"),
        headline=_headline(data),
        files=file_table_view(data["voltammograms"], technique.name),
        figures=figures,
        omitted=omitted,
    )


def plot_figures(result: SeriesResult, name: str | None = None) -> dict[str, Figure]:
    """The figures of *result* as matplotlib Figures, by figure-registry key.

    With *name*, only that figure; a name the run has no figure for is an
    :class:`InputError` listing the ones it has. Nothing is written or shown.
    """
    from cvfit.report.figures.titration import keep_figures

    keys = figure_keys_for(result)
    if name is not None:
        if name not in keys:
            raise InputError(
                f"this series has no figure {name!r}; choose one of {', '.join(keys)}",
                source="plot()",
            )
        keys = [name]
    drawn: dict[str, Figure] = {}
    with tempfile.TemporaryDirectory(prefix="cvfit-nb-") as tmp:
        for key in keys:
            with keep_figures() as kept:
                draw_figure(FIGURES[key], result, Path(tmp))
            if kept:
                drawn[key] = kept[-1]
    return drawn


set_notebook_view(notebook_html, plot_figures)
