"""Simulated voltammograms carrying the artefacts of real measured records together (tests).

What a real record of a quasi-reversible couple on a solid electrode has, and simulations
so far did not: the reduced form in the bulk (a ferrocyanide-like solution), a record that
starts where that form already reacts (so the first sweep opens on a decaying anodic
current), a quiet time at the start potential, two cycles (the analysed last one does not
start at rest), a charging current that slopes, curves and differs between the two sweep
directions, a common background with a gentle curvature and the onset of another process
at the positive end (not a polynomial), uncompensated resistance, D_red/D_ox = 0.85,
white noise and 2.44 mV potential steps. :func:`realistic_record` makes the arrays with the
project's simulator (``source="project"``) or with the independent convolution computation
(``source="independent"``, tests/independent_curves.py, one cycle; its R_u acts on the
faradaic current only); :func:`write_export` writes them as an instrument export would (a
metadata block, then a header whose cells carry the units, current in µA).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from independent_curves import independent_cv
from scipy.constants import R as GAS_R
from scipy.constants import physical_constants

from cvfit.simulate.voltammogram import simulate_cv

#: The truth of the default record (a ferrocyanide-like couple on a 3 mm disc, 1 mM).
E_HALF_V = 0.200
K0_CM_S = 0.010
ALPHA = 0.45
D_RED_CM2_S = 6.5e-6
D_RATIO = 0.85  # D_red/D_ox
AREA_CM2 = 0.0707
CONCENTRATION_M = 1e-3
RESISTANCE_OHM = 120.0
QUIET_TIME_S = 2.0
STEP_V = 0.00244
#: Capacitance of the default record, F (about 20 µF/cm², common practice for carbon).
DOUBLE_LAYER_F = 1.4e-6


@dataclass(frozen=True)
class RealisticRecord:
    """A record and the truth it was made with."""

    time_s: np.ndarray
    potential_V: np.ndarray
    current_A: np.ndarray
    scan_rate_V_s: float
    truth: dict = field(default_factory=dict)

    @property
    def peak_A(self) -> float:
        """Randles–Ševčík peak current of the truth (0.4463 nFAC√(DnFv/RT), common
        practice), A."""
        faraday = physical_constants["Faraday constant"][0]
        f = faraday / (GAS_R * 298.15)
        return (
            0.4463 * faraday * AREA_CM2 * CONCENTRATION_M / 1000.0
            * math.sqrt(D_RED_CM2_S * f * self.scan_rate_V_s)
        )  # fmt: skip


def background_A(E: np.ndarray, scan_rate_V_s: float, peak_A: float) -> np.ndarray:
    """The artefact added to the faradaic and constant-capacitance current: a common part
    (slope, curvature, an exponential onset at the positive end) and a direction-dependent
    part (a capacitance that varies with E, times dE/dt)."""
    Ec = 0.5 * (E.min() + E.max())
    u = (E - Ec) / 0.25
    common = peak_A * (0.02 + 0.04 * u + 0.015 * u**2 + 0.01 * np.exp((E - E.max()) / 0.06))
    rate = np.concatenate(([0.0], np.diff(E))) / (STEP_V / scan_rate_V_s)
    varying = 0.6 * DOUBLE_LAYER_F * (0.3 * u + 0.2 * u**2 + 0.3)
    return common + varying * rate


def realistic_record(
    *,
    scan_rate_V_s: float,
    seed: int = 0,
    source: str = "project",
    noise_fraction: float = 0.003,
    cycles: int = 2,
    k0_cm_s: float = K0_CM_S,
    alpha: float = ALPHA,
    resistance_ohm: float = RESISTANCE_OHM,
    quiet_time_s: float = QUIET_TIME_S,
    start_V: float | None = None,
    switch_V: float | None = None,
    background: bool = True,
    E_half_V: float = E_HALF_V,
) -> RealisticRecord:
    """One record with the reduced form in the bulk (module notes).

    The default starts 250 mV positive of E½ (the reduced form is oxidised there, at the
    diffusion limit, during the quiet time) and sweeps negative first, to 300 mV negative
    of E½.
    """
    start_V = E_half_V + 0.25 if start_V is None else start_V
    switch_V = E_half_V - 0.30 if switch_V is None else switch_V
    D_ox = D_RED_CM2_S / D_RATIO
    if source == "project":
        v = simulate_cv(
            E_half_V=E_half_V, start_V=start_V, switch_V=switch_V, scan_rate_V_s=scan_rate_V_s,
            cycles=cycles, step_V=STEP_V, k0_cm_s=k0_cm_s, alpha=alpha, D_ox_cm2_s=D_ox,
            D_red_cm2_s=D_RED_CM2_S, concentration_M=CONCENTRATION_M, initial_species="red",
            area_cm2=AREA_CM2, double_layer_F=DOUBLE_LAYER_F, resistance_ohm=resistance_ohm,
            quiet_time_s=quiet_time_s,
        )  # fmt: skip
        t, E, i = v.time_s, v.potential_V, v.current_A
    elif source == "independent":
        if cycles != 1:
            raise ValueError("the independent computation makes one cycle")
        t, E, i = independent_cv(
            E_half_V=E_half_V, start_V=start_V, switch_V=switch_V, k0_cm_s=k0_cm_s,
            alpha=alpha, scan_rate_V_s=scan_rate_V_s, step_V=STEP_V, D_cm2_s=D_RED_CM2_S,
            concentration_M=CONCENTRATION_M, area_cm2=AREA_CM2, resistance_ohm=resistance_ohm,
            double_layer_F=DOUBLE_LAYER_F, bulk="red", D_ratio=D_RATIO,
            quiet_time_s=quiet_time_s, substeps=8,
        )  # fmt: skip
    else:
        raise ValueError(f"unknown source {source!r}")
    rec = RealisticRecord(t, E, i, scan_rate_V_s)
    current = i.copy()
    if background:
        current = current + background_A(E, scan_rate_V_s, rec.peak_A)
    if noise_fraction > 0:
        rng = np.random.default_rng(seed)
        current = current + rng.normal(0.0, noise_fraction * rec.peak_A, current.size)
    truth = {
        "E_half_V": E_half_V,
        "k0_cm_s": k0_cm_s,
        "alpha": alpha,
        "D_red_cm2_s": D_RED_CM2_S,
        "D_ox_cm2_s": D_ox,
        "resistance_ohm": resistance_ohm,
        "quiet_time_s": quiet_time_s,
        "bulk_form": "red",
        "noise_A": noise_fraction * rec.peak_A,
    }
    return RealisticRecord(t, E, current, scan_rate_V_s, truth)


def write_export(path: Path, record: RealisticRecord, *, time_offset_s: float = 0.0) -> Path:
    """Write *record* shaped like an instrument export: a metadata block (our own invented
    header texts), a header whose cells name the quantities with their units, current in
    µA. *time_offset_s* is added to the time column (a clock that started with the hold)."""
    lines = [
        "Simulated record for cvfit's tests",
        "Date and time: 2026-01-01 12:00:00",
        "Notes: reduced form in the bulk, quiet time at the start potential",
        "Technique: cyclic voltammetry",
        "",
        "Time (s),Potential (V),Current (µA)",
    ]
    t = record.time_s + time_offset_s
    lines += [
        f"{a:.6f},{b:.6f},{1e6 * c:.6e}"
        for a, b, c in zip(
            t.tolist(), record.potential_V.tolist(), record.current_A.tolist(), strict=True
        )  # fmt: skip
    ]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path
