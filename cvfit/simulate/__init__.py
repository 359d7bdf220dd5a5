"""Digital simulation of cyclic voltammograms and of whole titration series.

Beside the analysis chain: it produces :class:`cvfit.Voltammogram` records for the tests,
the demo and the command ``cvfit simulate``.

- :mod:`.voltammogram` — waveform and :func:`simulate_cv`
- :mod:`.finite_difference` — the time-marching solver (compiled by numba, cached on disk)
- :mod:`.titration_series` — a series of CSV files and its manifest on disk
- :mod:`.internal_standard` — two waves in one file, a series with a drifting reference
"""

from cvfit.simulate.internal_standard import simulate_internal_standard_series, simulate_two_waves
from cvfit.simulate.titration_series import simulate_series, write_voltammogram_csv
from cvfit.simulate.voltammogram import Waveform, build_waveform, simulate_cv

__all__ = [
    "Waveform",
    "build_waveform",
    "simulate_cv",
    "simulate_internal_standard_series",
    "simulate_series",
    "simulate_two_waves",
    "write_voltammogram_csv",
]
