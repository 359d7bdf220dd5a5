"""Build simulated titration series on disk for the end-to-end tests.

Truth used throughout (a single dominant complex in each state, labile limit):
oxidised state ML2 with log β2 = 11.0, reduced state ML with log β1 = 5.0, so
p − q = 1 and log10(β_ox/β_red) = 6.0 (Lingane, Chem. Rev. 29 (1941) 1).
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.simulate.voltammogram import simulate_cv

TRUE_LOG10_RATIO = 6.0
TRUE_DELTA_LIGANDS = 1
LOG_BETA_OX = (-20.0, 11.0)  # β1 negligible: ML2 dominates over the range used
LOG_BETA_RED = (5.0,)
E_HALF_FREE_V = 0.0
LIGAND_M = (0.0, 0.01, 0.02, 0.04, 0.08, 0.15, 0.3)


def toml_value(x: object) -> str:
    if isinstance(x, bool):
        return "true" if x else "false"
    if isinstance(x, str):
        return '"' + x.replace("\\", "\\\\").replace('"', '\\"') + '"'
    return repr(x)


def write_manifest(
    path: Path,
    entries: Sequence[dict],
    *,
    series: dict | None = None,
    fit: dict | None = None,
    import_options: dict | None = None,
) -> Path:
    lines = ["[series]"]
    for k, v in (series or {"electrons": 1, "title": "simulated series"}).items():
        lines.append(f"{k} = {toml_value(v)}")
    for table, content in (("import", import_options), ("fit", fit)):
        if content:
            lines.append(f"[{table}]")
            lines += [f"{k} = {toml_value(v)}" for k, v in content.items()]
    for e in entries:
        lines.append("[[voltammogram]]")
        lines += [f"{k} = {toml_value(v)}" for k, v in e.items()]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def simulate_point(
    ligand_M: float,
    *,
    seed: int,
    electrons: int = 1,
    noise_fraction: float = 0.005,
    k0_cm_s: float | None = None,
    step_V: float = 0.001,
    cycles: int = 1,
):
    e_half = float(
        complexed_half_wave_V(
            E_HALF_FREE_V,
            ligand_M=ligand_M,
            log10_beta_ox=LOG_BETA_OX,
            log10_beta_red=LOG_BETA_RED,
            electrons=electrons,
        )
    )
    return simulate_cv(
        E_half_V=e_half,
        start_V=0.25,
        switch_V=-0.65,
        electrons=electrons,
        cycles=cycles,
        step_V=step_V,
        scan_rate_V_s=0.1,
        k0_cm_s=k0_cm_s,
        double_layer_F=5e-6,
        background_slope_A_per_V=2e-6,
        noise_fraction=noise_fraction,
        seed=seed,
    )


def write_plain_csv(path: Path, v) -> Path:
    block = np.column_stack([v.time_s, v.potential_V, v.current_A])
    np.savetxt(
        path, block, delimiter=",", header="time_s,potential_V,current_A", comments="", fmt="%.10g"
    )
    return path


def write_small_series(
    folder: Path, files: int, *, seed: int, step_V: float = 0.001, prefix: str = "f"
) -> Path:
    """The first *files* points of ``LIGAND_M`` simulated and written with a manifest."""
    entries = []
    for k, ligand in enumerate(LIGAND_M[:files]):
        name = f"{prefix}{k}.csv"
        write_plain_csv(folder / name, simulate_point(ligand, seed=seed + k, step_V=step_V))
        entries.append({"file": name, "ligand_M": ligand})
    return write_manifest(folder / "series.toml", entries, series={"electrons": 1})
