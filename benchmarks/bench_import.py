"""Speed of importing one voltammogram file: cvfit vs a bare ``pandas.read_csv``.

Run: ``.venv/bin/python benchmarks/bench_import.py [--files N] [--repeats 7]
[--cache DIR]``.

Times, in this one process and interleaved round by round so that a busy machine slows
every side alike, the best of ``--repeats`` runs over the same files of

* the baseline: ``pandas.read_csv(path)`` of every file;
* ``cvfit.io.read_voltammogram`` with the compiled parser (numba);
* the same with the compiled parser switched off (the ``pandas.read_csv`` path).

The files are the 200 simulated 20 001-point voltammograms of ``bench_series.py`` (made
there, into ``--cache``/unique, if absent). Prints milliseconds per file and the ratios to
pandas (goal: at most 0.6 with numba), and the one-off cost of the compiled parser in a
fresh process (numba import and loading the cached machine code). No assertions: numbers
depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import pandas as pd
from _timing import best_of
from cvfit.io._parser_choice import load_compiled_parser

from cvfit.io import _numparse, read_voltammogram

_FIRST_USE = """
import time
import cvfit.io
t0 = time.perf_counter()
from cvfit.io import _numparse
t1 = time.perf_counter()
from cvfit.io._parser_choice import load_compiled_parser
load_compiled_parser()
t2 = time.perf_counter()
print(f"{t1 - t0:.3f} {t2 - t1:.3f}")
"""


def _files(cache: Path, count: int) -> list[Path]:
    folder = cache / "unique"
    found = sorted(folder.glob("cv_*.csv"))
    if len(found) < count:
        from bench_series import make_unique_files  # simulates (slow, once)

        make_unique_files(folder)
        found = sorted(folder.glob("cv_*.csv"))
    return found[:count]


def _read_all(paths: list[Path]) -> None:
    for p in paths:
        read_voltammogram(p)


def _pandas_all(paths: list[Path]) -> None:
    for p in paths:
        pd.read_csv(p)


def _without_numba(paths: list[Path]) -> None:
    _numparse.HAVE_NUMBA = False
    try:
        _read_all(paths)
    finally:
        _numparse.HAVE_NUMBA = True


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--files", type=int, default=200)
    ap.add_argument("--repeats", type=int, default=7)
    ap.add_argument("--cache", default=str(Path(tempfile.gettempdir()) / "cvfit_bench_cv"))
    args = ap.parse_args()
    paths = _files(Path(args.cache), args.files)
    if not _numparse.HAVE_NUMBA:
        print("numba is not installed: both cvfit rows take the pandas path")
    fresh = subprocess.run(
        [sys.executable, "-c", _FIRST_USE], capture_output=True, text=True, check=True
    ).stdout.split()
    load_compiled_parser()  # as the pipeline does before a large series
    for p in paths:  # page cache, numba's compiled code and pandas all warm
        p.read_bytes()
    _read_all(paths[:2])
    _pandas_all(paths[:2])
    sides = {
        "pandas.read_csv": lambda: _pandas_all(paths),
        "read_voltammogram": lambda: _read_all(paths),
        "read_voltammogram, numba off": lambda: _without_numba(paths),
    }
    best = dict.fromkeys(sides, float("inf"))
    t0 = time.perf_counter()
    for _ in range(args.repeats):
        for name, func in sides.items():
            best[name] = min(best[name], best_of(func, 1))
    n = len(paths)
    print(
        f"{n} files of {paths[0].stat().st_size / 1e3:.0f} kB, best of {args.repeats} "
        f"interleaved runs ({time.perf_counter() - t0:.0f} s)"
    )
    base = best["pandas.read_csv"]
    for name, seconds in best.items():
        print(
            f"  {name:30s} {seconds:7.3f} s  {seconds / n * 1e3:6.3f} ms/file  "
            f"ratio {seconds / base:5.2f}"
        )
    print(
        f"first use in a fresh process: numba import {fresh[0]} s, loading the compiled "
        f"parser {fresh[1]} s"
    )
    print("goal: read_voltammogram / pandas.read_csv <= 0.6")


if __name__ == "__main__":
    main()
