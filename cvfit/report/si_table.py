"""The supporting-information table: per-file results and the constants, as CSV and LaTeX.

Both files hold the same numbers, rounded alike: an uncertainty to two significant digits
and its value to the same decimal place (:func:`cvfit.formatting.pm_parts`); units stand in
the headers. ``si_table.csv`` holds two blocks, each under its own header row, separated by
an empty row: the files, then the constants (value and standard error in columns of their
own, for a spreadsheet). ``si_table.tex`` is a small LaTeX document (``pdflatex`` compiles it
as it is) whose two ``tabular`` environments, ruled with the ``booktabs`` package, can be
copied into a manuscript; every text cell is escaped for LaTeX.

Built from the results.json mapping, so the tables show exactly what results.json holds.
"""

from __future__ import annotations

import csv
import io
import math
import re
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from cvfit.formatting import pm_parts
from cvfit.report.atomic import atomic_write_text
from cvfit.report.file_table import text_cell
from cvfit.report.html_view import fitted_constants

__all__ = ["si_csv", "si_latex", "latex_text", "write_si_tables", "SI_FILE_COLUMNS"]


@dataclass(frozen=True)
class _Column:
    """One per-file column: CSV header(s), LaTeX header, and the cell(s) of a record."""

    csv: tuple[str, ...]
    tex: str
    cells: Callable[[Mapping[str, Any]], tuple[str, ...]]
    key: str


def _conc(key: str) -> Callable[[Mapping[str, Any]], tuple[str, ...]]:
    def cells(f: Mapping[str, Any]) -> tuple[str, ...]:
        x = f.get(key)
        ok = isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)
        return (f"{x:.4g}" if ok else "",)

    return cells


def _e_half(f: Mapping[str, Any]) -> tuple[str, ...]:
    value, err = f.get("E_half_V"), f.get("E_half_stderr_V")
    if not isinstance(value, (int, float)) or not math.isfinite(value):
        return ("", "")
    if not isinstance(err, (int, float)) or not math.isfinite(err):
        return (f"{value * 1e3:.4g}", "")
    return pm_parts(value, err, scale=1e3)


def _in_fit(f: Mapping[str, Any]) -> tuple[str, ...]:
    reason = f.get("excluded_by_user")
    if reason:
        return (f"no: {reason}",)
    used = f.get("used_in_fit")
    if not used and f.get("_gave_reference"):
        return ("E½(s)",)  # the ligand-free reference: in the fit as its origin
    return ("" if used is None else ("yes" if used else "no"),)


def _files(data: Mapping[str, Any]) -> list[Mapping[str, Any]]:
    """The per-file records, each marked when it gave the reference E½(s)."""
    ref = data.get("reference") or {}
    gave = set(ref.get("files") or ()) if ref.get("E_half_V") is not None else set()
    return [
        {**f, "_gave_reference": f.get("file") in gave} for f in data.get("voltammograms") or []
    ]


def _plain(key: str) -> Callable[[Mapping[str, Any]], tuple[str, ...]]:
    return lambda f: ("" if f.get(key) is None else str(f.get(key)),)


_PER_L = r"mol\,L$^{-1}$"
#: The per-file columns, in order; one with no value in any file is left out.
SI_FILE_COLUMNS = (
    _Column(("file",), "file", _plain("file"), "file"),
    _Column(("label",), "label", _plain("label"), "label"),
    _Column(
        ("[L] total / mol L⁻¹",),
        rf"$[\mathrm{{L}}]_\mathrm{{total}}$ / {_PER_L}",
        _conc("ligand_M"),
        "ligand_M",
    ),  # fmt: skip
    _Column(
        ("[L] free / mol L⁻¹",),
        rf"$[\mathrm{{L}}]_\mathrm{{free}}$ / {_PER_L}",
        _conc("free_ligand_M"),
        "free_ligand_M",
    ),  # fmt: skip
    _Column(
        ("[M] total / mol L⁻¹",),
        rf"$[\mathrm{{M}}]_\mathrm{{total}}$ / {_PER_L}",
        _conc("metal_M"),
        "metal_M",
    ),  # fmt: skip
    _Column(("v / V s⁻¹",), r"$v$ / V\,s$^{-1}$", _conc("scan_rate_V_s"), "scan_rate_V_s"),
    _Column(("E½ / mV", "u(E½) / mV"), r"$E_{1/2}$ / mV", _e_half, "E_half_V"),
    _Column(("E½ from",), r"$E_{1/2}$ from", _plain("E_half_source"), "E_half_source"),
    _Column(("in fit",), "in fit", _in_fit, "used_in_fit"),
)
_CONSTANT_CSV = ("constant", "value", "standard error", "95 % CI low", "95 % CI high", "unit")


def _files_columns(files: Sequence[Mapping[str, Any]]) -> list[_Column]:
    return [c for c in SI_FILE_COLUMNS if any(f.get(c.key) not in (None, "") for f in files)]


def _constant_rows(fit: Mapping[str, Any]) -> list[tuple[str, str, str, str, str, str]]:
    """(label, value, stderr, CI low, CI high, unit), rounded alike; '' where missing."""
    rows = []
    for _, label, q, scale, unit in fitted_constants(fit):
        value, err = q.get("value"), q.get("stderr")
        if not isinstance(value, (int, float)) or not math.isfinite(value):
            rows.append((label, "", "", "", "", unit))
            continue
        if isinstance(err, (int, float)) and math.isfinite(err):
            shown, u = pm_parts(value, err, scale=scale)
        else:
            shown, u = f"{value * scale:.4g}", ""
        d = len(shown.split(".")[1]) if "." in shown else 0
        ci = [x for x in (q.get("ci95") or []) if isinstance(x, (int, float))]
        lo, hi = (f"{x * scale:.{d}f}" for x in ci) if len(ci) == 2 else ("", "")
        rows.append((label, shown, u, lo, hi, unit))
    return rows


def si_csv(data: Mapping[str, Any]) -> str:
    """The CSV text of the table of the results mapping *data*."""
    files = _files(data)
    columns = _files_columns(files)
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow([h for c in columns for h in c.csv])
    for f in files:
        w.writerow([text_cell(cell) if c.key in ("file", "label") else cell
                    for c in columns for cell in c.cells(f)])  # fmt: skip
    w.writerow([])
    w.writerow(_CONSTANT_CSV)
    for row in _constant_rows(data.get("fit") or {}):
        w.writerow([text_cell(row[0]), *row[1:]])
    return out.getvalue()


_LATEX_SPECIAL = {
    "\\": r"\textbackslash{}",
    "&": r"\&",
    "%": r"\%",
    "$": r"\$",
    "#": r"\#",
    "_": r"\_",
    "{": r"\{",
    "}": r"\}",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
    "<": r"\textless{}",
    ">": r"\textgreater{}",
    "|": r"\textbar{}",
}
#: Symbols of cvfit's labels and units, in LaTeX that pdflatex knows without extra packages.
_LATEX_SYMBOLS = {
    "β": r"$\beta$", "α": r"$\alpha$", "Δ": r"$\Delta$", "σ": r"$\sigma$", "χ": r"$\chi$",
    "ν": r"$\nu$", "µ": r"$\mu$", "μ": r"$\mu$", "−": r"$-$", "±": r"$\pm$", "°": r"$^\circ$",
    "½": r"$_{1/2}$", "·": r"$\cdot$", "—": "---", "–": "--", "…": r"\ldots{}",
    "→": r"$\rightarrow$", "≥": r"$\geq$", "≤": r"$\leq$", "×": r"$\times$",
}  # fmt: skip
_SUPERSCRIPTS = str.maketrans("⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺", "0123456789-+")
_SUPERSCRIPT_RUN = re.compile("([⁰¹²³⁴⁵⁶⁷⁸⁹⁻⁺]+)")


def latex_text(text: str) -> str:
    """*text* as LaTeX text: special characters escaped, the symbols of cvfit's labels in
    math mode, Unicode superscripts as ``\\textsuperscript``; a character pdflatex cannot
    set without extra packages (beyond Latin-1 letters) shows as ``?`` (the CSV keeps it)."""
    out = []
    for k, part in enumerate(_SUPERSCRIPT_RUN.split(text)):
        if k % 2:  # a run of superscripts (the pattern's group)
            out.append(r"\textsuperscript{" + part.translate(_SUPERSCRIPTS) + "}")
            continue
        for ch in part:
            if ch in _LATEX_SPECIAL:
                out.append(_LATEX_SPECIAL[ch])
            elif ch in _LATEX_SYMBOLS:
                out.append(_LATEX_SYMBOLS[ch])
            elif ch.isprintable() and (ord(ch) < 128 or (ord(ch) < 256 and ch.isalpha())):
                out.append(ch)
            else:
                out.append("?")
    return "".join(out)


def _tex_cell(column: _Column, f: Mapping[str, Any]) -> str:
    cells = column.cells(f)
    if column.key == "E_half_V":
        value, err = cells
        return f"${value} \\pm {err}$" if value and err else (f"${value}$" if value else "")
    if column.key in ("file", "label", "E_half_source", "used_in_fit"):
        return latex_text(cells[0])
    return f"${cells[0]}$" if cells[0] else ""


def _tabular(heads: Sequence[str], rows: Sequence[Sequence[str]], align: str) -> list[str]:
    return [
        rf"\begin{{tabular}}{{{align}}}",
        r"\toprule",
        " & ".join(heads) + r" \\",
        r"\midrule",
        *(" & ".join(row) + r" \\" for row in rows),
        r"\bottomrule",
        r"\end{tabular}",
    ]


def si_latex(data: Mapping[str, Any]) -> str:
    """The LaTeX document of the table of the results mapping *data*."""
    files = _files(data)
    columns = _files_columns(files)
    title = latex_text(str((data.get("series") or {}).get("title") or "untitled series"))
    file_rows = [[_tex_cell(c, f) for c in columns] for f in files]
    align = "".join("l" if c.key in ("file", "label", "E_half_source", "used_in_fit") else "r"
                    for c in columns)  # fmt: skip
    const_rows = [
        [
            latex_text(label) + (f" / {latex_text(unit)}" if unit else ""),
            (f"${v} \\pm {u}$" if u else f"${v}$") if v else "n/d",
            f"[${lo}$, ${hi}$]" if lo and hi else "n/d",
        ]
        for label, v, u, lo, hi, unit in _constant_rows(data.get("fit") or {})
    ]
    lines = [
        "% Supporting information written by cvfit: per-file results and the constants.",
        "% Values +- standard error, the error to two significant digits; copy the tabular",
        "% environments (they need \\usepackage{booktabs}).",
        r"\documentclass{article}",
        r"\usepackage[T1]{fontenc}",
        r"\usepackage[utf8]{inputenc}",
        r"\usepackage{booktabs}",
        r"\usepackage[margin=1.5cm,landscape]{geometry}",
        r"\begin{document}",
        rf"\section*{{{title}}}",
        r"\subsection*{Per-file results}",
        r"{\small",
        *_tabular([c.tex for c in columns], file_rows, align),
        "}",
        r"\subsection*{Constants}",
        *_tabular(["constant", "value", r"95\,\% confidence interval"], const_rows, "lrr"),
        r"\end{document}",
    ]
    return "\n".join(lines) + "\n"


def write_si_tables(data: Mapping[str, Any], csv_path: Path, tex_path: Path) -> dict[str, Path]:
    """Write both files; returns them by output key (``si_table_csv``, ``si_table_tex``)."""
    atomic_write_text(csv_path, si_csv(data))
    atomic_write_text(tex_path, si_latex(data))
    return {"si_table_csv": csv_path, "si_table_tex": tex_path}
