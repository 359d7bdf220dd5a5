"""Peak analysis of one voltammogram: baselines, peak location, E½ and its uncertainty.

- :mod:`.analysis` — :func:`analyse_peaks` and its record :class:`PeakAnalysis`
- :mod:`.location` — one peak (or the reason there is none) on a baseline-corrected sweep
- :mod:`.baseline` — noise, baselines, the switch step, decay tails, crossings
- :mod:`.least_squares` — the small least-squares solves behind them
"""

from cvfit.techniques.cv.peaks.analysis import PeakAnalysis, analyse_peaks

__all__ = ["PeakAnalysis", "analyse_peaks"]
