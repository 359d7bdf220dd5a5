"""The output path at scale: ``cvfit run`` of a 2 000-file series, this checkout against another.

Run: ``python benchmarks/bench_output_path.py [--files 2000] [--repeats 3]
[--baseline REF_OR_DIR] [--cache DIR]``.

Each side is a fresh ``python -m cvfit run MANIFEST --out NEW_FOLDER --quiet`` started in
its source tree (``python -m`` imports the package of its current folder first): this
checkout, and the baseline — a git ref (default ``main``) extracted once with
``git archive`` into the cache, or a folder holding a cvfit source tree. The sides
alternate run by run. For each it prints the median wall time and the median peak
resident memory (the largest of the run's processes, from ``wait4``), and the ratios
this / baseline. It measures what writing an output set costs beside the analysis (the
record of the set hashes every file written, the folder's lock). No assertions: numbers
depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from _timing import cache_root, child_environment, median, series_files, simulated_series

HERE = Path(__file__).resolve().parent
CHECKOUT = HERE.parent


def baseline_tree(ref_or_dir: str, cache: Path) -> Path:
    """A cvfit source tree: the folder given, or *ref* extracted from git once."""
    if Path(ref_or_dir, "cvfit", "__init__.py").is_file():
        return Path(ref_or_dir).resolve()
    sha = subprocess.run(
        ["git", "rev-parse", "--short", ref_or_dir],
        cwd=CHECKOUT,
        check=True,
        capture_output=True,
        text=True,
    ).stdout.strip()
    tree = cache / f"cvfit-{sha}"
    if not (tree / "cvfit" / "__init__.py").is_file():
        tree.mkdir(parents=True, exist_ok=True)
        archive = subprocess.run(
            ["git", "archive", sha], cwd=CHECKOUT, check=True, capture_output=True
        ).stdout
        subprocess.run(["tar", "-x", "-C", str(tree)], input=archive, check=True)
    return tree


def run_once(tree: Path, manifest: Path, out: Path) -> tuple[float, float]:
    """Wall time (s) and peak resident memory (MiB) of one run started in *tree*."""
    env = child_environment()
    env.pop("PYTHONPATH", None)
    start = time.perf_counter()
    proc = subprocess.Popen(
        [sys.executable, "-m", "cvfit", "run", str(manifest), "--out", str(out), "--quiet"],
        cwd=tree,
        env=env,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    _, status, usage = os.wait4(proc.pid, 0)
    seconds = time.perf_counter() - start
    if os.waitstatus_to_exitcode(status) != 0:
        raise SystemExit(f"{tree}: cvfit run failed:\n{proc.stderr.read().decode()}")
    return seconds, usage.ru_maxrss / 1024  # Linux reports KiB


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--files", type=int, default=2000, help="files of the series (2000)")
    ap.add_argument("--repeats", type=int, default=3, help="runs of each side (3)")
    ap.add_argument("--baseline", default="main", help="git ref or source folder (main)")
    ap.add_argument("--cache", help="folder of the simulated series and extracted trees")
    args = ap.parse_args(argv)
    cache = cache_root(args.cache)
    manifest = simulated_series(cache, args.files, 0.001)
    for p in series_files(manifest):
        p.read_bytes()
    sides = {"this checkout": CHECKOUT, "baseline": baseline_tree(args.baseline, cache)}
    found: dict[str, list[tuple[float, float]]] = {name: [] for name in sides}
    work = Path(tempfile.mkdtemp(prefix="cvfit-bench-out-"))
    try:
        for k in range(args.repeats + 1):  # the first round warms the caches, untimed
            for name, tree in sides.items():
                result = run_once(tree, manifest, work / f"{name.split()[0]}{k}")
                if k:
                    found[name].append(result)
    finally:
        shutil.rmtree(work, ignore_errors=True)
    print(f"{args.files}-file series of {round(2 / 0.001) + 1}-point files, {args.repeats} runs")
    for name, results in found.items():
        t = median([r[0] for r in results])
        m = median([r[1] for r in results])
        print(f"  {name:>14} ({sides[name]}): {t:6.1f} s, peak {m:6.0f} MiB")
    t_ratio = median([r[0] for r in found["this checkout"]]) / median(
        [r[0] for r in found["baseline"]]
    )
    m_ratio = median([r[1] for r in found["this checkout"]]) / median(
        [r[1] for r in found["baseline"]]
    )
    print(f"  ratio this / baseline: time {t_ratio:.3f}, peak memory {m_ratio:.3f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
