"""Digital simulation of cyclic voltammograms.

A one-step n-electron couple O + n e⁻ ⇌ R at a planar electrode with semi-infinite linear
diffusion of both forms (separate diffusion coefficients), Nernstian or Butler–Volmer
kinetics, double-layer charging, uncompensated resistance (the iR drop solved
self-consistently with the faradaic and charging currents), a sloping background and
Gaussian noise. The numerics are in :mod:`cvfit.simulate.finite_difference`; a titration
series writer is in :mod:`cvfit.simulate.titration_series`.

Units at this boundary: potentials V, time s, current A (IUPAC: anodic positive), area cm²,
D cm²/s, k0 cm/s, bulk concentration mol/L (converted to mol/cm³ inside).

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 1964, 36, 706.
Nicholson, R. S. Anal. Chem. 1965, 37, 1351.
Randles, J. E. B. Trans. Faraday Soc. 1948, 44, 327; Ševčík, A. Collect. Czech. Chem.
Commun. 1948, 13, 349.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Literal

import numpy as np

from cvfit.chemistry.randles_sevcik import RANDLES_SEVCIK_CONSTANT, randles_sevcik_peak_current_A
from cvfit.errors import SimulationError
from cvfit.simulate import finite_difference as _kernel
from cvfit.units import FARADAY, GAS_CONSTANT
from cvfit.voltammogram import Voltammogram

__all__ = [
    "simulate_cv",
    "randles_sevcik_peak_current_A",
    "RANDLES_SEVCIK_CONSTANT",
]

#: Largest number of time points one simulation may take (memory guard).
MAX_POINTS = 5_000_000
#: Largest space grid one simulation may take: the operators are dense (N² memory, N³
#: time to build), so a grid of 7 000 points (diffusion coefficients 10^295 apart) took
#: minutes and gigabytes. Diffusion coefficients 10^12 apart need some 500 points.
MAX_GRID_POINTS = 1_000

# Grid defaults: first spacing as a fraction of sqrt(D_min·dt), expansion ratio, and the
# outer boundary in units of sqrt(D_max·t_total). Chosen by refinement studies so that
# halving either changes the reversible peak current by far less than 0.1 %.
GRID_FIRST_FACTOR = 0.25
GRID_RATIO = 1.05
GRID_LENGTH_FACTOR = 6.0


def _positive(name: str, value: object, *, allow_zero: bool = False) -> float:
    try:
        x = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise SimulationError(f"{name} must be a number, got {value!r}") from None
    if not math.isfinite(x) or x < 0 or (x == 0 and not allow_zero):
        need = "zero or positive" if allow_zero else "positive"
        raise SimulationError(f"{name} must be a finite {need} number, got {value!r}")
    return x


def _finite(name: str, value: object) -> float:
    try:
        x = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise SimulationError(f"{name} must be a number, got {value!r}") from None
    if not math.isfinite(x):
        raise SimulationError(f"{name} must be finite, got {value!r}")
    return x


def _whole(name: str, value: object) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise SimulationError(f"{name} must be a whole number >= 1, got {value!r}")
    return int(value)


@dataclass(frozen=True)
class Waveform:
    """Sampled triangular waveform: uniform time steps along a piecewise-linear path."""

    time_s: np.ndarray
    potential_V: np.ndarray
    dt_s: float
    path_V: tuple[float, ...]


def build_waveform(
    start_V: float,
    switch_V: float | Sequence[float],
    *,
    cycles: int,
    step_V: float,
    scan_rate_V_s: float,
) -> Waveform:
    """start → vertices → … → start, repeated ``cycles`` times, sampled every step_V/v."""
    vertices = [switch_V] if np.ndim(switch_V) == 0 else list(switch_V)  # type: ignore[arg-type]
    if not vertices:
        raise SimulationError("switch_V needs at least one switching potential")
    verts = [_finite("switch_V", v) for v in vertices]
    one_cycle = float(np.sum(np.abs(np.diff([start_V, *verts, start_V]))))
    if cycles * one_cycle / step_V > MAX_POINTS:  # before the path of every cycle is built
        raise SimulationError(
            f"{cycles * one_cycle / step_V:.3g} points asked for (more than {MAX_POINTS}); use "
            "a larger step_V or fewer cycles"
        )
    path = [start_V]
    for _ in range(cycles):
        path.extend(verts)
        path.append(start_V)
    legs = np.abs(np.diff(path))
    if np.any(legs < step_V):
        raise SimulationError(
            f"consecutive potentials of the path {path[: len(verts) + 2]} V must differ by "
            f"at least one step ({step_V} V)"
        )
    t_vertex = np.concatenate(([0.0], np.cumsum(legs))) / scan_rate_V_s
    dt = step_V / scan_rate_V_s
    M = int(math.floor(t_vertex[-1] / dt + 1e-9)) + 1
    if M > MAX_POINTS:
        raise SimulationError(
            f"{M} points asked for (more than {MAX_POINTS}); use a larger step_V or fewer cycles"
        )
    t = np.arange(M) * dt
    E = np.interp(t, t_vertex, np.asarray(path, dtype=float))
    return Waveform(t, E, dt, tuple(float(p) for p in path))


def _check_grid(first_cm: float, ratio: float, length_cm: float) -> None:
    """Refuse a space grid of more than :data:`MAX_GRID_POINTS` before it is built."""
    n = math.log1p(length_cm * (ratio - 1.0) / first_cm) / math.log(ratio)
    if not n <= MAX_GRID_POINTS:
        raise SimulationError(
            f"the space grid would need {n:.3g} points (at most {MAX_GRID_POINTS}): the "
            "diffusion coefficients of the two forms lie too far apart (or grid_ratio is too "
            "close to 1); bring them within a factor of 10^12"
        )


def _simulate_raw(
    *,
    E_half_V: float,
    start_V: float,
    switch_V: float | Sequence[float],
    electrons: int = 1,
    scan_rate_V_s: float = 0.1,
    cycles: int = 1,
    step_V: float = 0.001,
    k0_cm_s: float | None = None,
    alpha: float = 0.5,
    D_ox_cm2_s: float = 1e-5,
    D_red_cm2_s: float | None = None,
    concentration_M: float = 1e-3,
    initial_species: Literal["ox", "red"] = "ox",
    area_cm2: float = 0.0707,
    temperature_K: float = 298.15,
    double_layer_F: float = 0.0,
    resistance_ohm: float = 0.0,
    grid_first_factor: float = GRID_FIRST_FACTOR,
    grid_ratio: float = GRID_RATIO,
    backend: str = "auto",
    track_amounts: bool = False,
    quiet_time_s: float = 0.0,
) -> tuple[Waveform, _kernel.MarchResult, dict[str, str]]:
    """Waveform, raw kernel output (profiles, amounts) and settings; no background/noise."""
    n = _whole("electrons", electrons)
    cycles = _whole("cycles", cycles)
    E_half_V = _finite("E_half_V", E_half_V)
    start_V = _finite("start_V", start_V)
    v = _positive("scan_rate_V_s", scan_rate_V_s)
    step = _positive("step_V", step_V)
    DO = _positive("D_ox_cm2_s", D_ox_cm2_s)
    DR = DO if D_red_cm2_s is None else _positive("D_red_cm2_s", D_red_cm2_s)
    C = _positive("concentration_M", concentration_M) / 1000.0
    A = _positive("area_cm2", area_cm2)
    T = _positive("temperature_K", temperature_K)
    Cdl = _positive("double_layer_F", double_layer_F, allow_zero=True)
    Ru = _positive("resistance_ohm", resistance_ohm, allow_zero=True)
    k0 = 0.0 if k0_cm_s is None else _positive("k0_cm_s", k0_cm_s)
    a = _finite("alpha", alpha)
    if not 0.0 < a < 1.0:
        raise SimulationError(f"alpha must lie strictly between 0 and 1, got {alpha!r}")
    if initial_species not in ("ox", "red"):
        raise SimulationError(f"initial_species must be 'ox' or 'red', got {initial_species!r}")
    quiet = _positive("quiet_time_s", quiet_time_s, allow_zero=True)
    wave = build_waveform(start_V, switch_V, cycles=cycles, step_V=step, scan_rate_V_s=v)
    nf = n * FARADAY / (GAS_CONSTANT * T)
    E_formal = E_half_V - 0.5 / nf * math.log(DR / DO)
    total_time = float(wave.time_s[-1]) if wave.time_s.size > 1 else wave.dt_s
    grid_args = (
        _positive("grid_first_factor", grid_first_factor) * math.sqrt(min(DO, DR) * wave.dt_s),
        _positive("grid_ratio", grid_ratio),
        GRID_LENGTH_FACTOR * math.sqrt(max(DO, DR) * (total_time + wave.dt_s + quiet)),
    )
    _check_grid(*grid_args)
    grid = _kernel.Grid.expanding(*grid_args)
    bulk_O = C if initial_species == "ox" else 0.0
    bulk_R = 0.0 if initial_species == "ox" else C
    kinetic: dict[str, Any] = dict(E_formal_V=E_formal, nf_per_V=nf, k0_cm_s=k0, alpha=a)
    start_state: dict[str, Any] = {}
    held_A = 0.0
    if quiet > 0.0:
        held = _kernel.hold(
            start_V, quiet, wave.dt_s, grid=grid, D_ox_cm2_s=DO, D_red_cm2_s=DR,
            bulk_ox_mol_cm3=bulk_O, bulk_red_mol_cm3=bulk_R, nFA_C_per_mol=n * FARADAY * A,
            backend=backend, **kinetic,
        )  # fmt: skip
        start_state, held_A = held.march_start(), held.current_A
    result = _kernel.march(
        wave.potential_V,
        wave.dt_s,
        grid=grid,
        D_ox_cm2_s=DO,
        D_red_cm2_s=DR,
        bulk_ox_mol_cm3=bulk_O,
        bulk_red_mol_cm3=bulk_R,
        resistance_ohm=Ru,
        double_layer_F=Cdl,
        nFA_C_per_mol=n * FARADAY * A,
        backend=backend,
        track_amounts=track_amounts,
        **kinetic,
        **start_state,
    )
    # the first sample carries the current the hold ended on (the march starts at rest)
    result.faradaic_A[0] = held_A
    settings = {
        "generator": "cvfit.simulate.voltammogram",
        "E_half_V": repr(E_half_V),
        "E_formal_V": repr(E_formal),
        "start_V": repr(start_V),
        "path_V": ",".join(repr(p) for p in wave.path_V[: len(wave.path_V) // cycles + 1]),
        "electrons": str(n),
        "scan_rate_V_s": repr(v),
        "cycles": str(cycles),
        "step_V": repr(step),
        "kinetics": "nernstian" if k0 == 0.0 else "butler-volmer",
        "k0_cm_s": "none" if k0 == 0.0 else repr(k0),
        "alpha": repr(a),
        "D_ox_cm2_s": repr(DO),
        "D_red_cm2_s": repr(DR),
        "concentration_M": repr(C * 1000.0),
        "initial_species": initial_species,
        "area_cm2": repr(A),
        "temperature_K": repr(T),
        "double_layer_F": repr(Cdl),
        "resistance_ohm": repr(Ru),
        "quiet_time_s": repr(quiet),
        "grid_points": str(grid.x_cm.size),
    }
    return wave, result, settings


def simulate_cv(
    *,
    E_half_V: float,
    start_V: float,
    switch_V: float | Sequence[float],
    electrons: int = 1,
    scan_rate_V_s: float = 0.1,
    cycles: int = 1,
    step_V: float = 0.001,
    k0_cm_s: float | None = None,
    alpha: float = 0.5,
    D_ox_cm2_s: float = 1e-5,
    D_red_cm2_s: float | None = None,
    concentration_M: float = 1e-3,
    initial_species: Literal["ox", "red"] = "ox",
    area_cm2: float = 0.0707,
    temperature_K: float = 298.15,
    double_layer_F: float = 0.0,
    background_slope_A_per_V: float = 0.0,
    background_offset_A: float = 0.0,
    resistance_ohm: float = 0.0,
    noise_fraction: float = 0.0,
    seed: int | None = None,
    source: str = "<simulated>",
    quiet_time_s: float = 0.0,
) -> Voltammogram:
    """Simulate one cyclic voltammogram.

    Parameters
    ----------
    E_half_V : float
        Reversible half-wave potential, V. The formal potential follows from
        E½ = E°' + (RT/2nF)·ln(D_R/D_O).
    start_V : float
        Initial potential, V. The solution is at its bulk composition when the potential
        steps to start_V; with ``quiet_time_s`` = 0 the sweep starts at once (the current
        of the first sample is zero), else the electrode is held at start_V for that time
        first, and where the bulk form reacts at start_V the record opens on the decaying
        current of that hold.
    switch_V : float or sequence of float
        One switching potential (start → switch → start per cycle) or several vertices
        (start → v1 → v2 → … → start per cycle), V.
    electrons, scan_rate_V_s, cycles, step_V
        n, V/s, number of cycles, potential interval between samples (V); the time step
        is step_V/scan_rate_V_s and the potential is the linear sweep sampled there.
    k0_cm_s : float or None
        Standard rate constant, cm/s (Butler–Volmer); None for a Nernstian couple.
    alpha : float
        Transfer coefficient of the reduction, 0 < α < 1.
    D_ox_cm2_s, D_red_cm2_s : float
        Diffusion coefficients of O and R, cm²/s (D_red defaults to D_ox).
    concentration_M : float
        Bulk concentration of the species present at the start, mol/L.
    initial_species : {"ox", "red"}
        Which form is in solution; "red" gives an oxidation-first voltammogram when the
        sweep starts negative of E½.
    area_cm2, temperature_K : float
        Electrode area (cm²) and temperature (K).
    double_layer_F : float
        Double-layer capacitance C_dl, F; adds C_dl·dE/dt (with R_u its RC response).
    background_slope_A_per_V, background_offset_A : float
        Sloping background ``offset + slope·E_applied`` added to the current, A. It is an
        additive artefact and does not enter the iR drop.
    resistance_ohm : float
        Uncompensated resistance R_u, Ω. The electrode sees E_applied − i·R_u with i the
        faradaic plus charging current, solved self-consistently at every step.
    noise_fraction : float
        Standard deviation of white Gaussian noise as a fraction of the Randles–Ševčík peak
        current of these settings (numpy ``default_rng(seed)``).
    seed : int or None
        Noise seed.
    source : str
        Name given to the Voltammogram.
    quiet_time_s : float
        Time the electrode is held at start_V before the sweep, s (exponentially expanding
        time steps, :func:`cvfit.simulate.finite_difference.hold`; the hold's own ohmic
        drop and charging are neglected: both have died away long before its end).

    Returns
    -------
    Voltammogram
        ``potential_V`` is the applied potential, ``current_A`` the total current (IUPAC
        sign), ``time_s`` and ``scan_rate_V_s`` are set and ``metadata`` holds the
        settings as strings.

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 1964, 36, 706 (reversible, irreversible).
    Nicholson, R. S. Anal. Chem. 1965, 37, 1351 (quasi-reversible).
    """
    slope = _finite("background_slope_A_per_V", background_slope_A_per_V)
    offset = _finite("background_offset_A", background_offset_A)
    noise = _positive("noise_fraction", noise_fraction, allow_zero=True)
    if seed is not None and (
        isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0
    ):
        raise SimulationError(f"seed must be None or a whole number >= 0, got {seed!r}")
    wave, raw, settings = _simulate_raw(
        E_half_V=E_half_V,
        start_V=start_V,
        switch_V=switch_V,
        electrons=electrons,
        scan_rate_V_s=scan_rate_V_s,
        cycles=cycles,
        step_V=step_V,
        k0_cm_s=k0_cm_s,
        alpha=alpha,
        D_ox_cm2_s=D_ox_cm2_s,
        D_red_cm2_s=D_red_cm2_s,
        concentration_M=concentration_M,
        initial_species=initial_species,
        area_cm2=area_cm2,
        temperature_K=temperature_K,
        double_layer_F=double_layer_F,
        resistance_ohm=resistance_ohm,
        quiet_time_s=quiet_time_s,
    )
    current = raw.faradaic_A + raw.charging_A + offset + slope * wave.potential_V
    if noise > 0.0:
        D_present = float(settings["D_ox_cm2_s" if initial_species == "ox" else "D_red_cm2_s"])
        sd = noise * randles_sevcik_peak_current_A(
            electrons=electrons,
            concentration_M=concentration_M,
            area_cm2=area_cm2,
            D_cm2_s=D_present,
            scan_rate_V_s=scan_rate_V_s,
            temperature_K=temperature_K,
        )
        current = current + np.random.default_rng(seed).normal(0.0, sd, current.size)
    settings.update(
        background_slope_A_per_V=repr(slope),
        background_offset_A=repr(offset),
        noise_fraction=repr(noise),
        seed="none" if seed is None else str(seed),
    )
    return Voltammogram(
        potential_V=wave.potential_V,
        current_A=current,
        time_s=wave.time_s,
        scan_rate_V_s=float(scan_rate_V_s),
        source=source,
        metadata=settings,
    )
