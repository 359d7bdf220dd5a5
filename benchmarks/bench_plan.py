"""Speed of ``cvfit plan`` for a four-complex stepwise system (issue: under 2 s).

Run: ``python benchmarks/bench_plan.py``. Times, alternating round by round,

* :func:`cvfit.plan.make_plan` for 10 solutions over 1e-4 … 3 M, four constants each
  with a range (9 scenarios), without and with 1 mM metal (mass balance),
* one :func:`cvfit.titration.stepwise.fit_stepwise` of the same size (10 points, N = 1 … 4),

and prints the medians and the ratios to the single fit. No assertions: numbers depend on
the machine and its load.
"""

from __future__ import annotations

import numpy as np
from _timing import alternate, median

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.plan import make_plan
from cvfit.plan.inputs import plan_from_mapping
from cvfit.titration.stepwise import StepwisePoint, fit_stepwise

TRUTH = [2.0, 3.8, 5.0, 5.5]
SIGMA = 5e-4


def _plan_doc(metal: float | None) -> dict:
    series = {"electrons": 1, "temperature_C": 25.0}
    if metal is not None:
        series["metal_total_M"] = metal
    return {
        "series": series,
        "expect": {
            "log10_beta_ox": TRUTH,
            "log10_beta_ox_range": [[1.5, 2.5], [3.3, 4.3], [4.5, 5.5], [5.0, 6.0]],
        },
        "design": {
            "ligand_min_M": 1e-4,
            "ligand_max_M": 3.0,
            "points": 10,
            "E_half_stderr_V": SIGMA,
            "target_stderr_log10": 0.02,
        },
    }


def main() -> None:
    free = plan_from_mapping(_plan_doc(None), "<bench>")
    metal = plan_from_mapping(_plan_doc(1e-3), "<bench>")
    L = np.geomspace(1e-4, 3.0, 10)
    E = complexed_half_wave_V(0.0, ligand_M=L, log10_beta_ox=TRUTH)
    E = E + np.random.default_rng(0).normal(0.0, SIGMA, L.size)
    pts = [StepwisePoint(f"p{i}", x, e, SIGMA) for i, (x, e) in enumerate(zip(L, E, strict=True))]
    kw = dict(electrons=1, temperature_K=298.15, reference_E_half_V=0.0, reference_stderr_V=SIGMA)
    times = alternate(
        {
            "make_plan, 4 complexes": lambda: make_plan(free),
            "make_plan, 4 complexes + metal": lambda: make_plan(metal),
            "fit_stepwise, 10 points": lambda: fit_stepwise(pts, max_complexes=4, **kw),
        },
        5,
    )
    base = median(times["fit_stepwise, 10 points"])
    for label, ts in times.items():
        t = median(ts)
        print(f"{label:<32} {t * 1e3:8.1f} ms   {t / base:6.2f} x one stepwise fit")


if __name__ == "__main__":
    main()
