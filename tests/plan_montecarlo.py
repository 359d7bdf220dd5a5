"""Monte-Carlo check of the plan's predicted standard errors (helper of test_plan_*.py).

Each simulated series: the E½ of every planned solution from the forward model at the
true constants (free ligand from the mass balance when metal is given) plus Gaussian
noise of the stated per-file σ, and a ligand-free reference with the same noise; then the
fit functions ``cvfit run`` applies after the peak analysis (fit_lingane, fit_stepwise).
"""

from __future__ import annotations

import contextlib
import math
from unittest import mock

import numpy as np

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.chemistry.speciation import free_ligand_M
from cvfit.flags import FitRefused
from cvfit.titration.lingane import TitrationPoint, fit_lingane
from cvfit.titration.stepwise import SolutionConditions, StepwisePoint, fit_stepwise
from cvfit.units import nernst_slope_V_per_decade

E_FREE_V = -0.100


def without_profile_intervals():
    """Context in which fit_stepwise skips its profile-likelihood intervals (NaN).

    They cost ~80 % of a stepwise fit and are not what the Monte-Carlo checks: the fitted
    values are the least-squares optimum of the model the F-test chose, which does not use
    them (test_plan_montecarlo checks that the values are identical either way).
    """
    return mock.patch(
        "cvfit.titration.stepwise.profile_interval", lambda *a, **k: (math.nan, math.nan)
    )


def stepwise_scatter(
    ligand_M,
    log10_beta,
    sigma_V,
    *,
    n_series,
    seed,
    metal_total_M=None,
    temperature_K=298.15,
    electrons=1,
    profile=False,
):
    """Fitted log10 β_j of ``n_series`` simulated series (rows; series whose chosen N
    differs from the truth are dropped) and how many were dropped. ``profile=False`` skips
    the profile intervals (see :func:`without_profile_intervals`)."""
    c = np.asarray(ligand_M, dtype=float)
    if metal_total_M is None:
        L = c
    else:
        L = np.array([free_ligand_M(x, metal_total_M, log10_beta) for x in c])
    E = complexed_half_wave_V(
        E_FREE_V,
        ligand_M=L,
        log10_beta_ox=log10_beta,
        electrons=electrons,
        temperature_K=temperature_K,
    )
    rng = np.random.default_rng(seed)
    cond = SolutionConditions(metal_total_M=metal_total_M)
    rows, dropped = [], 0
    with contextlib.nullcontext() if profile else without_profile_intervals():
        for _ in range(n_series):
            y = E + rng.normal(0.0, sigma_V, E.size)
            ref = E_FREE_V + rng.normal(0.0, sigma_V)
            pts = [
                StepwisePoint(f"s{i}", x, v, sigma_V)
                for i, (x, v) in enumerate(zip(c, y, strict=True))
            ]
            fit = fit_stepwise(
                pts,
                electrons=electrons,
                temperature_K=temperature_K,
                reference_E_half_V=ref,
                reference_stderr_V=sigma_V,
                max_complexes=len(log10_beta),
                conditions=cond,
            )
            if isinstance(fit, FitRefused) or fit.n_complexes != len(log10_beta):
                dropped += 1
                continue
            rows.append(fit.log10_beta_values)
    return np.array(rows), dropped


def lingane_scatter(
    ligand_M,
    log10_beta_ratio,
    delta_ligands,
    sigma_V,
    *,
    n_series,
    seed,
    temperature_K=298.15,
    electrons=1,
):
    """Fitted (log10 β ratio, p − q) of ``n_series`` simulated series (rows)."""
    c = np.asarray(ligand_M, dtype=float)
    S = nernst_slope_V_per_decade(temperature_K, electrons)
    E = E_FREE_V - S * (log10_beta_ratio + delta_ligands * np.log10(c))
    rng = np.random.default_rng(seed)
    rows = []
    for _ in range(n_series):
        y = E + rng.normal(0.0, sigma_V, E.size)
        ref = E_FREE_V + rng.normal(0.0, sigma_V)
        pts = [
            TitrationPoint(f"s{i}", x, v, sigma_V)
            for i, (x, v) in enumerate(zip(c, y, strict=True))
        ]
        fit = fit_lingane(
            pts,
            electrons=electrons,
            temperature_K=temperature_K,
            reference_E_half_V=ref,
            reference_stderr_V=sigma_V,
        )
        rows.append([fit.log10_beta_ratio.value, fit.delta_ligands.value])
    return np.array(rows)
