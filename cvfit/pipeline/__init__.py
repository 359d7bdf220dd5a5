"""Manifest → results: the composition of the layers, and the result records.

- :mod:`.series` — :func:`analyse_series`, :func:`analyse_manifest_file`
- :mod:`.per_file` — import, peaks, screen and E½ of each file
- :mod:`.series_screen` — scan-rate studies, class and k0 across the series
- :mod:`.stepwise_stage` — the stepwise model's free-ligand iteration
- :mod:`.results` — :class:`FileResult`, :class:`SeriesResult` and their JSON form
- :mod:`.curves` — the analysed cycle thinned for figures
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
