"""The one registry of titration models: ``[fit] model`` → the model object."""

from __future__ import annotations

from cvfit.titration.base import TitrationModel

__all__ = ["model_named", "MODEL_NAMES"]

#: The models ``[fit] model`` may name.
MODEL_NAMES = ("lingane", "stepwise", "proton", "temperature")


def model_named(name: str) -> TitrationModel:
    """The titration model called *name* (imported on first use: a Lingane run does not
    load the stepwise model's libraries)."""
    if name == "lingane":
        from cvfit.titration.lingane_model import LINGANE

        return LINGANE
    if name == "stepwise":
        from cvfit.titration.stepwise_model import STEPWISE

        return STEPWISE
    if name == "proton":
        from cvfit.titration.proton_model import PROTON

        return PROTON
    if name == "temperature":
        from cvfit.titration.temperature_model import TEMPERATURE

        return TEMPERATURE
    raise ValueError(f"unknown titration model {name!r}; one of {', '.join(MODEL_NAMES)}")
