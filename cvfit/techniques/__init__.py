"""Techniques: each turns one recorded file into a measurement of E½ with its own screen.

The seam is :mod:`cvfit.techniques.base`; :func:`technique_of` gives the technique a
manifest asks for: cyclic voltammetry (:mod:`cvfit.techniques.cv`), differential-pulse
(:mod:`cvfit.techniques.dpv`) and square-wave voltammetry (:mod:`cvfit.techniques.swv`),
and steady-state or sampled-current waves (:mod:`cvfit.techniques.wave`).
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest

__all__ = ["technique_of", "technique_of_name", "TECHNIQUE_NAMES"]

#: The techniques ``[series] technique`` may name, and the object of each
#: (``"module:name"``, imported when asked for).
_OBJECTS = {
    "cv": "cvfit.techniques.cv.technique:CV",
    "dpv": "cvfit.techniques.dpv.technique:DPV",
    "swv": "cvfit.techniques.swv.technique:SWV",
    "wave": "cvfit.techniques.wave.technique:WAVE",
}
TECHNIQUE_NAMES = tuple(_OBJECTS)


def technique_of_name(name: str) -> Any:
    """The technique called *name* (a :class:`cvfit.techniques.base.Technique`)."""
    if name not in _OBJECTS:
        raise ValueError(f"unknown technique {name!r}; one of {', '.join(TECHNIQUE_NAMES)}")
    module, _, obj = _OBJECTS[name].partition(":")
    return getattr(importlib.import_module(module), obj)


def technique_of(manifest: Manifest) -> Any:
    """The technique that measures the files of *manifest* (``[series] technique``)."""
    return technique_of_name(getattr(manifest.series, "technique", "cv"))
