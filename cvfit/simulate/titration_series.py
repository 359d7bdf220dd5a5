"""Synthetic titration series: one CSV per ligand concentration plus a TOML manifest."""

from __future__ import annotations

import math
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V, effective_diffusion_cm2_s
from cvfit.errors import SimulationError
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.units import ZERO_CELSIUS_K
from cvfit.voltammogram import Voltammogram

__all__ = ["simulate_series", "write_voltammogram_csv", "toml_string", "voltammogram_entries"]

MANIFEST_NAME = "series.toml"


def toml_string(text: str) -> str:
    """A TOML basic string with backslash, quote and control characters escaped."""
    out = []
    for ch in str(text):
        if ch == "\\":
            out.append("\\\\")
        elif ch == '"':
            out.append('\\"')
        elif ch in "\b\t\n\f\r":
            out.append({"\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f", "\r": "\\r"}[ch])
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def _toml_float(x: float) -> str:
    r = repr(float(x))
    return r if ("." in r or "e" in r or "n" in r) else r + ".0"


def write_voltammogram_csv(vg: Voltammogram, path: Path) -> None:
    """Write ``time_s,potential_V,current_A`` with round-trip float precision."""
    if vg.time_s is None:
        raise SimulationError("the voltammogram has no time axis to write")
    rows = ["time_s,potential_V,current_A"]
    rows.extend(
        f"{t!r},{E!r},{i!r}"
        for t, E, i in zip(
            vg.time_s.tolist(), vg.potential_V.tolist(), vg.current_A.tolist(), strict=True
        )
    )
    Path(path).write_text("\n".join(rows) + "\n", encoding="utf-8")


def simulate_series(
    out_dir: str | Path,
    *,
    ligand_M: Sequence[float],
    E_half_free_V: float,
    log10_beta_ox: Sequence[float],
    log10_beta_red: Sequence[float],
    electrons: int = 1,
    title: str = "simulated titration",
    noise_fraction: float = 0.0,
    seed: int | None = None,
    file_stem: str = "titr",
    overwrite: bool = False,
    D_ox_complexed_cm2_s: float | None = None,
    D_red_complexed_cm2_s: float | None = None,
    **cv_settings: Any,
) -> Path:
    """Simulate a voltammetric titration and write it with its manifest.

    Each ligand concentration gets E½ from
    :func:`cvfit.chemistry.complexation.complexed_half_wave_V` (fast, labile complexation;
    ``ligand_M`` is taken as the free ligand concentration, i.e. ligand in excess) and one
    voltammogram from :func:`cvfit.simulate.voltammogram.simulate_cv`
    with ``cv_settings``; file k gets its own noise seed spawned from ``seed``.

    Parameters
    ----------
    out_dir : path
        Folder to write into (created if missing).
    ligand_M : sequence of float
        Ligand concentrations, mol/L, one voltammogram each.
    E_half_free_V, log10_beta_ox, log10_beta_red, electrons
        The couple and its overall stability constants (log10 β_1 … β_N per form).
    title : str
        Free text for the manifest.
    noise_fraction, seed
        Noise level (see :func:`cvfit.simulate.voltammogram.simulate_cv`) and master seed.
    file_stem : str
        CSV files are named ``{file_stem}_{k:02d}.csv``.
    overwrite : bool
        Replace existing files; by default an existing target raises SimulationError.
    D_ox_complexed_cm2_s, D_red_complexed_cm2_s : float, optional
        Diffusion coefficient of the complexes of each form, cm²/s. When given, each
        voltammogram uses the mole-fraction mean D of that form and its E½ includes
        Lingane's diffusion term (the free D come from ``D_ox_cm2_s``/``D_red_cm2_s``).
    **cv_settings
        Further keyword arguments of :func:`cvfit.simulate.voltammogram.simulate_cv` (``start_V``,
        ``switch_V``, ``scan_rate_V_s``, ``temperature_K``, ...).

    Returns
    -------
    Path
        The manifest ``series.toml``.

    References
    ----------
    Lingane, J. J. Chem. Rev. 1941, 29, 1. DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc.
    1951, 73, 5321.
    """

    for reserved in ("E_half_V", "seed", "source", "noise_fraction", "electrons"):
        if reserved in cv_settings:
            raise SimulationError(f"{reserved} is set by simulate_series; do not pass it")
    ligands = [float(x) for x in ligand_M]
    if not ligands or any(not math.isfinite(x) or x < 0 for x in ligands):
        raise SimulationError("ligand_M must be a non-empty list of finite values >= 0 mol/L")
    if not str(file_stem) or any(c in str(file_stem) for c in "/\\"):
        raise SimulationError(f"file_stem must be a plain file-name stem, got {file_stem!r}")
    temperature_K = float(cv_settings.get("temperature_K", 298.15))
    out = Path(out_dir)
    names = [f"{file_stem}_{k:02d}.csv" for k in range(len(ligands))]
    manifest = out / MANIFEST_NAME
    if not overwrite:
        for target in [manifest, *(out / nm for nm in names)]:
            if target.exists():
                raise SimulationError(f"{target} exists; choose another folder or overwrite")
    D_ox_free = float(cv_settings.pop("D_ox_cm2_s", 1e-5))
    D_red_free = cv_settings.pop("D_red_cm2_s", None)
    D_red_free = D_ox_free if D_red_free is None else float(D_red_free)
    L = np.asarray(ligands)
    E_halves = complexed_half_wave_V(
        E_half_free_V,
        ligand_M=L,
        log10_beta_ox=log10_beta_ox,
        log10_beta_red=log10_beta_red,
        electrons=electrons,
        temperature_K=temperature_K,
        D_ox_cm2_s=D_ox_free,
        D_ox_complexed_cm2_s=D_ox_complexed_cm2_s,
        D_red_cm2_s=D_red_free,
        D_red_complexed_cm2_s=D_red_complexed_cm2_s,
    )
    D_ox = np.full(L.shape, D_ox_free)
    D_red = np.full(L.shape, D_red_free)
    if D_ox_complexed_cm2_s is not None:
        D_ox = effective_diffusion_cm2_s(
            L, log10_beta_ox, D_free_cm2_s=D_ox_free, D_complexed_cm2_s=D_ox_complexed_cm2_s
        )
    if D_red_complexed_cm2_s is not None:
        D_red = effective_diffusion_cm2_s(
            L, log10_beta_red, D_free_cm2_s=D_red_free, D_complexed_cm2_s=D_red_complexed_cm2_s
        )
    if seed is None:
        seeds: list[int | None] = [None] * len(ligands)
    else:
        children = np.random.SeedSequence(seed).spawn(len(ligands))
        seeds = [int(c.generate_state(1)[0]) for c in children]
    records = [
        simulate_cv(
            E_half_V=float(E_half),
            electrons=electrons,
            noise_fraction=noise_fraction,
            seed=s,
            source=name,
            D_ox_cm2_s=float(Do),
            D_red_cm2_s=float(Dr),
            **cv_settings,
        )
        for E_half, s, name, Do, Dr in zip(
            np.atleast_1d(E_halves), seeds, names, D_ox, D_red, strict=True
        )
    ]
    out.mkdir(parents=True, exist_ok=True)
    for vg, name in zip(records, names, strict=True):
        write_voltammogram_csv(vg, out / name)
    lines = [
        "# Synthetic voltammetric titration written by cvfit simulate.",
        f"# Truth: E_half_free_V = {float(E_half_free_V)!r}, "
        f"log10_beta_ox = {[float(b) for b in log10_beta_ox]}, "
        f"log10_beta_red = {[float(b) for b in log10_beta_red]}",
        "",
        "[series]",
        f"title = {toml_string(title)}",
        f"temperature_C = {_toml_float(temperature_K - ZERO_CELSIUS_K)}",
        f"electrons = {int(electrons)}",
    ]
    if 0.0 not in ligands:
        lines.append(f"E_half_free_V = {_toml_float(float(E_half_free_V))}")
    lines += voltammogram_entries(records, names, ligands)
    manifest.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return manifest


def voltammogram_entries(
    records: Sequence[Voltammogram], names: Sequence[str], ligands: Sequence[float]
) -> list[str]:
    """The manifest's ``[[voltammogram]]`` tables (file, ligand_M, scan rate) as lines."""
    lines: list[str] = []
    for vg, name, L in zip(records, names, ligands, strict=True):
        lines += [
            "",
            "[[voltammogram]]",
            f"file = {toml_string(name)}",
            f"ligand_M = {_toml_float(L)}",
            f"scan_rate_V_s = {_toml_float(float(vg.scan_rate_V_s or 0.0))}",
        ]
    return lines
