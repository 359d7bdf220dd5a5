"""The technique of a series: ``[series] technique``, the ``[technique]`` table and the
per-file ``rotation_rate_rpm``.

Everything the manifest knows about techniques is defined here, in one place: the names,
each technique's settings (required and optional, with their checks), and the loader of
the ``[technique]`` table that :mod:`cvfit.io.manifest` calls. Each check raises
:class:`~cvfit.errors.InputError` naming the key.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields
from typing import Any

from cvfit.errors import InputError

__all__ = [
    "TECHNIQUES",
    "TECHNIQUE_SETTINGS",
    "TECHNIQUE_KEYS",
    "SERIES_TECHNIQUE_KEYS",
    "ENTRY_TECHNIQUE_KEYS",
    "TechniqueSettings",
    "clean_series",
    "rotation_rate",
    "load_technique",
]

#: What ``[series] technique`` may name: cyclic, differential-pulse and square-wave
#: voltammetry, and steady-state or sampled-current waves.
TECHNIQUES = ("cv", "dpv", "swv", "wave")
#: Each technique's ``[technique]`` settings: name → required.
TECHNIQUE_SETTINGS: dict[str, dict[str, bool]] = {
    "cv": {},
    "dpv": {
        "pulse_amplitude_V": True,
        "pulse_width_s": True,
        "step_V": True,
        "period_s": False,
        "pulse_current_column": False,
        "base_current_column": False,
    },
    "swv": {
        "amplitude_V": True,
        "frequency_Hz": True,
        "step_V": True,
        "forward_current_column": False,
        "reverse_current_column": False,
    },
    "wave": {},
}
#: Every key the ``[technique]`` table may hold (of some technique).
TECHNIQUE_KEYS = tuple(dict.fromkeys(k for s in TECHNIQUE_SETTINGS.values() for k in s))
SERIES_TECHNIQUE_KEYS = ("technique",)
#: [[voltammogram]] keys of a technique: the rotation rate of a disc (waves).
ENTRY_TECHNIQUE_KEYS = ("rotation_rate_rpm",)
_COLUMNS = {k for k in TECHNIQUE_KEYS if k.endswith("_column")}
#: Largest pulse or square-wave amplitude and staircase step accepted, V.
MAX_AMPLITUDE_V = 1.0


def _number(value: object, key: str) -> float:
    if isinstance(value, bool) or not isinstance(value, int | float):
        raise InputError(f"{key} must be a number, got {value!r}", key=key)
    x = float(value)
    if not math.isfinite(x):
        raise InputError(f"{key} must be finite, got {value!r}", key=key)
    return x


def _positive(value: object, key: str, unit: str, high: float = math.inf) -> float:
    x = _number(value, key)
    if not 0 < x <= high:
        limit = "" if math.isinf(high) else f" and at most {high:g}"
        raise InputError(f"{key} must be positive{limit} ({unit}), got {x:g}", key=key)
    return x


@dataclass(frozen=True, kw_only=True)
class TechniqueSettings:
    """The technique of a series and its ``[technique]`` settings.

    Attributes
    ----------
    name : {"cv", "dpv", "swv", "wave"}
        ``[series] technique``.
    pulse_amplitude_V : float or None
        DPV: the pulse height ΔE, V, signed: the pulse goes in the scan's direction, so a
        scan towards negative potentials has a negative amplitude.
    pulse_width_s : float or None
        DPV: pulse duration, s.
    step_V : float or None
        DPV, SWV: the staircase step, V (its size; the direction is the record's).
    period_s : float or None
        DPV: time from one pulse to the next, s (when known; it sets the history the
        reversible reference takes into account).
    amplitude_V : float or None
        SWV: the square wave's amplitude (half its peak-to-peak height), V.
    frequency_Hz : float or None
        SWV: square-wave frequency, Hz.
    pulse_current_column, base_current_column : str or int or None
        DPV: the columns of the two sampled currents (at the end of the pulse and just
        before it), by name or 0-based index, when the file holds them.
    forward_current_column, reverse_current_column : str or int or None
        SWV: the columns of the forward and reverse currents.
    """

    name: str = "cv"
    pulse_amplitude_V: float | None = None
    pulse_width_s: float | None = None
    step_V: float | None = None
    period_s: float | None = None
    amplitude_V: float | None = None
    frequency_Hz: float | None = None
    pulse_current_column: str | int | None = None
    base_current_column: str | int | None = None
    forward_current_column: str | int | None = None
    reverse_current_column: str | int | None = None

    def __post_init__(self) -> None:
        if self.name not in TECHNIQUES:
            raise InputError(
                f"technique must be one of {', '.join(map(repr, TECHNIQUES))}, got {self.name!r}",
                key="technique",
            )
        own = TECHNIQUE_SETTINGS[self.name]
        for f in fields(self):
            value = getattr(self, f.name)
            if f.name == "name" or value is None:
                if f.name in own and own[f.name]:
                    raise InputError(
                        f"required for technique = {self.name!r}: give {f.name} in [technique]",
                        key=f.name,
                    )
                continue
            if f.name not in own:
                valid = ", ".join(own) or "none"
                raise InputError(
                    f"{f.name} is not a setting of technique = {self.name!r} (its settings: "
                    f"{valid}); remove it",
                    key=f.name,
                )
            object.__setattr__(self, f.name, self._clean(f.name, value))

    @staticmethod
    def _clean(key: str, value: object) -> object:
        if key in _COLUMNS:
            ok = isinstance(value, str) and value.strip() != ""
            ok = ok or (isinstance(value, int) and not isinstance(value, bool) and value >= 0)
            if not ok:
                raise InputError(
                    f"{key} must be a column name or a 0-based index, got {value!r}", key=key
                )
            return value
        if key == "pulse_amplitude_V":
            x = _number(value, key)
            if not 0 < abs(x) <= MAX_AMPLITUDE_V:
                raise InputError(
                    f"{key} must be non-zero and within ±{MAX_AMPLITUDE_V:g} V (signed: in the "
                    f"scan's direction), got {x:g}",
                    key=key,
                )
            return x
        if key in ("amplitude_V", "step_V"):
            return _positive(value, key, "V", MAX_AMPLITUDE_V)
        return _positive(value, key, "Hz" if key == "frequency_Hz" else "s")

    def get(self, key: str) -> Any:
        """A setting by name (None when not given)."""
        return getattr(self, key)


def clean_series(s: object) -> None:
    """Check ``[series] technique`` of a SeriesSettings record in place."""
    if s.technique not in TECHNIQUES:  # type: ignore[attr-defined]
        raise InputError(
            f"technique must be one of {', '.join(map(repr, TECHNIQUES))}, got {s.technique!r}",  # type: ignore[attr-defined]
            key="technique",
        )


def rotation_rate(value: object) -> float | None:
    """``rotation_rate_rpm`` of one file: a positive number (revolutions per minute) or None."""
    if value is None:
        return None
    return _positive(value, "rotation_rate_rpm", "revolutions per minute")


def load_technique(ld: Any, data: dict, technique: str, fit_global: bool) -> TechniqueSettings:
    """The ``[technique]`` table for ``[series] technique`` = *technique*.

    *ld* is the manifest loader (its ``table``, ``fail``, ``build`` and ``where``). A
    ``[technique]`` table for cyclic voltammetry, or a global curve fit of another
    technique, is refused by name.
    """
    table = ld.table(data, "technique")
    if technique == "cv" and "technique" in data:
        raise ld.fail(
            'the [technique] table holds the settings of technique = "dpv", "swv" or "wave"; '
            "set technique in [series], or remove the table",
            "technique",
            ld.where.line("technique"),
        )
    if fit_global and technique != "cv":
        raise ld.fail(
            f"the global curve fit is for cyclic voltammetry, not technique = {technique!r}; "
            "remove global from [fit]",
            "fit.global",
            ld.where.line("fit", "global"),
        )
    for key in table:
        if key not in TECHNIQUE_KEYS:
            valid = ", ".join(TECHNIQUE_SETTINGS[technique]) or "none"
            raise ld.fail(
                f"unknown key {key!r} in [technique]; the settings of technique = "
                f"{technique!r}: {valid}",
                f"technique.{key}",
                ld.where.line("technique", key),
            )
    return ld.build(TechniqueSettings, {"name": technique, **table}, "technique")  # type: ignore[no-any-return]
