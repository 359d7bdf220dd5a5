"""Voltammograms holding two waves: an analyte and an inert internal reference couple.

A reference couple added to every solution (a ferrocene-like standard) is oxidised and
reduced at the same electrode as the analyte; in a dilute solution the two do not interact,
so the faradaic currents add. :func:`simulate_two_waves` sums the currents of two
:func:`cvfit.simulate.voltammogram.simulate_cv` runs on the same waveform (the analyte's
carries the charging current, the background and the noise; the standard's only its
faradaic current). :func:`simulate_internal_standard_series` builds a titration in which
the reference electrode drifts between solutions by a random walk, which shifts both waves
of a file alike.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.errors import SimulationError
from cvfit.simulate.titration_series import (
    MANIFEST_NAME,
    _toml_float,
    toml_string,
    voltammogram_entries,
    write_voltammogram_csv,
)
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.units import ZERO_CELSIUS_K
from cvfit.voltammogram import Voltammogram

__all__ = ["simulate_two_waves", "simulate_internal_standard_series", "StandardSeries"]

#: Settings of simulate_cv that belong to the analyte alone (the standard has none of them).
_ANALYTE_ONLY = ("double_layer_F", "background_slope_A_per_V", "background_offset_A")


def simulate_two_waves(
    *,
    E_half_V: float,
    standard_E_half_V: float,
    standard_electrons: int = 1,
    standard_concentration_M: float = 1e-3,
    noise_fraction: float = 0.0,
    seed: int | None = None,
    source: str = "<simulated>",
    **cv_settings: Any,
) -> Voltammogram:
    """One voltammogram of an analyte plus an internal reference couple.

    Parameters
    ----------
    E_half_V : float
        E½ of the analyte on the electrode's scale, V.
    standard_E_half_V : float
        E½ of the reference couple on the same scale, V (the standard is present in its
        oxidised form, like the analyte by default).
    standard_electrons : int
        n of the reference couple.
    standard_concentration_M : float
        Its bulk concentration, mol/L.
    noise_fraction, seed, source
        As for :func:`cvfit.simulate.voltammogram.simulate_cv`; the noise is added once,
        to the sum, with the analyte's settings as its scale.
    **cv_settings
        Further settings of :func:`simulate_cv` shared by both waves (``start_V``,
        ``switch_V``, ``electrons`` of the analyte, ``scan_rate_V_s``, ...); the charging
        current and background go to the analyte's run only.

    Returns
    -------
    Voltammogram
        The analyte's record with the standard's faradaic current added; ``metadata``
        records the standard's E½ and n.
    """
    analyte = simulate_cv(
        E_half_V=E_half_V, noise_fraction=noise_fraction, seed=seed, source=source, **cv_settings
    )
    shared = {k: v for k, v in cv_settings.items() if k not in _ANALYTE_ONLY}
    shared.pop("electrons", None)
    shared.pop("concentration_M", None)
    shared.pop("k0_cm_s", None)
    standard = simulate_cv(
        E_half_V=standard_E_half_V,
        electrons=standard_electrons,
        concentration_M=standard_concentration_M,
        **shared,
    )
    if standard.current_A.shape != analyte.current_A.shape:  # same waveform by construction
        raise SimulationError("the two waves were sampled differently")
    meta = dict(analyte.metadata or {})
    meta.update(
        standard_E_half_V=repr(float(standard_E_half_V)),
        standard_electrons=str(int(standard_electrons)),
    )
    return replace(analyte, current_A=analyte.current_A + standard.current_A, metadata=meta)


@dataclass(frozen=True)
class StandardSeries:
    """What :func:`simulate_internal_standard_series` made, with the truth behind it.

    Attributes
    ----------
    manifest : Path or None
        The manifest written (None when nothing was written).
    records : tuple of Voltammogram
        One per ligand concentration, in order.
    ligand_M : tuple of float
        Ligand concentrations, mol/L.
    drift_V : tuple of float
        Offset of the reference electrode in each solution, V (a random walk from 0).
    E_half_vs_standard_V : tuple of float
        True E½ of the analyte against the standard, V.
    """

    manifest: Path | None
    records: tuple[Voltammogram, ...]
    ligand_M: tuple[float, ...]
    drift_V: tuple[float, ...]
    E_half_vs_standard_V: tuple[float, ...]


def simulate_internal_standard_series(
    *,
    ligand_M: Sequence[float],
    E_half_free_V: float,
    log10_beta_ox: Sequence[float],
    log10_beta_red: Sequence[float],
    standard_E_half_V: float,
    drift_step_V: float = 0.002,
    electrons: int = 1,
    standard_electrons: int = 1,
    noise_fraction: float = 0.0,
    seed: int | None = None,
    out_dir: str | Path | None = None,
    title: str = "simulated titration with an internal standard",
    analyte_window_V: tuple[float, float] | None = None,
    standard_window_V: tuple[float, float] | None = None,
    overwrite: bool = False,
    **cv_settings: Any,
) -> StandardSeries:
    """A titration whose reference electrode drifts, with an internal standard in every file.

    Each solution k sees its potentials shifted by ``drift_k``, a random walk with normal
    steps of SD ``drift_step_V`` starting at 0 (``default_rng(seed)``): both the analyte's
    E½ (from :func:`cvfit.chemistry.complexation.complexed_half_wave_V`) and the standard's
    move with it, so E½ against the standard does not. With ``out_dir`` the CSV files and a
    manifest with ``[internal_standard]`` (``E_half_V = 0``: potentials against the
    standard; without a ligand-free file ``E_half_free_V`` on that scale) are written; the
    windows default to meeting half-way between the standard and the mean analyte E½.

    Returns
    -------
    StandardSeries
        The records, the drift and the true E½ against the standard.
    """
    ligands = [float(x) for x in ligand_M]
    if not ligands or any(not math.isfinite(x) or x < 0 for x in ligands):
        raise SimulationError("ligand_M must be a non-empty list of finite values >= 0 mol/L")
    for reserved in ("E_half_V", "seed", "source", "noise_fraction"):
        if reserved in cv_settings:
            raise SimulationError(f"{reserved} is set by the series; do not pass it")
    temperature_K = float(cv_settings.get("temperature_K", 298.15))
    L = np.asarray(ligands)
    e_true = np.atleast_1d(
        complexed_half_wave_V(
            E_half_free_V,
            ligand_M=L,
            log10_beta_ox=log10_beta_ox,
            log10_beta_red=log10_beta_red,
            electrons=electrons,
            temperature_K=temperature_K,
        )
    ).astype(float)
    rng = np.random.default_rng(seed)
    drift = np.concatenate([[0.0], np.cumsum(rng.normal(0.0, drift_step_V, L.size - 1))])
    seeds = [int(x) for x in rng.integers(0, 2**31 - 1, L.size)]
    names = [f"istd_{k:02d}.csv" for k in range(L.size)]
    records = tuple(
        simulate_two_waves(
            E_half_V=float(e + d),
            standard_E_half_V=float(standard_E_half_V + d),
            standard_electrons=standard_electrons,
            electrons=electrons,
            noise_fraction=noise_fraction,
            seed=s,
            source=name,
            **cv_settings,
        )
        for e, d, s, name in zip(e_true, drift, seeds, names, strict=True)
    )
    manifest = None
    if out_dir is not None:
        mid = 0.5 * (float(np.mean(e_true)) + standard_E_half_V)
        if analyte_window_V is None or standard_window_V is None:
            wide = 1.0
            an_side = (mid - wide, mid) if standard_E_half_V > mid else (mid, mid + wide)
            st_side = (mid, mid + wide) if standard_E_half_V > mid else (mid - wide, mid)
            analyte_window_V = analyte_window_V or an_side
            standard_window_V = standard_window_V or st_side
        manifest = _write(
            Path(out_dir),
            records,
            names,
            ligands,
            title=title,
            electrons=electrons,
            standard_electrons=standard_electrons,
            temperature_K=temperature_K,
            analyte_window_V=analyte_window_V,
            standard_window_V=standard_window_V,
            overwrite=overwrite,
            E_half_free_vs_standard_V=None
            if 0.0 in ligands
            else float(E_half_free_V) - float(standard_E_half_V),
        )
    return StandardSeries(
        manifest,
        records,
        tuple(ligands),
        tuple(float(d) for d in drift),
        tuple(float(e - standard_E_half_V) for e in e_true),
    )


def _write(
    out: Path,
    records: Sequence[Voltammogram],
    names: Sequence[str],
    ligands: Sequence[float],
    *,
    title: str,
    electrons: int,
    standard_electrons: int,
    temperature_K: float,
    analyte_window_V: tuple[float, float],
    standard_window_V: tuple[float, float],
    overwrite: bool,
    E_half_free_vs_standard_V: float | None,
) -> Path:
    manifest = out / MANIFEST_NAME
    if not overwrite:
        for target in [manifest, *(out / nm for nm in names)]:
            if target.exists():
                raise SimulationError(f"{target} exists; choose another folder or overwrite")
    out.mkdir(parents=True, exist_ok=True)
    for vg, name in zip(records, names, strict=True):
        write_voltammogram_csv(vg, out / name)

    def pair(w: tuple[float, float]) -> str:
        return f"[{_toml_float(w[0])}, {_toml_float(w[1])}]"

    lines = [
        "# Synthetic titration with an internal reference couple, written by cvfit.",
        "",
        "[series]",
        f"title = {toml_string(title)}",
        f"temperature_C = {_toml_float(temperature_K - ZERO_CELSIUS_K)}",
        f"electrons = {int(electrons)}",
        f"analyte_window_V = {pair(analyte_window_V)}",
    ]
    if E_half_free_vs_standard_V is not None:  # no ligand-free file: E½(s) on the same scale
        lines.append(f"E_half_free_V = {_toml_float(E_half_free_vs_standard_V)}")
    lines += [
        "",
        "[internal_standard]",
        f"window_V = {pair(standard_window_V)}",
        "E_half_V = 0.0",
        f"electrons = {int(standard_electrons)}",
    ]
    lines += voltammogram_entries(records, names, ligands)
    manifest.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return manifest
