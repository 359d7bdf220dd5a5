"""Readable terminal summary of a series analysis (returned as text; cli prints it)."""

from __future__ import annotations

from cvfit.errors import printable
from cvfit.pipeline.results import SeriesResult
from cvfit.quantity import Quantity
from cvfit.report.formatting import format_pm, format_value
from cvfit.report.headline import headline_lines
from cvfit.report.imported_columns import columns_lines
from cvfit.titration.lingane import LinganeFit
from cvfit.titration.stepwise_result import StepwiseFit

__all__ = ["format_summary"]


def _q(q: Quantity, *, scale: float = 1.0, unit: str = "", digits: int | None = None) -> str:
    text = format_pm(q.value, q.stderr, scale=scale, unit=unit)
    lo, hi = q.ci95
    if text == "n/d":
        return text
    if digits is None:
        digits = max(0, len(text.split(" ± ")[0].split(".")[-1])) if "." in text else 0
    return f"{text}   95 % CI [{lo * scale:.{digits}f}, {hi * scale:.{digits}f}]"


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
    ref = result.reference
    lines.append(
        "E½(s), ligand-free: "
        + format_pm(ref.E_half_V, ref.stderr_V, scale=1e3, unit="mV")
        + f"  (from {ref.source}{': ' + ', '.join(ref.files) if ref.files else ''})"
    )
    lines.extend(_standard_lines(result))
    lines.append("")
    e_halves = [format_pm(f.E_half_V, f.E_half_total_stderr_V, scale=1e3) for f in result.files]
    w = max([16, *map(len, e_halves)])  # "150.1 (uncertainty unknown)" is wider than 16
    header = (
        f"{'file':<22} {'[L]/M':>9} {'E½/mV':>{w}} {'ΔEp/mV':>7} {'Nernst':>7} "
        f"{'ipa/ipc':>7} {'rev':>4} {'fit':>4}"
    )
    lines.append(header)
    lines.append("-" * len(header))
    for f, e_half in zip(result.files, e_halves, strict=True):
        p = f.measurement.peaks
        rev = {True: "yes", False: "NO", None: "n/d"}[f.reversible]
        name = printable(f.file)
        name = name if len(name) <= 22 else "…" + name[-21:]
        lines.append(
            f"{name:<22} {f.ligand_M:>9.3g} {e_half:>{w}} "
            f"{format_value(p.delta_Ep_V, scale=1e3):>7} "
            f"{format_value(f.measurement.screen.expected_delta_Ep_V, scale=1e3):>7} "
            f"{format_value(p.current_ratio, digits=2):>7} {rev:>4} "
            f"{'yes' if f.used_in_fit else '-':>4}"
        )
    lines.append("")
    read = columns_lines([(f.file, f.imported_columns) for f in result.files])
    lines.extend([*read, ""] if read else [])
    from cvfit.report.summary_kinetics import kinetics_lines

    lines.extend(kinetics_lines(result))
    from cvfit.report.summary_curve import curve_lines, global_lines

    lines.extend(curve_lines(result))
    fit = result.fit
    if isinstance(fit, StepwiseFit):
        from cvfit.report.summary_stepwise import stepwise_lines

        lines.extend(stepwise_lines(fit))
    elif isinstance(fit, LinganeFit):
        lines.append(
            f"Lingane fit on {fit.n_points} points ({fit.dof} degrees of freedom, "
            f"{'weighted by per-file E½ errors' if fit.weighted else 'unweighted'}):"
        )
        lines.append(
            "  slope                 " + _q(fit.slope_V_per_decade, scale=1e3, unit="mV/decade")
        )
        lines.append("  p − q                 " + _q(fit.delta_ligands))
        lines.append("  log10(β_ox/β_red)     " + _q(fit.log10_beta_ratio))
        lines.append(
            f"  with p − q = {fit.delta_ligands_integer}:       "
            + _q(fit.log10_beta_ratio_at_integer)
        )
        lines.append("  (β_ox/β_red in (mol/L)^-(p−q); [L] in mol/L)")
    else:
        lines.append("No constants: see the series flags below.")
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
