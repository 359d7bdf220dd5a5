"""The ``[[point]]`` entries of a manifest as entries of the series: E½ given, no file.

Each point becomes a :class:`~cvfit.pipeline.results.FileResult` whose measurement is a
:class:`~cvfit.techniques.table.TableMeasurement`; its E½ passes the one E½ decision
(:func:`cvfit.pipeline.half_wave.decide_half_wave`) like a file's, on the scale it is
given (with an internal standard: give it against the standard), so the titration models,
the error budget and the reports take it unchanged.
"""

from __future__ import annotations

from cvfit.io.manifest import Manifest
from cvfit.techniques.table import TableMeasurement

from .half_wave import decide_half_wave
from .results import FileResult

__all__ = ["table_points"]


def table_points(manifest: Manifest) -> list[FileResult]:
    """One result per ``[[point]]`` of *manifest*, in manifest order."""
    out = []
    for p in manifest.points:
        m = TableMeasurement(p.E_half_V, p.E_half_stderr_V)
        decision = decide_half_wave(m, internal_standard=None, exclude_non_nernstian=True)
        out.append(
            FileResult(
                file=p.name,
                ligand_M=p.ligand_M,
                free_ligand_M=p.ligand_M,
                scan_rate_V_s=None,
                measurement=m,
                half_wave=decision,
                label=p.label,
                pH=p.pH,
                temperature_K=p.temperature_K,
            )
        )
    return out
