"""Cyclic voltammetry's own sections of the HTML report: the electron transfer file by file
(class, ψ and k0 from ΔEp, the curve fit's E½, k0 and α) and the scan-rate studies.

Read from the results.json mapping (the file records' ``classification``, ``kinetics`` and
``curve_fit``, and ``scan_rate_studies``) and returned as plain text
(:class:`cvfit.techniques.base.ReportSection`): the report places them without knowing
what they hold. Every value ± standard error is printed with the digits its standard error
justifies (:func:`cvfit.formatting.format_pm`); each cell carries the exact results.json
value for a program checking the page.

References
----------
R. S. Nicholson, Anal. Chem. 37 (1965) 1351 (ψ and k0 from ΔEp).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from cvfit.formatting import format_pm
from cvfit.record_json import record_json
from cvfit.techniques.base import ReportCell, ReportSection

__all__ = ["report_sections", "kinetics_section", "scan_rate_section"]

_NONE = ReportCell("—")


def _q(
    parent: Mapping[str, Any] | None, key: str, where: str, *, scale: float = 1.0
) -> ReportCell:
    """value ± standard error of the quantity *key* of *parent* ("—" when absent)."""
    q = (parent or {}).get(key)
    if not isinstance(q, Mapping) or q.get("value") is None:
        return _NONE
    shown = format_pm(q.get("value"), q.get("stderr"), scale=scale)
    return ReportCell(shown, record_json(q["value"], indent=None), f"{where}.{key}")


def _kinetics_cells(f: Mapping[str, Any]) -> list[ReportCell]:
    """Class, ψ, k0 and D of the ΔEp kinetics of one file record."""
    kind = (f.get("classification") or {}).get("kind")
    kin = f.get("kinetics") or {}
    k0 = _q(kin, "k0_cm_s", "kinetics")
    bound = kin.get("k0_lower_bound_cm_s")
    if k0 is _NONE and bound is not None:
        k0 = ReportCell(
            f"≥ {bound:.2g}", record_json(bound, indent=None), "kinetics.k0_lower_bound_cm_s"
        )
    return [
        ReportCell(str(kind) if kind else "—"),
        _q(kin, "psi", "kinetics"),
        k0,
        _q(kin, "D_cm2_s", "kinetics", scale=1e6),
    ]


def _curve_cells(f: Mapping[str, Any]) -> list[ReportCell]:
    """E½, k0, α and reduced χ² of the file's curve fit, and whether its E½ was used."""
    fit = f.get("curve_fit")
    if not fit:
        return [_NONE] * 5
    k0 = _q(fit, "k0_cm_s", "curve_fit")
    bound = (fit.get("k0_cm_s") or {}).get("lower_bound")
    if bound is not None:
        k0 = ReportCell(f"> {bound:.3g}", record_json(bound, indent=None), "curve_fit.k0_cm_s")
    used = "used" if f.get("E_half_source") == "curve" else "not used"
    if not fit.get("accepted", True):
        used = "refused"
    return [
        _q(fit, "E_half_V", "curve_fit", scale=1e3),
        k0,
        _q(fit, "alpha", "curve_fit"),
        _q(fit, "reduced_chi2", "curve_fit"),
        ReportCell(used),
    ]


def kinetics_section(files: Sequence[Mapping[str, Any]]) -> ReportSection | None:
    """The electron transfer of every file the series study or a curve fit described."""
    shown = [
        f for f in files if f.get("classification") or f.get("kinetics") or f.get("curve_fit")
    ]
    if not shown:
        return None
    rows = tuple(
        (ReportCell(str(f.get("file"))), *_kinetics_cells(f), *_curve_cells(f)) for f in shown
    )
    sources = sorted({str(s) for f in shown if (s := (f.get("kinetics") or {}).get("D_source"))})
    notes = (f"D for k0 from ΔEp: {'; '.join(sources)}.",) if sources else ()
    return ReportSection(
        key="cv-kinetics",
        title="Electron transfer, file by file",
        intro=(
            "Class of each voltammogram and, from its ΔEp at the scan rate used, Nicholson's "
            "ψ and k0 (Nicholson, Anal. Chem. 37 (1965) 1351); where the whole curve was "
            "fitted, the fit's E½, k0 and α. Values ± standard error."
        ),
        headers=(
            "file",
            "class",
            "ψ (from ΔEp)",
            "k0 (from ΔEp) / cm s⁻¹",
            "D / 10⁻⁶ cm² s⁻¹",
            "curve-fit E½ / mV",
            "curve-fit k0 / cm s⁻¹",
            "curve-fit α",
            "reduced χ²",
            "curve fit",
        ),
        rows=rows,
        notes=notes,
    )


def _verdict(st: Mapping[str, Any]) -> str:
    if not st.get("delta_Ep_grows"):
        return "ΔEp steady"
    cause = st.get("excess_cause")
    return "ΔEp grows with v" + (f" (cause: {cause})" if cause and cause != "none" else "")


def scan_rate_section(studies: Sequence[Mapping[str, Any]]) -> ReportSection | None:
    """One row per solution recorded at three or more scan rates: its slopes and verdict."""
    if not studies:
        return None
    rows = []
    for i, st in enumerate(studies):
        where = f"scan_rate_studies[{i}]"
        rates = ", ".join(f"{1e3 * v:.4g}" for v in st.get("scan_rates_V_s") or [])
        flags = ", ".join(str(fl.get("code")) for fl in st.get("flags") or []) or "none"
        rows.append(
            (
                ReportCell(f"{st.get('ligand_M', 0.0):.4g}"),
                ReportCell(str(len(st.get("files") or []))),
                ReportCell(rates),
                _q(st, "log_log_slope", where),
                _q(st, "D_cm2_s", where, scale=1e6),
                _q(st, "delta_Ep_slope_V_per_decade", where, scale=1e3),
                _q(st, "E_half_slope_V_per_decade", where, scale=1e3),
                _q(st, "Ep_slope_V_per_decade", where, scale=1e3),
                _q(st, "alpha_n", where),
                _q(st, "ir_resistance_ohm", where),
                ReportCell(_verdict(st)),
                ReportCell(flags),
            )
        )
    return ReportSection(
        key="cv-scan-rate",
        title="Scan-rate studies",
        intro=(
            "Solutions recorded at three or more scan rates: the slope of log10 ip against "
            "log10 v (0.5 for diffusion control), D from the Randles–Ševčík slope, and the "
            "slopes of the excess n·ΔEp, of E½ and of the forward Ep per decade of v. "
            "Values ± standard error; the files are listed in results.json."
        ),
        headers=(
            "[L] / mol L⁻¹",
            "files",
            "v / mV s⁻¹",
            "d log ip / d log v",
            "D / 10⁻⁶ cm² s⁻¹",
            "excess n·ΔEp / mV per decade",
            "E½ / mV per decade",
            "Ep / mV per decade",
            "αn",
            "R_u (iR model) / Ω",
            "verdict",
            "flags",
        ),
        rows=tuple(rows),
    )


def report_sections(data: Mapping[str, Any]) -> list[ReportSection]:
    """Cyclic voltammetry's sections of the report for the results.json mapping *data*."""
    found = (
        kinetics_section(data.get("voltammograms") or []),
        scan_rate_section(data.get("scan_rate_studies") or []),
    )
    return [s for s in found if s is not None]
