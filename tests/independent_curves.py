"""Voltammograms in physical units from the independent convolution computation (tests only).

Wraps :func:`convolution_cv.convolution_cv` (Butler–Volmer or Nernst, one form in the
bulk, uncompensated resistance on the faradaic current, a quiet time at the start
potential) and adds what a measured record carries: double-layer charging C_dl·dE/dt, a
linear background and white noise. Shares no code with :mod:`cvfit.simulate`. Each sample
is every ``substeps``-th step of a finer computation (the product integration is first
order in the step).

Two reductions to the computation's own case (O in the bulk, equal D), both exact for a
planar electrode: with x measured from E½, unequal D scale Λ = k0/√(D_O·σ) by
(D_O/D_R)^(α/2) and leave the Nernstian boundary unchanged (C_R(0) = √(D_O/D_R)·C*·M);
R in the bulk is the mirror image (x → −x, α → 1 − α, the current's sign reversed, the
bulk form's D in the scale).
"""

from __future__ import annotations

import math

import numpy as np
from convolution_cv import convolution_cv
from scipy.constants import R as GAS_R
from scipy.constants import physical_constants

FARADAY = physical_constants["Faraday constant"][0]


def independent_cv(
    *,
    E_half_V: float,
    start_V: float,
    switch_V: float,
    k0_cm_s: float | None,
    alpha: float = 0.5,
    scan_rate_V_s: float = 0.02,
    step_V: float = 0.0009,
    D_cm2_s: float = 1e-5,
    concentration_M: float = 1e-3,
    area_cm2: float = 0.0707,
    temperature_K: float = 298.15,
    resistance_ohm: float = 0.0,
    double_layer_F: float = 0.0,
    background_offset_A: float = 0.0,
    background_slope_A_per_V: float = 0.0,
    noise_A: float = 0.0,
    seed: int = 0,
    substeps: int = 8,
    bulk: str = "ox",
    D_ratio: float = 1.0,
    quiet_time_s: float = 0.0,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(time_s, potential_V, current_A) of one cycle start → switch → start.

    ``D_cm2_s`` is D of the bulk form (``bulk``: "ox" or "red"), ``D_ratio`` D_R/D_O;
    ``quiet_time_s`` the hold at start_V before the sweep (the first sample is its end).
    """
    f = FARADAY / (GAS_R * temperature_K)  # n = 1
    sigma = f * scan_rate_V_s
    root = math.sqrt(D_cm2_s * sigma)
    scale = FARADAY * area_cm2 * concentration_M / 1000.0 * root  # A per unit current function
    mirror = -1.0 if bulk == "red" else 1.0
    a = alpha if bulk == "ox" else 1.0 - alpha
    # D of the other form over D of the bulk form
    other = D_ratio if bulk == "ox" else 1.0 / D_ratio
    psi = None if k0_cm_s is None else k0_cm_s / root / math.sqrt(math.pi) * other ** (-a / 2)
    h = step_V * f / substeps
    hold = max(int(round(quiet_time_s * sigma / h)) - 1, 0) if quiet_time_s > 0 else 0
    xi, chi, _ = convolution_cv(
        start=mirror * (start_V - E_half_V) * f,
        switch=mirror * (switch_V - E_half_V) * f,
        h=h,
        psi=psi,
        alpha=a,
        rho=resistance_ohm * scale * f,
        hold=hold,
    )
    xi, chi = xi[hold:], chi[hold:]
    xi, chi = mirror * xi[::substeps], mirror * chi[::substeps]
    E = E_half_V + xi / f
    t = np.arange(E.size) * step_V / scan_rate_V_s
    dEdt = np.concatenate(([0.0], np.diff(E))) / (step_V / scan_rate_V_s)
    i = -scale * chi + double_layer_F * dEdt
    i += background_offset_A + background_slope_A_per_V * E
    if noise_A > 0:
        i = i + np.random.default_rng(seed).normal(0.0, noise_A, E.size)
    return t, E, i
