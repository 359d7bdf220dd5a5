"""Series beyond a ligand titration: pH, temperature and E½ tables.

The keys (``[fit] model = "proton" | "temperature"``, ``max_protons``, ``[series]
reference_at``, ``[[voltammogram]] temperature_C`` and the ``[[point]]`` table: an E½
measured elsewhere) are declared in :mod:`cvfit.io.manifest_keys`; here are the
``[[point]]`` record and loader and the checks across keys that a pH or temperature series
needs. Used by :mod:`cvfit.io.manifest`; each check raises
:class:`~cvfit.errors.InputError` naming the key.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from cvfit.io.manifest_keys import MAX_PROTONS_LIMIT, MODELS, POINT, REFERENCE_AT
from cvfit.io.manifest_spec import clean_record
from cvfit.units import celsius_to_kelvin

__all__ = [
    "MODELS",
    "VARIABLE_OF_MODEL",
    "REFERENCE_AT",
    "POINT_KEYS",
    "MAX_PROTONS_LIMIT",
    "PointEntry",
    "load_points",
    "check_variable_series",
    "schema_conditions",
]

#: The manifest key that holds each model's titration variable.
VARIABLE_OF_MODEL = {
    "lingane": "ligand_M",
    "stepwise": "ligand_M",
    "proton": "pH",
    "temperature": "temperature_C",
}
POINT_KEYS = POINT.names


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
        clean_record(self, POINT)

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
        ld.keys_of(table, POINT, index)
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


def schema_conditions() -> list[dict[str, Any]]:
    """JSON Schema conditions of the manifest made from :data:`VARIABLE_OF_MODEL`: each
    solution gives the model's variable (files: the ligand models only, a file's pH or
    temperature may come from the series); points refuse the global curve fit."""

    def model_is(names: list[str]) -> dict[str, Any]:
        model = {"const": names[0]} if len(names) == 1 else {"enum": names}
        fit = {"required": ["model"], "properties": {"model": model}}
        return {"required": ["fit"], "properties": {"fit": fit}}

    def items_need(key: str, tables: tuple[str, ...]) -> dict[str, Any]:
        return {"properties": {t: {"items": {"required": [key]}} for t in tables}}

    others = [m for m, v in VARIABLE_OF_MODEL.items() if v != "ligand_M"]
    ligand = items_need("ligand_M", ("point",))
    # a file gives its ligand directly or as a volume of stock added ([titration])
    either = [{"required": ["ligand_M"]}, {"required": ["added_mL"]}]
    ligand["properties"]["voltammogram"] = {"items": {"anyOf": either}}
    out: list[dict[str, Any]] = [{"if": model_is(others), "else": ligand}]
    out += [{"if": model_is([m]), "then": items_need(VARIABLE_OF_MODEL[m], ("point",))}
            for m in others]  # fmt: skip
    no_global = {"properties": {"fit": {"properties": {"global": {"const": False}}}}}
    out.append({"if": {"required": ["point"]}, "then": no_global})
    out += _titration_conditions()
    return out


def _titration_conditions() -> list[dict[str, Any]]:
    """A file gives ligand_M or added_mL, not both; added_mL needs [titration]; the series'
    metal_total_M and bound_ligand_number do not go with it (cvfit.io.manifest_titration)."""
    both = {"items": {"not": {"required": ["ligand_M", "added_mL"]}}}
    added = {"contains": {"required": ["added_mL"]}}
    series_metal = {"anyOf": [{"required": ["metal_total_M"]},
                              {"required": ["bound_ligand_number"]}]}  # fmt: skip
    return [
        {"properties": {"voltammogram": both}},
        {
            "if": {"required": ["voltammogram"], "properties": {"voltammogram": added}},
            "then": {"required": ["titration"]},
        },
        {
            "if": {"required": ["titration"]},
            "then": {"properties": {"series": {"not": series_metal}}},
        },
    ]
