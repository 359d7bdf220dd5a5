"""Manifests in memory for the pulse and wave techniques' tests."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from cvfit.io import FitSettings, ImportOptions, Manifest, SeriesSettings, VoltammogramEntry
from cvfit.io.manifest_technique import TechniqueSettings
from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.techniques import technique_of_name
from cvfit.techniques.base import FileSettings
from cvfit.voltammogram import Voltammogram


def manifest_for(technique: str, *, series: dict | None = None, **settings) -> Manifest:
    """A one-file manifest of *technique* with ``[technique]`` *settings*."""
    entry = VoltammogramEntry(file=Path("/nonexistent/a.csv"), name="a.csv", ligand_M=0.0)
    return Manifest(
        path=Path("/nonexistent/series.toml"),
        folder=Path("/nonexistent"),
        series=SeriesSettings(electrons=1, technique=technique, **(series or {})),
        import_options=ImportOptions(),
        fit=FitSettings(),
        reversibility=ReversibilityCriteria(),
        voltammograms=(entry,),
        technique=TechniqueSettings(name=technique, **settings),
    )


def measure(technique: str, E, i, *, time=None, series=None, **settings):
    """The technique's measurement of the record (E, i)."""
    m = manifest_for(technique, series=series, **settings)
    t = np.arange(len(E)) * 0.5 if time is None else time
    record = Voltammogram(potential_V=E, current_A=i, time_s=t)
    return technique_of_name(technique).analyse(record, FileSettings(m.voltammograms[0], m))
