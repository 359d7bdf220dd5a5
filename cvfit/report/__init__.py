"""Outputs of a series analysis: results.json, the per-file table, figures, summary."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING

from ..results import SeriesResult
from ._atomic import atomic_write_text
from .json_out import results_to_json, write_results_json
from .summary import format_summary
from .table import write_file_table

if TYPE_CHECKING:
    from .._workers import WorkerPool

__all__ = [
    "OUTPUT_NAMES",
    "write_outputs",
    "write_results_json",
    "results_to_json",
    "write_file_table",
    "format_summary",
    "import_figure_modules",
]

#: File names written into the output folder.
OUTPUT_NAMES = {
    "results": "results.json",
    "table": "voltammograms.csv",
    "voltammograms_figure": "voltammograms.png",
    "lingane_figure": "half_wave_shift.png",
    "diagnostics_figure": "diagnostics.png",
    "html_report": "report.html",
}


def import_figure_modules() -> None:
    """Import matplotlib and the figure modules (done before worker processes start)."""
    from . import figures, figures_diagnostics  # noqa: F401


def _figure_jobs(result: SeriesResult, out: Path) -> list[tuple[str, Callable, Path]]:
    """(name, plotting function, path) of every figure of *result*, largest first."""
    from .figures import plot_lingane, plot_voltammograms
    from .figures_diagnostics import plot_diagnostics

    jobs = [
        ("diagnostics_figure", plot_diagnostics, out / OUTPUT_NAMES["diagnostics_figure"]),
        ("voltammograms_figure", plot_voltammograms, out / OUTPUT_NAMES["voltammograms_figure"]),
    ]
    if result.series.get("model") != "stepwise":
        jobs.append(("lingane_figure", plot_lingane, out / OUTPUT_NAMES["lingane_figure"]))
    return jobs


def write_outputs(
    result: SeriesResult, out_dir: str | Path, *, jobs: int = 1, pool: WorkerPool | None = None
) -> dict[str, Path]:
    """Write every output of *result* into *out_dir* (created if needed).

    With ``jobs > 1`` processes (or a shared *pool*, see :func:`cvfit._workers.worker_pool`)
    the figures are drawn by the workers and this process together (drawing is most of the
    time of the outputs); the files written do not depend on it.
    Every file is written to a temporary name and renamed into place, and results.json
    comes last: its presence means the run finished.
    """
    from .._workers import share_tasks, worker_pool

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    figure_jobs = _figure_jobs(result, out)  # imports the figure modules before any fork
    if pool is None and jobs > 1:
        with worker_pool(min(jobs, len(figure_jobs))) as own:
            return write_outputs(result, out, pool=own)
    # the workers take the figures from the front of the list, this process the table and
    # the text of results.json from the back, then figures (results.json is written last)
    tasks = [(plot, (result, path)) for _, plot, path in figure_jobs]
    tasks += [
        (write_file_table, (result, out / OUTPUT_NAMES["table"])),
        (results_to_json, (result,)),
    ]
    *drawn, table, json_text = share_tasks(pool, tasks)
    written: dict[str, Path] = {"table": table}
    written.update((name, path) for (name, _, _), path in zip(figure_jobs, drawn, strict=True))
    if result.series.get("model") == "stepwise":
        from .figures_stepwise import write_stepwise_figures

        written.update(write_stepwise_figures(result, out))
    order = ["table", "voltammograms_figure", "diagnostics_figure", "lingane_figure"]
    written = {k: written[k] for k in order if k in written} | written
    # The HTML page embeds every figure written above; keep it after them.
    from .html import write_html_report

    figures = [p for p in written.values() if p.suffix.lower() == ".png"]
    written["html_report"] = write_html_report(
        result, out / OUTPUT_NAMES["html_report"], figures=figures
    )
    # results.json last: its presence means the run finished.
    written["results"] = out / OUTPUT_NAMES["results"]
    atomic_write_text(written["results"], json_text)
    return written
