"""Synthetic titration series recorded by a pulse technique or as steady-state waves.

One CSV per ligand concentration (``time_s,potential_V,current_A``, and for pulse records
the two sampled currents) and a manifest with ``[series] technique`` and its
``[technique]`` table, as :func:`cvfit.simulate.titration_series.simulate_series` writes
a cyclic-voltammetry series.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.errors import SimulationError
from cvfit.simulate.programs import (
    PulseSimulation,
    dpv_program,
    simulate_pulse,
    simulate_wave,
    swv_program,
)
from cvfit.simulate.titration_series import MANIFEST_NAME, toml_string
from cvfit.units import ZERO_CELSIUS_K
from cvfit.voltammogram import Voltammogram

__all__ = [
    "simulate_technique_series",
    "simulate_technique_record",
    "write_record_csv",
    "PROGRAM_DEFAULTS",
]

#: The program of each technique when not given: a common choice of each (common practice).
PROGRAM_DEFAULTS: dict[str, dict[str, float]] = {
    "dpv": {"step_V": 0.005, "pulse_amplitude_V": 0.05, "pulse_width_s": 0.05, "period_s": 0.5},
    "swv": {"step_V": 0.005, "amplitude_V": 0.025, "frequency_Hz": 25.0},
    "wave": {"step_V": 0.002, "scan_rate_V_s": 0.0005, "rotation_rate_rpm": 1600.0},
}
#: Column names of the two sampled currents in the CSV files written.
COMPONENT_NAMES = {"dpv": ("pulse_current_A", "base_current_A"),
                   "swv": ("forward_current_A", "reverse_current_A")}  # fmt: skip


def _float(x: float) -> str:
    r = repr(float(x))
    return r if ("." in r or "e" in r or "n" in r) else r + ".0"


def write_record_csv(
    vg: Voltammogram, path: Path, components: tuple[np.ndarray, np.ndarray] | None = None,
    names: tuple[str, str] = ("first_current_A", "second_current_A"),
) -> None:  # fmt: skip
    """``time_s,potential_V,current_A`` (and the two sampled currents) at full precision."""
    if vg.time_s is None:
        raise SimulationError("the record has no time axis to write")
    cols = [vg.time_s, vg.potential_V, vg.current_A]
    head = ["time_s", "potential_V", "current_A"]
    if components is not None:
        cols += list(components)
        head += list(names)
    rows = [",".join(head)]
    rows += [",".join(repr(float(x)) for x in row) for row in zip(*cols, strict=True)]
    Path(path).write_text("\n".join(rows) + "\n", encoding="utf-8")


def simulate_technique_record(
    technique: str, E_half: float, window: tuple[float, float], program: dict[str, float],
    couple: dict[str, Any], rpm: float | None,
) -> Voltammogram | PulseSimulation:  # fmt: skip
    """One record by *technique* over *window* (start, stop) with *program* (the keys of
    :data:`PROGRAM_DEFAULTS`, the DPV amplitude signed) and *couple* (the simulator's
    keywords); *rpm* overrides the program's rotation rate of a wave."""
    start, stop = window
    if technique == "wave":
        return simulate_wave(
            E_half_V=E_half, start_V=start, stop_V=stop, step_V=program["step_V"],
            scan_rate_V_s=program["scan_rate_V_s"],
            rotation_rate_rpm=rpm or program["rotation_rate_rpm"], **couple,
        )  # fmt: skip
    sign = 1.0 if stop > start else -1.0
    if technique == "dpv":
        prog = dpv_program(
            start, stop, step_V=program["step_V"],
            pulse_amplitude_V=sign * abs(program["pulse_amplitude_V"]),
            pulse_width_s=program["pulse_width_s"], period_s=program["period_s"],
        )  # fmt: skip
    else:
        prog = swv_program(
            start, stop, step_V=program["step_V"], amplitude_V=program["amplitude_V"],
            frequency_Hz=program["frequency_Hz"],
        )  # fmt: skip
    return simulate_pulse(prog, E_half_V=E_half, **couple)


def simulate_technique_series(
    out_dir: str | Path,
    *,
    technique: str,
    ligand_M: Sequence[float],
    E_half_free_V: float,
    log10_beta_ox: Sequence[float],
    log10_beta_red: Sequence[float],
    window_V: tuple[float, float],
    electrons: int = 1,
    title: str = "simulated titration",
    program: dict[str, float] | None = None,
    noise_fraction: float = 0.0,
    seed: int | None = None,
    overwrite: bool = False,
    file_stem: str = "titr",
    rotation_rates_rpm: Sequence[float] | None = None,
    **couple: Any,
) -> Path:
    """Simulate a titration by *technique* (``"dpv"``, ``"swv"`` or ``"wave"``) and write
    it with its manifest; returns the manifest's path.

    Each ligand concentration (taken as free ligand) gets its E½ from
    :func:`cvfit.chemistry.complexation.complexed_half_wave_V` and one record over
    *window_V* (start, stop: the scan's direction) by :func:`cvfit.simulate.programs
    .simulate_pulse` or :func:`~cvfit.simulate.programs.simulate_wave` with *couple*
    (``D_ox_cm2_s``, ``k0_cm_s``, ``background_slope_A_per_V``, ...); file k gets its own
    noise seed spawned from *seed*. *program* overrides :data:`PROGRAM_DEFAULTS`.
    *rotation_rates_rpm* (waves): one rate per file, written as ``rotation_rate_rpm``.
    """
    if technique not in PROGRAM_DEFAULTS:
        raise SimulationError(f"technique must be dpv, swv or wave, got {technique!r}")
    prog = {**PROGRAM_DEFAULTS[technique], **(program or {})}
    if technique == "dpv":  # signed: the pulse goes in the scan's direction
        amp = abs(prog["pulse_amplitude_V"])
        prog["pulse_amplitude_V"] = amp if window_V[1] > window_V[0] else -amp
    ligands = [float(x) for x in ligand_M]
    if not ligands or any(not math.isfinite(x) or x < 0 for x in ligands):
        raise SimulationError("ligand_M must be a non-empty list of finite values >= 0 mol/L")
    rates = list(rotation_rates_rpm) if rotation_rates_rpm is not None else [None] * len(ligands)
    if len(rates) != len(ligands):
        raise SimulationError("give one rotation rate per ligand concentration")
    out = Path(out_dir)
    names = [f"{file_stem}_{k:02d}.csv" for k in range(len(ligands))]
    manifest = out / MANIFEST_NAME
    if not overwrite:
        for target in [manifest, *(out / nm for nm in names)]:
            if target.exists():
                raise SimulationError(f"{target} exists; choose another folder or overwrite")
    T = float(couple.get("temperature_K", 298.15))
    halves = np.atleast_1d(
        complexed_half_wave_V(
            E_half_free_V, ligand_M=np.asarray(ligands), log10_beta_ox=log10_beta_ox,
            log10_beta_red=log10_beta_red, electrons=electrons, temperature_K=T,
        )
    )  # fmt: skip
    seeds: list[int | None] = [None] * len(ligands)
    if seed is not None:
        seeds = [
            int(c.generate_state(1)[0]) for c in np.random.SeedSequence(seed).spawn(len(ligands))
        ]
    records = []
    for E_half, s, name, rpm in zip(halves, seeds, names, rates, strict=True):
        records.append(
            simulate_technique_record(technique, float(E_half), window_V, prog,
                 {**couple, "electrons": electrons, "noise_fraction": noise_fraction,
                  "seed": s, "source": name}, rpm)
        )  # fmt: skip
    out.mkdir(parents=True, exist_ok=True)
    for rec, name in zip(records, names, strict=True):
        if isinstance(rec, PulseSimulation):
            comps = (rec.first_A, rec.second_A)
            write_record_csv(rec.record, out / name, comps, COMPONENT_NAMES[technique])
        else:
            write_record_csv(rec, out / name)
    manifest.write_text(
        _manifest(technique, prog, title, T, electrons, E_half_free_V, ligands, names, rates),
        encoding="utf-8",
    )
    return manifest


def _manifest(technique, prog, title, T, electrons, E_half_free, ligands, names, rates) -> str:
    lines = [
        f"# Synthetic {technique} titration written by cvfit simulate.",
        "",
        "[series]",
        f"title = {toml_string(title)}",
        f"temperature_C = {_float(T - ZERO_CELSIUS_K)}",
        f"electrons = {int(electrons)}",
        f'technique = "{technique}"',
    ]
    if 0.0 not in ligands:
        lines.append(f"E_half_free_V = {_float(E_half_free)}")
    if technique != "wave":
        first, second = COMPONENT_NAMES[technique]
        keys = ("pulse_current_column", "base_current_column") if technique == "dpv" else (
            "forward_current_column", "reverse_current_column")  # fmt: skip
        lines += ["", "[import]", 'current_column = "current_A"', "", "[technique]"]
        lines += [f"{k} = {_float(v)}" for k, v in prog.items()]
        lines += [f'{keys[0]} = "{first}"', f'{keys[1]} = "{second}"']
    for name, L, rpm in zip(names, ligands, rates, strict=True):
        lines += ["", "[[voltammogram]]", f"file = {toml_string(name)}", f"ligand_M = {_float(L)}"]
        if rpm is not None:
            lines.append(f"rotation_rate_rpm = {_float(rpm)}")
    return "\n".join(lines) + "\n"
