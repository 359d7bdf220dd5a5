"""Synthetic pH and temperature series: one CSV per solution plus a TOML manifest.

A pH series moves only E½ (proton transfer fast, all forms of one state diffusing alike):
each file is simulated at E½(pH) of :func:`cvfit.chemistry.protonation.proton_half_wave_V`.
A temperature series simulates each file at its own temperature, E½(T) = E½(T₀) +
(ΔS/nF)(T − T₀) with ΔS the reaction entropy given (a non-isothermal cell: the manifest
says ``reference_at = "constant_temperature"``).
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
from numpy.typing import ArrayLike

from cvfit.chemistry.protonation import proton_half_wave_V
from cvfit.errors import SimulationError
from cvfit.simulate.titration_series import _toml_float, toml_string, write_voltammogram_csv
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.units import FARADAY, ZERO_CELSIUS_K, celsius_to_kelvin

__all__ = ["simulate_pH_series", "simulate_temperature_series", "temperature_half_wave_V"]

MANIFEST_NAME = "series.toml"


def temperature_half_wave_V(
    temperature_K: ArrayLike,
    *,
    E_half_V: float,
    at_K: float,
    entropy_J_mol_K: float,
    electrons: int,
) -> np.ndarray:
    """E½(T) = E½(T₀) + (ΔS/nF)(T − T₀) (Yee et al., J. Am. Chem. Soc. 101 (1979) 1131)."""
    T = np.asarray(temperature_K, dtype=float)
    return E_half_V + entropy_J_mol_K / (electrons * FARADAY) * (T - at_K)


def _seeds(seed: int | None, n: int) -> list[int | None]:
    if seed is None:
        return [None] * n
    return [int(c.generate_state(1)[0]) for c in np.random.SeedSequence(seed).spawn(n)]


def _write(
    out_dir: Path,
    names: list[str],
    records: list,
    header: list[str],
    entry_lines: list[list[str]],
    overwrite: bool,
) -> Path:
    manifest = out_dir / MANIFEST_NAME
    if not overwrite:
        for target in [manifest, *(out_dir / nm for nm in names)]:
            if target.exists():
                raise SimulationError(f"{target} exists; choose another folder or overwrite")
    out_dir.mkdir(parents=True, exist_ok=True)
    for vg, name in zip(records, names, strict=True):
        write_voltammogram_csv(vg, out_dir / name)
    lines = list(header)
    for vg, name, own in zip(records, names, entry_lines, strict=True):
        lines += ["", "[[voltammogram]]", f"file = {toml_string(name)}", *own]
        lines.append(f"scan_rate_V_s = {_toml_float(float(vg.scan_rate_V_s or 0.0))}")
    manifest.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return manifest


def _check(values: Sequence[float], what: str, lo: float, hi: float) -> list[float]:
    xs = [float(x) for x in values]
    if not xs or any(not lo <= x <= hi for x in xs):
        raise SimulationError(f"{what} must be a non-empty list of values within {lo:g}–{hi:g}")
    return xs


def simulate_pH_series(
    out_dir: str | Path,
    *,
    pH: Sequence[float],
    E0_V: float,
    pKa_ox: Sequence[float] = (),
    pKa_red: Sequence[float] = (),
    electrons: int = 1,
    title: str = "simulated pH series",
    noise_fraction: float = 0.0,
    seed: int | None = None,
    max_protons: int | None = None,
    overwrite: bool = False,
    **cv_settings: Any,
) -> Path:
    """Simulate a pH series (one voltammogram per pH) and write it with its manifest.

    Parameters
    ----------
    out_dir : path
        Folder to write into (created if missing); files ``ph_{k:02d}.csv``.
    pH : sequence of float
        One solution per value, 0–14.
    E0_V, pKa_ox, pKa_red, electrons
        The couple: E° of the unprotonated couple and the pKa of each form
        (:func:`cvfit.chemistry.protonation.proton_half_wave_V`).
    max_protons : int, optional
        ``[fit] max_protons`` of the manifest (default: the most pKa of one form, at least 1).
    **cv_settings
        Further keyword arguments of :func:`cvfit.simulate.voltammogram.simulate_cv`.

    Returns
    -------
    Path
        The manifest ``series.toml`` (``[fit] model = "proton"``).
    """
    values = _check(pH, "pH", 0.0, 14.0)
    T = float(cv_settings.get("temperature_K", 298.15))
    halves = proton_half_wave_V(
        E0_V, np.array(values), pKa_ox=pKa_ox, pKa_red=pKa_red, electrons=electrons,
        temperature_K=T,
    )  # fmt: skip
    names = [f"ph_{k:02d}.csv" for k in range(len(values))]
    records = [
        simulate_cv(
            E_half_V=float(e),
            electrons=electrons,
            noise_fraction=noise_fraction,
            seed=s,
            source=name,
            **cv_settings,
        )  # fmt: skip
        for e, s, name in zip(halves, _seeds(seed, len(values)), names, strict=True)
    ]
    steps = max_protons or max(1, len(pKa_ox), len(pKa_red))
    header = [
        "# Synthetic pH series written by cvfit simulate.",
        f"# Truth: E0_V = {float(E0_V)!r}, pKa_ox = {[float(p) for p in pKa_ox]}, "
        f"pKa_red = {[float(p) for p in pKa_red]}",
        "",
        "[series]",
        f"title = {toml_string(title)}",
        f"temperature_C = {_toml_float(T - ZERO_CELSIUS_K)}",
        f"electrons = {int(electrons)}",
        "",
        "[fit]",
        'model = "proton"',
        f"max_protons = {int(steps)}",
    ]
    entries = [[f"pH = {_toml_float(x)}"] for x in values]
    return _write(Path(out_dir), names, records, header, entries, overwrite)


def simulate_temperature_series(
    out_dir: str | Path,
    *,
    temperature_C: Sequence[float],
    E_half_V: float,
    entropy_J_mol_K: float,
    at_C: float = 25.0,
    electrons: int = 1,
    title: str = "simulated temperature series",
    noise_fraction: float = 0.0,
    seed: int | None = None,
    overwrite: bool = False,
    **cv_settings: Any,
) -> Path:
    """Simulate a temperature series (each file at its own T) and write it with its manifest.

    E½(T) is :func:`temperature_half_wave_V` with E½ = *E_half_V* at *at_C*; the manifest
    states a non-isothermal cell (``reference_at = "constant_temperature"``), for which
    nF·dE½/dT is the reaction entropy.

    Returns
    -------
    Path
        The manifest ``series.toml`` (``[fit] model = "temperature"``).
    """
    if "temperature_K" in cv_settings:
        raise SimulationError("temperature_K is set per file by simulate_temperature_series")
    values = _check(temperature_C, "temperature_C", 0.0, 100.0)
    T = np.array([celsius_to_kelvin(t) for t in values])
    halves = temperature_half_wave_V(
        T, E_half_V=E_half_V, at_K=celsius_to_kelvin(at_C), entropy_J_mol_K=entropy_J_mol_K,
        electrons=electrons,
    )  # fmt: skip
    names = [f"temp_{k:02d}.csv" for k in range(len(values))]
    records = [
        simulate_cv(
            E_half_V=float(e),
            electrons=electrons,
            noise_fraction=noise_fraction,
            seed=s,
            source=name,
            temperature_K=float(t),
            **cv_settings,
        )  # fmt: skip
        for e, t, s, name in zip(halves, T, _seeds(seed, len(values)), names, strict=True)
    ]
    header = [
        "# Synthetic temperature series written by cvfit simulate.",
        f"# Truth: E_half_V = {float(E_half_V)!r} at {float(at_C)!r} °C, reaction entropy "
        f"{float(entropy_J_mol_K)!r} J/(mol K)",
        "",
        "[series]",
        f"title = {toml_string(title)}",
        f"temperature_C = {_toml_float(float(at_C))}",
        f"electrons = {int(electrons)}",
        'reference_at = "constant_temperature"',
        "",
        "[fit]",
        'model = "temperature"',
    ]
    entries = [[f"temperature_C = {_toml_float(t)}"] for t in values]
    return _write(Path(out_dir), names, records, header, entries, overwrite)
