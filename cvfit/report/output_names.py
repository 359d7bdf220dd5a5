"""The file names a series analysis writes into its output folder."""

from __future__ import annotations

from cvfit.report.figures.registry import FIGURES, figure_names

__all__ = [
    "OUTPUT_NAMES",
    "STEPWISE_ONLY_NAMES",
    "INTERNAL_STANDARD_NAME",
    "CURVE_FITS_NAME",
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
}

#: Figures written only for the stepwise model.
STEPWISE_ONLY_NAMES = (FIGURES["stepwise_leden"].file_name, FIGURES["stepwise_species"].file_name)

#: The drift figure, written only for a series with an internal reference couple.
INTERNAL_STANDARD_NAME = FIGURES["internal_standard"].file_name

#: The curve-fit figure, written only when some file was fitted as a whole curve.
CURVE_FITS_NAME = FIGURES["curve_fits"].file_name

_OWNED = frozenset((*OUTPUT_NAMES.values(), *figure_names()))


def is_output_name(name: str) -> bool:
    """True for a file name cvfit writes into an output folder, or the hidden temporary
    name (``.NAME.<random>``) a killed writer of an earlier version left there."""
    if name in _OWNED:
        return True
    return name.startswith(".") and any(name.startswith(f".{n}.") for n in _OWNED)
