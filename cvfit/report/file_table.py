"""Per-file CSV table of peak data and verdicts."""

from __future__ import annotations

import csv
from pathlib import Path
from typing import IO

from cvfit.pipeline.results import SeriesResult
from cvfit.report.atomic import atomic_write_with

__all__ = ["TABLE_COLUMNS", "write_file_table"]

#: Columns of the per-file table, with units in the names.
TABLE_COLUMNS = (
    "file",
    "ligand_M",
    "free_ligand_M",
    "scan_rate_V_s",
    "Epc_V",
    "Epa_V",
    "E_half_V",
    "E_half_stderr_V",
    "E_half_source",
    "delta_Ep_V",
    "expected_delta_Ep_V",
    "ipc_A",
    "ipa_A",
    "current_ratio",
    "reversible",
    "electron_transfer",
    "psi",
    "k0_cm_s",
    "k0_stderr_cm_s",
    "k0_lower_bound_cm_s",
    "curve_k0_cm_s",
    "curve_k0_lower_bound_cm_s",
    "curve_alpha",
    "curve_reduced_chi2",
    "standard_E_half_V",
    "standard_E_half_stderr_V",
    "standard_reversible",
    "used_in_fit",
    "flags",
)


def _kinetics_cells(d: dict) -> dict:
    """Flatten the per-file classification and kinetics records into table cells."""
    cls = d.get("classification") or {}
    kin = d.get("kinetics") or {}

    def value(q: object, key: str = "value") -> object:
        return q.get(key) if isinstance(q, dict) else q

    return {
        "electron_transfer": cls.get("kind"),
        "psi": value(kin.get("psi")),
        "k0_cm_s": value(kin.get("k0_cm_s")),
        "k0_stderr_cm_s": value(kin.get("k0_cm_s"), "stderr"),
        "k0_lower_bound_cm_s": kin.get("k0_lower_bound_cm_s"),
        **_curve_cells(d.get("curve_fit")),
        **_standard_cells(d.get("internal_standard")),
    }


def _standard_cells(std: dict | None) -> dict:
    """The internal standard's E½ on the electrode's scale, its error and its screen verdict
    (empty without a standard)."""
    if not std:
        return {}
    return {
        "standard_E_half_V": std["E_half_V"],
        "standard_E_half_stderr_V": std["E_half_stderr_V"],
        "standard_reversible": std["reversible"],
    }


def _curve_cells(fit: dict | None) -> dict:
    """k0, its lower bound, α and the reduced χ² of the curve fit (empty without one)."""
    if not fit:
        return {}
    return {
        "curve_k0_cm_s": fit["k0_cm_s"]["value"],
        "curve_k0_lower_bound_cm_s": fit["k0_cm_s"]["lower_bound"],
        "curve_alpha": fit["alpha"]["value"],
        "curve_reduced_chi2": fit["reduced_chi2"]["value"],
    }


def _cell(value: object) -> str:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:.10g}"
    return str(value)


def write_file_table(result: SeriesResult, path: str | Path) -> Path:
    """Write one row per voltammogram (empty cell = not determined)."""
    path = Path(path)

    def writer(fh: IO[str]) -> None:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(TABLE_COLUMNS)
        for f in result.files:
            d = f.to_dict()
            d["flags"] = " ".join(fl["code"] for fl in d["flags"])
            d.update(_kinetics_cells(d))
            w.writerow([_cell(d.get(c)) for c in TABLE_COLUMNS])

    atomic_write_with(path, writer)
    return path
