"""What the HTML report shows, as plain text ready for its templates.

Each function takes (part of) the results.json mapping (``SeriesResult.to_dict``) and
returns dicts and lists of strings: numbers formatted here (:mod:`cvfit.formatting`), never
in a template, and nothing escaped here — the templates' autoescape does that once
(:mod:`cvfit.report.templating`).
"""

from __future__ import annotations

import base64
import math
import os
from collections.abc import Mapping, Sequence
from pathlib import Path
from typing import Any

from cvfit.flag_codes import FLAG_CODES
from cvfit.formatting import additions_text, format_pm, format_value
from cvfit.pipeline.results import SOLUTION_FIELDS
from cvfit.record_json import record_json
from cvfit.report.figures.registry import FIGURES
from cvfit.report.methods_text import ASSUMPTIONS, METHOD_STEPS
from cvfit.techniques import technique_of_name
from cvfit.titration.registry import MODEL_NAMES, model_named

__all__ = [
    "EXTRA_HEADERS",
    "FIGURE_CAPTIONS",
    "conditions_view",
    "constants_view",
    "extra_header",
    "figure_view",
    "file_table_view",
    "fitted_constants",
    "flag_view",
    "method_view",
    "series_notes",
    "shown_manifest",
    "text",
]

#: Captions of the figures cvfit writes, by file name (from the figure registry); other
#: figures get their file stem.
FIGURE_CAPTIONS = {e.file_name: e.caption for e in FIGURES.values()}

# key -> (label, scale, unit) for the constants of the fit
_Q_LABELS = {
    "slope_V_per_decade": ("slope of E½ against log10[L]", 1e3, "mV/decade"),
    "intercept_V": ("intercept (E½ shift at [L] = 1 mol/L)", 1e3, "mV"),
    "delta_ligands": ("p − q, ligands released on reduction", 1.0, ""),
    "log10_beta_ratio": ("log10(βox/βred)", 1.0, ""),
    "log10_beta_ratio_at_integer": ("log10(βox/βred), p − q fixed at {integer}", 1.0, ""),
    "E_half_free_V": ("E½(s) of the uncomplexed couple", 1e3, "mV"),
    "E0_V": ("E° of the unprotonated couple", 1e3, "mV"),
    "dE_half_dT_V_K": ("dE½/dT", 1e3, "mV/K"),
    "E_half_at_mean_V": ("E½ at the mean temperature", 1e3, "mV"),
    "reaction_entropy_J_mol_K": ("ΔS° (see entropy_of)", 1.0, "J mol⁻¹ K⁻¹"),
    "reaction_enthalpy_J_mol": ("ΔH°", 1e-3, "kJ/mol"),
}
#: Lists of constants in a fit record, by key: the row label of item j.
_LIST_LABELS = {
    "log10_beta": "log10 β{j} (overall)",
    "pKa_ox": "pKa{j}, oxidised form",
    "pKa_red": "pKa{j}, reduced form",
}


def text(value: object) -> str:
    """The text of any value for a template ("" for None)."""
    return "" if value is None else str(value)


def _is_quantity(x: object) -> bool:
    return isinstance(x, Mapping) and {"value", "stderr", "ci95"} <= set(x)


def _digits(shown: str) -> int:
    head = shown.split(" ± ")[0].split(" ")[0]
    return len(head.split(".")[1]) if "." in head else 0


def _quantity_row(
    key: str, label: str, q: Mapping[str, Any], scale: float, unit: str, method: str | None
) -> dict[str, str]:
    value, stderr = q.get("value"), q.get("stderr")
    ci = q.get("ci95") or [None, None]
    shown = format_pm(value, stderr, scale=scale, unit=unit)
    if shown != "n/d" and ci[0] is not None and ci[1] is not None:
        d = _digits(shown)
        interval = f"[{ci[0] * scale:.{d}f}, {ci[1] * scale:.{d}f}]" + (f" {unit}" if unit else "")
    else:
        interval = "n/d"
    return {
        "key": key,
        "label": label,
        "shown": shown,
        "interval": interval,
        "method": text(method),
        "value": record_json(value, indent=None),
        "stderr": record_json(stderr, indent=None),
        "ci_low": record_json(ci[0], indent=None),
        "ci_high": record_json(ci[1], indent=None),
    }


def fitted_constants(
    fit: Mapping[str, Any],
) -> list[tuple[str, str, Mapping[str, Any], float, str]]:
    """Every constant of a fit record as ``(key, label, quantity, scale, unit)``: the
    quantity a ``{value, stderr, ci95}`` mapping, shown times *scale* in *unit*."""
    found = []
    for key, q in fit.items():
        if _is_quantity(q):
            label, scale, unit = _Q_LABELS.get(key, (key, 1.0, ""))
            label = label.format(integer=fit.get("delta_ligands_integer", "n/d"))
            found.append((key, label, q, scale, unit))
    for key, label_of in _LIST_LABELS.items():
        for k, q in enumerate(fit.get(key) or []):
            if _is_quantity(q):
                label = label_of.format(j=q.get("j", k + 1))
                if q.get("determined") is False:
                    label += " — not determined by these data"
                found.append((f"{key}[{k}]", label, q, 1.0, ""))
    return found


def constants_view(fit: Mapping[str, Any]) -> dict[str, Any]:
    """The fitted constants: rows (value ± standard error, interval) and the fit's words."""
    methods = fit.get("interval_methods") or {}
    rows = []
    for key, label, q, scale, unit in fitted_constants(fit):
        method = q.get("method") if "[" in key else methods.get(key)
        rows.append(_quantity_row(key, label, q, scale, unit, method))
    weighted = fit.get("weighted")
    how = "weighted by the per-file E½ errors" if weighted else "unweighted"
    model = fit.get("model")
    units = (
        "βj in (mol/L)^−j, [L] in mol/L."
        if fit.get("log10_beta")
        else "βox/βred in (mol/L)^−(p−q), [L] in mol/L."
    )
    units = getattr(model_named(model), "constants_note", units) if model in MODEL_NAMES else units
    return {
        "rows": rows,
        "model": text(fit.get("model", "")),
        "n_points": text(fit.get("n_points")),
        "dof": text(fit.get("dof")),
        "how": "" if weighted is None else how,
        "units": units,
    }


def _severity(flag: Mapping[str, Any]) -> str:
    """A flag's severity: as raised, else the catalogue's (:mod:`cvfit.flag_codes`)."""
    sev = flag.get("severity")
    if sev:
        return str(sev)
    code = FLAG_CODES.get(str(flag.get("code")))
    return code.severity if code is not None else "warning"


def flag_view(flags: Sequence[Mapping[str, Any]]) -> list[dict[str, str]]:
    """Flags as (severity as raised, code, message) text."""
    return [
        {
            "severity": str(f.get("severity", "warning")),
            "code": text(f.get("code")),
            "message": text(f.get("message")),
        }
        for f in flags
    ]


#: The reversibility screen's margins in words, by results.json key.
_MARGINS = {
    "n_delta_Ep_margin_V": "n·ΔEp",
    "n_peak_width_margin_V": "n·|Ep − Ep/2|",
    "current_ratio_margin": "ipa/ipc",
}


def _margins(crit: Mapping[str, Any]) -> str:
    """``n·ΔEp ± 10.0 mV, n·|Ep − Ep/2| ± 10.0 mV, ipa/ipc ± 0.15`` (at 298.15 K)."""
    parts = []
    for key, value in crit.items():
        name = _MARGINS.get(key, extra_header(key).split(" / ")[0])
        if isinstance(value, (int, float)) and key.endswith("_V"):
            parts.append(f"{name} ± {value * 1e3:.1f} mV")
        else:
            parts.append(f"{name} ± {value}")
    return ", ".join(parts) + " (potential margins at 298.15 K; they scale with T)"


def conditions_view(
    data: Mapping[str, Any], *, folder: str | Path | None = None
) -> list[tuple[str, str]]:
    """The series' conditions as (term, text) pairs; the manifest relative to *folder*,
    the report's own (:func:`shown_manifest`)."""
    s = data.get("series", {})
    ref = data.get("reference", {})
    crit = data.get("reversibility_criteria", {})
    celsius = s.get("temperature_C")
    rows: list[tuple[str, str]] = [
        ("electrons, n", text(s.get("electrons"))),
        (
            "temperature",
            format_value(s.get("temperature_K"), digits=2, unit="K")
            + (f" ({celsius} °C)" if celsius is not None else ""),
        ),
    ]
    if s.get("reference_electrode"):
        rows.append(("potentials vs", text(s["reference_electrode"])))
    if s.get("metal_total_M") is not None:
        rows.append(("total metal", f"{s['metal_total_M']:.4g} mol/L"))
    if s.get("titration"):
        rows.append(("titration by additions", additions_text(s["titration"])))
    src = ref.get("source")
    files = ", ".join(str(f) for f in ref.get("files") or [])
    if src != "none":  # a pH or temperature series needs no E½(s)
        rows.append(
            (
                "E½(s), ligand-free",
                format_pm(ref.get("E_half_V"), ref.get("stderr_V"), scale=1e3, unit="mV")
                + f" (from {src}{': ' + files if files else ''})",
            )
        )
    rows.append(("model", text(s.get("model", data.get("fit", {}).get("model")))))
    fate = "left out of the fit" if data.get("exclude_non_nernstian") else "kept in the fit"
    curve = [
        v for v in data.get("voltammograms") or []
        if v.get("E_half_source") == "curve" and v.get("used_in_fit")
    ]  # fmt: skip
    if curve:
        fate += f", unless E½ came from a fit of the whole curve ({len(curve)} file(s))"
    rows.append(("flagged files", fate))
    if crit:
        rows.append(("screen margins", _margins(crit)))
    rows.append(("manifest", shown_manifest(data.get("manifest"), folder)))
    return rows


def shown_manifest(manifest: object, folder: str | Path | None) -> str:
    """The manifest's path as the report shows it: relative to the report's *folder*
    (``../series.toml``), so an absolute path naming a home folder is not published."""
    if not isinstance(manifest, str) or folder is None or not Path(manifest).is_absolute():
        return text(manifest)
    try:
        return text(Path(os.path.relpath(manifest, Path(folder).resolve())).as_posix())
    except ValueError:  # another drive (Windows): no relative path exists
        return text(Path(manifest).name)


#: Generic keys of a file record the per-file table shows in its fixed columns (the
#: technique adds its own, :attr:`Technique.report_columns`).
_FILE_COLUMNS = (
    "file",
    "label",
    "ligand_M",
    "free_ligand_M",
    *SOLUTION_FIELDS,  # a solution's own metal and volume, beside [L]
    "scan_rate_V_s",
    "E_half_V",
    "E_half_stderr_V",
    "reversible",
    "used_in_fit",
    "excluded_by_user",
    "flags",
    "technique",
)


def _yes_no(x: object) -> str:
    if x is None or isinstance(x, bool):
        return "n/d" if x is None else ("yes" if x else "no")
    return text(x)


def _extra_cell(key: str, x: object) -> str:
    if isinstance(x, float):
        if not math.isfinite(x):
            return "n/d"
        _, unit, scale = _unit_of(key)
        return f"{x * scale:.2f}" if unit == "mV" else f"{x * scale:.4g}"
    if x is None:
        return "n/d"
    return _yes_no(x) if isinstance(x, bool) else text(x)


#: Headers of per-file values the table shows beyond its fixed columns, by results.json key.
EXTRA_HEADERS = {
    "E_half_midpoint_V": "E½ (midpoint) / mV",
    "switching_correction_V": "switching correction / mV",
    "resistance_ohm": "uncompensated resistance / Ω",
    "metal_M": "total metal / mol L⁻¹",
    "volume_mL": "volume / mL",
    "added_mL": "stock added / mL",
}
#: Unit suffixes of results.json keys → (header unit, scale of the cell).
_UNITS = {"_V": ("mV", 1e3), "_ohm": ("Ω", 1.0), "_A": ("µA", 1e6), "_M": ("mol L⁻¹", 1.0),
          "_s": ("s", 1.0), "_cm_s": ("cm s⁻¹", 1.0), "_cm2_s": ("cm² s⁻¹", 1.0)}  # fmt: skip


def _unit_of(key: str) -> tuple[str, str, float]:
    """(name without the unit suffix, unit shown, scale) of a results.json key."""
    for suffix in sorted(_UNITS, key=len, reverse=True):
        if key.endswith(suffix) and len(key) > len(suffix):
            unit, scale = _UNITS[suffix]
            return key[: -len(suffix)], unit, scale
    return key, "", 1.0


def extra_header(key: str) -> str:
    """A header for people: words and a unit, never the code name (``E_half_midpoint_V`` →
    ``E½ (midpoint) / mV``)."""
    if key in EXTRA_HEADERS:
        return EXTRA_HEADERS[key]
    name, unit, _ = _unit_of(key)
    words = name.replace("E_half", "E½").replace("_", " ").strip()
    return f"{words} / {unit}" if unit else words


def _number(x: object) -> str:
    if x is None or not isinstance(x, (int, float)) or not math.isfinite(x):
        return "n/d"
    return "0" if x == 0 else f"{x:.4g}"


def file_table_view(files: Sequence[Mapping[str, Any]], technique: str = "cv") -> dict[str, Any]:
    """The per-file table: headers, and per file its cells, label and own flags."""
    own_columns = technique_of_name(technique).report_columns
    shown = {*_FILE_COLUMNS, *technique_of_name(technique).hidden_keys}
    shown |= {key for _, key, _, _ in own_columns}
    extra: list[str] = []
    nested: set[str] = set()  # a dict or list in some file: never shown as text
    for f in files:
        for k, v in f.items():
            if not (v is None or isinstance(v, (str, int, float, bool))):
                nested.add(k)
            elif k not in shown and k not in extra:
                extra.append(k)
    extra = [k for k in extra if k not in nested]
    heads = [
        "file",
        "[L] / mol L⁻¹",
        "free [L] / mol L⁻¹",
        *(EXTRA_HEADERS[k] for k in SOLUTION_FIELDS),
        "v / V s⁻¹",
        "E½ / mV",
        *(head for head, _, _, _ in own_columns),
        "Nernstian",
        "in fit",
        *(extra_header(k) for k in extra),
        *(head for head, _ in _NESTED_COLUMNS),
    ]
    rows = []
    for f in files:
        cells = [
            _number(f.get("ligand_M")),
            _number(f.get("free_ligand_M")),
            *(_number(f.get(k)) for k in SOLUTION_FIELDS),
            _number(f.get("scan_rate_V_s")),
            format_pm(f.get("E_half_V"), f.get("E_half_stderr_V"), scale=1e3),
            *(
                format_value(f.get(key), scale=scale, digits=digits)
                for _, key, scale, digits in own_columns
            ),
            _yes_no(f.get("reversible")),
            _yes_no(f.get("used_in_fit")),
            *(_extra_cell(k, f.get(k)) for k in extra),
            *(cell(f) for _, cell in _NESTED_COLUMNS),
        ]
        own = [fl for fl in f.get("flags") or [] if _severity(fl) != "info"]
        reason = f.get("excluded_by_user")
        rows.append(
            {
                "file": text(f.get("file")),
                "label": text(f.get("label")),
                # a cell wraps between its parts, never inside "value ± error"
                "cells": [
                    c.replace(" ± ", "\u00a0±\u00a0").replace("> ", ">\u00a0") for c in cells
                ],  # fmt: skip
                "flags": flag_view(own),
                "excluded": text(reason) if reason else "",
            }
        )
    heads, rows = _without_empty_columns(heads, rows)
    return {"heads": heads, "rows": rows, "notes": _notes(files)}


def _nested_quantity(record: Mapping[str, Any], *path: str) -> Mapping[str, Any]:
    for key in path:
        inner = record.get(key) if isinstance(record, Mapping) else None
        record = inner if isinstance(inner, Mapping) else {}
    return record


def _curve_fit(f: Mapping[str, Any]) -> str:
    """E½ ± σ (mV) and k0 ± σ (or its lower bound) of the whole-curve fit; "n/d" without."""
    e = _nested_quantity(f, "curve_fit", "E_half_V")
    if not e:
        return "n/d"
    k0 = _nested_quantity(f, "curve_fit", "k0_cm_s")
    bound = k0.get("lower_bound")
    shown_k0 = (
        f"> {bound:.2g}"
        if isinstance(bound, (int, float))
        else format_pm(k0.get("value"), k0.get("stderr"))
    )
    return f"{format_pm(e.get('value'), e.get('stderr'), scale=1e3)}; {shown_k0}"


#: Columns of values inside a nested record of a file (the whole-curve fit), formatted.
_NESTED_COLUMNS = (("curve fit: E½ / mV; k0 / cm s⁻¹", _curve_fit),)
#: Cells that say nothing: a column holding only these in every row is left out.
_EMPTY_CELLS = frozenset({"", "n/d"})


def _without_empty_columns(
    heads: list[str], rows: list[dict[str, Any]]
) -> tuple[list[str], list[dict[str, Any]]]:
    """*heads* and *rows* without the value columns that are empty in every row (the file
    column, the first head, always stays)."""
    keep = [
        k for k in range(len(heads) - 1)
        if not rows or any(row["cells"][k] not in _EMPTY_CELLS for row in rows)
    ]  # fmt: skip
    for row in rows:
        row["cells"] = [row["cells"][k] for k in keep]
    return [heads[0], *(heads[k + 1] for k in keep)], rows


def series_notes(files: Sequence[Mapping[str, Any]]) -> list[tuple[str, str, list[str]]]:
    """The informational flags of the files, once per code: (code, text, files).

    The text is the catalogue's meaning of the code, or the file's own message when the
    note applies to one file only. Flags of higher severity stay with their file.
    """
    found: dict[str, list[tuple[str, str]]] = {}
    for f in files:
        for fl in f.get("flags") or []:
            if _severity(fl) == "info":
                found.setdefault(str(fl.get("code")), []).append(
                    (str(f.get("file")), str(fl.get("message", "")))
                )
    notes = []
    for code, where in found.items():
        names = list(dict.fromkeys(name for name, _ in where))
        catalogued = FLAG_CODES.get(code)
        meaning = where[0][1] if len(names) == 1 or catalogued is None else catalogued.meaning
        notes.append((code, meaning, names))
    return notes


def _notes(files: Sequence[Mapping[str, Any]]) -> list[dict[str, str]]:
    notes = []
    for code, meaning, names in series_notes(files):
        which = f"all {len(files)} files" if len(names) == len(files) > 1 else ", ".join(names)
        notes.append({"code": code, "text": meaning, "which": which})
    return notes


def figure_view(path: Path, caption: str) -> dict[str, str]:
    """A PNG figure to embed: caption, file name and the base64 of its bytes."""
    b64 = base64.b64encode(path.read_bytes()).decode("ascii")
    return {"caption": caption, "name": path.name, "b64": b64}


def figures_view(figures: Sequence[Path]) -> list[dict[str, str]]:
    """The PNG figures that exist, in order, with their captions (others skipped)."""
    return [
        figure_view(p, FIGURE_CAPTIONS.get(p.name, p.stem.replace("_", " ")))
        for p in map(Path, figures)
        if p.suffix.lower() == ".png" and p.is_file()
    ]


def method_view(fit: Mapping[str, Any]) -> dict[str, Any]:
    """The method's steps (heading, text, sources) and the assumptions."""
    steps = list(METHOD_STEPS)
    if fit.get("model") in MODEL_NAMES:
        steps += model_named(fit["model"]).method_steps
    return {
        "steps": [
            {"heading": heading, "text": body, "refs": "; ".join(refs)}
            for heading, body, refs in steps
        ],
        "assumptions": list(ASSUMPTIONS),
    }
