"""Titration models: the Lingane line and the DeFord–Hume stepwise constants.

- :mod:`.lingane` — E½ shift against log10[L]: β_ox/β_red and p − q
  (:mod:`.lingane_regression`, :mod:`.lingane_intervals`, :mod:`.lingane_flags`)
- :mod:`.stepwise` — β_1 … β_N by weighted non-linear least squares
  (:mod:`.stepwise_least_squares`, :mod:`.stepwise_model_choice`, :mod:`.stepwise_result`)
"""

from cvfit.titration.lingane import LinganeFit, TitrationPoint, fit_lingane
from cvfit.titration.stepwise import SolutionConditions, StepwiseFit, StepwisePoint, fit_stepwise

__all__ = [
    "LinganeFit",
    "SolutionConditions",
    "StepwiseFit",
    "StepwisePoint",
    "TitrationPoint",
    "fit_lingane",
    "fit_stepwise",
]
