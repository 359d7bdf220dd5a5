"""The file names a series analysis writes into its output folder."""

from __future__ import annotations

__all__ = ["OUTPUT_NAMES"]

#: File names written into the output folder.
OUTPUT_NAMES = {
    "results": "results.json",
    "table": "voltammograms.csv",
    "voltammograms_figure": "voltammograms.png",
    "lingane_figure": "half_wave_shift.png",
    "diagnostics_figure": "diagnostics.png",
    "html_report": "report.html",
}
