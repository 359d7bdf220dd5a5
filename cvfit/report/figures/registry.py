"""The one registry of the figures a series analysis may write.

Each entry names the figure's key in the outputs, its file name, its caption (the HTML
report shows it) and the function that draws it (``"module:function"``, imported only when
the figure is drawn: matplotlib is not loaded to list names). The output names an output
folder may hold (:mod:`cvfit.report.output_names`) and the report's captions both come
from here, so a new figure is one entry.

Which figures a series gets: the voltammograms always; the technique's
(``figures`` of the technique object, :mod:`cvfit.techniques`); the
titration model's (``figures`` of the model — drawn also when no fit could be made, then
saying so); the internal standard's when the files hold one. A drawing function takes the
:class:`~cvfit.pipeline.results.SeriesResult` and the path and returns the path, or None
when it has nothing to draw (no file was curve-fitted).
"""

from __future__ import annotations

import importlib
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from cvfit.pipeline.results import SeriesResult

__all__ = [
    "FigureEntry",
    "FIGURES",
    "figure_names",
    "figure_keys_for",
    "figures_for",
    "draw_figure",
]


@dataclass(frozen=True)
class FigureEntry:
    """One figure cvfit can write.

    Attributes
    ----------
    output_key : str
        Its key among the written outputs (``write_outputs`` returns them by key).
    file_name : str
        The file written into the output folder.
    caption : str
        What it shows, in words (the HTML report's caption).
    draw : str
        ``"module:function"`` drawing it: ``function(result, path) -> Path | None``.
    """

    output_key: str
    file_name: str
    caption: str
    draw: str

    def drawer(self) -> Callable[[SeriesResult, Path], Path | None]:
        module, _, name = self.draw.partition(":")
        return getattr(importlib.import_module(module), name)


_F = "cvfit.report.figures"
_SHIFT_CAPTION = (
    "E½(c) − E½(s) against log10[L] with the fitted line (stepwise: curve), its 95 % band, "
    "and the residuals (open markers: flagged, not fitted); the constants found stand under "
    "the title."
)

#: Every figure, by its registry key.
FIGURES: dict[str, FigureEntry] = {
    "voltammograms": FigureEntry(
        "voltammograms_figure",
        "voltammograms.png",
        "The analysed cycle of every voltammogram, coloured by total ligand concentration "
        "(dashed: no ligand; grey dotted: failed the reversibility screen, as the figure's "
        "legend says).",
        f"{_F}.titration:plot_voltammograms",
    ),
    "diagnostics": FigureEntry(
        "diagnostics_figure",
        "diagnostics.png",
        "Reversibility diagnostics of every voltammogram: n·ΔEp and ipa/ipc against the band "
        "the screen allows (filled: used — in the fit or, diamond, as the ligand-free "
        "reference; open: left out of the fit).",
        f"{_F}.diagnostics:plot_diagnostics",
    ),
    "curve_fits": FigureEntry(
        "curve_fits_figure",
        "curve_fits.png",
        "Curve fits: for each voltammogram whose E½ was sought from the whole curve, the data "
        "(broad light-grey line) under the fitted model (thin line; dashed: refused), the "
        "residuals in units of the noise σ (band ±2), and in the title the file, its [L] and "
        "the fit's E½, k0, α and χ²ν.",
        f"{_F}.curve_fits:plot_curve_fits",
    ),
    "lingane": FigureEntry(
        "lingane_figure",
        "half_wave_shift.png",
        _SHIFT_CAPTION,
        f"{_F}.titration:plot_lingane",
    ),
    "stepwise_shift": FigureEntry(
        "lingane_figure",
        "half_wave_shift.png",
        _SHIFT_CAPTION,
        f"{_F}.stepwise:plot_stepwise_shift",
    ),
    "stepwise_leden": FigureEntry(
        "leden_figure",
        "leden_functions.png",
        "Leden functions F0, F1, F2 of the measured shift with the fitted model.",
        f"{_F}.stepwise:plot_leden",
    ),
    "stepwise_species": FigureEntry(
        "species_figure",
        "species_distribution.png",
        "Species distribution of both oxidation states and the mean ligand number against "
        "the free ligand, from the fitted constants.",
        f"{_F}.stepwise:plot_species",
    ),
    "proton_half_wave": FigureEntry(
        "proton_figure",
        "half_wave_pH.png",
        "E½ against pH with the fitted curve (pH model), each pKa marked (oxidised form "
        "dashed, reduced form dotted), the slope of each region labelled, and the residuals.",
        f"{_F}.proton:plot_proton_half_wave",
    ),
    "proton_fractions": FigureEntry(
        "proton_fractions_figure",
        "protonation_fractions.png",
        "Fractions of each protonation state of the oxidised and the reduced form against "
        "pH, from the fitted pKa values.",
        f"{_F}.proton:plot_proton_fractions",
    ),
    "temperature_half_wave": FigureEntry(
        "temperature_figure",
        "half_wave_temperature.png",
        "E½ against temperature with the fitted line, its 95 % band and the residuals; "
        "dE½/dT and the reaction entropy stand under the title.",
        f"{_F}.temperature:plot_temperature_half_wave",
    ),
    "wave_log_plot": FigureEntry(
        "wave_log_figure",
        "wave_log_plot.png",
        "Log plot of every wave: E against log10((i_l − i)/i) with the baseline removed, "
        "coloured by total ligand concentration (grey: failed the wave screen), and each "
        "file's fitted line; a reversible wave gives a line of slope 2.303 RT/nF.",
        f"{_F}.wave:plot_wave_log",
    ),
    "internal_standard": FigureEntry(
        "internal_standard_figure",
        "internal_standard.png",
        "The internal standard's E½ on the electrode's scale along the series: the drift of "
        "the reference electrode, cancelled by quoting E½ against the standard.",
        f"{_F}.internal_standard:plot_internal_standard",
    ),
}


def figure_names() -> frozenset[str]:
    """Every file name a figure of cvfit may have."""
    return frozenset(e.file_name for e in FIGURES.values())


def figures_for(result: SeriesResult) -> list[FigureEntry]:
    """The figures of *result*, in the order they are drawn and shown."""
    return [FIGURES[k] for k in figure_keys_for(result)]


def figure_keys_for(result: SeriesResult) -> list[str]:
    """The registry keys of the figures of *result*, in the order they are drawn."""
    from cvfit.techniques import technique_of_name
    from cvfit.titration.registry import model_named

    technique = technique_of_name(result.series.technique)
    keys = []
    if any(f.measurement.technique == technique.name for f in result.files):
        keys += ["voltammograms", *technique.figures]  # not for a series of [[point]] only
    keys += list(model_named(result.series.model).figures)
    if any(f.internal_standard is not None for f in result.files):
        keys.append("internal_standard")
    return keys


def draw_figure(entry: FigureEntry, result: SeriesResult, out: Path) -> Path | None:
    """Draw *entry* of *result* into the folder *out*; None when it had nothing to draw."""
    return entry.drawer()(result, out / entry.file_name)
