"""The file names a series analysis writes into its output folder."""

from __future__ import annotations

__all__ = [
    "OUTPUT_NAMES",
    "STEPWISE_ONLY_NAMES",
    "INTERNAL_STANDARD_NAME",
    "CURVE_FITS_NAME",
    "is_output_name",
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

#: Figures written only for the stepwise model (``cvfit.report.figures.stepwise``).
STEPWISE_ONLY_NAMES = ("leden_functions.png", "species_distribution.png")

#: The drift figure, written only for a series with an internal reference couple.
INTERNAL_STANDARD_NAME = "internal_standard.png"

#: The curve-fit figure, written only when some file was fitted as a whole curve.
CURVE_FITS_NAME = "curve_fits.png"

_OWNED = frozenset(
    (*OUTPUT_NAMES.values(), *STEPWISE_ONLY_NAMES, INTERNAL_STANDARD_NAME, CURVE_FITS_NAME)
)


def is_output_name(name: str) -> bool:
    """True for a file name cvfit writes into an output folder, or the hidden temporary
    name (``.NAME.<random>``) a killed writer of an earlier version left there."""
    if name in _OWNED:
        return True
    return name.startswith(".") and any(name.startswith(f".{n}.") for n in _OWNED)
