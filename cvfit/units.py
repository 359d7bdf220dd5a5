"""Physical constants, the thermal voltage and unit handling.

Constants come from :mod:`scipy.constants` (CODATA); none is typed in.
"""

from __future__ import annotations

import math
import re

from scipy import constants as _sc

from cvfit.errors import InputError

__all__ = [
    "FARADAY",
    "GAS_CONSTANT",
    "ZERO_CELSIUS_K",
    "STANDARD_TEMPERATURE_K",
    "thermal_voltage",
    "nernst_slope_V_per_decade",
    "celsius_to_kelvin",
    "POTENTIAL_UNITS",
    "CURRENT_UNITS",
    "potential_scale",
    "current_scale",
    "normalise_unit",
]

FARADAY: float = _sc.physical_constants["Faraday constant"][0]  # C/mol
GAS_CONSTANT: float = _sc.R  # J/(mol K)
ZERO_CELSIUS_K: float = _sc.zero_Celsius
STANDARD_TEMPERATURE_K: float = 298.15


def celsius_to_kelvin(temperature_C: float) -> float:
    """Convert a temperature in °C to K."""
    return float(temperature_C) + ZERO_CELSIUS_K


def thermal_voltage(temperature_K: float = STANDARD_TEMPERATURE_K, electrons: int = 1) -> float:
    """RT/(nF) in volts.

    Parameters
    ----------
    temperature_K : float
        Absolute temperature, K (> 0).
    electrons : int
        Number of electrons n transferred (> 0).
    """
    if not temperature_K > 0:
        raise ValueError(f"temperature must be positive, got {temperature_K} K")
    if not electrons > 0:
        raise ValueError(f"electrons must be positive, got {electrons}")
    return GAS_CONSTANT * temperature_K / (electrons * FARADAY)


def nernst_slope_V_per_decade(
    temperature_K: float = STANDARD_TEMPERATURE_K, electrons: int = 1
) -> float:
    """ln(10)·RT/(nF) in V per decade (59.16 mV at 25 °C for n = 1)."""
    return math.log(10.0) * thermal_voltage(temperature_K, electrons)


# Scale factors to SI. Keys are normalised spellings (see normalise_unit).
POTENTIAL_UNITS: dict[str, float] = {"v": 1.0, "mv": 1e-3, "uv": 1e-6, "kv": 1e3}
CURRENT_UNITS: dict[str, float] = {
    "a": 1.0,
    "ma": 1e-3,
    "ua": 1e-6,
    "na": 1e-9,
    "pa": 1e-12,
}

_MICRO = re.compile("[\u00b5\u03bc]")  # micro sign and Greek mu


def normalise_unit(text: str) -> str:
    """Lower-case a unit spelling and map µ/μ to ``u`` (``"µA"`` → ``"ua"``)."""
    t = _MICRO.sub("u", str(text).strip())
    t = t.replace("micro", "u").replace("milli", "m").replace("nano", "n")
    t = t.replace("amps", "a").replace("amp", "a").replace("volts", "v").replace("volt", "v")
    return t.lower().replace(" ", "")


def _scale(table: dict[str, float], unit: str, what: str, source: str | None) -> float:
    key = normalise_unit(unit)
    if key not in table:
        allowed = ", ".join(sorted(table))
        raise InputError(
            f"unknown {what} unit {unit!r}; use one of {allowed}", source=source, key=what
        )
    return table[key]


def potential_scale(unit: str, *, source: str | None = None) -> float:
    """Factor that converts a potential in *unit* to volts."""
    return _scale(POTENTIAL_UNITS, unit, "potential", source)


def current_scale(unit: str, *, source: str | None = None) -> float:
    """Factor that converts a current in *unit* to amperes."""
    return _scale(CURRENT_UNITS, unit, "current", source)
