"""Report sections that stand on their own: the error budget and the internal standard.

``budget_view`` and ``standard_view`` take the results.json mapping (``SeriesResult.to_dict``)
and return the section's text for its template (None when the series has nothing to show in
it); ``error_budget_section`` and ``internal_standard_section`` render one on its own.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

from cvfit.formatting import format_pm
from cvfit.report.html_view import figure_view
from cvfit.report.templating import render_template

__all__ = [
    "BUDGET_ROWS",
    "STANDARD_FIGURE",
    "budget_view",
    "error_budget_section",
    "internal_standard_section",
    "standard_view",
]

#: File name of the internal-standard figure, shown in its own section.
STANDARD_FIGURE = "internal_standard.png"

#: Lingane constants shown in the error-budget table: key -> label (a stepwise fit shows
#: its log10_beta_j).
BUDGET_ROWS = {
    "log10_beta_ratio": "log10(βox/βred)",
    "delta_ligands": "p − q",
    "log10_beta_ratio_at_integer": "log10(βox/βred), p − q whole",
}


def _cell(x: object, digits: int) -> dict[str, str]:
    if not isinstance(x, int | float) or not math.isfinite(x):
        return {"text": "n/d", "value": ""}
    return {"text": f"{x:.{digits}f}", "value": repr(x)}


def _digits(total: float | None) -> int:
    if total is None or not (math.isfinite(total) and total > 0):
        return 3
    return max(0, 1 - int(math.floor(math.log10(total))))


def _stepwise_keys(budget: Mapping[str, Any]) -> list[str]:
    """The budget's log10_beta_j keys in order of j."""
    return sorted(
        (k for k in budget if k.removeprefix("log10_beta_").isdigit()),
        key=lambda k: int(k.rsplit("_")[-1]),
    )


def budget_view(data: Mapping[str, Any]) -> dict[str, Any] | None:
    """The error budget's rows and its note, as text (None without a budget)."""
    fit = data.get("fit") or {}
    budget = fit.get("error_budget")
    if not budget:
        return None
    rows = []
    keys = [k for k in BUDGET_ROWS if k in budget] + _stepwise_keys(budget)
    for key in keys:
        b = budget[key]
        d = _digits(b.get("total"))
        rows.append(
            {
                "key": key,
                "label": BUDGET_ROWS.get(key) or f"log10 β{key.rsplit('_')[-1]}",
                "cells": [
                    _cell(b.get(part), d)
                    for part in ("within_file", "between_solutions", "reference", "total")
                ],
            }
        )
    notes = []
    chi = fit.get("reduced_chi_square")
    extra = fit.get("extra_scatter_V")
    if chi is not None:
        notes.append(f"reduced χ² of the line with the per-file errors {chi:.2f}")
    if extra is not None:
        notes.append(f"scatter between solutions beyond the file noise s = {1e3 * extra:.2f} mV")
    ref = data.get("reference") or {}
    values = [v for v in ref.get("file_E_half_V") or [] if v is not None]
    if len(values) > 1 and ref.get("spread_V") is not None:
        notes.append(
            f"E½(s) from {len(values)} ligand-free files, spread (SD) "
            f"{1e3 * ref['spread_V']:.2f} mV, range {1e3 * (max(values) - min(values)):.2f} mV"
        )
    second = _second_reference_note(budget, len(values))
    if second:
        notes.append(second)
    return {"rows": rows, "note": "; ".join(notes)}


def error_budget_section(data: Mapping[str, Any]) -> str:
    """The error budget of the fitted constants as a small table (empty without one)."""
    view = budget_view(data)
    return "" if view is None else render_template("budget.html.j2", budget=view)


def _second_reference_note(budget: Mapping[str, Any], n_files: int) -> str:
    """With one ligand-free file: what a second would protect and how much it would narrow.

    Every constant whose budget has a reference part is named: log10(β_ox/β_red) of the
    Lingane line, or each log10 β_j of the stepwise fit.
    """
    if n_files != 1:
        return ""
    ratio = "log10_beta_ratio"
    keys = [ratio] if ratio in budget else _stepwise_keys(budget)
    said = []
    for key in keys:
        row = budget.get(key) or {}
        ref, total = row.get("reference"), row.get("total")
        if not (isinstance(ref, int | float) and isinstance(total, int | float) and ref > 0):
            continue
        # E½(s) is one more solution: two ligand-free files halve its variance
        after = math.sqrt(max(total**2 - ref**2 / 2.0, 0.0))
        label = BUDGET_ROWS.get(key) or f"log10 β{key.rsplit('_')[-1]}"
        said.append(f"{label} from {total:.3g} to about {after:.3g}")
    if not said:
        return ""
    return (
        "E½(s) comes from one ligand-free solution, counted as one more solution (its own "
        "error plus the scatter between solutions); a second one, before and after the "
        "titration, would show an offset of either as their difference and narrow the "
        f"standard error of {', '.join(said)}"
    )


def _mv(x: object, digits: int = 2) -> str:
    if not isinstance(x, int | float) or not math.isfinite(x):
        return "n/d"
    return f"{1e3 * x:.{digits}f}"


def _verdict(x: object) -> str:
    return "yes" if x is True else "no" if x is False else "n/d"


#: Caption of the internal standard's figure.
_STANDARD_CAPTION = (
    "Top: the internal standard's E½ less its series mean (drift of the reference "
    "electrode), ±1 standard error. Bottom: the analyte's E½ on the electrode's "
    "scale and against the standard."
)


def standard_view(
    data: Mapping[str, Any], figures: Sequence[Path]
) -> tuple[dict[str, Any] | None, list[Path]]:
    """The internal standard's E½ file by file and its drift figure, as text (None without
    an internal standard), and *figures* less the one it shows."""
    files = data.get("voltammograms") or []
    rest = [Path(p) for p in figures if Path(p).name != STANDARD_FIGURE]
    if not any(f.get("internal_standard") for f in files):
        return None, [Path(p) for p in figures]
    rows = []
    values = []
    for f in files:
        std = f.get("internal_standard") or {}
        e = std.get("E_half_V")
        if isinstance(e, int | float):
            values.append(e)
        rows.append(
            {
                "name": str(f.get("label") or f.get("file") or ""),
                "ligand": _mv(f.get("ligand_M"), 3),
                "E_half": format_pm(e, std.get("E_half_stderr_V"), scale=1e3),
                "value": repr(e),
                "delta_Ep": _mv(std.get("delta_Ep_V"), 1),
                "reversible": _verdict(std.get("reversible")),
                "analyte": format_pm(f.get("E_half_V"), f.get("E_half_stderr_V"), scale=1e3),
            }
        )
    drift = (
        f" The standard's E½ moved over {1e3 * (max(values) - min(values)):.2f} mV along the "
        "series; quoting the analyte against it removes that drift."
        if len(values) > 1
        else ""
    )
    shown = [Path(p) for p in figures if Path(p).name == STANDARD_FIGURE and Path(p).is_file()]
    figure = figure_view(shown[-1], _STANDARD_CAPTION) if shown else None
    return {"rows": rows, "drift": drift, "figure": figure}, rest


def internal_standard_section(
    data: Mapping[str, Any], figures: Sequence[Path]
) -> tuple[str, list[Path]]:
    """The internal standard's E½ file by file, with its drift figure.

    Returns the section (empty without an internal standard) and *figures* less the one
    the section shows.
    """
    view, rest = standard_view(data, figures)
    html = "" if view is None else render_template("standard.html.j2", standard=view)
    return html, rest
