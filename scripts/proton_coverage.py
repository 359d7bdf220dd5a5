"""Coverage of the pH model's 95 % pKa intervals: Monte-Carlo at the E½ level.

Each series is the relation E½(pH) of a known couple (computed here, inline) plus Gaussian
noise of a stated standard deviation on every E½, fitted by the pH model exactly as
``cvfit run`` fits it (:data:`cvfit.titration.proton_model.PROTON`, the number of steps
chosen by its F-test). A pKa counts as covered when the interval holds the truth; a series
whose chosen number of steps differs from the truth counts as a miss for every pKa it lacks.

    python scripts/proton_coverage.py                  # both scenarios, 1000 series each
    python scripts/proton_coverage.py --series 200 --scenario one

Prints, per scenario and pKa: coverage with its binomial standard error, the mean interval
width, how often the true number of steps was chosen, and the seconds per series.
"""

from __future__ import annotations

import argparse
import math
import time
from types import SimpleNamespace

import numpy as np
from scipy.constants import R, physical_constants

from cvfit.titration.base import ReferenceHalfWave, TitrationData, TitrationPoint
from cvfit.titration.proton_model import PROTON

F = physical_constants["Faraday constant"][0]

#: name -> (pKa_ox, pKa_red, pH values, E½ noise SD in V, max_protons)
SCENARIOS = {
    "one": ((4.0,), (7.5,), np.arange(2.0, 10.01, 0.5), 0.5e-3, 1),
    "two": ((6.0, 3.0), (9.0, 5.0), np.arange(1.0, 11.01, 0.5), 0.5e-3, 2),
}


def relation(E0: float, pH: np.ndarray, ox, red, T: float = 298.15) -> np.ndarray:
    """E½(pH) written out here, independently of cvfit.chemistry.protonation."""
    h = 10.0**-pH

    def poly(pKa) -> np.ndarray:
        total, beta = np.ones_like(h), 1.0
        for j, p in enumerate(pKa, start=1):
            beta *= 10.0**p
            total = total + beta * h**j
        return total

    return E0 + R * T / F * np.log(poly(red) / poly(ox))


def run(name: str, n_series: int, seed: int) -> None:
    ox, red, pH, sd, max_protons = SCENARIOS[name]
    truth = {f"ox{j}": v for j, v in enumerate(ox, 1)} | {
        f"red{j}": v for j, v in enumerate(red, 1)
    }
    hits = dict.fromkeys(truth, 0)
    widths: dict[str, list[float]] = {k: [] for k in truth}
    right_model = 0
    manifest = SimpleNamespace(
        series=SimpleNamespace(temperature_K=298.15, electrons=1),
        fit=SimpleNamespace(max_protons=max_protons),
    )
    rng = np.random.default_rng(seed)
    clean = relation(0.1, pH, ox, red)
    t0 = time.perf_counter()
    for _ in range(n_series):
        E = clean + rng.normal(0.0, sd, pH.size)
        pts = tuple(
            TitrationPoint(f"p{k}", float(x), float(e), sd)
            for k, (x, e) in enumerate(zip(pH, E, strict=True))
        )
        fit = PROTON.fit(TitrationData(pts, ReferenceHalfWave(None, None, "none")), manifest).fit
        got = {f"ox{p.j}": p.value for p in fit.pKa_ox}
        got |= {f"red{p.j}": p.value for p in fit.pKa_red}
        right_model += set(got) == set(truth)
        for key, true in truth.items():
            q = got.get(key)
            if q is None:
                continue
            lo, hi = q.ci95
            hits[key] += bool(lo <= true <= hi)
            if math.isfinite(lo) and math.isfinite(hi):
                widths[key].append(hi - lo)
    per = (time.perf_counter() - t0) / n_series
    print(
        f"scenario {name}: pKa_ox {ox}, pKa_red {red}, {pH.size} pH values "
        f"{pH.min():g}-{pH.max():g}, E½ noise {1e3 * sd:g} mV, {n_series} series"
    )
    for key in truth:
        c = hits[key] / n_series
        se = math.sqrt(c * (1 - c) / n_series)
        w = float(np.mean(widths[key])) if widths[key] else math.nan
        print(f"  pKa {key:<5} coverage {100 * c:5.1f} ± {100 * se:.1f} %   mean width {w:.3f}")
    print(
        f"  true number of steps chosen in {100 * right_model / n_series:.1f} %; "
        f"{per:.2f} s per series"
    )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--series", type=int, default=1000)
    ap.add_argument("--scenario", choices=(*SCENARIOS, "all"), default="all")
    ap.add_argument("--seed", type=int, default=20261204)
    args = ap.parse_args()
    for name in SCENARIOS if args.scenario == "all" else (args.scenario,):
        run(name, args.series, args.seed)


if __name__ == "__main__":
    main()
