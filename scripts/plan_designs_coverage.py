"""The planner's recommended designs, simulated at the planned noise and analysed.

Run: ``python scripts/plan_designs_coverage.py [--seeds 100]`` (about 0.5 s per series
on one core). The three scenarios of ``tests/test_plan_model_range.py`` (the issue's
1 mM–0.3 M range with metal, one ligand over 1 mM–0.1 M, a two-electron couple): each
recommended design is written by ``simulate_plan`` (the plan's own per-file noise) and
run through ``analyse_series``. Prints, per scenario, how often the 95 % intervals of
log10(β_ox/β_red) and p − q hold the truth (issue 24 asks 95 ± 4 %; binomial SD 2.2 % at
100 series), how many series gave a wrong whole p − q and how many of those were not
flagged (must be none), and the median per-file E½ error against the planned one.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from test_plan_model_range import SCENARIOS  # noqa: E402

from cvfit.io import load_manifest  # noqa: E402
from cvfit.pipeline.series import analyse_series  # noqa: E402
from cvfit.plan import make_plan  # noqa: E402
from cvfit.plan.inputs import plan_from_mapping  # noqa: E402
from cvfit.plan.simulate_plan import simulate_plan  # noqa: E402

NAMES = ("issue", "one-ligand", "two-electron")


def run(doc: dict, seeds: int, first_seed: int) -> str:
    plan = make_plan(plan_from_mapping(doc, "<plan>"))
    truth = (doc["expect"]["log10_beta_ratio"], doc["expect"]["delta_ligands"])
    hits = np.zeros(2)
    wrong = unflagged = 0
    sigmas = []
    with tempfile.TemporaryDirectory() as tmp:
        for k in range(seeds):
            manifest = simulate_plan(plan, Path(tmp) / f"s{k}", seed=first_seed + k)
            result = analyse_series(load_manifest(manifest), jobs=1)
            fit = result.fit
            for i, q in enumerate((fit.log10_beta_ratio, fit.delta_ligands)):
                hits[i] += q.ci95[0] <= truth[i] <= q.ci95[1]
            if fit.delta_ligands_integer != round(truth[1]):
                wrong += 1
                unflagged += "LINE_CURVED" not in {f.code for f in fit.flags}
            sigmas.extend(f.E_half_stderr_V for f in result.files if f.E_half_stderr_V)
    cover = 100 * hits / seeds
    return (
        f"coverage log10 ratio {cover[0]:5.1f} %, p − q {cover[1]:5.1f} % over {seeds} series; "
        f"wrong p − q {wrong} (unflagged {unflagged}); median σ(E½) "
        f"{1e3 * float(np.median(sigmas)):.3f} mV (planned "
        f"{1e3 * doc['design']['E_half_stderr_V']:.3f})"
    )


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", type=int, default=100)
    ap.add_argument("--first-seed", type=int, default=1000)
    args = ap.parse_args(argv)
    for name, doc in zip(NAMES, SCENARIOS, strict=True):
        print(f"{name:<13}{run(doc, args.seeds, args.first_seed)}", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
