"""Outputs of a series analysis: results.json, the per-file table, figures, summary."""

from __future__ import annotations

import contextlib
import os
import pickle
import tempfile
from collections.abc import Iterator
from dataclasses import replace
from pathlib import Path
from typing import TYPE_CHECKING

from ..results import SeriesResult
from ._atomic import atomic_write_text
from .json_out import results_to_json, write_results_json
from .summary import format_summary
from .table import write_file_table

if TYPE_CHECKING:
    from .._workers import Task, WorkerPool

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


def _without_curves(result: SeriesResult) -> SeriesResult:
    """*result* without the files' curves (a fifth of the bytes to send to a worker); every
    output but the voltammogram figure is the same from it."""
    return replace(result, files=tuple(replace(f, curve=None) for f in result.files))


def _in_turn(tasks: list[Task]) -> list:
    """Run ``fn(*args)`` of every task, one after the other (a worker's share at once)."""
    return [fn(*args) for fn, args in tasks]


def _in_turn_from(path: str) -> list:
    """:func:`_in_turn` of the tasks pickled in the file *path* (written by the caller),
    which is removed once read: a run killed later leaves nothing in the temporary
    folder."""
    with open(path, "rb") as fh:
        tasks = pickle.load(fh)
    with contextlib.suppress(OSError):
        os.unlink(path)
    return _in_turn(tasks)


@contextlib.contextmanager
def _handed_over(tasks: list[Task], pool: WorkerPool | None) -> Iterator[Task]:
    """A task running *tasks* in turn; for a worker, their arguments travel in a temporary
    file (removed afterwards) rather than the pool's pipe.

    The pipe is written by a thread of this process in 64 kB pieces, each waiting for
    Python's lock, which matplotlib keeps while it renders: a 1 000-file series reached
    its worker 0.1-0.25 s late while this process drew. The file is written at once.
    """
    if pool is None:
        yield (_in_turn, (tasks,))
        return
    fd, path = tempfile.mkstemp(prefix="cvfit-tasks-", suffix=".pickle")
    try:
        with os.fdopen(fd, "wb") as fh:
            pickle.dump(tasks, fh, protocol=pickle.HIGHEST_PROTOCOL)
        yield (_in_turn_from, (path,))
    finally:
        with contextlib.suppress(OSError):
            os.unlink(path)


def _output_tasks(result: SeriesResult, out: Path) -> tuple[list[Task], list[Task]]:
    """The tasks writing the outputs, in two parts: the diagnostics figure, the table and
    the text of results.json, to run in turn as one task (see :func:`_handed_over`); then
    the voltammogram figure and the half-wave-shift figure.

    Workers take tasks from the front and the calling process from the back (see
    :func:`cvfit._workers.share_tasks`); with one worker the two ends take about as long.
    The first part goes to a worker as one task: a worker's next task would wait while this
    process draws (matplotlib keeps Python's lock while it renders).
    """
    from .figures import plot_lingane, plot_voltammograms
    from .figures_diagnostics import plot_diagnostics

    light = _without_curves(result)
    first: list[Task] = [
        (plot_diagnostics, (light, out / OUTPUT_NAMES["diagnostics_figure"])),
        (write_file_table, (light, out / OUTPUT_NAMES["table"])),
        (results_to_json, (light,)),
    ]
    rest: list[Task] = [
        (plot_voltammograms, (result, out / OUTPUT_NAMES["voltammograms_figure"])),
    ]
    if result.series.get("model") != "stepwise":
        rest.append((plot_lingane, (light, out / OUTPUT_NAMES["lingane_figure"])))
    return first, rest


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
    first, rest = _output_tasks(result, out)  # imports the figure modules before any fork
    if pool is None and jobs > 1:
        with worker_pool(min(jobs, 1 + len(rest))) as own:
            return write_outputs(result, out, pool=own)
    with _handed_over(first, pool) as task:
        done = share_tasks(pool, [task, *rest])
    (diagnostics, table, json_text), voltammograms, *lingane = done
    written: dict[str, Path] = {
        "table": table,
        "voltammograms_figure": voltammograms,
        "diagnostics_figure": diagnostics,
    }
    if lingane:
        written["lingane_figure"] = lingane[0]
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
