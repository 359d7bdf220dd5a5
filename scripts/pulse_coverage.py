"""Coverage of the 95 % intervals of log10(β_ox/β_red) and p − q for noisy titration series
recorded by DPV, SWV and as steady-state waves.

Each series is the design of ``tests/pulse_coverage.py`` (six solutions, log10(β_ox/β_red)
= 5, p − q = 1; records simulated once per technique by :mod:`cvfit.simulate.programs`)
with its own white noise of 0.2–1 % of the peak or limiting current and a sloping
background of up to ±20 % of it per volt, analysed in memory by
:func:`cvfit.pipeline.series.analyse_series` as ``cvfit run`` analyses it. A series that
gives no fit counts as a miss.

    python scripts/pulse_coverage.py                      # 500 series per technique
    python scripts/pulse_coverage.py --series 200 --technique dpv

Prints per technique: the coverage of each interval with its binomial standard error, the
fraction of files the technique's screen passed, and the seconds per series.
"""

from __future__ import annotations

import argparse
import math
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))

from pulse_coverage import clean_records, coverage  # noqa: E402


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--series", type=int, default=500, help="series per technique")
    parser.add_argument("--technique", choices=("dpv", "swv", "wave"), action="append")
    parser.add_argument("--seed", type=int, default=2026)
    args = parser.parse_args()
    for k, technique in enumerate(args.technique or ("dpv", "swv", "wave")):
        clean_records(technique)
        start = time.perf_counter()
        got = coverage(technique, args.series, args.seed + k)
        per = (time.perf_counter() - start) / args.series
        parts = []
        for key, label in (("log10_beta_ratio", "log10(β_ox/β_red)"), ("delta_ligands", "p − q")):
            p = float(got[key])
            se = math.sqrt(p * (1 - p) / args.series)
            parts.append(f"{label} {100 * p:.1f} ± {100 * se:.1f} %")
        print(
            f"{technique}: {args.series} series; coverage of the 95 % intervals: "
            + ", ".join(parts)
            + f"; screen passed {100 * got['screen_passed']:.1f} % of files; {per:.2f} s/series",
            flush=True,
        )


if __name__ == "__main__":
    main()
