"""Outputs of a series analysis: results.json, the per-file table, figures, summary."""

from __future__ import annotations

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


def write_outputs(result: SeriesResult, out_dir: str | Path) -> dict[str, Path]:
    """Write every output of *result* into *out_dir* (created if needed)."""
    from .figures import plot_lingane, plot_voltammograms
    from .figures_diagnostics import plot_diagnostics

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    written = {
        "table": write_file_table(result, out / OUTPUT_NAMES["table"]),
        "voltammograms_figure": plot_voltammograms(
            result, out / OUTPUT_NAMES["voltammograms_figure"]
        ),
        "diagnostics_figure": plot_diagnostics(result, out / OUTPUT_NAMES["diagnostics_figure"]),
    }
    if result.series.get("model") == "stepwise":
        from .figures_stepwise import write_stepwise_figures

        written.update(write_stepwise_figures(result, out))
    else:
        written["lingane_figure"] = plot_lingane(result, out / OUTPUT_NAMES["lingane_figure"])
    # The HTML page embeds every figure written above; keep it after them.
    from .html import write_html_report

    figures = [p for p in written.values() if p.suffix.lower() == ".png"]
    written["html_report"] = write_html_report(
        result, out / OUTPUT_NAMES["html_report"], figures=figures
    )
    # results.json last: its presence means the run finished.
    written["results"] = write_results_json(result, out / OUTPUT_NAMES["results"])
    return written
