"""Synthetic titration by additions: the stock poured into the cell, the metal diluted.

Each solution's total ligand and metal follow the dilution rule
(:func:`cvfit.chemistry.dilution.diluted`), its free ligand the mass balance with the
bulk form's constants (:func:`cvfit.chemistry.speciation.free_ligand_M`), its E½ the
complexed couple at that free ligand, and its current the solution's own metal
concentration. The manifest written states the additions (``[titration]`` and
``added_mL``), as a chemist would, not the concentrations.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.chemistry.dilution import Dilution, diluted
from cvfit.chemistry.speciation import free_ligand_M
from cvfit.errors import SimulationError
from cvfit.simulate.titration_series import (
    MANIFEST_NAME,
    _toml_float,
    toml_string,
    write_voltammogram_csv,
)
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.units import ZERO_CELSIUS_K

__all__ = ["AdditionSolution", "addition_solutions", "simulate_addition_series"]


@dataclass(frozen=True)
class AdditionSolution:
    """One solution of the titration: its dilution, free ligand and E½."""

    added_mL: float
    dilution: Dilution
    free_ligand_M: float
    E_half_V: float


def addition_solutions(
    added_mL: Sequence[float],
    *,
    start_volume_mL: float,
    metal_M: float,
    ligand_stock_M: float,
    E_half_free_V: float,
    log10_beta_ox: Sequence[float],
    log10_beta_red: Sequence[float] = (),
    ligand_M: float = 0.0,
    metal_stock_M: float = 0.0,
    electrons: int = 1,
    temperature_K: float = 298.15,
    bulk_form: str = "ox",
) -> list[AdditionSolution]:
    """The solutions of a titration by additions (module docstring).

    Raises
    ------
    SimulationError
        A negative or non-finite volume or concentration.
    """
    bulk = log10_beta_red if bulk_form == "red" else log10_beta_ox
    out = []
    for add in added_mL:
        try:
            d = diluted(
                start_volume_mL=start_volume_mL,
                added_mL=add,
                metal_M=metal_M,
                ligand_M=ligand_M,
                ligand_stock_M=ligand_stock_M,
                metal_stock_M=metal_stock_M,
            )
        except ValueError as exc:
            raise SimulationError(str(exc)) from None
        free = free_ligand_M(d.ligand_M, d.metal_M, bulk) if d.ligand_M > 0 else 0.0
        E_half = complexed_half_wave_V(
            E_half_free_V,
            ligand_M=free,
            log10_beta_ox=log10_beta_ox,
            log10_beta_red=log10_beta_red,
            electrons=electrons,
            temperature_K=temperature_K,
        )
        out.append(AdditionSolution(float(add), d, float(free), float(E_half)))
    return out


def simulate_addition_series(
    out_dir: str | Path,
    *,
    added_mL: Sequence[float],
    start_volume_mL: float,
    metal_M: float,
    ligand_stock_M: float,
    E_half_free_V: float,
    log10_beta_ox: Sequence[float],
    log10_beta_red: Sequence[float] = (),
    ligand_M: float = 0.0,
    metal_stock_M: float = 0.0,
    electrons: int = 1,
    title: str = "simulated titration by additions",
    noise_fraction: float = 0.0,
    seed: int | None = None,
    file_stem: str = "add",
    overwrite: bool = False,
    **cv_settings: Any,
) -> Path:
    """Simulate a titration by additions and write it with its manifest.

    Parameters
    ----------
    out_dir : path
        Folder to write into (created if missing).
    added_mL : sequence of float
        Cumulative volume of stock added before each record, mL (one file each).
    start_volume_mL, metal_M, ligand_M, ligand_stock_M, metal_stock_M
        The cell before any addition and the stock (``[titration]``).
    E_half_free_V, log10_beta_ox, log10_beta_red, electrons
        The couple and its overall constants (log10 β_1 … β_N per form).
    title, noise_fraction, seed, file_stem, overwrite
        As :func:`cvfit.simulate.titration_series.simulate_series`.
    **cv_settings
        Further keyword arguments of :func:`cvfit.simulate.voltammogram.simulate_cv`
        (not ``concentration_M``: each solution's metal is its own).

    Returns
    -------
    Path
        The manifest ``series.toml``.
    """
    for reserved in ("E_half_V", "seed", "source", "noise_fraction", "concentration_M"):
        if reserved in cv_settings:
            raise SimulationError(f"{reserved} is set by simulate_addition_series")
    adds = [float(x) for x in added_mL]
    if not adds or any(not math.isfinite(x) or x < 0 for x in adds):
        raise SimulationError("added_mL must be a non-empty list of finite volumes >= 0 mL")
    temperature_K = float(cv_settings.get("temperature_K", 298.15))
    solutions = addition_solutions(
        adds, start_volume_mL=start_volume_mL, metal_M=metal_M, ligand_stock_M=ligand_stock_M,
        E_half_free_V=E_half_free_V, log10_beta_ox=log10_beta_ox,
        log10_beta_red=log10_beta_red, ligand_M=ligand_M, metal_stock_M=metal_stock_M,
        electrons=electrons, temperature_K=temperature_K,
        bulk_form=str(cv_settings.get("initial_species", "ox")),
    )  # fmt: skip
    out = Path(out_dir)
    names = [f"{file_stem}_{k:02d}.csv" for k in range(len(adds))]
    manifest = out / MANIFEST_NAME
    if not overwrite:
        for target in [manifest, *(out / nm for nm in names)]:
            if target.exists():
                raise SimulationError(f"{target} exists; choose another folder or overwrite")
    if seed is None:
        seeds: list[int | None] = [None] * len(adds)
    else:
        children = np.random.SeedSequence(seed).spawn(len(adds))
        seeds = [int(c.generate_state(1)[0]) for c in children]
    records = [
        simulate_cv(
            E_half_V=s.E_half_V,
            electrons=electrons,
            noise_fraction=noise_fraction,
            seed=k,
            source=name,
            concentration_M=s.dilution.metal_M,
            **cv_settings,
        )  # fmt: skip
        for s, k, name in zip(solutions, seeds, names, strict=True)
    ]
    out.mkdir(parents=True, exist_ok=True)
    for vg, name in zip(records, names, strict=True):
        write_voltammogram_csv(vg, out / name)
    lines = _manifest_lines(
        title, temperature_K, electrons, E_half_free_V, log10_beta_ox, log10_beta_red,
        (start_volume_mL, metal_M, ligand_M, ligand_stock_M, metal_stock_M),
    )  # fmt: skip
    if all(s.dilution.ligand_M > 0 for s in solutions):
        free = f"E_half_free_V = {_toml_float(E_half_free_V)}"  # no ligand-free file
        lines.insert(lines.index("[titration]") - 1, free)
    for vg, name, s in zip(records, names, solutions, strict=True):
        lines += [
            "",
            "[[voltammogram]]",
            f"file = {toml_string(name)}",
            f"added_mL = {_toml_float(s.added_mL)}",
            f"scan_rate_V_s = {_toml_float(float(vg.scan_rate_V_s or 0.0))}",
        ]
    manifest.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return manifest


def _manifest_lines(
    title: str,
    temperature_K: float,
    electrons: int,
    E_half_free_V: float,
    beta_ox: Sequence[float],
    beta_red: Sequence[float],
    cell: tuple[float, float, float, float, float],
) -> list[str]:
    """The manifest's head: the truth in a comment, ``[series]`` and ``[titration]``."""
    v0, metal, ligand, stock, stock_metal = (float(x) for x in cell)
    lines = [
        "# Synthetic titration by additions written by cvfit simulate.",
        f"# Truth: E_half_free_V = {float(E_half_free_V)!r}, "
        f"log10_beta_ox = {[float(b) for b in beta_ox]}, "
        f"log10_beta_red = {[float(b) for b in beta_red]}",
        "",
        "[series]",
        f"title = {toml_string(title)}",
        f"temperature_C = {_toml_float(temperature_K - ZERO_CELSIUS_K)}",
        f"electrons = {int(electrons)}",
        "",
        "[titration]",
        f"start_volume_mL = {_toml_float(v0)}",
        f"metal_M = {_toml_float(metal)}",
        f"ligand_stock_M = {_toml_float(stock)}",
    ]
    if ligand > 0:
        lines.append(f"ligand_M = {_toml_float(ligand)}")
    if stock_metal > 0:
        lines.append(f"metal_stock_M = {_toml_float(stock_metal)}")
    return lines
