"""Per-file stage of the pipeline: import, the technique's measurement and the E½ of each file.

Every voltammogram of a series is analysed on its own (the series-level steps come after,
in :mod:`cvfit.pipeline.series`), so this stage is a map over the files: in this process,
or over a process pool for series large enough to repay starting one
(see :mod:`cvfit.cli.file_jobs`). A worker sends back the small
:class:`~cvfit.pipeline.results.FileResult` (the technique's measurement, the E½ decision
and the analysed cycle thinned for figures), never the whole record.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import replace
from functools import partial

from cvfit.errors import InputError
from cvfit.io import Manifest, VoltammogramEntry, read_voltammogram, resistance_for
from cvfit.io.manifest_titration import for_file
from cvfit.io.notes import imported_file
from cvfit.techniques import technique_of
from cvfit.techniques.base import FileSettings, Measurement
from cvfit.techniques.curves import points_per_curve
from cvfit.voltammogram import Voltammogram

from .half_wave import decide_half_wave
from .parallel import one_blas_thread, results_in_order
from .results import FileResult

__all__ = [
    "analyse_file",
    "analyse_files",
    "check_jobs",
    "read_entry",
    "with_measurement",
]


def read_entry(entry: VoltammogramEntry) -> Voltammogram:
    """The record of one manifest entry, read from its file."""
    return read_voltammogram(entry.file, entry.import_options, scan_rate_V_s=entry.scan_rate_V_s)


def with_measurement(f: FileResult, measurement: Measurement, manifest: Manifest) -> FileResult:
    """*f* with a new measurement (a verdict changed) and the E½ decided again for it."""
    decision = decide_half_wave(
        measurement,
        internal_standard=manifest.internal_standard,
        exclude_non_nernstian=manifest.fit.exclude_non_nernstian,
        excluded_by_user=f.excluded_by_user,
    )
    return replace(f, measurement=measurement, half_wave=decision)


def analyse_file(
    entry: VoltammogramEntry,
    manifest: Manifest,
    record: Voltammogram | None = None,
    *,
    series_files: int | None = None,
) -> FileResult:
    """Import (unless *record* is given), measure and screen one file, and decide its E½.

    *series_files* is the number of files of the whole series (it sets how thinly the
    curve kept for the figures is drawn); by default, those of *manifest*.

    Raises
    ------
    InputError
        A problem with the file or its manifest entry.
    """
    v = record if record is not None else read_entry(entry)
    technique = technique_of(manifest)
    # the solution's own metal is its analyte concentration (a titration by additions)
    measurement = technique.analyse(v, FileSettings(entry, for_file(entry, manifest)))
    decision = decide_half_wave(
        measurement,
        internal_standard=manifest.internal_standard,
        exclude_non_nernstian=manifest.fit.exclude_non_nernstian,
        excluded_by_user=entry.exclude,
    )
    max_points = points_per_curve(series_files or len(manifest.voltammograms))
    resistance = resistance_for(entry, manifest.series)
    return FileResult(
        file=entry.name,
        ligand_M=entry.ligand_M,
        free_ligand_M=entry.ligand_M,
        scan_rate_V_s=v.effective_scan_rate_V_s(),
        measurement=measurement,
        half_wave=decision,
        curve=technique.drawn_curve(v, measurement, max_points),
        label=entry.label,
        resistance_ohm=resistance or None,
        pH=entry.pH,
        temperature_K=entry.temperature_K,
        imported=imported_file(v.metadata),
        excluded_by_user=entry.exclude,
        metal_M=entry.metal_M,
        volume_mL=entry.volume_mL,
        added_mL=entry.added_mL,
    )


def _analyse_entry(manifest: Manifest, series_files: int, entry: VoltammogramEntry) -> FileResult:
    """:func:`analyse_file` of one entry, as a worker runs it."""
    return analyse_file(entry, manifest, series_files=series_files)


def check_jobs(jobs: object) -> int:
    """*jobs* as a whole number of processes, at least 1.

    Raises
    ------
    InputError
        *jobs* below 1 (it comes from ``--jobs``).
    """
    if isinstance(jobs, bool) or not isinstance(jobs, int) or jobs < 1:
        raise InputError(f"--jobs must be at least 1, got {jobs}", source="<command line>")
    return jobs


def analyse_files(
    manifest: Manifest,
    *,
    records: dict[str, Voltammogram] | None = None,
    jobs: int = 1,
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
        Processes to share the files among (1: all in this process; more: a pool of
        *jobs* workers). The results do not depend on it.
    progress : callable, optional
        Called once per file analysed (for a progress bar).

    Raises
    ------
    InputError
        The error of the first bad file in manifest order — the one a serial run reports.
    """
    jobs = check_jobs(jobs)
    tick = progress or (lambda: None)
    entries = list(manifest.voltammograms)
    n = len(entries)
    if records or jobs == 1 or n < 2:
        records = records or {}
        done = []
        with one_blas_thread():
            for e in entries:
                done.append(analyse_file(e, manifest, records.get(e.name), series_files=n))
                tick()
        return done
    return results_in_order(partial(_analyse_entry, manifest, n), entries, min(jobs, n), done=tick)
