"""The first curve fit of a fresh process: numba's compiled kernels from its disk cache or not.

Run: ``python benchmarks/bench_first_fit.py [--rounds 2]``.

A 2 001-point quasi-reversible cycle is simulated once into a temporary ``.npz``; then,
in fresh processes with their own empty ``NUMBA_CACHE_DIR`` each round:

* ``cold`` — the first process after an install: the kernels are compiled and written
  to the cache;
* ``warm`` — every later process: the kernels are loaded from the cache.

Each prints the time to import the curve fit, the first fit (compilation or cache load
included) and a second fit in the same process; the one-off cost is import + first −
second. ``--clock cpu`` times with the process's CPU clock instead of the wall clock (on
a loaded machine the compilation's CPU time is the steadier number). No assertions:
numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

import numpy as np
from _timing import numbers_from_code

from cvfit.simulate import simulate_cv

FIRST_FIT = """
import sys, time
import numpy as np
t0 = time.perf_counter()
from cvfit.techniques.cv.curve.fit import fit_curve
from cvfit.techniques.cv.curve.model import curve_data
t1 = time.perf_counter()
rec = np.load(sys.argv[1])
E, i, t = rec["E"], rec["i"], rec["t"]
data = curve_data(E, i, time_s=t, scan_rate_V_s=0.02, stop=E.size - 1, electrons=1,
                  temperature_K=298.15, bulk="ox", sigma_A=0.005 * 1.2e-5)
fit_curve(data, E_half_start_V=-0.19, D_cm2_s=1e-5)
t2 = time.perf_counter()
fit_curve(data, E_half_start_V=-0.19, D_cm2_s=1e-5)
t3 = time.perf_counter()
print(t1 - t0, t2 - t1, t3 - t2)
"""

SETTINGS = dict(
    start_V=0.25, switch_V=-0.65, scan_rate_V_s=0.02, step_V=0.0009, double_layer_F=5e-6,
    background_slope_A_per_V=2e-6, noise_fraction=0.005, k0_cm_s=5e-3, alpha=0.5,
)  # fmt: skip


def first_fit(record: Path, cache_dir: str, clock: str = "wall") -> list[float]:
    """(import s, first fit s, second fit s) in a fresh process."""
    code = FIRST_FIT if clock == "wall" else FIRST_FIT.replace("perf_counter", "process_time")
    return numbers_from_code(code, str(record), numba_cache_dir=cache_dir)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rounds", type=int, default=2)
    ap.add_argument("--clock", choices=("wall", "cpu"), default="wall")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory(prefix="cvfit_first_fit_") as tmp:
        v = simulate_cv(E_half_V=-0.2, seed=1, **SETTINGS)
        record = Path(tmp) / "cycle.npz"
        np.savez(record, E=v.potential_V, i=v.current_A, t=v.time_s)
        print(f"first curve fit in a fresh process, {v.potential_V.size} points")
        for r in range(args.rounds):
            cache = tempfile.mkdtemp(dir=tmp, prefix=f"numba_{r}_")
            for label in ("cold", "warm"):
                imp, first, second = first_fit(record, cache, args.clock)
                print(
                    f"  round {r + 1} {label}: import {imp:6.3f} s  first fit {first:6.3f} s  "
                    f"second fit {second:6.3f} s  one-off {imp + first - second:6.3f} s",
                    flush=True,
                )


if __name__ == "__main__":
    main()
