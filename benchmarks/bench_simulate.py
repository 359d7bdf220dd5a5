"""Speed of the simulator: one voltammogram, and the one-off cost of its compiled kernel.

Run: ``python benchmarks/bench_simulate.py [--repeats 7] [--points 2001,20001]``.

The simulator (:mod:`cvfit.simulate.finite_difference`) marches with Thomas sweeps
compiled by numba (a requirement since a pure-NumPy back end measured 25-64 times slower
at 2 001 points and 3 times at 20 001; that back end was removed). This prints

* per voltammogram, in this process after a warm-up, the median of ``--repeats`` calls of
  ``_simulate_raw`` at 2 001 points (1 mV steps over a 1 V window, a typical export) and
  20 001 points (0.1 mV);
* the one-off cost in a fresh process: importing the kernel (numba's import included)
  and the first simulation, with numba's on-disk cache empty (first run after install:
  compilation) and filled (every later run).

A fit that uses the simulator as its model runs hundreds of simulations per file. No
assertions: numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import tempfile

from _timing import alternate, median, numbers_from_code

from cvfit.simulate.voltammogram import _simulate_raw

#: A reversible couple swept 0.5 -> -0.5 V and back at 0.1 V/s (step chosen per size).
SETTINGS = dict(E_half_V=0.0, start_V=0.5, switch_V=-0.5, scan_rate_V_s=0.1)

FIRST_CALL = """
import sys, time
t0 = time.perf_counter()
from cvfit.simulate.voltammogram import simulate_cv
t1 = time.perf_counter()
simulate_cv(E_half_V=0.0, start_V=0.5, switch_V=-0.5, step_V=float(sys.argv[1]))
t2 = time.perf_counter()
simulate_cv(E_half_V=0.0, start_V=0.5, switch_V=-0.5, step_V=float(sys.argv[1]))
t3 = time.perf_counter()
print(t1 - t0, t2 - t1, t3 - t2)
"""


def first_call(step_V: float, cache_dir: str) -> list[float]:
    """(import s, first simulation s, second simulation s) in a fresh process."""
    return numbers_from_code(FIRST_CALL, repr(step_V), numba_cache_dir=cache_dir)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=7, help="timed calls per size (7)")
    ap.add_argument("--points", default="2001,20001", help="points per voltammogram")
    args = ap.parse_args()
    print("per voltammogram (this process, warm), median of the calls")
    print(f"{'points':>7s} {'grid':>5s} {'ms':>9s}")
    for points in [int(p) for p in args.points.split(",") if p.strip()]:
        step_V = 2.0 / (points - 1)
        kw = dict(SETTINGS, step_V=step_V)
        _, _, info = _simulate_raw(**kw)  # compiles or loads the cache
        times = alternate({"numba": lambda kw=kw: _simulate_raw(**kw)}, args.repeats)
        t = median(times["numba"])
        print(f"{points:7d} {info['grid_points']:>5s} {1e3 * t:9.2f}", flush=True)
    print("\none-off cost in a fresh process, 2001 points (kernel import, 1st and 2nd call)")
    with tempfile.TemporaryDirectory(prefix="cvfit_numba_cache_") as cache_dir:
        rows = [
            ("empty cache (compiles)", first_call(0.001, cache_dir)),
            ("cache filled", first_call(0.001, cache_dir)),
        ]
    for label, (imp, first, second) in rows:
        print(
            f"  {label:24s} import {imp:6.3f} s  first {first:6.3f} s  second {second:6.3f} s  "
            f"one-off {imp + first - second:6.3f} s"
        )


if __name__ == "__main__":
    main()
