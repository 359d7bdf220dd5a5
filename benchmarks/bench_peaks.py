"""Speed of the per-file analysis (peaks, screen, correction) against pandas.read_csv.

Run: ``python benchmarks/bench_peaks.py [--manifest PATH] [--repeats 5] [--cache DIR]``.

Loads the records of a series once (:func:`cvfit.io.read_voltammogram`), then times in
this one process, best of ``--repeats`` runs each:

* the baseline: ``pandas.read_csv`` of the same files;
* :func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks` over every record;
* :func:`cvfit.pipeline.series.analyse_series` with the records already in memory (peaks, screen,
  switching correction, diagnostics and the titration fit; no import, no outputs).

Prints the times, the time per file and the ratios to the baseline: where the heavy
computation of a large series is, beside reading (``bench_import.py``) and the whole
command (``bench_command.py``). The default series is the 200-file, 20 001-point series
of ``bench_command.py`` (simulated into ``--cache`` if absent). No assertions: numbers
depend on the machine and its load.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import pandas as pd
from _timing import best_of, cache_root, simulated_series

from cvfit.io import load_manifest, read_voltammogram
from cvfit.pipeline.series import analyse_series
from cvfit.techniques.cv.peaks.analysis import analyse_peaks


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--manifest", default=None, help="a series manifest (default: simulated)")
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--cache", default=None, help="folder of the simulated series")
    args = ap.parse_args()
    if args.manifest:
        path = Path(args.manifest)
    else:
        path = simulated_series(cache_root(args.cache), 200, 0.0001)
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
