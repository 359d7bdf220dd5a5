"""Per-file stage of the pipeline: import, peaks, screen, E½ — serially or in workers.

Every voltammogram of a series is analysed on its own (the series-level steps come after,
in :mod:`cvfit.pipeline`), so this stage runs file by file, shared with worker processes
when asked.
A worker sends back the small :class:`~cvfit.results.FileResult` — peak data, verdicts,
flags and the analysed cycle thinned for figures — never the whole record, so the work
that dominates a large series (parsing the text and the peak analysis) is spread over the
CPU cores while the traffic between processes stays a few kilobytes per file.
"""

from __future__ import annotations

import contextlib
import os
from collections.abc import Callable
from dataclasses import replace

from ._series_diagnostics import correct_for_resistance, ohmic_flags, resistance_for
from ._workers import WorkerPool, available_cpus, one_blas_thread, share_tasks, worker_pool
from .curves import cycle_curve, points_per_curve
from .diagnostics import screen_reversibility
from .errors import InputError
from .flags import Flag
from .halfwave import corrected_half_wave_V
from .io import Manifest, VoltammogramEntry, load_compiled_parser_if_worth, read_voltammogram
from .peaks import PeakAnalysis, analyse_peaks
from .results import FileResult
from .voltammogram import Voltammogram

__all__ = [
    "analyse_file",
    "analyse_files",
    "default_file_jobs",
    "LIGAND_EXCESS_MIN",
    "PARALLEL_MIN_FILES",
]

#: Ligand excess over metal below which the free-ligand assumption is doubtful
#: (common practice: keep the ligand in >= 10-fold excess).
LIGAND_EXCESS_MIN = 10.0

#: Smallest series whose files are shared with worker processes by default: below it,
#: starting the workers and sending the results back costs about as much as they save
#: (~1.6 ms of work per 20 000-point file against ~20-40 ms to start the workers and
#: collect their results; benchmarks/bench_series.py).
PARALLEL_MIN_FILES = 16

# (message, source, line, key) of an InputError: sent back as plain data, because the
# exception's keyword-only constructor does not survive pickling.
_ErrorParts = tuple[str, str | None, int | None, str | None]


def default_file_jobs(n_files: int) -> int:
    """Processes (this one included) for the files of an *n_files* series when none were
    asked for."""
    return min(available_cpus(), n_files) if n_files >= PARALLEL_MIN_FILES else 1


def _ratio_from_first_cycle(
    peaks: PeakAnalysis, v: Voltammogram, electrons: int, temperature_K: float
) -> PeakAnalysis:
    """On a later cycle, take the current ratio from cycle 1, which starts at rest.

    Nicholson's relation (Anal. Chem. 38 (1966) 1406) assumes a forward sweep that begins
    at rest, so the peak analysis leaves the ratio of a later cycle undetermined; the
    ratio is a property of the couple, and cycle 1 of the same record gives it.
    """
    if peaks.current_ratio is not None or peaks.cycle_number == 1:
        return peaks
    if not any(f.code == "CURRENT_RATIO_NOT_DETERMINED" for f in peaks.flags):
        return peaks
    first_cycles = v.cycles()
    if not first_cycles or not first_cycles[0].complete:
        return peaks
    first = analyse_peaks(v, cycle=1, electrons=electrons, temperature_K=temperature_K)
    if first.current_ratio is None:
        return peaks
    flags = tuple(f for f in peaks.flags if f.code != "CURRENT_RATIO_NOT_DETERMINED")
    note = Flag(
        "CURRENT_RATIO_FROM_FIRST_CYCLE",
        f"cycle {peaks.cycle_number} does not start at rest, so ipa/ipc "
        f"({first.current_ratio:.3f}) was taken from cycle 1 of the same record "
        "(Nicholson 1966)",
        "info",
    )
    return replace(peaks, current_ratio=first.current_ratio, flags=(*flags, note))


def analyse_file(
    entry: VoltammogramEntry,
    manifest: Manifest,
    record: Voltammogram | None = None,
    *,
    series_files: int | None = None,
) -> FileResult:
    """Import (unless *record* is given), measure and screen one voltammogram.

    *series_files* is the number of files of the whole series (it sets how thinly the
    curve kept for the figures is drawn); by default, those of *manifest*.

    Raises
    ------
    InputError
        A problem with the file or its manifest entry.
    """
    series = manifest.series
    v = record
    if v is None:
        v = read_voltammogram(entry.file, entry.import_options, scan_rate_V_s=entry.scan_rate_V_s)
    resistance = resistance_for(entry, series)
    v = correct_for_resistance(v, resistance)  # a new record; the input is not changed
    peaks = analyse_peaks(
        v,
        cycle=entry.import_options.cycle,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
    )
    peaks = _ratio_from_first_cycle(peaks, v, series.electrons, series.temperature_K)
    screen = screen_reversibility(
        peaks,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
        criteria=manifest.reversibility,
    )
    flags = list(peaks.flags)
    flags += [f for f in screen.flags if f.code not in {g.code for g in flags}]
    flags += ohmic_flags(peaks, resistance)
    if screen.reversible is True:
        e_half, correction = corrected_half_wave_V(
            peaks, electrons=series.electrons, temperature_K=series.temperature_K
        )
    else:
        e_half, correction = peaks.E_half_V, 0.0
    metal = series.metal_total_M
    lingane = manifest.fit.model == "lingane"  # the stepwise model corrects [L] itself
    if lingane and metal is not None and 0 < entry.ligand_M < LIGAND_EXCESS_MIN * metal:
        flags.append(
            Flag(
                "LOW_LIGAND_EXCESS",
                f"ligand is only {entry.ligand_M / metal:.1f}-fold in excess over the metal "
                f"({entry.ligand_M:.3g} M vs {metal:.3g} M); total ligand was used as free "
                "ligand, which overstates [L] (keep >= 10-fold excess, common practice)",
            )
        )
    return FileResult(
        file=entry.name,
        ligand_M=entry.ligand_M,
        free_ligand_M=entry.ligand_M,
        scan_rate_V_s=v.effective_scan_rate_V_s(),
        peaks=peaks,
        screen=screen,
        used_in_fit=False,
        flags=tuple(flags),
        curve=cycle_curve(
            v,
            peaks.cycle_number,
            max_points=points_per_curve(series_files or len(manifest.voltammograms)),
        ),
        label=entry.label,
        E_half_V=e_half,
        switching_correction_V=correction,
        resistance_ohm=resistance or None,
    )


def _analyse_chunk(manifest: Manifest, series_files: int) -> list[FileResult | _ErrorParts]:
    """Every entry of *manifest* (a run of a series' files), each a FileResult or the
    parts of its InputError."""
    out: list[FileResult | _ErrorParts] = []
    for entry in manifest.voltammograms:
        try:
            out.append(analyse_file(entry, manifest, series_files=series_files))
        except InputError as exc:
            out.append((exc.message, exc.source, exc.line, exc.key))
    return out


def _total_bytes(entries: list[VoltammogramEntry]) -> int:
    """Size of the files on disk, bytes (files that cannot be read count 0: their error
    comes when they are read)."""
    total = 0
    for e in entries:
        with contextlib.suppress(OSError):
            total += os.stat(e.file).st_size
    return total


def analyse_files(
    manifest: Manifest,
    *,
    records: dict[str, Voltammogram] | None = None,
    jobs: int = 1,
    pool: WorkerPool | None = None,
    progress: Callable[[], object] | None = None,
) -> list[FileResult]:
    """:func:`analyse_file` for every entry of *manifest*, in manifest order.

    Parameters
    ----------
    manifest : Manifest
        A loaded manifest.
    records : mapping of str to Voltammogram, optional
        Records already in memory, by entry name (then everything runs in this process).
    jobs : int
        Processes sharing the files, this one included, when no *pool* is given (1: all
        here). The results do not depend on it.
    pool : WorkerPool, optional
        Workers to use (see :func:`worker_pool`), shared with later stages of a run.
    progress : callable, optional
        Called once per file analysed (for a progress bar).

    Raises
    ------
    InputError
        The error of the first bad file in manifest order — the one a serial run reports.
    """
    if isinstance(jobs, bool) or int(jobs) < 1:
        raise InputError(f"--jobs must be at least 1, got {jobs}", source="<command line>")
    tick = progress or (lambda: None)
    entries = list(manifest.voltammograms)
    serial = bool(records) or (pool is None and jobs == 1) or len(entries) < 2
    if pool is None and not serial:
        with worker_pool(min(int(jobs), len(entries))) as own:
            return analyse_files(manifest, pool=own, progress=progress)
    if not records:
        # a large series repays loading the compiled number parser, in this process
        # before any worker starts (they inherit it); the results do not depend on it
        processes = 1 if serial or pool is None else pool.processes
        load_compiled_parser_if_worth(_total_bytes(entries), processes=processes)
    if serial:
        records = records or {}
        done = []
        with one_blas_thread():
            for e in entries:
                done.append(analyse_file(e, manifest, records.get(e.name)))
                tick()
        return done
    # runs of files: the workers take them from the front, this process from the back; a
    # run carries only its own entries; runs of at most 16 files (~30 ms) keep the two
    # ends finishing together
    n = len(entries)
    size = max(1, min(16, -(-n // (6 * pool.processes))))
    runs = [
        (_analyse_chunk, (replace(manifest, voltammograms=tuple(entries[k : k + size])), n))
        for k in range(0, n, size)
    ]

    def ticks(_k: int, got: list) -> None:
        for _ in got:
            tick()

    done = share_tasks(pool, runs, on_done=ticks)
    outcomes: list[FileResult | _ErrorParts] = [got for run in done for got in run]
    for got in outcomes:
        if isinstance(got, tuple):
            message, source, line, key = got
            raise InputError(message, source=source, line=line, key=key)
    return outcomes
