"""Start-up of the command line: ``cvfit --version`` and ``cvfit --help`` in fresh processes.

Run: ``python benchmarks/bench_startup.py [--repeats 15]``.

Times the installed console script ``cvfit --version`` and ``cvfit --help`` against a
bare ``python -c pass`` of the same interpreter (the floor: interpreter start-up), each a
fresh process, the three alternating run by run; prints the medians, the time above the
floor and the ratios. Goal: both well under 0.2 s. Also lists the heavy libraries each
command imports (none expected: the sub-commands import them when they run). No
assertions: numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import subprocess
import sys

from _timing import alternate, cvfit_command, median, run_process

HEAVY = ("numpy", "scipy", "pandas", "matplotlib", "lmfit", "numba")
IMPORTED = (
    "import sys; from cvfit.cli import main\n"
    "try:\n    main(sys.argv[1:])\nexcept SystemExit:\n    pass\n"
    f"print(' '.join(m for m in {HEAVY!r} if m in sys.modules) or 'none')\n"
)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=15, help="runs of each command (15)")
    args = ap.parse_args()
    cvfit = cvfit_command()
    sides = {
        "python -c pass": lambda: run_process([sys.executable, "-c", "pass"]),
        "cvfit --version": lambda: run_process([*cvfit, "--version"]),
        "cvfit --help": lambda: run_process([*cvfit, "--help"]),
    }
    alternate(sides, 1)  # warm-up
    times = alternate(sides, args.repeats)
    floor = median(times["python -c pass"])
    print(f"median of {args.repeats} alternating runs, fresh processes")
    print(f"{'command':18s} {'median s':>9s} {'above floor s':>13s} {'ratio':>6s}  heavy imports")
    for name, values in times.items():
        heavy = "-"
        if name != "python -c pass":
            heavy = (
                subprocess.run(
                    [sys.executable, "-c", IMPORTED, name.split()[1]],
                    capture_output=True,
                    text=True,
                    check=True,
                )
                .stdout.strip()
                .splitlines()[-1]
            )
        t = median(values)
        print(f"{name:18s} {t:9.3f} {t - floor:13.3f} {t / floor:6.1f}  {heavy}")
    print("goal: cvfit --version and --help well under 0.2 s")


if __name__ == "__main__":
    main()
