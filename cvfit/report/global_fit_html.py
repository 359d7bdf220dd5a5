"""HTML section of the global curve fit: its constants beside the two-step result."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from cvfit.formatting import format_pm
from cvfit.report.templating import render_template

__all__ = ["global_fit_section", "global_fit_view"]

_ROWS = (
    ("delta_ligands", "p − q"),
    ("log10_beta_ratio", "log10(β_ox/β_red)"),
)


def _interval(q: Mapping[str, Any] | None) -> str:
    ci = (q or {}).get("ci95") or [None, None]
    if ci[0] is None or ci[1] is None:
        return "n/d"
    return f"[{ci[0]:.4f}, {ci[1]:.4f}]"


def _pairs(g: Mapping[str, Any], fit: Mapping[str, Any]) -> list[tuple[str, str, Any, Any]]:
    """(key, label, global quantity, two-step quantity) of every constant compared."""
    if g.get("model") == "stepwise":
        two = {b.get("j"): b for b in fit.get("log10_beta") or []}
        form = g.get("fitted_state") or "ox"
        return [
            (f"log10_beta_{b['j']}", f"log10 β_{b['j']} ({form})", b, two.get(b["j"]))
            for b in g.get("log10_beta") or []
        ]
    return [(key, label, g.get(key), fit.get(key)) for key, label in _ROWS]


def _shared_rows(g: Mapping[str, Any]) -> list[dict[str, str]]:
    rows = []
    for key, label, scale in (
        ("alpha", "α (shared)", 1.0),
        ("double_layer_F", "C_dl (shared), µF", 1e6),
    ):
        q = g.get(key)
        if not q:
            continue
        ci = q.get("ci95") or [None, None]
        interval = "n/d" if None in ci else f"[{scale * ci[0]:.4g}, {scale * ci[1]:.4g}]"
        value = format_pm(_scaled(q.get("value"), scale), _scaled(q.get("stderr"), scale))
        rows.append(
            {
                "key": key,
                "label": label,
                "one": value,
                "one_ci": interval,
                "two": "—",
                "two_ci": "—",
            }
        )
    return rows


def _scaled(x: Any, scale: float) -> Any:
    return None if x is None else scale * x


def global_fit_view(data: Mapping[str, Any]) -> dict[str, Any] | None:
    """The global fit's constants beside the two-step ones, as text (None without one)."""
    g = data.get("global_fit")
    if not g:
        return None
    fit = data.get("fit") or {}
    rows = []
    for key, label, one, two in _pairs(g, fit):
        one, two = one or {}, two or {}
        rows.append(
            {
                "key": key,
                "label": label,
                "one": format_pm(one.get("value"), one.get("stderr")),
                "one_ci": _interval(one),
                "two": format_pm(two.get("value"), two.get("stderr")),
                "two_ci": _interval(two),
            }
        )
    rows += _shared_rows(g)
    chi2 = g.get("reduced_chi2")
    tie = "DeFord–Hume model" if g.get("model") == "stepwise" else "Lingane line"
    note = (
        f"All {len(g.get('files') or [])} curves fitted at once, E½ tied by the {tie} "
        f"({g.get('simulations')} simulations, reduced χ² "
        f"{'n/d' if chi2 is None else f'{chi2:.2f}'}); intervals of the global fit from the "
        "χ² profile."
    )
    return {"rows": rows, "note": note}


def global_fit_section(data: Mapping[str, Any]) -> str:
    """``<section>`` comparing the global fit with the two-step fit; "" without one."""
    view = global_fit_view(data)
    return "" if view is None else render_template("global_fit.html.j2", global_fit=view)
