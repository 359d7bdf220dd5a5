"""Coverage of the curve fit's k0 interval near the reversible end with R_u fitted.

Run: ``python scripts/coverage_k0_resistance.py [--seeds 120] [--psi 10]``.

Records from the project's simulator (ψ ≈ 10 at 20 mV/s, α 0.5, R_u 20 Ω by default, 5 µF,
a sloping background, 0.5 % noise), each fitted with R_u fitted; prints how often the 95 % interval
of k0 (and of E½) covers the truth, the mean correlation of log10 k0 and R_u, and how
many intervals were open upwards (a lower bound only, which covers when the bound is
below the truth). Slow (about a second per seed): not part of the suite; a small version
is in tests/test_curve_realistic.py.
"""

from __future__ import annotations

import argparse
import math

import numpy as np

from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.curve.fit import fit_curve
from cvfit.techniques.cv.curve.model import curve_data
from cvfit.units import FARADAY, GAS_CONSTANT

V = 0.02
D = 1e-5
SETTINGS = dict(
    E_half_V=-0.2, start_V=0.25, switch_V=-0.65, scan_rate_V_s=V, step_V=0.0009,
    resistance_ohm=20.0, double_layer_F=5e-6, background_offset_A=1e-7,
    background_slope_A_per_V=2e-6, alpha=0.5,
)  # fmt: skip


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--seeds", type=int, default=120)
    ap.add_argument("--psi", type=float, default=10.0)
    ap.add_argument("--resistance", type=float, default=20.0, help="true R_u, Ω")
    ap.add_argument("--noise", type=float, default=0.005, help="noise, fraction of the peak")
    ap.add_argument("--first-seed", type=int, default=1000)
    args = ap.parse_args()
    f = FARADAY / (GAS_CONSTANT * 298.15)
    k0 = args.psi * math.sqrt(math.pi * D * f * V)
    ip = 0.4463 * FARADAY * 0.0707 * 1e-6 * math.sqrt(D * f * V)  # Randles–Ševčík
    hits = np.zeros(2)
    open_up = 0
    corr = []
    for seed in range(args.first_seed, args.first_seed + args.seeds):
        kw = {**SETTINGS, "resistance_ohm": args.resistance}
        v = simulate_cv(**kw, k0_cm_s=k0, noise_fraction=args.noise, seed=seed)
        data = curve_data(
            v.potential_V, v.current_A, time_s=v.time_s, scan_rate_V_s=V,
            stop=v.potential_V.size - 1, electrons=1, temperature_K=298.15, bulk="ox",
            sigma_A=args.noise * ip,
        )  # fmt: skip
        fit = fit_curve(data, E_half_start_V=-0.19, D_cm2_s=D, resistance_ohm=None)
        lo, hi = fit.k0_cm_s.ci95
        hi = math.inf if math.isnan(hi) else hi
        open_up += fit.k0_lower_bound_cm_s is not None
        hits[0] += lo <= k0 <= hi
        elo, ehi = fit.E_half_V.ci95
        hits[1] += elo <= -0.2 <= ehi
        note = [fl.message for fl in fit.flags if fl.code == "CURVE_FIT_K0_NEEDS_RU"]
        if note:
            corr.append(float(note[0].split("correlation ")[1].split(")")[0]))
    n = args.seeds
    print(f"psi {args.psi:g}, k0 {k0:.4g} cm/s, R_u {args.resistance:g} Ω fitted, {n} seeds")
    print(f"  k0 interval covers the truth: {hits[0] / n:.3f} ({int(hits[0])}/{n})")
    print(f"  E½ interval covers the truth: {hits[1] / n:.3f}")
    print(f"  open upwards (lower bound only): {open_up}")
    if corr:
        print(f"  flagged CURVE_FIT_K0_NEEDS_RU: {len(corr)}, mean r {np.mean(corr):.3f}")


if __name__ == "__main__":
    main()
