"""Coverage of the Lingane fit on the free ligand when much of the ligand is bound.

Run: ``python scripts/bound_ligand_coverage.py [--series 400] [--seed 1] [--noise-mV 0.2]``
(a few seconds per hundred series on one core; not a test — tests/test_lingane_bound_ligand.py
runs a smaller version).

Each series is a titration by additions computed at the E½ level (tests/bound_ligand_series.py:
10 mL of metal, 0.100 M ligand stock added 0.5–5 mL, one complex ML2 of the oxidised form,
log10 β2 = 10, reduced form free; exact E½ from the mass balance, Gaussian noise on every
E½ and on E½(s)). Every point carries its own diluted metal, so the Lingane model corrects
the free ligand with the fitted p − q. Prints, at each starting metal, the coverage of the
95 % intervals of log10(β_ox/β_red), p − q and the ratio at the whole p − q (binomial SD
1.1 % at 400 series), the mean error with its standard error (bias), the spread of the
estimates against the mean reported standard error, and how many fits did not settle
(FREE_LIGAND_NOT_CONVERGED).
"""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from bound_ligand_series import (  # noqa: E402
    TRUE_LOG_BETA,
    TRUE_P,
    covered,
    exact_half_waves,
    manifest,
    noisy_data,
)

from cvfit.titration.lingane_model import LINGANE  # noqa: E402


def run(metal_M: float, series: int, noise_V: float, seed: int) -> dict[str, float]:
    rng = np.random.default_rng(seed)
    exact = exact_half_waves(metal_M)
    m = manifest()
    hits = {"ratio": 0, "p": 0, "integer": 0}
    est_ratio, est_p, se_ratio, se_p = [], [], [], []
    stuck = 0
    for _ in range(series):
        fit = LINGANE.fit(noisy_data(metal_M, noise_V, rng, exact), m).fit
        stuck += any(f.code == "FREE_LIGAND_NOT_CONVERGED" for f in fit.flags)
        hits["ratio"] += covered(fit.log10_beta_ratio, TRUE_LOG_BETA)
        hits["p"] += covered(fit.delta_ligands, TRUE_P)
        hits["integer"] += covered(fit.log10_beta_ratio_at_integer, TRUE_LOG_BETA)
        est_ratio.append(fit.log10_beta_ratio.value)
        est_p.append(fit.delta_ligands.value)
        se_ratio.append(fit.log10_beta_ratio.stderr)
        se_p.append(fit.delta_ligands.stderr)
    n = float(series)
    return {
        "cover_ratio": hits["ratio"] / n,
        "cover_p": hits["p"] / n,
        "cover_integer": hits["integer"] / n,
        "bias_ratio": float(np.mean(est_ratio)) - TRUE_LOG_BETA,
        "bias_ratio_se": float(np.std(est_ratio, ddof=1)) / math.sqrt(n),
        "bias_p": float(np.mean(est_p)) - TRUE_P,
        "bias_p_se": float(np.std(est_p, ddof=1)) / math.sqrt(n),
        "sd_p": float(np.std(est_p, ddof=1)),
        "mean_se_p": float(np.mean(se_p)),
        "sd_ratio": float(np.std(est_ratio, ddof=1)),
        "mean_se_ratio": float(np.mean(se_ratio)),
        "not_settled": stuck,
    }


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--series", type=int, default=400)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--noise-mV", type=float, default=0.2)
    parser.add_argument("--metal-mM", type=float, nargs="+", default=[1.0, 1.5, 2.0])
    args = parser.parse_args()
    print(f"{args.series} series, noise {args.noise_mV} mV, seed {args.seed}")
    for mM in args.metal_mM:
        r = run(mM * 1e-3, args.series, args.noise_mV * 1e-3, args.seed)
        print(
            f"metal {mM:.2f} mM: coverage log10 ratio {100 * r['cover_ratio']:.1f} %, "
            f"p - q {100 * r['cover_p']:.1f} %, log10 ratio at p - q = 2 "
            f"{100 * r['cover_integer']:.1f} %; bias log10 ratio {r['bias_ratio']:+.5f} "
            f"± {r['bias_ratio_se']:.5f}, p - q {r['bias_p']:+.5f} ± {r['bias_p_se']:.5f}; "
            f"SD/mean stderr p - q {r['sd_p']:.5f}/{r['mean_se_p']:.5f}, log10 ratio "
            f"{r['sd_ratio']:.5f}/{r['mean_se_ratio']:.5f}; not settled {r['not_settled']}"
        )


if __name__ == "__main__":
    main()
