"""The file names a series analysis writes into its output folder."""

from __future__ import annotations

from pathlib import PurePath

from cvfit.report.figures.print_style import FIGURE_FORMATS
from cvfit.report.figures.registry import FIGURES, figure_names
from cvfit.report.ownership import EarlierSet, cvfit_json

__all__ = [
    "OUTPUT_NAMES",
    "STEPWISE_ONLY_NAMES",
    "INTERNAL_STANDARD_NAME",
    "CURVE_FITS_NAME",
    "SERIES_OUTPUT_NAMES",
    "EARLIER_SERIES_SET",
    "is_output_name",
]

#: File names written into the output folder of every (cyclic-voltammetry, Lingane)
#: series; the figures' names come from the figure registry.
OUTPUT_NAMES = {
    "results": "results.json",
    "table": "voltammograms.csv",
    **{
        FIGURES[k].output_key: FIGURES[k].file_name
        for k in ("voltammograms", "lingane", "diagnostics")
    },
    "html_report": "report.html",
    "si_table_csv": "si_table.csv",
    "si_table_tex": "si_table.tex",
}

#: Figures written only for the stepwise model.
STEPWISE_ONLY_NAMES = (FIGURES["stepwise_leden"].file_name, FIGURES["stepwise_species"].file_name)

#: The drift figure, written only for a series with an internal reference couple.
INTERNAL_STANDARD_NAME = FIGURES["internal_standard"].file_name

#: The curve-fit figure, written only when some file was fitted as a whole curve.
CURVE_FITS_NAME = FIGURES["curve_fits"].file_name

#: Every file name a series analysis may write into its output folder (each figure in
#: each of its formats, ``--figure-format``).
SERIES_OUTPUT_NAMES = frozenset(
    (
        *OUTPUT_NAMES.values(),
        *(
            str(PurePath(n).with_suffix(f".{fmt}"))
            for n in figure_names()
            for fmt in FIGURE_FORMATS
        ),
    )
)


#: A series' output folder written before sets carried their record: only these names, and a
#: results.json that cvfit wrote.
EARLIER_SERIES_SET = EarlierSet(SERIES_OUTPUT_NAMES, cvfit_json(OUTPUT_NAMES["results"]))


def is_output_name(name: str) -> bool:
    """True for a file name a series analysis writes into its output folder (exactly: a
    hidden look-alike such as ``.results.json.backup`` is not one)."""
    return name in SERIES_OUTPUT_NAMES
