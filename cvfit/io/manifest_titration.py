"""A titration by additions: ``[titration]`` and each file's ``added_mL`` or ``metal_M``.

The chemist states the cell's starting solution and the stock once, and for each
voltammogram the cumulative volume of stock added before it; each solution's total ligand
and metal come from :func:`cvfit.chemistry.dilution.diluted`. A file's own ``metal_M``
overrides the computed metal (and ``[series] metal_total_M``). Which concentration wins
where the metal enters:

- the mass balance of the ligand models: the file's metal (own ``metal_M``, else the
  computed one, else ``[series] metal_total_M``);
- current normalisation and curve fits (``analyte_M``): the file's metal when it has one
  (the metal couple is the analyte of a titration), else ``[series] analyte_M``.

Used by :mod:`cvfit.io.manifest` (its loader and records are typed ``Any`` here: this
module sits below it); each check raises the loader's one-line error naming the key.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import Any

from cvfit.chemistry.dilution import diluted
from cvfit.io.manifest_keys import TITRATION
from cvfit.io.manifest_spec import clean_record

__all__ = [
    "TitrationSettings",
    "load_titration",
    "check_entry",
    "apply_additions",
    "file_metal_M",
    "file_analyte_M",
    "check_metal_given",
    "for_file",
]


@dataclass(frozen=True, kw_only=True)
class TitrationSettings:
    """The ``[titration]`` table: the cell before any addition and the stock.

    Attributes
    ----------
    start_volume_mL : float
        V0, mL (> 0).
    metal_M : float
        The cell's initial total metal concentration, mol/L (> 0).
    ligand_M : float
        The cell's initial total ligand concentration, mol/L (default 0).
    ligand_stock_M : float
        Ligand concentration of the stock, mol/L (> 0).
    metal_stock_M : float
        Metal concentration of the stock, mol/L (default 0: the metal is diluted).
    """

    start_volume_mL: float
    metal_M: float
    ligand_M: float = 0.0
    ligand_stock_M: float
    metal_stock_M: float = 0.0

    def __post_init__(self) -> None:
        clean_record(self, TITRATION)


def load_titration(ld: Any, data: dict[str, Any]) -> TitrationSettings | None:
    """The ``[titration]`` table, checked against ``[series]`` (None when absent)."""
    if "titration" not in data:
        return None
    table = ld.section(data, TITRATION)
    settings = ld.build(TitrationSettings, table, "titration")
    series = ld.table(data, "series")
    for key, why in (
        ("metal_total_M", "the metal of every solution comes from [titration] (metal_M "
         "and the dilution); remove one of the two"),
        ("bound_ligand_number", "with additions the mass balance is solved for every "
         "solution's own metal; leave bound_ligand_number out"),
    ):  # fmt: skip
        if key in series:
            raise ld.fail(
                f"cannot be given with [titration]: {why}",
                f"series.{key}",
                ld.where.line("series", key),
            )
    return settings


def check_entry(
    ld: Any,
    raw: dict[str, Any],
    index: int,
    titration: TitrationSettings | None,
    *,
    needs_ligand: bool,
) -> None:
    """One ``[[voltammogram]]`` table's ligand keys: ``ligand_M`` or ``added_mL``, not
    both; ``added_mL`` only with ``[titration]``; one of them when the model *needs_ligand*."""

    def fail(key: str, message: str) -> Exception:
        keypath = f"voltammogram[{index}].{key}"
        return ld.fail(message, keypath, ld.where.line("voltammogram", key, index))

    if "added_mL" in raw and "ligand_M" in raw:
        raise fail(
            "added_mL",
            "give ligand_M or added_mL, not both: with added_mL the total ligand is "
            "computed from [titration]",
        )
    if "added_mL" in raw and titration is None:
        raise fail(
            "added_mL",
            "needs a [titration] table (start_volume_mL, metal_M, ligand_stock_M) to turn "
            "the volume into concentrations; add it, or give ligand_M instead",
        )
    if needs_ligand and "added_mL" not in raw and "ligand_M" not in raw:
        if titration is not None:
            raise fail(
                "added_mL",
                "required key is missing: give the cumulative volume of stock added "
                "(added_mL), or the total ligand_M",
            )
        ld.require(raw, "ligand_M", "voltammogram", index)


def apply_additions(entries: Sequence[Any], titration: TitrationSettings | None) -> list[Any]:
    """*entries* with each solution's total ligand, metal and volume from the additions.

    A file with ``added_mL`` gets the diluted concentrations and V0 + added; a file giving
    ``ligand_M`` under ``[titration]`` keeps it and gets the cell's initial metal (its
    volume is unknown). A file's own ``metal_M`` is kept in both cases.
    """
    if titration is None:
        return list(entries)
    out = []
    for e in entries:
        if e.added_mL is None:
            out.append(e if e.metal_M is not None else replace(e, metal_M=titration.metal_M))
            continue
        d = diluted(
            start_volume_mL=titration.start_volume_mL,
            added_mL=e.added_mL,
            metal_M=titration.metal_M,
            ligand_M=titration.ligand_M,
            ligand_stock_M=titration.ligand_stock_M,
            metal_stock_M=titration.metal_stock_M,
        )
        metal = e.metal_M if e.metal_M is not None else d.metal_M
        out.append(replace(e, ligand_M=d.ligand_M, metal_M=metal, volume_mL=d.volume_mL))
    return out


def file_metal_M(entry: object, series: object) -> float | None:
    """Total metal of one solution: the file's own (given or computed), else
    ``[series] metal_total_M``, else None."""
    own = getattr(entry, "metal_M", None)
    return own if own is not None else getattr(series, "metal_total_M", None)


def file_analyte_M(entry: object, series: object) -> float | None:
    """Concentration of the electroactive species in one solution: the file's metal when
    it has one (additions or ``metal_M``), else ``[series] analyte_M``."""
    own = getattr(entry, "metal_M", None)
    return own if own is not None else getattr(series, "analyte_M", None)


def check_metal_given(ld: Any, entries: Sequence[Any], series_metal_M: float | None) -> None:
    """A file's own ``metal_M`` without ``[titration]`` or ``[series] metal_total_M``
    leaves the others' metal unknown: then every file gives it."""
    if series_metal_M is not None or all(e.metal_M is None for e in entries):
        return
    for index, e in enumerate(entries, start=1):
        if e.metal_M is None:
            raise ld.fail(
                "required key is missing: another file gives its metal_M, so the mass balance "
                "needs every file's; give metal_M here, or [series] metal_total_M for the "
                "files without one",
                f"voltammogram[{index}].metal_M",
                ld.where.line("voltammogram", None, index),
            )


def for_file(entry: object, manifest: Any) -> Any:
    """*manifest* as one file's analysis sees it: ``[series] analyte_M`` is that solution's
    own (:func:`file_analyte_M`), so current normalisation and curve fits use it; the
    manifest itself when nothing changes."""
    analyte = file_analyte_M(entry, manifest.series)
    if analyte == manifest.series.analyte_M:
        return manifest
    return replace(manifest, series=replace(manifest.series, analyte_M=analyte))
