"""Peak analysis of one voltammogram: baselines, peak location, E½ and its uncertainty.

- :mod:`.analysis` — :func:`analyse_peaks` and its record :class:`PeakAnalysis`
- :mod:`.location` — one peak (or the reason there is none) on a baseline-corrected sweep
- :mod:`.baseline` — noise, baselines, the switch step, decay tails, crossings
- :mod:`.neighbours` — currents of the sweep before and of another wave, under this one
- :mod:`.flags` — the analysis's flag texts
"""

from cvfit.techniques.cv.peaks.analysis import PeakAnalysis, analyse_peaks

__all__ = ["PeakAnalysis", "analyse_peaks"]
