"""cvfit: stability constants from cyclic-voltammetry titrations."""

from __future__ import annotations

from importlib.metadata import PackageNotFoundError, version

from .errors import CvfitError, FitError, InputError, SimulationError
from .quantity import Quantity
from .voltammogram import Cycle, Sweep, Voltammogram

try:
    __version__ = version("cvfit")
except PackageNotFoundError:  # running from a source tree that is not installed
    __version__ = "0.0.0+unknown"

__all__ = [
    "__version__",
    "CvfitError",
    "InputError",
    "FitError",
    "SimulationError",
    "Quantity",
    "Voltammogram",
    "Sweep",
    "Cycle",
]
