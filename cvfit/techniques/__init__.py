"""Techniques: each turns one recorded file into a measurement of E½ with its own screen.

The seam is :mod:`cvfit.techniques.base`; :func:`technique_of` gives the technique a
manifest asks for. Cyclic voltammetry (:mod:`cvfit.techniques.cv`) is the first one.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest
    from cvfit.techniques.cv.technique import CyclicVoltammetry

__all__ = ["technique_of", "technique_of_name", "TECHNIQUE_NAMES"]

#: The techniques ``[series] technique`` may name.
TECHNIQUE_NAMES = ("cv",)


def technique_of_name(name: str) -> CyclicVoltammetry:
    """The technique called *name*."""
    if name == "cv":
        from cvfit.techniques.cv.technique import CV

        return CV
    raise ValueError(f"unknown technique {name!r}; one of {', '.join(TECHNIQUE_NAMES)}")


def technique_of(manifest: Manifest) -> CyclicVoltammetry:
    """The technique that measures the files of *manifest* (``[series] technique``)."""
    return technique_of_name(getattr(manifest.series, "technique", "cv"))
