"""The plan as a self-contained HTML page (plan.html): the figure embedded as a base64 PNG,
inline style, every user-supplied string escaped. Built from the plan.json mapping, so the
page's numbers are the file's numbers."""

from __future__ import annotations

import base64
import math
from collections.abc import Mapping
from html import escape
from typing import Any

from cvfit.plan.words import constant_words, design_words

__all__ = ["render_plan_html"]

_CSS = (
    "body{font:15px/1.5 system-ui,sans-serif;color:#1d232b;max-width:1000px;margin:0 auto;"
    "padding:24px}h1{font-size:1.4em;border-bottom:3px solid #2b4c7e}h2{font-size:1.1em;"
    "color:#2b4c7e}table{border-collapse:collapse}td,th{border:1px solid #d5dae1;"
    "padding:3px 8px;text-align:right}th{background:#f3f5f8}td:first-child{text-align:left}"
    ".warn{background:#fff4e5;color:#8a4b00;padding:4px 8px;margin:4px 0}img{max-width:100%}"
)
_ORDER = ("recommended", "proposed", "log_spaced")


def _e(x: object) -> str:
    return escape("" if x is None else str(x), quote=True)


def _n(x: Any) -> str:
    return "n.d." if x is None or not math.isfinite(float(x)) else f"{float(x):.3g}"


def render_plan_html(plan: Mapping[str, Any], figure_png: bytes | None = None) -> str:
    """HTML page of a plan.json mapping (see :meth:`cvfit.plan.result.PlanResult.to_dict`)."""
    designs = [(k, plan["designs"][k]) for k in _ORDER if k in plan["designs"]]
    space = plan["design_space"]
    out = [
        "<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>",
        f"<title>{_e(plan['title'])} — cvfit plan</title><style>{_CSS}</style></head><body>",
        f"<h1>{_e(plan['title'])}: titration plan</h1>",
        f"<p>{_e(plan['model'])} model; {space['points']} solutions between "
        f"{space['ligand_min_M']:.3g} and {space['ligand_max_M']:.3g} mol/L plus the "
        f"ligand-free reference; per-file E½ noise {1e3 * space['E_half_stderr_V']:.3g} mV; "
        f"criterion {_e(space['criterion'])}. Plan file: {_e(plan['plan_file'])}.</p>",
        "<h2>Ligand concentrations, mol/L</h2><table><tr><th>design</th><th>total ligand"
        "</th></tr>",
    ]
    for name, d in designs:
        conc = ", ".join(f"{c:.3g}" for c in d["ligand_M"])
        out.append(f"<tr><td>{_e(design_words(name))}</td><td>{conc}</td></tr>")
    out.append("</table><h2>Predicted standard errors (expected / worst)</h2><table><tr>")
    out.append("<th>constant</th><th>expected value</th>")
    out.extend(f"<th>{_e(design_words(name))}</th>" for name, _ in designs)
    out.append("</tr>")
    for const in plan["constants"]:
        n = const["name"]
        star = " *" if const["of_interest"] else ""
        out.append(f"<tr><td>{_e(constant_words(n))}{star}</td><td>{const['expected']:g}</td>")
        for _, d in designs:
            se, worst = d["stderr"][n], d["stderr_worst"][n]
            out.append(f"<td data-stderr='{_e(se)}'>{_n(se)} / {_n(worst)}</td>")
        out.append("</tr>")
    out.append("</table><p>* constants the design is optimised for.</p>")
    if space.get("target_stderr_log10") is not None:
        needed = plan["points_needed"]
        out.append(
            f"<p>Points needed for a standard error &le; {space['target_stderr_log10']:g}: "
            f"{'not reachable' if needed is None else needed}</p>"
        )
    if plan["warnings"]:
        out.append("<h2>Warnings</h2>")
        out.extend(
            f"<div class='warn'>[{_e(w['kind'])}] {_e(w['message'])}</div>"
            for w in plan["warnings"]
        )
    if figure_png:
        data = base64.b64encode(figure_png).decode("ascii")
        out.append(
            "<h2>Figure</h2><img alt='species distribution with the planned points, and the "
            f"predicted standard errors' src='data:image/png;base64,{data}'>"
        )
    out.append("</body></html>\n")
    return "\n".join(out)
