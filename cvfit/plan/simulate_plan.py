"""Write a planned titration as simulated voltammograms and a manifest (``--simulate``).

The series is the ligand-free reference plus every planned solution, simulated by
:func:`cvfit.simulate.titration_series.simulate_series` (or, for a plan's ``technique``
dpv, swv or wave, :func:`cvfit.simulate.program_series.simulate_technique_series`) at the
expected constants; with
``metal_total_M`` each voltammogram is simulated at the free ligand of the mass balance and
the manifest records the total ligand and the metal, as a chemist's manifest would, so
that ``cvfit run`` applies its own free-ligand correction.
"""

from __future__ import annotations

import math
import re
from pathlib import Path
from typing import Any

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.plan.information import free_ligand
from cvfit.plan.planner import spec_of
from cvfit.plan.result import PlanResult
from cvfit.simulate.program_series import simulate_technique_series
from cvfit.simulate.titration_series import simulate_series

__all__ = [
    "simulate_plan",
    "SIMULATION_MARGIN_V",
    "LINGANE_LOWER_LOG10_BETA",
    "E_HALF_SD_PER_NOISE_V",
    "noise_fraction_for",
    "E_HALF_SD_PER_NOISE_BY_TECHNIQUE_V",
]

#: Potential window beyond the highest/lowest E½ of the series, V.
SIMULATION_MARGIN_V = 0.3
#: log10 β_j given to the complexes below ML_(p−q) when a Lingane plan is simulated (one
#: complex only; the reduced form is taken as uncomplexed).
LINGANE_LOWER_LOG10_BETA = -30.0
#: SD of a simulated file's E½ per unit of noise fraction for n = 1, V: measured over 40
#: seeds at 0.5 % noise (1 mV steps, 0.1 V/s, the peak analysis and switching correction):
#: 0.178 mV, 0.115 mV for n = 2 (the 1/√n below gives 0.126 mV).
E_HALF_SD_PER_NOISE_V = 0.0356


#: The same for a record of each pulse technique and a wave, with the programs of
#: :data:`cvfit.simulate.program_series.PROGRAM_DEFAULTS`: the pooled SD over 360 records
#: at 0.5 % noise of the peak (or limiting) current, n = 1 (the wave's E½ scatters unevenly
#: from seed to seed: 0.016–0.024 V in sets of 60–100); for n = 2 (60 records) 0.0118,
#: 0.0134, 0.0162 V, where the 1/√n below gives 0.0116, 0.0120, 0.0142 V.
E_HALF_SD_PER_NOISE_BY_TECHNIQUE_V = {"dpv": 0.0164, "swv": 0.0169, "wave": 0.0201}


def noise_fraction_for(E_half_stderr_V: float, electrons: int, technique: str = "cv") -> float:
    """Noise fraction of the simulated records that gives the plan's per-file E½ error."""
    per_noise = E_HALF_SD_PER_NOISE_BY_TECHNIQUE_V.get(technique, E_HALF_SD_PER_NOISE_V)
    return float(E_half_stderr_V) * math.sqrt(electrons) / per_noise


def _constants(result: PlanResult) -> tuple[list[float], list[float]]:
    req = result.request
    if req.model == "lingane":
        ratio, delta = req.values
        p = max(int(round(delta)), 1)
        return [LINGANE_LOWER_LOG10_BETA] * (p - 1) + [float(ratio)], []
    fitted = [float(x) for x in req.values]
    fixed = [float(x) for x in req.fixed_log10_beta]
    return (fitted, fixed) if req.fitted_state == "ox" else (fixed, fitted)


def simulate_plan(
    result: PlanResult,
    out_dir: str | Path,
    *,
    design: str = "recommended",
    noise_fraction: float | None = None,
    seed: int | None = 0,
    overwrite: bool = False,
) -> Path:
    """Simulate ``design`` of the plan into ``out_dir``; returns the manifest path.

    ``noise_fraction`` None (the default): the noise that gives the plan's own per-file
    E½ standard error (:func:`noise_fraction_for`), so the trial is as precise as the plan.

    Raises
    ------
    cvfit.errors.SimulationError
        A target file exists (without ``overwrite``) or the simulation fails.
    """
    req = result.request
    if noise_fraction is None:
        noise_fraction = noise_fraction_for(req.E_half_stderr_V, req.electrons, req.technique)
    d = result.design(design)
    if d is None:
        raise ValueError(f"the plan has no {design!r} design")
    total = np.array(d.ligand_M)
    free = free_ligand(spec_of(req), np.array(req.values), total)
    beta_ox, beta_red = _constants(result)
    ligands = [0.0, *(float(x) for x in free)]
    halves = complexed_half_wave_V(
        req.E_half_free_V,
        ligand_M=np.array(ligands),
        log10_beta_ox=beta_ox,
        log10_beta_red=beta_red,
        electrons=req.electrons,
        temperature_K=req.temperature_K,
    )
    title = f"{req.title} ({design} design, simulated)"
    common: dict[str, Any] = dict(
        ligand_M=ligands, E_half_free_V=req.E_half_free_V, log10_beta_ox=beta_ox,
        log10_beta_red=beta_red, electrons=req.electrons, title=title,
        noise_fraction=noise_fraction, seed=seed, overwrite=overwrite,
        temperature_K=req.temperature_K,
    )  # fmt: skip
    top, bottom = float(np.max(halves)), float(np.min(halves))
    if req.technique == "cv":
        manifest = simulate_series(
            out_dir, start_V=top + SIMULATION_MARGIN_V, switch_V=bottom - SIMULATION_MARGIN_V,
            **common,
        )  # fmt: skip
    else:  # scanned from where the oxidised bulk form does not react
        window = (top + SIMULATION_MARGIN_V, bottom - SIMULATION_MARGIN_V)
        manifest = simulate_technique_series(
            out_dir, technique=req.technique, window_V=window, **common
        )
    text = manifest.read_text(encoding="utf-8")
    totals = iter([0.0, *(float(x) for x in total)])
    text = re.sub(r"^ligand_M = .*$", lambda _: f"ligand_M = {next(totals)!r}", text, flags=re.M)
    extra = []
    if req.metal_total_M is not None:
        extra.append(f"metal_total_M = {float(req.metal_total_M)!r}")
    text = re.sub(
        r"^(electrons = \d+)$", lambda m: "\n".join([m.group(1), *extra]), text, flags=re.M
    )
    fit = ["", "[fit]", f'model = "{req.model}"']
    if req.model == "stepwise":
        fit.append(f"max_complexes = {len(req.values)}")
        if req.fixed_log10_beta:
            other = "red" if req.fitted_state == "ox" else "ox"
            fit.append(f"fixed_log10_beta_{other} = {[float(x) for x in req.fixed_log10_beta]}")
    manifest.write_text(text.rstrip("\n") + "\n" + "\n".join(fit) + "\n", encoding="utf-8")
    return manifest
