"""Helpers shared by the benchmark scripts (run as ``python benchmarks/NAME.py``).

* timing: :func:`best_of`, :func:`timed`, :func:`alternate` (sides run in turn, round by
  round, so that a change in the load of the shared machine hits every side alike);
* fresh processes: :func:`run_process`, :func:`cvfit_command` (the installed console
  script);
* test series: :func:`simulated_series` writes a simulated titration series once into a
  cache folder outside the repository (:func:`cache_root`) and reuses it afterwards.

No benchmark asserts a time: numbers depend on the machine and its load; the scripts
print ratios against a baseline run in the same session.
"""

from __future__ import annotations

import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path

#: Default cache of simulated series (override with ``--cache`` or ``CVFIT_BENCH_CACHE``).
DEFAULT_CACHE = Path(tempfile.gettempdir()) / "cvfit_bench_cache"


def best_of(func: Callable[[], object], repeats: int) -> float:
    """Shortest wall time of *repeats* calls of *func*, s."""
    return min(timed(func) for _ in range(repeats))


def timed(func: Callable[[], object]) -> float:
    """Wall time of one call of *func*, s."""
    t0 = time.perf_counter()
    func()
    return time.perf_counter() - t0


def alternate(sides: Mapping[str, Callable[[], object]], repeats: int) -> dict[str, list[float]]:
    """Times of *repeats* rounds; each round calls every side once, in order, s."""
    times: dict[str, list[float]] = {name: [] for name in sides}
    for _ in range(repeats):
        for name, func in sides.items():
            times[name].append(timed(func))
    return times


def median(values: Sequence[float]) -> float:
    """Median of *values*."""
    return statistics.median(values)


def child_environment() -> dict[str, str]:
    """The environment of the timed processes: this one's, but with Python's byte-code
    caches allowed. A machine that sets ``PYTHONDONTWRITEBYTECODE`` (some sandboxes and
    containers do) makes every process compile the package from source again, which a user
    of an installed package never pays; the untimed first run of each side writes them."""
    env = dict(os.environ)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    return env


def numbers_from_code(code: str, *args: str, numba_cache_dir: str) -> list[float]:
    """Run *code* with *args* in a fresh Python process whose numba cache is
    *numba_cache_dir*; the numbers it prints."""
    env = dict(child_environment(), NUMBA_CACHE_DIR=numba_cache_dir)
    out = subprocess.run(
        [sys.executable, "-c", code, *args], env=env, capture_output=True, text=True, check=True
    ).stdout.split()
    return [float(x) for x in out]


def run_process(argv: Sequence[str], *, cwd: Path | None = None) -> None:
    """Run *argv* to completion in a fresh process (output discarded); fail loudly."""
    done = subprocess.run(
        list(argv),
        cwd=cwd,
        env=child_environment(),
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    )
    if done.returncode != 0:
        raise SystemExit(f"{' '.join(map(str, argv))} failed:\n{done.stderr}")


def cvfit_command() -> list[str]:
    """The installed ``cvfit`` console script of this interpreter's environment."""
    beside = Path(sys.executable).parent / "cvfit"
    found = str(beside) if beside.exists() else shutil.which("cvfit")
    if not found:
        raise SystemExit("the cvfit console script is not installed (pip install -e .)")
    return [found]


def cache_root(given: str | None = None) -> Path:
    """The cache folder of simulated series (created)."""
    root = Path(given or os.environ.get("CVFIT_BENCH_CACHE") or DEFAULT_CACHE)
    root.mkdir(parents=True, exist_ok=True)
    return root


def simulated_series(cache: Path, n_files: int, step_V: float) -> Path:
    """Manifest of a simulated *n_files* titration series at *step_V* (made once).

    The couple of ``tests/seriesfactory.py`` (ML2 over the oxidised form, ML over the
    reduced; log10(β_ox/β_red) = 6.0), one file per ligand concentration (none, then
    0.005–0.3 M geometrically), swept 0.5 → −0.5 V and back at 0.1 V/s with a
    double-layer current and 0.5 % noise: 2/step_V + 1 points per file.
    """
    import numpy as np

    from cvfit.simulate import simulate_series

    folder = cache / f"series_{n_files}x{round(2 / step_V) + 1}"
    manifest = folder / "series.toml"
    if manifest.exists():
        return manifest
    part = folder.with_name(folder.name + ".part")
    shutil.rmtree(part, ignore_errors=True)
    ligands = np.concatenate([[0.0], np.geomspace(0.005, 0.3, n_files - 1)])
    t0 = time.perf_counter()
    simulate_series(
        part,
        ligand_M=ligands.tolist(),
        E_half_free_V=0.0,
        log10_beta_ox=(-20.0, 11.0),
        log10_beta_red=(5.0,),
        title=f"benchmark series, {n_files} files",
        noise_fraction=0.005,
        seed=20,
        file_stem="cv",
        start_V=0.5,
        switch_V=-0.5,
        step_V=step_V,
        scan_rate_V_s=0.1,
        double_layer_F=5e-6,
        background_slope_A_per_V=2e-6,
    )
    part.rename(folder)
    print(f"simulated {folder} in {time.perf_counter() - t0:.0f} s", file=sys.stderr)
    return manifest


def series_files(manifest: Path) -> list[Path]:
    """The CSV files of a cached series, in name order."""
    return sorted(manifest.parent.glob("*.csv"))


def warm_page_cache(paths: Sequence[Path]) -> None:
    """Read every file once, so that no side pays the first read from disk."""
    for p in paths:
        p.read_bytes()
