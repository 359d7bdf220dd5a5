"""Report sections that stand on their own: the error budget and the internal standard.

Each function takes the results.json mapping (``SeriesResult.to_dict``) and returns an HTML
``<section>`` — or an empty string when the series has nothing to show in it — so the page
(:mod:`cvfit.report.html`) only places them.
"""

from __future__ import annotations

import base64
import math
from collections.abc import Mapping, Sequence
from html import escape
from pathlib import Path
from typing import Any

__all__ = ["error_budget_section", "internal_standard_section", "BUDGET_ROWS", "STANDARD_FIGURE"]

#: File name of the internal-standard figure, shown in its own section.
STANDARD_FIGURE = "internal_standard.png"

#: Lingane constants shown in the error-budget table: key -> label (a stepwise fit shows
#: its log10_beta_j).
BUDGET_ROWS = {
    "log10_beta_ratio": "log10(βox/βred)",
    "delta_ligands": "p − q",
    "log10_beta_ratio_at_integer": "log10(βox/βred), p − q whole",
}


def _e(value: object) -> str:
    return escape("" if value is None else str(value), quote=True)


def _cell(x: object, digits: int) -> str:
    if not isinstance(x, int | float) or not math.isfinite(x):
        return '<td class="num">n/d</td>'
    return f'<td class="num" data-value="{x!r}">{x:.{digits}f}</td>'


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


def error_budget_section(data: Mapping[str, Any]) -> str:
    """The error budget of the fitted constants as a small table (empty without one)."""
    fit = data.get("fit") or {}
    budget = fit.get("error_budget")
    if not budget:
        return ""
    rows = []
    keys = [k for k in BUDGET_ROWS if k in budget] + _stepwise_keys(budget)
    for key in keys:
        b = budget[key]
        label = BUDGET_ROWS.get(key) or f"log10 β{key.rsplit('_')[-1]}"
        d = _digits(b.get("total"))
        rows.append(
            f'<tr data-budget="{_e(key)}"><th scope="row">{_e(label)}</th>'
            + "".join(
                _cell(b.get(part), d)
                for part in ("within_file", "between_solutions", "reference", "total")
            )
            + "</tr>"
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
    note = f'<p class="refs">{_e("; ".join(notes))}.</p>' if notes else ""
    return (
        "<section><h2>Error budget</h2><p>Standard uncertainty of each constant by source; "
        "the total is the standard error its 95 % interval is built on.</p>"
        '<div class="scroll"><table class="budget"><thead><tr><th>constant</th>'
        "<th>within-file noise</th><th>between solutions</th><th>reference E½(s)</th>"
        "<th>total</th></tr></thead><tbody>" + "".join(rows) + "</tbody></table></div>"
        f"{note}</section>"
    )


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


def internal_standard_section(
    data: Mapping[str, Any], figures: Sequence[Path]
) -> tuple[str, list[Path]]:
    """The internal standard's E½ file by file, with its drift figure.

    Returns the section (empty without an internal standard) and *figures* less the one
    the section shows.
    """
    files = data.get("voltammograms") or []
    rest = [Path(p) for p in figures if Path(p).name != STANDARD_FIGURE]
    if not any(f.get("internal_standard") for f in files):
        return "", list(figures)
    rows = []
    values = []
    for f in files:
        std = f.get("internal_standard") or {}
        e = std.get("E_half_V")
        if isinstance(e, int | float):
            values.append(e)
        verdict = {True: "yes", False: "no"}.get(std.get("reversible"), "n/d")
        rows.append(
            f"<tr><td>{_e(f.get('label') or f.get('file'))}</td>"
            f'<td class="num">{_e(_mv(f.get("ligand_M"), 3))}</td>'
            f'<td class="num" data-value="{e!r}">{_e(_mv(e))}</td>'
            f'<td class="num">{_e(_mv(std.get("E_half_stderr_V"), 3))}</td>'
            f'<td class="num">{_e(_mv(std.get("delta_Ep_V"), 1))}</td>'
            f"<td>{verdict}</td>"
            f'<td class="num">{_e(_mv(f.get("E_half_V")))}</td></tr>'
        )
    drift = (
        f" The standard's E½ moved over {1e3 * (max(values) - min(values)):.2f} mV along the "
        "series; quoting the analyte against it removes that drift."
        if len(values) > 1
        else ""
    )
    figure = ""
    for p in figures:
        p = Path(p)
        if p.name == STANDARD_FIGURE and p.is_file():
            b64 = base64.b64encode(p.read_bytes()).decode("ascii")
            caption = (
                "Top: the internal standard's E½ less its series mean (drift of the reference "
                "electrode), ±1 standard error. Bottom: the analyte's E½ on the electrode's "
                "scale and against the standard."
            )
            figure = (
                f'<figure><img alt="{_e(caption)}" src="data:image/png;base64,{b64}">'
                f'<figcaption>{_e(caption)} <span class="code">{_e(p.name)}</span>'
                "</figcaption></figure>"
            )
    html = (
        "<section><h2>Internal standard</h2><p>Every file holds an internal reference "
        "couple; the analyte's E½ (last column, and everywhere else in this report) is "
        f"quoted against the standard's E½ measured in the same file.{_e(drift)}</p>"
        '<div class="scroll"><table><thead><tr><th>file</th><th>ligand / mM</th>'
        "<th>E½ standard / mV (electrode scale)</th><th>± / mV</th><th>ΔEp / mV</th>"
        "<th>standard reversible</th><th>analyte E½ against it / mV</th></tr></thead><tbody>"
        + "".join(rows)
        + f"</tbody></table></div>{figure}</section>"
    )
    return html, rest
