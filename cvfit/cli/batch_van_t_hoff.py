"""The van 't Hoff summary of a batch: several titrations that differ only in temperature.

When three or more series of a batch were fitted by the Lingane line under the same
conditions — the same ``[series]`` settings but title and temperature, the same model and
the same ligand concentrations — at three or more temperatures, log10(β_ox/β_red) against
1/T gives the differences of the complexation enthalpy and entropy of the two oxidation
states (:func:`cvfit.titration.van_t_hoff.fit_van_t_hoff`); the batch summary prints them.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import fields
from typing import Any

__all__ = ["conditions_key", "van_t_hoff_lines"]

#: [series] settings that may differ between the titrations of one van 't Hoff analysis.
_FREE = ("title", "temperature_C")


def conditions_key(result: Any) -> str:
    """What must be equal for two series to differ only in temperature, as text."""
    s = result.series.settings
    kept = {f.name: getattr(s, f.name) for f in fields(s) if f.name not in _FREE}
    ligands = sorted(round(f.ligand_M, 12) for f in result.files)
    return repr((sorted(kept.items()), result.series.model, ligands))


def van_t_hoff_lines(outcomes: Sequence[Any]) -> list[str]:
    """The summary lines (empty when no group of series qualifies)."""
    from cvfit.titration.van_t_hoff import MIN_TEMPERATURES, fit_van_t_hoff

    groups: dict[str, list[Any]] = {}
    for o in outcomes:
        if o.log10_ratio is not None and o.temperature_K is not None and o.conditions:
            groups.setdefault(o.conditions, []).append(o)
    lines: list[str] = []
    for group in groups.values():
        if len({o.temperature_K for o in group}) < MIN_TEMPERATURES:
            continue
        fit = fit_van_t_hoff(
            [o.temperature_K for o in group],
            [o.log10_ratio for o in group],
            [o.log10_ratio_stderr for o in group],
        )
        if fit is not None:
            lines += ["", *fit.lines()]
    return lines
