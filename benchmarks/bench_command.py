"""What a user feels: the whole ``cvfit run`` command, cold, against a baseline process.

Run: ``python benchmarks/bench_command.py [--repeats 5] [--cases typical,large]
[--cache DIR] [--cvfit-args "--jobs 2"]``.

Two cases, each timed process to process (every run a fresh Python process, started by
this script; output of cvfit in a fresh folder each run), the two sides alternating run by
run so that a change in the load of the shared machine hits both alike; prints the median
of ``--repeats`` runs of each side, the ratio of the medians and the median of the ratios
of runs taken side by side:

* ``typical``: a 20-file series of 2 001-point voltammograms (1 mV steps, the size
  chemists run): the installed ``cvfit run MANIFEST --out DIR --quiet`` against
  ``benchmarks/hand_script.py`` (pandas read, arg-max peaks, E½ midpoints,
  ``scipy.stats.linregress`` Lingane line, one matplotlib PNG). Goal: ratio at most 1.1,
  aim below 0.9.
* ``large``: a 200-file series of 20 001-point voltammograms (0.1 mV steps): ``cvfit run``
  against a fresh process that only does ``pandas.read_csv`` of the same files.
  Goal: ratio at most 2.0.
* ``fixed``: the same against a 10-file series of 20 001-point voltammograms, where the
  files cost little (~0.1 s): what a run costs whatever its size (imports, the fit, the
  three figures, the report). ``large`` minus ``fixed`` is what 190 more files cost.

The series are simulated once (``cvfit.simulate.simulate_series``, see ``_timing.py``)
into ``--cache`` (default: the system temporary folder, not the repository), and every
file is read once before timing so that both sides find it in the page cache. Each side
runs once untimed first (byte-code caches — allowed even where the machine sets
PYTHONDONTWRITEBYTECODE, see ``_timing.child_environment`` — and the page cache of the
libraries). No assertions: numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import shlex
import sys
import tempfile
from pathlib import Path

from _timing import (
    alternate,
    cache_root,
    cvfit_command,
    median,
    run_process,
    series_files,
    simulated_series,
    warm_page_cache,
)

HERE = Path(__file__).resolve().parent
HAND_SCRIPT = HERE / "hand_script.py"
PANDAS_ONLY = (
    "import sys, pathlib, pandas\n"
    "for p in sorted(pathlib.Path(sys.argv[1]).glob('*.csv')):\n"
    "    pandas.read_csv(p)\n"
)
#: (files, voltage step, baseline) of each case.
CASES = {
    "typical": (20, 0.001, "hand script"),
    "large": (200, 0.0001, "pandas.read_csv"),
    "fixed": (10, 0.0001, "pandas.read_csv"),
}
GOALS = {
    "typical": "at most 1.1, aim below 0.9",
    "large": "at most 2.0",
    "fixed": "(the part of every run)",
}


def measure(case: str, cache: Path, repeats: int, extra: list[str], scratch: Path) -> tuple:
    n_files, step_V, baseline = CASES[case]
    manifest = simulated_series(cache, n_files, step_V)
    warm_page_cache(series_files(manifest))
    counter = iter(range(10**6))

    def cvfit_run() -> None:
        out = scratch / f"{case}_cvfit_{next(counter)}"
        run_process([*cvfit_command(), "run", str(manifest), "--out", str(out), "--quiet", *extra])

    if case == "typical":

        def base() -> None:
            out = scratch / f"{case}_hand_{next(counter)}"
            run_process([sys.executable, str(HAND_SCRIPT), str(manifest), str(out)])
    else:

        def base() -> None:
            run_process([sys.executable, "-c", PANDAS_ONLY, str(manifest.parent)])

    sides = {"cvfit run": cvfit_run, baseline: base}
    alternate(sides, 1)  # untimed warm-up
    times = alternate(sides, repeats)
    pairs = [c / b for c, b in zip(times["cvfit run"], times[baseline], strict=True)]
    return n_files, baseline, times, pairs


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=5, help="timed runs of each side (5)")
    ap.add_argument("--cases", default="typical,large,fixed", help="comma-separated cases")
    ap.add_argument("--cache", default=None, help="folder of the simulated series")
    ap.add_argument("--cvfit-args", default="", help="extra arguments of cvfit run")
    args = ap.parse_args()
    cache = cache_root(args.cache)
    extra = shlex.split(args.cvfit_args)
    rows = []
    with tempfile.TemporaryDirectory(prefix="cvfit_bench_cmd_") as tmp:
        for case in [c.strip() for c in args.cases.split(",") if c.strip()]:
            if case not in CASES:
                raise SystemExit(f"unknown case {case!r}; choose from {', '.join(CASES)}")
            n_files, baseline, times, pairs = measure(case, cache, args.repeats, extra, Path(tmp))
            c, b = median(times["cvfit run"]), median(times[baseline])
            rows.append((case, n_files, baseline, c, b, c / b, median(pairs)))
            print(
                f"{case}: cvfit run {', '.join(f'{t:.2f}' for t in times['cvfit run'])} s; "
                f"{baseline} {', '.join(f'{t:.2f}' for t in times[baseline])} s",
                flush=True,
            )
    print(f"\nmedian of {args.repeats} alternating runs, fresh processes")
    print(
        f"{'case':8s} {'files':>5s} {'baseline':16s} {'cvfit s':>8s} {'base s':>7s} "
        f"{'ratio':>6s} {'median pair ratio':>18s}  goal"
    )
    for case, n, baseline, c, b, ratio, pair in rows:
        print(
            f"{case:8s} {n:5d} {baseline:16s} {c:8.3f} {b:7.3f} {ratio:6.2f} {pair:18.2f}  "
            f"{GOALS[case]}"
        )


if __name__ == "__main__":
    main()
