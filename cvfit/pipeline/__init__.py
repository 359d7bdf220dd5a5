"""Manifest → results: the composition of the layers, and the result records.

- :mod:`.series` — :func:`analyse_series`, :func:`analyse_manifest_file`
- :mod:`.per_file` — import, the technique's measurement and the E½ of each file
- :mod:`.half_wave` — the one decision of the E½ a file contributes
- :mod:`.global_stage` — the global curve fit (``[fit] global = true``)
- :mod:`.results` — :class:`FileResult`, :class:`SeriesResult` and their JSON form
- :mod:`.parallel` — process pools and the BLAS-thread limit
"""

from cvfit.pipeline.results import FileResult, ReferenceHalfWave, SeriesResult
from cvfit.pipeline.series import analyse_manifest_file, analyse_series

__all__ = [
    "FileResult",
    "ReferenceHalfWave",
    "SeriesResult",
    "analyse_manifest_file",
    "analyse_series",
]
