"""Speed of a whole series: cvfit (import, peaks, screen, fit, figures, report) vs pandas.

Run: ``.venv/bin/python benchmarks/bench_series.py [--sizes 10,50,200] [--with-1000]
[--jobs 1,2] [--repeats 3] [--cache DIR] [--profile N]``.

Simulates 200 distinct 20 000-point voltammograms of a titration once (into ``--cache``,
reused by later runs), builds series of 10, 50, 200 (and, with ``--with-1000``, 1 000 —
the 200 files copied five times) files, and times in this one process

* the baseline: ``pandas.read_csv`` of every file of the series;
* cvfit: ``analyse_series(load_manifest(...))`` plus ``write_outputs`` (table, the three
  figures, report.html, results.json), in 1 and 2 processes (``--jobs 2``: this one and
  one worker) sharing the files and the outputs, as ``cvfit run --jobs N`` runs them.

Every file is read once before timing so both sides find it in the page cache; the
environment is set as the ``cvfit`` command sets it (one BLAS thread); the
libraries and the compiled number parser are loaded before timing (``--pandas-parser``:
not the parser). Each side runs ``--repeats`` times (3), interleaved with the other;
prints the best times, the ratio cvfit/pandas of the best runs and the median of the
ratios of runs taken back to back (goal for 200 files: at most 1.5). No assertions:
numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import cProfile
import os
import pstats
import shutil
import statistics
import tempfile
import time
from pathlib import Path

from cvfit.cli import NUMERIC_ENVIRONMENT  # imports no numerical library

# as the `cvfit` command sets it before it loads numpy (one BLAS thread); pandas.read_csv
# does no linear algebra
for _name, _value in NUMERIC_ENVIRONMENT.items():
    os.environ.setdefault(_name, _value)

import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402

from cvfit.chemistry.complexation import complexed_half_wave_V  # noqa: E402
from cvfit.io import load_manifest  # noqa: E402
from cvfit.pipeline.parallel import worker_pool  # noqa: E402
from cvfit.pipeline.series import analyse_series  # noqa: E402
from cvfit.report import write_outputs  # noqa: E402
from cvfit.simulate.voltammogram import simulate_cv  # noqa: E402

N_UNIQUE = 200
POINTS_STEP_V = 0.0001  # 0.25 → −0.75 V and back at 0.1 mV: 20 001 points
LOG_BETA_OX = (-20.0, 11.0)  # invented: ML2 over the range, ML for the reduced state
LOG_BETA_RED = (5.0,)


def _ligand_levels(n: int) -> np.ndarray:
    return np.concatenate([[0.0], np.geomspace(0.005, 0.3, n - 1)])


def make_unique_files(folder: Path) -> list[tuple[str, float]]:
    """Simulate and write the 200 distinct files once; returns (name, ligand_M)."""
    folder.mkdir(parents=True, exist_ok=True)
    out = []
    for k, ligand in enumerate(_ligand_levels(N_UNIQUE)):
        name = f"cv_{k:04d}.csv"
        out.append((name, float(ligand)))
        path = folder / name
        if path.exists():
            continue
        e_half = float(
            complexed_half_wave_V(
                0.0,
                ligand_M=ligand,
                log10_beta_ox=LOG_BETA_OX,
                log10_beta_red=LOG_BETA_RED,
                electrons=1,
            )
        )
        v = simulate_cv(
            E_half_V=e_half,
            start_V=0.25,
            switch_V=-0.75,
            step_V=POINTS_STEP_V,
            scan_rate_V_s=0.1,
            double_layer_F=5e-6,
            background_slope_A_per_V=2e-6,
            noise_fraction=0.005,
            seed=k,
        )
        block = np.column_stack([v.time_s, v.potential_V, v.current_A])
        tmp = path.with_suffix(".part")
        np.savetxt(
            tmp,
            block,
            delimiter=",",
            header="time_s,potential_V,current_A",
            comments="",
            fmt="%.10g",
        )
        tmp.replace(path)
    return out


def make_series(root: Path, unique: Path, files: list[tuple[str, float]], n: int) -> Path:
    """A folder with an *n*-file series (copies of the distinct files beyond 200)."""
    folder = root / f"series_{n}"
    folder.mkdir(parents=True, exist_ok=True)
    lines = ["[series]", f'title = "benchmark, {n} files"', "electrons = 1", ""]
    picks = [files[k % len(files)] for k in range(n)]
    if n < len(files):  # spread the subset over the whole titration
        idx = np.unique(np.linspace(0, len(files) - 1, n).round().astype(int))
        picks = [files[k] for k in idx]
    for k, (name, ligand) in enumerate(picks):
        target = f"f{k:04d}_{name}"
        if not (folder / target).exists():
            shutil.copyfile(unique / name, folder / target)
        lines += [
            "[[voltammogram]]",
            f'file = "{target}"',
            f"ligand_M = {ligand!r}",
            "scan_rate_V_s = 0.1",
            "",
        ]
    (folder / "series.toml").write_text("\n".join(lines), encoding="utf-8")
    return folder / "series.toml"


def time_pandas(manifest: Path) -> float:
    paths = [e.file for e in load_manifest(manifest).voltammograms]
    t0 = time.perf_counter()
    for p in paths:
        pd.read_csv(p)
    return time.perf_counter() - t0


def time_cvfit(manifest: Path, out: Path, jobs: int) -> tuple[float, float]:
    """(analysis, outputs) seconds."""
    t0 = time.perf_counter()
    m = load_manifest(manifest)
    # as `cvfit run --jobs N` does it: N - 1 workers and this process share the files and
    # the outputs; the workers' start and shutdown are timed too
    with worker_pool(jobs) as pool:
        result = analyse_series(m, pool=pool)
        t1 = time.perf_counter()
        write_outputs(result, out, pool=pool)
    return t1 - t0, time.perf_counter() - t1


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="10,50,200")
    ap.add_argument("--with-1000", action="store_true", help="add the 1 000-file series")
    ap.add_argument("--jobs", default="1,2", help="processes to try (this one included), e.g. 1,2")
    ap.add_argument(
        "--repeats", type=int, default=3, help="runs of each size and side (best and median)"
    )
    ap.add_argument("--cache", default=str(Path(tempfile.gettempdir()) / "cvfit_bench_cv"))
    ap.add_argument(
        "--profile",
        type=int,
        default=0,
        metavar="N",
        help="profile the N-file series with 1 job and print the top entries",
    )
    ap.add_argument(
        "--pandas-parser",
        action="store_true",
        help="leave the compiled number parser unloaded (pandas reads the numbers)",
    )
    args = ap.parse_args()
    sizes = [int(s) for s in args.sizes.split(",") if s]
    if args.with_1000:
        sizes.append(1000)
    jobs_list = [int(j) for j in args.jobs.split(",") if j]
    cache = Path(args.cache)
    # steady state on both sides: the libraries are imported before anything is timed,
    # and the compiled number parser is loaded (0.3-0.5 s once per process; a run loads
    # it itself from 128 MiB per process on, see cvfit/io/_parser_choice.py)
    import matplotlib.pyplot  # noqa: F401
    from cvfit.io._parser_choice import load_compiled_parser

    import cvfit.report.figures.titration as figures  # noqa: F401

    if not args.pandas_parser:
        print(f"compiled number parser loaded: {load_compiled_parser()}")

    t0 = time.perf_counter()
    files = make_unique_files(cache / "unique")
    print(
        f"{N_UNIQUE} distinct voltammograms ready in {time.perf_counter() - t0:.1f} s "
        f"({cache / 'unique'})"
    )
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        if args.profile:
            m = make_series(cache, cache / "unique", files, args.profile)
            for e in load_manifest(m).voltammograms:
                e.file.read_bytes()
            prof = cProfile.Profile()
            prof.enable()
            time_cvfit(m, root / "profile_out", 1)
            prof.disable()
            pstats.Stats(prof).sort_stats("cumulative").print_stats(30)
            return
        rows = []
        for n in sizes:
            m = make_series(cache, cache / "unique", files, n)
            for e in load_manifest(m).voltammograms:  # warm the page cache
                e.file.read_bytes()
            reps = args.repeats
            # interleaved: pandas, then cvfit with each job count, repeated, so a change
            # in the machine's speed (it is shared) hits both sides of every ratio alike
            bases: list[float] = []
            runs: dict[int, list[tuple[float, float]]] = {j: [] for j in jobs_list}
            pair_ratios: dict[int, list[float]] = {j: [] for j in jobs_list}
            for _ in range(reps):
                bases.append(time_pandas(m))
                for jobs in jobs_list:
                    runs[jobs].append(time_cvfit(m, root / f"out_{n}_{jobs}", jobs))
                    pair_ratios[jobs].append(sum(runs[jobs][-1]) / bases[-1])
            for jobs in jobs_list:
                totals = [sum(r) for r in runs[jobs]]
                analysis, outputs = min(runs[jobs], key=sum)
                base = min(bases)
                ratio_best = min(totals) / base
                ratio_median = statistics.median(pair_ratios[jobs])
                rows.append(
                    (n, jobs, base, analysis, outputs, min(totals), ratio_best, ratio_median)
                )
                print(
                    f"  {n:5d} files, {jobs} job(s): pandas {base:7.2f} s (median "
                    f"{statistics.median(bases):.2f}), cvfit {min(totals):7.2f} s (median "
                    f"{statistics.median(totals):.2f}) over {reps} runs",
                    flush=True,
                )
    print()
    print(
        f"{'files':>6} {'jobs':>4} {'pandas s':>9} {'analysis s':>10} {'outputs s':>9} "
        f"{'cvfit s':>8} {'ms/file':>8} {'best ratio':>10} {'median ratio':>12}"
    )
    for n, jobs, base, analysis, outputs, total, ratio, ratio_med in rows:
        print(
            f"{n:6d} {jobs:4d} {base:9.2f} {analysis:10.2f} {outputs:9.2f} {total:8.2f} "
            f"{total / n * 1e3:8.1f} {ratio:10.2f} {ratio_med:12.2f}"
        )
    print("\ngoal: cvfit/pandas <= 1.5 for the 200-file series (figures included)")


if __name__ == "__main__":
    main()
