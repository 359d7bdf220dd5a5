"""Reading one voltammogram file: ``cvfit.io.read_voltammogram`` against ``pandas.read_csv``.

Run: ``python benchmarks/bench_import.py [--files 200] [--points 20001] [--repeats 7]
[--cache DIR]``.

Times, in this one process after a warm-up (page cache, imports), the two sides
alternating round by round, the median of ``--repeats`` passes over the same files of a
simulated series (``_timing.simulated_series``; default 200 files of 20 001 points):

* the baseline: ``pandas.read_csv(path)`` of every file;
* :func:`cvfit.io.read_voltammogram` of every file (header sniffing, column mapping,
  checks, the numbers through one ``pandas.read_csv`` call, the record).

Prints milliseconds per file and the ratio, the share of reading in the large-series
ratio of ``bench_command.py``. No assertions: numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse

import pandas as pd
from _timing import alternate, cache_root, median, series_files, simulated_series, warm_page_cache

from cvfit.io import read_voltammogram


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--files", type=int, default=200, help="files of the series (200)")
    ap.add_argument("--points", type=int, default=20001, help="points per file (20001)")
    ap.add_argument("--repeats", type=int, default=7, help="timed passes of each side (7)")
    ap.add_argument("--cache", default=None, help="folder of the simulated series")
    args = ap.parse_args()
    manifest = simulated_series(cache_root(args.cache), args.files, 2.0 / (args.points - 1))
    paths = series_files(manifest)
    warm_page_cache(paths)
    sides = {
        "pandas.read_csv": lambda: [pd.read_csv(p) for p in paths],
        "read_voltammogram": lambda: [read_voltammogram(p) for p in paths],
    }
    alternate(sides, 1)  # warm-up
    times = alternate(sides, args.repeats)
    base = median(times["pandas.read_csv"])
    n = len(paths)
    print(f"{n} files of {paths[0].stat().st_size / 1e3:.0f} kB, median of {args.repeats} passes")
    for name, values in times.items():
        t = median(values)
        print(f"  {name:20s} {t:7.3f} s  {1e3 * t / n:7.3f} ms/file  ratio {t / base:5.2f}")


if __name__ == "__main__":
    main()
