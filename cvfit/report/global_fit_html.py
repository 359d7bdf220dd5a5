"""HTML section of the global curve fit: its constants beside the two-step result."""

from __future__ import annotations

from collections.abc import Mapping
from html import escape
from typing import Any

from .formatting import format_pm

__all__ = ["global_fit_section"]

_ROWS = (
    ("delta_ligands", "p − q"),
    ("log10_beta_ratio", "log10(β_ox/β_red)"),
)


def _interval(q: Mapping[str, Any] | None) -> str:
    ci = (q or {}).get("ci95") or [None, None]
    if ci[0] is None or ci[1] is None:
        return "n/d"
    return f"[{ci[0]:.4f}, {ci[1]:.4f}]"


def global_fit_section(data: Mapping[str, Any]) -> str:
    """``<section>`` comparing the global fit with the two-step fit; "" without one."""
    g = data.get("global_fit")
    if not g:
        return ""
    fit = data.get("fit") or {}
    rows = []
    for key, label in _ROWS:
        one, two = g.get(key) or {}, fit.get(key) or {}
        rows.append(
            f'<tr data-key="global-{escape(key)}"><th scope="row">{escape(label)}</th>'
            f'<td class="num">{escape(format_pm(one.get("value"), one.get("stderr")))}</td>'
            f'<td class="num">{escape(_interval(one))}</td>'
            f'<td class="num">{escape(format_pm(two.get("value"), two.get("stderr")))}</td>'
            f'<td class="num">{escape(_interval(two))}</td></tr>'
        )
    chi2 = g.get("reduced_chi2")
    note = (
        f"All {len(g.get('files') or [])} curves fitted at once, E½ tied by the Lingane line "
        f"({g.get('simulations')} simulations, reduced χ² "
        f"{'n/d' if chi2 is None else f'{chi2:.2f}'}); intervals of the global fit from the "
        "χ² profile."
    )
    return (
        "<section><h2>Global curve fit</h2>"
        f"<p>{escape(note)}</p><table><thead><tr><th></th><th>global</th><th>95 %</th>"
        "<th>two-step</th><th>95 %</th></tr></thead><tbody>"
        + "".join(rows)
        + "</tbody></table></section>"
    )
