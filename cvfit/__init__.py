"""cvfit: stability constants from cyclic-voltammetry titrations.

The public API, imported lazily so that ``import cvfit`` stays cheap (it imports no numpy:
the command line sets up the numerical libraries first, see :mod:`cvfit.cli`)::

    from cvfit import load_manifest, analyse_series, read_voltammogram, simulate_cv
    from cvfit import load_results  # a results.json read back into records
"""

from __future__ import annotations

import importlib
from typing import Any

from cvfit.errors import CvfitError, FitError, InputError, SimulationError
from cvfit.flags import Flag
from cvfit.version import __version__

_LAZY = {
    "Quantity": "cvfit.quantity",
    "Voltammogram": "cvfit.voltammogram",
    "Sweep": "cvfit.voltammogram",
    "Cycle": "cvfit.voltammogram",
    "read_voltammogram": "cvfit.io",
    "parse_voltammogram_text": "cvfit.io",
    "load_manifest": "cvfit.io",
    "ImportOptions": "cvfit.io",
    "analyse_series": "cvfit.pipeline",
    "analyse_manifest_file": "cvfit.pipeline",
    "SeriesResult": "cvfit.pipeline",
    "FileResult": "cvfit.pipeline",
    "analyse_peaks": "cvfit.techniques.cv.peaks",
    "screen_reversibility": "cvfit.techniques.cv.screen",
    "fit_lingane": "cvfit.titration",
    "TitrationPoint": "cvfit.titration",
    "LinganeFit": "cvfit.titration",
    "fit_stepwise": "cvfit.titration",
    "StepwisePoint": "cvfit.titration",
    "StepwiseFit": "cvfit.titration",
    "SolutionConditions": "cvfit.titration",
    "simulate_cv": "cvfit.simulate",
    "simulate_series": "cvfit.simulate",
    "randles_sevcik_peak_current_A": "cvfit.chemistry",
    "complexed_half_wave_V": "cvfit.chemistry",
    "write_outputs": "cvfit.report",
    "load_results": "cvfit.report.load_results",
    "LoadedResults": "cvfit.report.load_results",
}

__all__ = [
    "__version__",
    "CvfitError",
    "InputError",
    "FitError",
    "SimulationError",
    "Flag",
    *_LAZY,
]


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'cvfit' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    if module.startswith(("cvfit.pipeline", "cvfit.report")):
        # a series result from the public API shows itself in a notebook (the view lives
        # with the outputs, above the pipeline, and hands itself over when imported)
        importlib.import_module("cvfit.report.notebook")
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(__all__)
