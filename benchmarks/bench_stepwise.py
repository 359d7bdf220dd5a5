"""Speed of the stepwise fit on a 14-point, three-complex titration (E½ values only).

Run: ``python benchmarks/bench_stepwise.py``. Prints the time of

* the model choice alone (candidates N = 1 … 4, no intervals),
* the full :func:`cvfit.titration.stepwise.fit_stepwise` (choice, profile intervals, upper limit of
  the next constant, free-ligand iteration off and on),
* the Lingane line on the same points,

and the ratios to the Lingane fit. No assertions: numbers depend on the machine.
"""

from __future__ import annotations

import numpy as np
from _timing import best_of

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.chemistry.speciation import free_ligand_M
from cvfit.titration.lingane import TitrationPoint, fit_lingane
from cvfit.titration.stepwise import SolutionConditions, StepwisePoint, fit_stepwise
from cvfit.titration.stepwise_least_squares import StepwiseData
from cvfit.titration.stepwise_model_choice import choose_candidate, fit_all_candidates
from cvfit.units import thermal_voltage

TRUTH = (2.0, 3.7, 4.9)
L = np.logspace(-3.5, 0.0, 14)
SIGMA = 0.2e-3


def main() -> None:
    rng = np.random.default_rng(0)
    E = complexed_half_wave_V(0.0, ligand_M=L, log10_beta_ox=TRUTH)
    E = E + rng.normal(0.0, SIGMA, L.size)
    k = thermal_voltage(298.15, 1)
    data = StepwiseData(L, E, np.full(L.size, SIGMA), 0.0, SIGMA, k, 1.0, np.zeros(L.size))
    pts = [StepwisePoint(f"p{i}", x, e, SIGMA) for i, (x, e) in enumerate(zip(L, E, strict=True))]
    MT = 1e-3
    LT = np.array([x + MT * 3 for x in L])  # totals with bound ligand for the iterated run
    L_free = np.array([free_ligand_M(t, MT, TRUTH) for t in LT])
    E_mb = complexed_half_wave_V(0.0, ligand_M=L_free, log10_beta_ox=TRUTH)
    pts_mb = [
        StepwisePoint(f"p{i}", t, e, SIGMA) for i, (t, e) in enumerate(zip(LT, E_mb, strict=True))
    ]
    lin = [TitrationPoint(f"p{i}", x, e, SIGMA) for i, (x, e) in enumerate(zip(L, E, strict=True))]
    kw = dict(electrons=1, temperature_K=298.15, reference_E_half_V=0.0, reference_stderr_V=SIGMA)

    t_choice = best_of(lambda: choose_candidate(fit_all_candidates(data, 4)), 5)
    t_full = best_of(lambda: fit_stepwise(pts, max_complexes=4, **kw), 3)
    cond = SolutionConditions(metal_total_M=MT)
    t_mb = best_of(lambda: fit_stepwise(pts_mb, max_complexes=4, conditions=cond, **kw), 3)
    t_lin = best_of(
        lambda: fit_lingane(
            lin,
            electrons=1,
            temperature_K=298.15,
            reference_E_half_V=0.0,
            reference_stderr_V=SIGMA,
        ),
        5,
    )
    rows = (
        ("choice N = 1..4", t_choice),
        ("fit_stepwise (intervals)", t_full),
        ("fit_stepwise + mass balance", t_mb),
    )
    for label, t in rows:
        print(f"{label:<28} {t * 1e3:8.1f} ms   {t / t_lin:7.1f} x Lingane")
    print(f"Lingane line                 {t_lin * 1e3:8.1f} ms")


if __name__ == "__main__":
    main()
