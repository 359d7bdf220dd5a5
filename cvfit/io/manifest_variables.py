"""Manifest keys of series beyond a ligand titration: pH, temperature and E½ tables.

* ``[fit] model = "proton" | "temperature"`` and ``max_protons``;
* ``[[voltammogram]] temperature_C`` — the file's own temperature (it is analysed at it);
* ``[series] reference_at`` — where the reference electrode is held in a temperature series;
* ``[[point]]`` — an E½ measured elsewhere: ``ligand_M | pH | temperature_C``, ``E_half_V``,
  ``E_half_stderr_V`` (optional), ``label``.

Used by :mod:`cvfit.io.manifest`; each check raises :class:`~cvfit.errors.InputError`
naming the key.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from cvfit.errors import InputError
from cvfit.io.manifest_chemistry import optional_pH
from cvfit.units import celsius_to_kelvin

__all__ = [
    "MODELS",
    "VARIABLE_OF_MODEL",
    "REFERENCE_AT",
    "POINT_KEYS",
    "MAX_PROTONS_LIMIT",
    "PointEntry",
    "optional_temperature_C",
    "clean_max_protons",
    "check_reference_at",
    "load_points",
    "check_variable_series",
]

#: ``[fit] model`` values (the registry of cvfit.titration holds the same names, tested).
MODELS = ("lingane", "stepwise", "proton", "temperature")
#: The manifest key that holds each model's titration variable.
VARIABLE_OF_MODEL = {
    "lingane": "ligand_M",
    "stepwise": "ligand_M",
    "proton": "pH",
    "temperature": "temperature_C",
}
#: ``[series] reference_at`` (the temperature model's names, tested).
REFERENCE_AT = ("constant_temperature", "same_temperature")
POINT_KEYS = ("ligand_M", "pH", "temperature_C", "E_half_V", "E_half_stderr_V", "label")
MAX_PROTONS_LIMIT = 4


def _number(value: object, key: str) -> float:
    if (
        isinstance(value, bool)
        or not isinstance(value, int | float)
        or not math.isfinite(float(value))
    ):
        raise InputError(f"{key} must be a finite number, got {value!r}", key=key)
    return float(value)


def optional_temperature_C(value: object, key: str = "temperature_C") -> float | None:
    """A temperature within 0–100 °C, or None."""
    if value is None:
        return None
    t = _number(value, key)
    if not 0.0 <= t <= 100.0:
        raise InputError(f"{key} must lie within 0–100 °C, got {t:g}", key=key)
    return t


def clean_max_protons(value: object) -> int:
    """``[fit] max_protons``: a whole number 1–4."""
    if isinstance(value, float) and value.is_integer():
        value = int(value)
    if (
        isinstance(value, bool)
        or not isinstance(value, int)
        or not 1 <= value <= MAX_PROTONS_LIMIT
    ):
        raise InputError(
            f"max_protons must be a whole number 1–{MAX_PROTONS_LIMIT}, got {value!r}",
            key="max_protons",
        )
    return value


def check_reference_at(value: object) -> str | None:
    """``[series] reference_at``: one of :data:`REFERENCE_AT`, or None."""
    if value is None or value in REFERENCE_AT:
        return value  # type: ignore[return-value]
    raise InputError(
        f'reference_at must be "constant_temperature" (reference electrode held at one '
        f'temperature: a non-isothermal cell) or "same_temperature" (an isothermal cell), '
        f"got {value!r}",
        key="reference_at",
    )


@dataclass(frozen=True, kw_only=True)
class PointEntry:
    """One ``[[point]]`` table: an E½ given in the manifest instead of measured from a file.

    Attributes
    ----------
    name : str
        How results name it: ``"point K"``, K its place among the points.
    ligand_M : float
        Total ligand concentration, mol/L (>= 0; default 0).
    pH : float or None
        The solution's pH (0–14).
    temperature_C : float or None
        The solution's temperature, °C (0–100).
    E_half_V : float
        Half-wave potential, V (on the scale of the series' files; against the internal
        standard when the series has one).
    E_half_stderr_V : float or None
        Its standard error, V (> 0); None when not known (then taken from the scatter).
    label : str or None
    """

    name: str
    E_half_V: float
    ligand_M: float = 0.0
    pH: float | None = None
    temperature_C: float | None = None
    E_half_stderr_V: float | None = None
    label: str | None = None

    def __post_init__(self) -> None:
        put = object.__setattr__
        put(self, "E_half_V", _number(self.E_half_V, "E_half_V"))
        c = _number(self.ligand_M, "ligand_M")
        if c < 0:
            raise InputError(f"ligand_M must be >= 0 mol/L, got {c:g}", key="ligand_M")
        put(self, "ligand_M", c)
        put(self, "pH", optional_pH(self.pH))
        put(self, "temperature_C", optional_temperature_C(self.temperature_C))
        if self.E_half_stderr_V is not None:
            s = _number(self.E_half_stderr_V, "E_half_stderr_V")
            if s <= 0:
                raise InputError(
                    f"E_half_stderr_V must be > 0 V (leave it out when unknown), got {s:g}",
                    key="E_half_stderr_V",
                )
            put(self, "E_half_stderr_V", s)
        if self.label is not None and not isinstance(self.label, str):
            raise InputError(f"label must be a text string, got {self.label!r}", key="label")

    @property
    def temperature_K(self) -> float | None:
        return None if self.temperature_C is None else celsius_to_kelvin(self.temperature_C)


def load_points(ld: Any, data: dict[str, Any], model: str) -> tuple[PointEntry, ...]:
    """The ``[[point]]`` tables of a manifest (*ld* the manifest loader, for the messages).

    Each point must give the model's titration variable (``ligand_M`` for the ligand
    models, ``pH``, ``temperature_C``) and ``E_half_V``.
    """
    raw = data.get("point")
    if raw is None:
        return ()
    if not isinstance(raw, list) or not all(isinstance(e, dict) for e in raw):
        raise ld.fail(
            "write one [[point]] table (double brackets) per E½", "point", ld.where.line("point")
        )
    variable = VARIABLE_OF_MODEL.get(model, "ligand_M")
    points = []
    for index, table in enumerate(raw, start=1):
        ld.check_keys(table, POINT_KEYS, "point", index)
        ld.require(table, "E_half_V", "point", index)
        ld.require(table, variable, "point", index)
        points.append(ld.build(PointEntry, {"name": f"point {index}", **table}, "point", index))
    return tuple(points)


def check_variable_series(ld: Any, entries: tuple, points: tuple, model: str) -> None:
    """A pH or temperature series keeps its ligand concentration (and, against temperature,
    its pH) the same in every solution: only the model's variable may change."""
    if model not in ("proton", "temperature"):
        return
    fixed = ("ligand_M",) if model == "proton" else ("ligand_M", "pH")
    for key in fixed:
        values = {getattr(e, key) for e in (*entries, *points)}
        if len(values) > 1:
            shown = ", ".join(f"{v:g}" if v is not None else "none" for v in sorted(
                values, key=lambda v: (v is None, v or 0.0)))  # fmt: skip
            raise ld.fail(
                f"a {model} series changes only its {VARIABLE_OF_MODEL[model]}, but {key} "
                f"differs between its solutions ({shown}); give every solution the same {key}",
                f"voltammogram.{key}",
                ld.where.line("voltammogram", key, 1),
            )
