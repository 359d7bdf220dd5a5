"""Outputs of a series analysis: results.json, the per-file table, figures, summary."""

from __future__ import annotations

from collections.abc import Callable
from concurrent.futures import Future, ProcessPoolExecutor
from pathlib import Path

from ..results import SeriesResult
from .json_out import results_to_json, write_results_json
from .summary import format_summary
from .table import write_file_table

__all__ = [
    "OUTPUT_NAMES",
    "write_outputs",
    "write_results_json",
    "results_to_json",
    "write_file_table",
    "format_summary",
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


def write_outputs(result: SeriesResult, out_dir: str | Path, *, jobs: int = 1) -> dict[str, Path]:
    """Write every output of *result* into *out_dir* (created if needed).

    With ``jobs > 1`` the figures are drawn in up to ``jobs`` worker processes while this
    process writes the rest (drawing is most of the time of the outputs); the files written
    do not depend on it. Every file is written to a temporary name and renamed into place,
    and results.json comes last: its presence means the run finished.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    figure_jobs = _figure_jobs(result, out)
    pending: dict[str, Future] = {}
    pool = None
    if jobs > 1:
        pool = ProcessPoolExecutor(max_workers=min(jobs, len(figure_jobs)))
    try:
        written: dict[str, Path] = {}
        if pool is not None:
            # the main process draws the last (smallest) figure itself
            for name, plot, path in figure_jobs[:-1]:
                pending[name] = pool.submit(plot, result, path)
            figure_jobs = figure_jobs[-1:]
        written["table"] = write_file_table(result, out / OUTPUT_NAMES["table"])
        for name, plot, path in figure_jobs:
            written[name] = plot(result, path)
        if result.series.get("model") == "stepwise":
            from .figures_stepwise import write_stepwise_figures

            written.update(write_stepwise_figures(result, out))
        for name, future in pending.items():
            written[name] = future.result()
    finally:
        if pool is not None:
            pool.shutdown(cancel_futures=True)
    order = ["table", "voltammograms_figure", "diagnostics_figure", "lingane_figure"]
    written = {k: written[k] for k in order if k in written} | written
    # The HTML page embeds every figure written above; keep it after them.
    from .html import write_html_report

    figures = [p for p in written.values() if p.suffix.lower() == ".png"]
    written["html_report"] = write_html_report(
        result, out / OUTPUT_NAMES["html_report"], figures=figures
    )
    # results.json last: its presence means the run finished.
    written["results"] = write_results_json(result, out / OUTPUT_NAMES["results"])
    return written
