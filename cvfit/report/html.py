"""A self-contained HTML report of a series: one file to hand on, readable in any browser.

The page is built from the same mapping that becomes results.json (``SeriesResult.to_dict``),
so its numbers are the file's numbers; figures are embedded as base64 PNG data URIs and the
style sheet is inline — the page loads nothing from anywhere. Every string that came from a
user or a file (title, file names, labels, flag messages) is HTML-escaped.

Each constant's cell carries the exact results.json value in ``data-value`` (and
``data-stderr``, ``data-ci-low``, ``data-ci-high``) so that the page can be checked against
the file by a program.
"""

from __future__ import annotations

import base64
import json
import math
from collections.abc import Mapping, Sequence
from html import escape
from pathlib import Path
from typing import Any

from cvfit.flag_codes import FLAG_CODES
from cvfit.formatting import format_pm, format_value
from cvfit.pipeline.results import SeriesResult
from cvfit.report.atomic import atomic_write_text
from cvfit.report.figures.registry import FIGURES
from cvfit.report.global_fit_html import global_fit_section
from cvfit.report.headline import headline_lines
from cvfit.report.html_sections import error_budget_section, internal_standard_section
from cvfit.report.imported_columns import columns_html
from cvfit.report.methods_text import ASSUMPTIONS, CAUTIONS, METHOD_STEPS
from cvfit.techniques import technique_of_name
from cvfit.titration.registry import MODEL_NAMES, model_named

__all__ = ["render_html", "write_html_report", "FIGURE_CAPTIONS"]

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

_CSS = """
:root{--ink:#1d232b;--soft:#5b6675;--line:#d5dae1;--band:#f3f5f8;--accent:#2b4c7e;
--warn:#8a4b00;--warnbg:#fff4e5;--ok:#1f5f3a;--okbg:#eaf6ee}
*{box-sizing:border-box}
body{margin:0;font:15px/1.5 system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;
color:var(--ink);background:#fff}
main{max-width:1040px;margin:0 auto;padding:28px 22px 60px}
header{border-bottom:3px solid var(--accent);padding-bottom:10px;margin-bottom:18px}
h1{font-size:1.55em;margin:0 0 4px;overflow-wrap:anywhere}
h2{font-size:1.15em;color:var(--accent);margin:30px 0 8px;border-bottom:1px solid var(--line);
padding-bottom:3px}
h3{font-size:1em;margin:16px 0 4px}
.sub{color:var(--soft);font-size:.9em;overflow-wrap:anywhere}
.headline{margin:14px 0}.headline p{margin:2px 0}.headline p.lead{font-size:1.15em;
font-weight:600;font-variant-numeric:tabular-nums}
.headline p.note{font-size:.9em;color:var(--soft)}
.verdict{padding:10px 14px;border-radius:6px;margin:14px 0;font-weight:600}
.verdict.ok{background:var(--okbg);color:var(--ok)}
.verdict.warn{background:var(--warnbg);color:var(--warn)}
table{border-collapse:collapse;width:100%;margin:6px 0 4px;font-size:.92em}
th,td{padding:5px 8px;border-bottom:1px solid var(--line);text-align:left;vertical-align:top}
thead th{background:var(--band);font-weight:600;white-space:nowrap}
td.num{font-variant-numeric:tabular-nums;white-space:nowrap}
dl.cond{display:grid;grid-template-columns:max-content 1fr;gap:3px 18px;margin:6px 0}
dl.cond dt{color:var(--soft)}dl.cond dd{margin:0;overflow-wrap:anywhere}
.constants td.num:first-of-type{font-weight:600}
.flag{margin:2px 0}.code{font-family:ui-monospace,Menlo,Consolas,monospace;font-size:.88em;
background:var(--band);padding:0 4px;border-radius:3px}
.sev-warning .code,.sev-error .code{background:var(--warnbg);color:var(--warn)}
.scroll{overflow-x:auto}
table.files tr.has-flags td{border-bottom:none}
table.files tr.flags td{padding:0 8px 7px 22px;font-size:.92em;color:var(--soft)}
figure{margin:16px 0;padding:10px;border:1px solid var(--line);border-radius:6px}
figure img{max-width:100%;height:auto;display:block;margin:0 auto}
figcaption{color:var(--soft);font-size:.9em;margin-top:6px}
.refs{color:var(--soft);font-size:.9em;margin:2px 0 0}
footer{margin-top:36px;color:var(--soft);font-size:.85em;border-top:1px solid var(--line);
padding-top:8px}
@media print{main{max-width:none;padding:0}figure{break-inside:avoid}}
"""


def _e(value: object) -> str:
    """HTML-escaped text of any value (quotes too, so it is safe in attributes)."""
    return escape("" if value is None else str(value), quote=True)


def _is_quantity(x: object) -> bool:
    return isinstance(x, Mapping) and {"value", "stderr", "ci95"} <= set(x)


def _json_attr(x: object) -> str:
    return _e(json.dumps(x, allow_nan=False))


def _digits(text: str) -> int:
    head = text.split(" ± ")[0].split(" ")[0]
    return len(head.split(".")[1]) if "." in head else 0


def _quantity_row(
    key: str, label: str, q: Mapping[str, Any], scale: float, unit: str, method: str | None
) -> str:
    value, stderr = q.get("value"), q.get("stderr")
    ci = q.get("ci95") or [None, None]
    shown = format_pm(value, stderr, scale=scale, unit=unit)
    if shown != "n/d" and ci[0] is not None and ci[1] is not None:
        d = _digits(shown)
        interval = f"[{ci[0] * scale:.{d}f}, {ci[1] * scale:.{d}f}]" + (f" {unit}" if unit else "")
    else:
        interval = "n/d"
    attrs = (
        f'data-value="{_json_attr(value)}" data-stderr="{_json_attr(stderr)}" '
        f'data-ci-low="{_json_attr(ci[0])}" data-ci-high="{_json_attr(ci[1])}"'
    )
    return (
        f'<tr data-key="{_e(key)}"><th scope="row">{_e(label)}</th>'
        f'<td class="num" {attrs}>{_e(shown)}</td><td class="num">{_e(interval)}</td>'
        f"<td>{_e(method or '')}</td></tr>"
    )


def _constants(fit: Mapping[str, Any]) -> str:
    methods = fit.get("interval_methods") or {}
    rows = []
    for key, q in fit.items():
        if _is_quantity(q):
            label, scale, unit = _Q_LABELS.get(key, (key, 1.0, ""))
            label = label.format(integer=fit.get("delta_ligands_integer", "n/d"))
            rows.append(_quantity_row(key, label, q, scale, unit, methods.get(key)))
    for key, text in _LIST_LABELS.items():
        for k, q in enumerate(fit.get(key) or []):
            if _is_quantity(q):
                label = text.format(j=q.get("j", k + 1))
                if q.get("determined") is False:
                    label += " — not determined by these data"
                rows.append(_quantity_row(f"{key}[{k}]", label, q, 1.0, "", q.get("method")))
    if not rows:
        return "<p>No constants were fitted; the series flags below say why.</p>"
    n, dof = fit.get("n_points"), fit.get("dof")
    weighted = fit.get("weighted")
    how = "weighted by the per-file E½ errors" if weighted else "unweighted"
    if weighted is None:
        how = ""
    model = fit.get("model")
    units = (
        "βj in (mol/L)^−j, [L] in mol/L."
        if fit.get("log10_beta")
        else "βox/βred in (mol/L)^−(p−q), [L] in mol/L."
    )
    units = getattr(model_named(model), "constants_note", units) if model in MODEL_NAMES else units
    head = (
        f"<p>Model <b>{_e(fit.get('model', ''))}</b>, fitted to {_e(n)} points "
        f"({_e(dof)} degrees of freedom{', ' + how if how else ''}). {units}</p>"
    )
    return (
        head + '<div class="scroll"><table class="constants"><thead><tr><th>constant</th>'
        "<th>value ± standard error</th><th>95 % interval</th><th>interval from</th></tr>"
        "</thead><tbody>" + "".join(rows) + "</tbody></table></div>"
    )


def _flag_list(flags: Sequence[Mapping[str, Any]], *, prefix: str = "") -> str:
    items = []
    for f in flags:
        sev = str(f.get("severity", "warning"))
        items.append(
            f'<div class="flag sev-{_e(sev)}">{_e(prefix)}<span class="code">'
            f"{_e(f.get('code'))}</span> {_e(f.get('message'))}</div>"
        )
    return "".join(items)


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


def _conditions(data: Mapping[str, Any]) -> str:
    s = data.get("series", {})
    ref = data.get("reference", {})
    crit = data.get("reversibility_criteria", {})
    rows: list[tuple[str, str]] = [
        ("electrons, n", _e(s.get("electrons"))),
        (
            "temperature",
            _e(format_value(s.get("temperature_K"), digits=2, unit="K"))
            + (
                f" ({_e(s.get('temperature_C'))} °C)" if s.get("temperature_C") is not None else ""
            ),
        ),
    ]
    if s.get("reference_electrode"):
        rows.append(("potentials vs", _e(s["reference_electrode"])))
    if s.get("metal_total_M") is not None:
        rows.append(("total metal", _e(f"{s['metal_total_M']:.4g} mol/L")))
    src = ref.get("source")
    files = ", ".join(str(f) for f in ref.get("files") or [])
    if src != "none":  # a pH or temperature series needs no E½(s)
        rows.append(
            (
                "E½(s), ligand-free",
                _e(format_pm(ref.get("E_half_V"), ref.get("stderr_V"), scale=1e3, unit="mV"))
                + _e(f" (from {src}{': ' + files if files else ''})"),
            )
        )
    rows.append(("model", _e(s.get("model", data.get("fit", {}).get("model")))))
    fate = "left out of the fit" if data.get("exclude_non_nernstian") else "kept in the fit"
    curve = [
        v for v in data.get("voltammograms") or []
        if v.get("E_half_source") == "curve" and v.get("used_in_fit")
    ]  # fmt: skip
    if curve:
        fate += f", unless E½ came from a fit of the whole curve ({len(curve)} file(s))"
    rows.append(("flagged files", fate))
    if crit:
        rows.append(("screen margins", _e(_margins(crit))))
    rows.append(("manifest", _e(data.get("manifest"))))
    return '<dl class="cond">' + "".join(f"<dt>{k}</dt><dd>{v}</dd>" for k, v in rows) + "</dl>"


#: Generic keys of a file record the per-file table shows in its fixed columns (the
#: technique adds its own, :attr:`Technique.report_columns`).
_FILE_COLUMNS = (
    "file",
    "label",
    "ligand_M",
    "free_ligand_M",
    "scan_rate_V_s",
    "E_half_V",
    "E_half_stderr_V",
    "reversible",
    "used_in_fit",
    "flags",
    "technique",
)


def _yes_no(x: object) -> str:
    return {True: "yes", False: "no", None: "n/d"}.get(x, _e(x))  # type: ignore[arg-type]


def _extra_cell(key: str, x: object) -> str:
    if isinstance(x, float):
        if not math.isfinite(x):
            return "n/d"
        _, unit, scale = _unit_of(key)
        return _e(f"{x * scale:.2f}") if unit == "mV" else _e(f"{x * scale:.4g}")
    if x is None:
        return "n/d"
    return _yes_no(x) if isinstance(x, bool) else _e(x)


#: Headers of per-file values the table shows beyond its fixed columns, by results.json key.
EXTRA_HEADERS = {
    "E_half_midpoint_V": "E½ (midpoint) / mV",
    "switching_correction_V": "switching correction / mV",
    "resistance_ohm": "uncompensated resistance / Ω",
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


def _extra_head(key: str) -> str:
    return _e(extra_header(key))


def _number(x: object) -> str:
    if x is None or not isinstance(x, (int, float)) or not math.isfinite(x):
        return "n/d"
    return "0" if x == 0 else _e(f"{x:.4g}")


def _technique(data: Mapping[str, Any]) -> str:
    """The technique of the series a results.json mapping describes (cv when not said)."""
    return str((data.get("series") or {}).get("technique") or "cv")


def _file_table(files: Sequence[Mapping[str, Any]], technique: str = "cv") -> str:
    own_columns = technique_of_name(technique).report_columns
    shown = {*_FILE_COLUMNS, *technique_of_name(technique).hidden_keys}
    shown |= {key for _, key, _, _ in own_columns}
    extra: list[str] = []
    for f in files:
        for k, v in f.items():
            scalar = v is None or isinstance(v, (str, int, float, bool))
            if k not in shown and scalar and k not in extra:
                extra.append(k)
    heads = [
        "file",
        "[L] / mol L⁻¹",
        "free [L] / mol L⁻¹",
        "v / V s⁻¹",
        "E½ / mV",
        *(head for head, _, _, _ in own_columns),
        "Nernstian",
        "in fit",
    ]
    head = "".join(f"<th>{h}</th>" for h in heads)
    head += "".join(f"<th>{_extra_head(k)}</th>" for k in extra)
    width = len(heads) + len(extra)
    rows = []
    for f in files:
        name = _e(f.get("file"))
        if f.get("label"):
            name += f'<br><span class="sub">{_e(f["label"])}</span>'
        cells = [
            name,
            _number(f.get("ligand_M")),
            _number(f.get("free_ligand_M")),
            _number(f.get("scan_rate_V_s")),
            _e(format_pm(f.get("E_half_V"), f.get("E_half_stderr_V"), scale=1e3)),
            *(
                _e(format_value(f.get(key), scale=scale, digits=digits))
                for _, key, scale, digits in own_columns
            ),
            _yes_no(f.get("reversible")),
            _yes_no(f.get("used_in_fit")),
        ]
        cells += [_extra_cell(k, f.get(k)) for k in extra]
        tds = "".join(
            f'<td class="num">{c}</td>' if i else f"<td>{c}</td>" for i, c in enumerate(cells)
        )
        own = [fl for fl in f.get("flags") or [] if _severity(fl) != "info"]
        flags = _flag_list(own)
        cls = ' class="has-flags"' if flags else ""
        rows.append(f"<tr{cls}>{tds}</tr>")
        if flags:
            rows.append(f'<tr class="flags"><td colspan="{width}">{flags}</td></tr>')
    return (
        '<div class="scroll"><table class="files"><thead><tr>'
        + head
        + "</tr></thead><tbody>"
        + "".join(rows)
        + "</tbody></table></div>"
        + _notes(files)
    )


def _severity(flag: Mapping[str, Any]) -> str:
    """A flag's severity: as raised, else the catalogue's (:mod:`cvfit.flag_codes`)."""
    sev = flag.get("severity")
    if sev:
        return str(sev)
    code = FLAG_CODES.get(str(flag.get("code")))
    return code.severity if code is not None else "warning"


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
        text = where[0][1] if len(names) == 1 or catalogued is None else catalogued.meaning
        notes.append((code, text, names))
    return notes


def _notes(files: Sequence[Mapping[str, Any]]) -> str:
    notes = series_notes(files)
    if not notes:
        return ""
    items = []
    for code, text, names in notes:
        which = f"all {len(files)} files" if len(names) == len(files) > 1 else ", ".join(names)
        items.append(
            f'<li class="flag sev-info"><span class="code">{_e(code)}</span> {_e(text)} '
            f'<span class="sub">({_e(which)})</span></li>'
        )
    return (
        '<div class="notes"><h3>Notes</h3><p class="sub">How the values above were obtained '
        "(informational, no action needed); each note once, with the files it applies to. "
        "Every file's own messages are in results.json.</p><ul>" + "".join(items) + "</ul></div>"
    )


def _figures(figures: Sequence[Path]) -> str:
    parts = []
    for path in figures:
        p = Path(path)
        if p.suffix.lower() != ".png" or not p.is_file():
            continue
        b64 = base64.b64encode(p.read_bytes()).decode("ascii")
        caption = FIGURE_CAPTIONS.get(p.name, p.stem.replace("_", " "))
        parts.append(
            f'<figure><img alt="{_e(caption)}" src="data:image/png;base64,{b64}">'
            f'<figcaption>{_e(caption)} <span class="code">{_e(p.name)}</span>'
            "</figcaption></figure>"
        )
    return "".join(parts) or "<p>No figures were written.</p>"


def _method(fit: Mapping[str, Any]) -> str:
    steps = list(METHOD_STEPS)
    if fit.get("model") in MODEL_NAMES:
        steps += model_named(fit["model"]).method_steps
    out = []
    for heading, text, refs in steps:
        out.append(f"<h3>{_e(heading)}</h3><p>{_e(text)}</p>")
        if refs:
            out.append('<p class="refs">Source: ' + _e("; ".join(refs)) + ".</p>")
    out.append(
        "<h3>Assumptions cvfit cannot check for you</h3><ul>"
        + "".join(f"<li>{_e(a)}</li>" for a in ASSUMPTIONS)
        + "</ul>"
    )
    return "".join(out)


def _simulated_with(lines: Sequence[str]) -> str:
    if not lines:
        return ""
    return (
        '<section class="truth" id="simulated-with"><h2>Simulated data</h2><p>These '
        "voltammograms were simulated by cvfit, with the constants below; compare the "
        "constants found with them.</p><ul>"
        + "".join(f"<li>{_e(line)}</li>" for line in lines)
        + "</ul></section>"
    )


def render_html(
    data: Mapping[str, Any],
    figures: Sequence[str | Path] = (),
    *,
    simulated_with: Sequence[str] = (),
) -> str:
    """The report page for a results mapping (the results.json content).

    Parameters
    ----------
    data : mapping
        ``SeriesResult.to_dict()`` — the same mapping written to results.json.
    figures : sequence of path
        PNG files to embed, in order (other suffixes and missing files are skipped).
    simulated_with : sequence of str
        For simulated data only (the demo): the constants they were simulated with, in
        words, shown below the headline. Empty for measured data.

    Returns
    -------
    str
        A complete HTML5 document with no external resources.
    """
    s = data.get("series", {})
    title = s.get("title") or "untitled series"
    fit = data.get("fit") or {}
    headline = headline_lines(data)
    screen = headline[-1]
    ok = screen.startswith("All ")
    verdict = (
        '<section class="headline" id="headline">'
        + "".join(
            f'<p class="{"note" if line.startswith("(") else "lead"}">{_e(line)}</p>'
            for line in headline[:-1]
        )
        + f'<div class="verdict {"ok" if ok else "warn"}">{_e(screen)}</div></section>'
    )
    standard_html, figures = internal_standard_section(data, [Path(p) for p in figures])
    series_flags = list(data.get("flags") or []) + list(fit.get("flags") or [])
    flags_html = _flag_list(series_flags) or "<p>None.</p>"
    file_table = _file_table(data.get("voltammograms") or [], _technique(data))
    body = (
        f'<header><h1>{_e(title)}</h1><div class="sub">Voltammetric titration analysed by '
        f"cvfit {_e(data.get('cvfit_version'))}</div></header>"
        f"{verdict}{_simulated_with(simulated_with)}"
        f"<section><h2>Conditions</h2>{_conditions(data)}</section>"
        f"<section><h2>Constants</h2>{_constants(fit)}</section>"
        f"{error_budget_section(data)}{standard_html}"
        f"{global_fit_section(data)}"
        f"<section><h2>Series findings</h2>{flags_html}</section>"
        f"<section><h2>Voltammograms</h2>{columns_html(data.get('voltammograms') or [])}"
        f"{file_table}"
        "</section>"
        f"<section><h2>Figures</h2>{_figures([Path(p) for p in figures])}</section>"
        f"<section><h2>Method and sources</h2>{_method(fit)}</section>"
        "<section><h2>Laboratory cautions</h2><ul>"
        + "".join(f"<li>{_e(c)}</li>" for c in CAUTIONS)
        + "</ul></section>"
        "<footer>The numbers on this page are those of results.json in the same folder. "
        "Uncertainties are standard errors; intervals are 95 %.</footer>"
    )
    return (
        '<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8">'
        '<meta name="viewport" content="width=device-width, initial-scale=1">'
        '<meta http-equiv="Content-Security-Policy" content="default-src \'none\'; '
        "img-src data:; style-src 'unsafe-inline'\">"
        f"<title>{_e(title)} — cvfit report</title><style>{_CSS}</style></head>"
        f"<body><main>{body}</main></body></html>\n"
    )


def write_html_report(
    result: SeriesResult | Mapping[str, Any],
    path: str | Path,
    *,
    figures: Sequence[str | Path] = (),
    simulated_with: Sequence[str] = (),
) -> Path:
    """Write the report page atomically; returns the path."""
    path = Path(path)
    data = result.to_dict() if isinstance(result, SeriesResult) else result
    atomic_write_text(path, render_html(data, figures, simulated_with=simulated_with))
    return path
