"""Readable terminal summary of a series analysis (returned as text; cli prints it)."""

from __future__ import annotations

from dataclasses import asdict

from cvfit.errors import printable
from cvfit.formatting import additions_text, format_pm
from cvfit.pipeline.results import SeriesResult
from cvfit.report.headline import headline_lines
from cvfit.report.imported_columns import columns_lines
from cvfit.techniques import technique_of_name
from cvfit.titration.registry import model_named
from cvfit.units import ZERO_CELSIUS_K

__all__ = ["format_summary"]


def format_summary(result: SeriesResult) -> str:
    """A few dozen lines: the headline (constants with intervals, what the screen left
    out), conditions, per-file table, the fit in detail, flags."""
    s = result.series
    lines = [*headline_lines(result.to_dict()), ""]
    title = printable(s.title or "(untitled series)", limit=200)  # one safe line
    lines.append(f"cvfit {result.cvfit_version} — {title}")
    cond = f"n = {s.electrons}, T = {s.temperature_K:.2f} K"
    if s.reference_electrode:
        cond += f", potentials vs {s.reference_electrode}"
    lines.append(cond)
    if s.titration is not None:
        lines.append("titration by additions: " + additions_text(asdict(s.titration)))
    ref = result.reference
    if ref.source != "none":  # a pH or temperature series needs no E½(s)
        lines.append(
            "E½(s), ligand-free: "
            + format_pm(ref.E_half_V, ref.stderr_V, scale=1e3, unit="mV")
            + f"  (from {ref.source}{': ' + ', '.join(ref.files) if ref.files else ''})"
        )
    lines.extend(_standard_lines(result))
    lines.append("")
    lines.extend(_file_table(result))
    lines.append("")
    read = columns_lines([(f.file, f.imported_columns) for f in result.files])
    lines.extend([*read, ""] if read else [])
    technique = technique_of_name(result.series.technique)
    own = [f for f in result.files if f.measurement.technique == technique.name]
    lines.extend(technique.summary_lines(own, result.scan_rate_studies))
    fit = result.fit
    if fit is not None:
        lines.extend(fit.summary_lines())
    elif any(fl.code == "NO_TITRATION" for fl in result.flags):
        lines.append("No titration (every file is ligand-free): no constants.")
    else:
        lines.append("No constants: see the series flags below.")
    from cvfit.report.summary_global import global_lines

    lines.extend(global_lines(result))
    lines.append("")
    flagged = [
        (printable(f.file), fl) for f in result.files for fl in f.flags if fl.severity != "info"
    ]
    series_flags = list(result.flags) + (list(fit.flags) if fit is not None else [])
    if flagged or series_flags:
        lines.append("Flags:")
        for fl in series_flags:
            lines.append(f"  [series] {fl.code}: {fl.message}")
        for name, fl in flagged:
            lines.append(f"  [{name}] {fl.code}: {fl.message}")
    while lines and not lines[-1]:
        lines.pop()
    return "\n".join(lines)


def _file_table(result: SeriesResult) -> list[str]:
    """The per-file table: solution, E½ ± σ, the technique's columns, verdict, use."""
    e_halves = [format_pm(f.E_half_V, f.E_half_total_stderr_V, scale=1e3) for f in result.files]
    w = max([16, *map(len, e_halves)])  # "150.1 (uncertainty unknown)" is wider than 16
    cells = [f.measurement.summary_cells() for f in result.files]
    heads = list(dict.fromkeys(h for c in cells for h in c))  # a [[point]] has none
    widths = {h: max([len(h), *(len(c.get(h, "")) for c in cells)]) for h in heads}
    own = " ".join(f"{h:>{widths[h]}}" for h in heads)
    head, value = _solution_column(result)
    solutions = [value(f) for f in result.files]
    sw = max([9, len(head), *map(len, solutions)])
    header = f"{'file':<22} {head:>{sw}} {'E½/mV':>{w}} {own} {'rev':>4} {'fit':>4}"
    lines = [header, "-" * len(header)]
    for f, x, e_half, c in zip(result.files, solutions, e_halves, cells, strict=True):
        rev = {True: "yes", False: "NO", None: "n/d"}[f.reversible]
        name = printable(f.file)
        name = name if len(name) <= 22 else "…" + name[-21:]
        row = " ".join(f"{c.get(h, ''):>{widths[h]}}" for h in heads)
        used = "yes" if f.used_in_fit else ("excl" if f.excluded_by_user else "-")
        lines.append(f"{name:<22} {x:>{sw}} {e_half:>{w}} {row} {rev:>4} {used:>4}")
    left = _excluded_lines(result)
    return lines + ["", *left] if left else lines


def _excluded_lines(result: SeriesResult) -> list[str]:
    """The files the manifest leaves out (``exclude``), each with the user's reason."""
    left = [f for f in result.files if f.excluded_by_user is not None]
    if not left:
        return []
    lines = ["excl = left out of the fits by the manifest:"]
    for f in left:
        reason = printable(str(f.excluded_by_user), limit=200)
        lines.append(f"  {printable(f.file)}: {reason}")
    return lines


def _solution_column(result: SeriesResult):
    """The per-file table's solution column: the model's titration variable (ligand, pH
    or temperature), as header and a function of the file."""
    variable = model_named(result.series.model).variable

    def shown(x: float | None, fmt: str, offset: float = 0.0) -> str:
        return "n/d" if x is None else f"{x - offset:{fmt}}"

    if variable == "pH":
        return "pH", lambda f: shown(f.pH, ".2f")
    if variable == "temperature_K":
        return "T/°C", lambda f: shown(f.temperature_K, ".1f", ZERO_CELSIUS_K)
    # as many digits as the manifest gave (up to 6): 0.0125 and 0.01255 stay apart
    if all(f.metal_M is None for f in result.files):
        return "[L]/M", lambda f: f"{f.ligand_M:.6g}"
    # each solution's own metal (and volume, with additions): the dilution shown
    with_volume = any(f.volume_mL is not None for f in result.files)

    def solution(f) -> str:  # noqa: ANN001 (a FileResult)
        cells = f"{f.ligand_M:>10.6g} {shown(f.metal_M, '.4g'):>10}"
        return f"{cells} {shown(f.volume_mL, '.4g'):>6}" if with_volume else cells

    head = f"{'[L]/M':>10} {'[M]/M':>10}"
    return (f"{head} {'V/mL':>6}" if with_volume else head), solution


def _standard_lines(result: SeriesResult) -> list[str]:
    """With an internal standard: E½ are quoted against it, and how far it drifted."""
    stds = [f.internal_standard for f in result.files if f.internal_standard is not None]
    if not stds:
        return []
    values = [s.E_half_V for s in stds if s.E_half_V is not None]
    failed = sum(1 for s in stds if s.reversible is not True)
    line = "E½ quoted against the internal standard measured in each file"
    if values:
        line += (
            f"; its E½ on the electrode's scale spans {1e3 * (max(values) - min(values)):.2f} mV"
            " along the series (the electrode's drift, cancelled)"
        )
    if failed:
        line += f"; it failed its own screen in {failed} file(s)"
    return [line]
