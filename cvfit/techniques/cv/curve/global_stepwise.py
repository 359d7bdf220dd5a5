"""DeFord–Hume tie of the global curve fit: E½ of every file from log10 β_j and free [L].

The E½ of file i is the stepwise fit's own model function
(:meth:`cvfit.titration.stepwise_least_squares.StepwiseData.model`, with its analytic Jacobian),

    E½_i = E½(s) − s·(RT/nF)·[ln F0(L_i; β) − ln F0_other(L_i)] + δ_i,

with the fitted form's constants β_1 … β_N (N chosen by the two-step fit's F-test), the
other form's given constants (F0_other = 1 when not complexed), and δ_i the DeFord–Hume
current (diffusion) term: that of the two-step fit, E½_i,measured − y_i, or — when given
(*current_term_V*) — (RT/nF)·ln(s_ref/s_i) from the curve fits' current scales, which
carry far less noise than the peak currents (the pipeline does this when the reduced form
is not complexed and the two-step fit applied the term). Simplification: the free ligand
[L]_i is held at the two-step values (after the mass balance or protonation correction,
when the manifest asks for them) — the global constants differ from the two-step ones by
a fraction of their interval, so the free-ligand change is of second order.

References
----------
DeFord, D. D.; Hume, D. N. J. Am. Chem. Soc. 1951, 73, 5321.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import numpy as np

from cvfit.chemistry.complexation import log_leden_F0
from cvfit.errors import FitError
from cvfit.techniques.cv.curve.global_fit import Tie
from cvfit.titration.stepwise_least_squares import StepwiseData
from cvfit.titration.stepwise_result import StepwiseFit
from cvfit.units import thermal_voltage

__all__ = ["stepwise_tie", "BETA_SEARCH_DECADES"]

#: How far the global search may move each log10 β_j from the two-step value.
BETA_SEARCH_DECADES = 3.0


def stepwise_tie(
    names: Sequence[str],
    E_half_V: Mapping[str, float],
    fit: StepwiseFit,
    *,
    electrons: int,
    temperature_K: float,
    current_term_V: Mapping[str, float] | None = None,
) -> Tie:
    """The DeFord–Hume tie for the files *names* (ligand-free: those not in ``fit.labels``).

    Parameters
    ----------
    names : sequence of str
        The files of the global fit, in order.
    E_half_V : mapping
        The E½ each titration file entered the two-step fit with, V (for δ_i).
    fit : StepwiseFit
        The two-step fit (start, N, free ligand, fixed constants of the other form).
    current_term_V : mapping, optional
        δ_i per titration file, V, replacing the two-step fit's.

    Raises
    ------
    FitError
        No ligand-free file, or fewer titration files than constants.
    """
    k = thermal_voltage(temperature_K, electrons)
    sign = 1.0 if fit.fitted_state == "ox" else -1.0
    free = dict(zip(fit.labels, fit.free_ligand_M, strict=True))
    lnF0_obs = dict(zip(fit.labels, fit.ln_F0_observed, strict=True))
    E0 = fit.E_half_free.value
    titration = [n for n in names if n in free]
    if len(titration) == len(names):
        raise FitError("the global fit needs a ligand-free file")
    if len(titration) <= fit.n_complexes:
        raise FitError(
            f"{len(titration)} titration files for {fit.n_complexes} constants: too few"
        )
    L = np.array([free.get(n, 0.0) for n in names], float)
    other = log_leden_F0(L, fit.fixed_log10_beta)
    delta = np.zeros(L.size)
    for i, n in enumerate(names):
        if n in free:
            y = E0 - sign * k * (lnF0_obs[n] - float(other[i]))
            delta[i] = E_half_V[n] - y if current_term_V is None else current_term_V[n]
    data = StepwiseData(
        ligand_M=L,
        E_half_V=np.zeros(L.size),
        sigma_V=np.ones(L.size),
        reference_V=0.0,
        reference_sigma_V=1.0,
        thermal_V=k,
        sign=sign,
        ln_F0_other=other,
    )

    def e_half(p: np.ndarray) -> np.ndarray:
        return data.model(p) + delta

    def gradient(p: np.ndarray) -> np.ndarray:
        # StepwiseData.jacobian is of (E½ − model)/σ with σ = 1: ∂model/∂p = −J
        return -data.jacobian(p)[:-1, :]

    start = np.array([E0, *fit.log10_beta_values], float)
    width = np.array([0.2] + [BETA_SEARCH_DECADES] * fit.n_complexes)
    N = fit.n_complexes
    return Tie(
        "stepwise",
        ("E_half_free_V", *(f"log10_beta_{j}" for j in range(1, N + 1))),
        start,
        start - width,
        start + width,
        e_half,
        gradient,
        tuple(range(1, N + 1)),
        fitted_state=fit.fitted_state,
    )
