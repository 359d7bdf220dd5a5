"""Outputs of a series analysis: results.json, the per-file table, figures, summary.

- :mod:`.results_json` — the results.json text (every number with its uncertainty)
- :mod:`.file_table` — the per-file CSV table
- :mod:`.figures` — the figures (matplotlib, imported only when they are drawn)
- :mod:`.html` — one self-contained HTML page to hand on
- :mod:`.summary` — the terminal summary (text; the command line prints it)
- :mod:`.atomic` — files written whole or not at all
"""

from __future__ import annotations

from pathlib import Path

from cvfit.pipeline.results import SeriesResult

from .atomic import atomic_write_text
from .file_table import write_file_table
from .output_names import OUTPUT_NAMES
from .results_json import results_to_json, write_results_json
from .summary import format_summary

__all__ = [
    "OUTPUT_NAMES",
    "write_outputs",
    "write_results_json",
    "results_to_json",
    "write_file_table",
    "format_summary",
]


def write_outputs(result: SeriesResult, out_dir: str | Path) -> dict[str, Path]:
    """Write every output of *result* into *out_dir* (created if needed).

    Every file is written to a temporary name and renamed into place, and results.json
    comes last: its presence means the run finished.

    Returns
    -------
    dict of str to Path
        The files written, by the keys of :data:`OUTPUT_NAMES` (and the stepwise figures).
    """
    from .figures.diagnostics import plot_diagnostics
    from .figures.titration import plot_lingane, plot_voltammograms

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    json_text = results_to_json(result)
    written: dict[str, Path] = {
        "table": write_file_table(result, out / OUTPUT_NAMES["table"]),
        "voltammograms_figure": plot_voltammograms(
            result, out / OUTPUT_NAMES["voltammograms_figure"]
        ),
        "diagnostics_figure": plot_diagnostics(result, out / OUTPUT_NAMES["diagnostics_figure"]),
    }
    from .figures.curve_fits import CURVE_FITS_FIGURE, plot_curve_fits

    # only when some file was curve-fitted
    curve_fits = plot_curve_fits(result, out / CURVE_FITS_FIGURE)
    if curve_fits is not None:
        written["curve_fits_figure"] = curve_fits
    # The figures of the model asked for, also when no fit could be made (they then say so).
    if result.series.model == "lingane":
        written["lingane_figure"] = plot_lingane(result, out / OUTPUT_NAMES["lingane_figure"])
    else:
        from .figures.stepwise import write_stepwise_figures

        written.update(write_stepwise_figures(result, out))
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
