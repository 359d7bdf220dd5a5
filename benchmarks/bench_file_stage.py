"""Where 2 worker processes start to pay for the per-file stage of one series.

Run: ``python benchmarks/bench_file_stage.py [--sizes 10,20,50,100,200] [--with-1000]
[--repeats 5] [--points 20001] [--cache DIR]``.

Times :func:`cvfit.pipeline.per_file.analyse_files` (read, peaks, screen and E½ of every
file of a series) with ``jobs=1`` (all in this process) against ``jobs=2`` (a fresh pool
of two workers per call, started, used and shut down as ``cvfit run`` does it), in this
one process after a warm-up, the two alternating call by call; series of 20 001-point
voltammograms (0.1 mV steps) of 10, 20, 50, 100 and 200 files (``--with-1000``: also
1 000 files; 0.6 GB of CSV in ``--cache``, simulated once). Prints the medians of
``--repeats`` calls and the ratio jobs=2 / jobs=1: below 1, the pool pays.

The environment is set as the ``cvfit`` command sets it (one BLAS thread). This measures
the stage :data:`cvfit.cli.file_jobs.PARALLEL_MIN_FILES` decides about; the whole command
is ``bench_command.py --cvfit-args "--jobs 2"``. No assertions: numbers depend on the
machine and its load.
"""

from __future__ import annotations

import argparse
import os

from cvfit.cli import NUMERIC_ENVIRONMENT  # imports no numerical library

for _name, _value in NUMERIC_ENVIRONMENT.items():  # as the cvfit command does
    os.environ.setdefault(_name, _value)

from _timing import (  # noqa: E402
    alternate,
    cache_root,
    median,
    series_files,
    simulated_series,
    warm_page_cache,
)

from cvfit.io import load_manifest  # noqa: E402
from cvfit.pipeline.parallel import available_cpus  # noqa: E402
from cvfit.pipeline.per_file import analyse_files  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="10,20,50,100,200", help="files per series")
    ap.add_argument("--with-1000", action="store_true", help="add a 1 000-file series")
    ap.add_argument("--repeats", type=int, default=5, help="timed calls of each side (5)")
    ap.add_argument("--points", type=int, default=20001, help="points per file (20001)")
    ap.add_argument("--cache", default=None, help="folder of the simulated series")
    args = ap.parse_args()
    sizes = [int(s) for s in args.sizes.split(",") if s.strip()]
    if args.with_1000:
        sizes.append(1000)
    step_V = 2.0 / (args.points - 1)
    cache = cache_root(args.cache)
    print(f"{available_cpus()} CPU cores available; {args.points}-point files")
    rows = []
    for n in sizes:
        path = simulated_series(cache, n, step_V)
        warm_page_cache(series_files(path))
        manifest = load_manifest(path)
        sides = {
            "jobs=1": lambda m=manifest: analyse_files(m, jobs=1),
            "jobs=2": lambda m=manifest: analyse_files(m, jobs=2),
        }
        alternate(sides, 1)  # warm-up: imports, first-call costs
        times = alternate(sides, args.repeats)
        serial, pooled = median(times["jobs=1"]), median(times["jobs=2"])
        pairs = median([p / s for s, p in zip(times["jobs=1"], times["jobs=2"], strict=True)])
        rows.append((n, serial, pooled, pooled / serial, pairs))
        print(f"  {n:5d} files: jobs=1 {serial:.3f} s, jobs=2 {pooled:.3f} s", flush=True)
    print(f"\nmedian of {args.repeats} alternating calls of analyse_files")
    print(
        f"{'files':>6s} {'jobs=1 s':>9s} {'jobs=2 s':>9s} {'ms/file 1':>9s} "
        f"{'ratio 2/1':>9s} {'median pair ratio':>17s}"
    )
    for n, serial, pooled, ratio, pairs in rows:
        print(
            f"{n:6d} {serial:9.3f} {pooled:9.3f} {1e3 * serial / n:9.2f} {ratio:9.2f} "
            f"{pairs:17.2f}"
        )
    print("ratio below 1: two workers pay at that size")


if __name__ == "__main__":
    main()
