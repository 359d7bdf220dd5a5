"""Techniques: each turns one recorded file into a measurement of E½ with its own screen.

The seam is :mod:`cvfit.techniques.base`; :func:`technique_of` gives the technique a
manifest asks for. Cyclic voltammetry (:mod:`cvfit.techniques.cv`) is the first one.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest
    from cvfit.techniques.cv.technique import CyclicVoltammetry

__all__ = ["technique_of"]


def technique_of(manifest: Manifest) -> CyclicVoltammetry:
    """The technique that measures the files of *manifest* (``[series] technique``)."""
    from cvfit.techniques.cv.technique import CV

    return CV
