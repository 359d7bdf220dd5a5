"""The technique of a series: the ``[technique]`` table and what ties it to ``[series]
technique``.

The keys (names, types, ranges) and which of them each technique takes and needs
(:data:`TECHNIQUE_SETTINGS`) are declared in :mod:`cvfit.io.manifest_keys`; here are the
record, the loader of the table that :mod:`cvfit.io.manifest` calls, and the schema's
conditions made from the same settings. Each check raises
:class:`~cvfit.errors.InputError` naming the key.
"""

from __future__ import annotations

from dataclasses import dataclass, fields
from typing import Any

from cvfit.errors import InputError
from cvfit.io.manifest_keys import MAX_AMPLITUDE_V, TECHNIQUE, TECHNIQUE_SETTINGS, TECHNIQUES
from cvfit.io.manifest_spec import clean_values

__all__ = [
    "TECHNIQUES",
    "TECHNIQUE_SETTINGS",
    "TECHNIQUE_KEYS",
    "MAX_AMPLITUDE_V",
    "TechniqueSettings",
    "load_technique",
    "schema_conditions",
]

#: Every key the ``[technique]`` table may hold (of some technique).
TECHNIQUE_KEYS = TECHNIQUE.names


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
        given = {f.name: getattr(self, f.name) for f in fields(self) if f.name != "name"}
        for key, value in given.items():
            if value is None and own.get(key):
                raise InputError(
                    f"required for technique = {self.name!r}: give {key} in [technique]",
                    key=key,
                )
            if value is not None and key not in own:
                valid = ", ".join(own) or "none"
                raise InputError(
                    f"{key} is not a setting of technique = {self.name!r} (its settings: "
                    f"{valid}); remove it",
                    key=key,
                )
        cleaned = clean_values({k: v for k, v in given.items() if v is not None}, TECHNIQUE)
        for key, value in cleaned.items():
            object.__setattr__(self, key, value)

    def get(self, key: str) -> Any:
        """A setting by name (None when not given)."""
        return getattr(self, key)


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


def schema_conditions() -> list[dict[str, Any]]:
    """JSON Schema conditions of the manifest that tie ``[technique]`` to ``[series]
    technique``, made from :data:`TECHNIQUE_SETTINGS`: the keys each technique takes and
    needs; no ``[technique]`` table for cv; no global curve fit but for cv."""
    out: list[dict[str, Any]] = [
        {
            "if": {"properties": {"series": {"not": {"required": ["technique"]}}}},
            "then": {"not": {"required": ["technique"]}},
        }
    ]
    no_global = {"not": {"properties": {"global": {"const": True}}, "required": ["global"]}}
    for name, own in TECHNIQUE_SETTINGS.items():
        chosen = {"properties": {"technique": {"const": name}}, "required": ["technique"]}
        when = {"properties": {"series": chosen}, "required": ["series"]}
        if name == "cv":
            out.append({"if": when, "then": {"not": {"required": ["technique"]}}})
            continue
        others = [{"required": [k]} for k in TECHNIQUE_KEYS if k not in own]
        table: dict[str, Any] = {"not": {"anyOf": others}}
        needed = [k for k, required in own.items() if required]
        if needed:
            table["required"] = needed
        then: dict[str, Any] = {"properties": {"fit": no_global, "technique": table}}
        if needed:
            then["required"] = ["technique"]
        out.append({"if": when, "then": then})
    return out
