"""Reading instrument exports and series manifests.

``read_voltammogram`` turns a delimited text export into a :class:`cvfit.Voltammogram`
(V, A, s, anodic current positive); ``load_manifest`` reads the TOML manifest of a series.
"""

from __future__ import annotations

from cvfit.io.manifest import (
    FitSettings,
    Manifest,
    SeriesSettings,
    VoltammogramEntry,
    load_manifest,
    resistance_for,
)
from cvfit.io.manifest_standard import InternalStandard
from cvfit.io.options import ImportOptions
from cvfit.io.reader import parse_voltammogram_bytes, parse_voltammogram_text, read_voltammogram

__all__ = [
    "ImportOptions",
    "read_voltammogram",
    "parse_voltammogram_text",
    "parse_voltammogram_bytes",
    "load_manifest",
    "Manifest",
    "SeriesSettings",
    "FitSettings",
    "InternalStandard",
    "VoltammogramEntry",
    "resistance_for",
]
