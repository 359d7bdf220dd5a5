"""Speed of the per-file analysis (peaks, screen, correction) against pandas.read_csv.

Run: ``.venv/bin/python benchmarks/bench_peaks.py [--manifest PATH] [--repeats 5]``.

Loads the records of a series once (:func:`cvfit.io.read_voltammogram`), then times in
this one process, best of ``--repeats`` runs each:

* the baseline: ``pandas.read_csv`` of the same files;
* :func:`cvfit.peaks.analysis.analyse_peaks` over every record;
* :func:`cvfit.pipeline.series.analyse_series` with the records already in memory (peaks, screen,
  switching correction, diagnostics and the titration fit; no import, no outputs).

Prints the times, the time per file and the ratios to the baseline. The series goal
(import, peaks, figures, report within 1.5x the baseline) leaves the per-file analysis
well under half of it. The default series is the one ``benchmarks/bench_series.py``
writes (``--sizes 200``). No assertions: numbers depend on the machine and its load.
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

import pandas as pd
from _timing import best_of

from cvfit.io import load_manifest, read_voltammogram
from cvfit.peaks.analysis import analyse_peaks
from cvfit.pipeline.series import analyse_series

DEFAULT = Path(tempfile.gettempdir()) / "cvfit_bench_cv" / "series_200" / "series.toml"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--manifest", default=str(DEFAULT))
    ap.add_argument("--repeats", type=int, default=5)
    args = ap.parse_args()
    path = Path(args.manifest)
    if not path.exists():
        raise SystemExit(
            f"{path} not found; create it with "
            "'python benchmarks/bench_series.py --sizes 200 --repeats 1'"
        )
    manifest = load_manifest(path)
    entries = manifest.voltammograms
    records = {
        e.name: read_voltammogram(e.file, e.import_options, scan_rate_V_s=e.scan_rate_V_s)
        for e in entries
    }
    series = manifest.series
    pairs = [(records[e.name], e.import_options.cycle) for e in entries]

    def pandas_only() -> None:
        for e in entries:
            pd.read_csv(e.file)

    def peaks_only() -> None:
        for v, cycle in pairs:
            analyse_peaks(
                v, cycle=cycle, electrons=series.electrons, temperature_K=series.temperature_K
            )

    def series_in_memory() -> None:
        analyse_series(manifest, records=records)

    # warm-up: page cache, imports, first-call costs
    pandas_only()
    series_in_memory()
    base = best_of(pandas_only, args.repeats)
    peaks = best_of(peaks_only, args.repeats)
    whole = best_of(series_in_memory, args.repeats)
    n = len(entries)
    print(f"{n} files, best of {args.repeats}")
    print(f"{'':32s} {'total s':>9s} {'ms/file':>9s} {'ratio':>7s}")
    for name, t in (
        ("pandas.read_csv", base),
        ("analyse_peaks", peaks),
        ("analyse_series(records=...)", whole),
    ):
        print(f"{name:32s} {t:9.3f} {1e3 * t / n:9.3f} {t / base:7.3f}")


if __name__ == "__main__":
    main()
