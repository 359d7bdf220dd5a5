"""Titration models: the Lingane line, the DeFord–Hume stepwise constants, the pKa of a
proton-coupled couple and the temperature coefficient of E½.

- :mod:`.lingane` — E½ shift against log10[L]: β_ox/β_red and p − q
  (:mod:`.lingane_regression`, :mod:`.lingane_intervals`, :mod:`.lingane_flags`)
- :mod:`.stepwise` — β_1 … β_N by weighted non-linear least squares
  (:mod:`.stepwise_least_squares`, :mod:`.stepwise_model_choice`, :mod:`.stepwise_result`)
- :mod:`.proton_model` — E½ against pH: the pKa of both forms (:mod:`.proton_fit`,
  :mod:`.proton_result`)
- :mod:`.temperature_model` — E½ against T: dE½/dT, the reaction entropy and enthalpy
- :mod:`.van_t_hoff` — log10(β_ox/β_red) of several titrations against 1/T
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
