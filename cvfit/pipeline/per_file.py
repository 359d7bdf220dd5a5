"""Per-file stage of the pipeline: import, peaks, screen and E½ of each voltammogram.

Every voltammogram of a series is analysed on its own (the series-level steps come after,
in :mod:`cvfit.pipeline.series`), so this stage is a map over the files: in this process,
or over a process pool for series large enough to repay starting one
(see :mod:`cvfit.cli.file_jobs`). A worker sends back the small
:class:`~cvfit.pipeline.results.FileResult` (peak data, verdicts, flags and the analysed
cycle thinned for figures), never the whole record.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import replace
from functools import partial

from cvfit.errors import InputError
from cvfit.flags import Flag
from cvfit.io import Manifest, VoltammogramEntry, read_voltammogram
from cvfit.io.notes import import_flags, imported_columns
from cvfit.peaks.analysis import PeakAnalysis, analyse_peaks
from cvfit.screen.ohmic_drop import correct_ohmic_drop, ohmic_flags
from cvfit.screen.reversibility import screen_reversibility
from cvfit.screen.switching import corrected_half_wave_V
from cvfit.voltammogram import Voltammogram

from .curve_stage import curve_fit_for, curve_fit_used, wants_curve_fit
from .curves import cycle_curve, points_per_curve
from .internal_standard import measure_standard, referenced_half_wave
from .parallel import new_process_pool, one_blas_thread
from .results import FileResult

__all__ = [
    "analyse_file",
    "analyse_files",
    "check_jobs",
    "curve_fit_failed_by_study",
]

def resistance_for(entry: object, series: object) -> float | None:
    """R_u of one file: its own ``resistance_ohm``, else the series value, else None."""
    own = getattr(entry, "resistance_ohm", None)
    return own if own is not None else getattr(series, "resistance_ohm", None)


def correct_for_resistance(v: Voltammogram, resistance_ohm: float | None) -> Voltammogram:
    """The record corrected by i·R_u (a new record), or the record itself without R_u."""
    if not resistance_ohm:
        return v
    return correct_ohmic_drop(v, resistance_ohm=resistance_ohm)


def _ratio_from_first_cycle(
    peaks: PeakAnalysis,
    v: Voltammogram,
    electrons: int,
    temperature_K: float,
    window_V: tuple[float, float] | None = None,
) -> PeakAnalysis:
    """On a later cycle, take the current ratio from cycle 1, which starts at rest.

    Nicholson's relation (Anal. Chem. 38 (1966) 1406) assumes a forward sweep that begins
    at rest, so the peak analysis leaves the ratio of a later cycle undetermined; the
    ratio is a property of the couple, and cycle 1 of the same record gives it. The reverse
    peak height is then reported as that ratio times this cycle's forward height — the
    definition the peak analysis uses on cycle 1 — so that ipa/ipc of the table is the ratio.
    """
    if peaks.current_ratio is not None or peaks.cycle_number == 1:
        return peaks
    if not any(f.code == "CURRENT_RATIO_NOT_DETERMINED" for f in peaks.flags):
        return peaks
    first_cycles = v.cycles()
    if not first_cycles or not first_cycles[0].complete:
        return peaks
    first = analyse_peaks(
        v, cycle=1, electrons=electrons, temperature_K=temperature_K, window_V=window_V
    )
    if first.current_ratio is None:
        return peaks
    flags = tuple(f for f in peaks.flags if f.code != "CURRENT_RATIO_NOT_DETERMINED")
    note = Flag(
        "CURRENT_RATIO_FROM_FIRST_CYCLE",
        f"cycle {peaks.cycle_number} does not start at rest, so ipa/ipc "
        f"({first.current_ratio:.3f}) was taken from cycle 1 of the same record "
        "(Nicholson 1966) and the reverse peak height is that ratio times this cycle's "
        "forward height",
        "info",
    )
    reverse = "ipa_A" if peaks.first_sweep == "reduction" else "ipc_A"
    forward = peaks.forward_height_A
    height = None if forward is None else first.current_ratio * forward
    return replace(
        peaks, current_ratio=first.current_ratio, flags=(*flags, note), **{reverse: height}
    )


def _sign_convention_hint(
    flags: list[Flag], v: Voltammogram, entry: VoltammogramEntry, series: object
) -> list[Flag]:
    """When the forward peak is missing but the mirrored record (current × −1) has a clean
    one, say that the file may use the other current-sign convention."""
    missing = [k for k, f in enumerate(flags) if f.code == "NO_FORWARD_PEAK"]
    if not missing or entry.import_options.anodic_current is not None:
        return flags
    mirrored = analyse_peaks(
        replace(v, current_A=-v.current_A),
        cycle=entry.import_options.cycle,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
        window_V=series.analyte_window_V,
    )
    clean = mirrored.E_half_V is not None and not any(
        f.severity == "error" for f in mirrored.flags
    )
    if not clean:
        return flags
    k = missing[0]
    old = flags[k]
    flags[k] = Flag(
        old.code,
        f"{old.message}; with the current's sign reversed the record has a clean peak pair "
        f"(E½ {mirrored.E_half_V:.4f} V): the current may be in the polarographic "
        "convention (cathodic positive); set anodic_current in [import]",
        old.severity,
    )
    return flags


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
    raw = v
    v = correct_for_resistance(v, resistance)  # a new record; the input is not changed
    window = series.analyte_window_V
    peaks = analyse_peaks(
        v,
        cycle=entry.import_options.cycle,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
        window_V=window,
    )
    peaks = _ratio_from_first_cycle(peaks, v, series.electrons, series.temperature_K, window)
    screen = screen_reversibility(
        peaks,
        electrons=series.electrons,
        temperature_K=series.temperature_K,
        criteria=manifest.reversibility,
    )
    flags = import_flags(raw.metadata) + _sign_convention_hint(list(peaks.flags), v, entry, series)
    flags += [f for f in screen.flags if f.code not in {g.code for g in flags}]
    flags += ohmic_flags(peaks, resistance)
    if screen.reversible is True:
        e_half, correction = corrected_half_wave_V(
            peaks, electrons=series.electrons, temperature_K=series.temperature_K
        )
    else:
        e_half, correction = peaks.E_half_V, 0.0
    curve_fit, curve_flags = curve_fit_for(raw, peaks, screen, manifest, resistance)
    flags += curve_flags
    source = "peaks"
    if curve_fit_used(curve_fit):
        e_half, correction, source = curve_fit.E_half_V.value, 0.0, "curve"
    standard = None
    if manifest.internal_standard is not None:
        standard = measure_standard(v, entry.import_options.cycle, manifest)
        e_half, std_flags = referenced_half_wave(e_half, standard, manifest)
        flags += std_flags
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
        internal_standard=standard,
        curve_fit=curve_fit,
        E_half_source=source,
        imported_columns=imported_columns(raw.metadata),
    )


def curve_fit_failed_by_study(
    files: Sequence[FileResult],
    own_verdicts: Sequence[bool | None],
    manifest: Manifest,
    records: Mapping[str, Voltammogram] | None = None,
) -> list[FileResult]:
    """*files* after the scan-rate studies, with the curve fit of each file whose own
    verdict (*own_verdicts*, from the per-file stage) asked for none but whose verdict
    after the studies does: a file that passed its own screen and failed with its study
    (ΔEp growing with the scan rate).

    The per-file stage decides on a curve fit from the file's own verdict, before the
    studies; a file the study fails afterwards is quasi-reversible all the same, so under
    ``half_wave_source = "auto"`` it is read again and fitted like the others (a handful of
    files: the study fails the files of one solution). The other files come back unchanged.
    """
    records = records or {}
    source = manifest.fit.half_wave_source
    out = list(files)
    for k, (f, own, entry) in enumerate(
        zip(files, own_verdicts, manifest.voltammograms, strict=True)
    ):
        if wants_curve_fit(source, own) or not wants_curve_fit(source, f.reversible):
            continue
        v = records.get(entry.name)
        if v is None:
            v = read_voltammogram(
                entry.file, entry.import_options, scan_rate_V_s=entry.scan_rate_V_s
            )
        fit, flags = curve_fit_for(
            v, f.peaks, f.screen, manifest, resistance_for(entry, manifest.series)
        )
        g = replace(f, curve_fit=fit, flags=(*f.flags, *flags))
        if curve_fit_used(fit):
            g = replace(
                g, E_half_V=fit.E_half_V.value, switching_correction_V=0.0, E_half_source="curve"
            )
        out[k] = g
    return out


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
    workers = min(jobs, n)
    done = []
    with new_process_pool(workers) as pool:
        chunk = max(1, n // (4 * workers))
        for result in pool.map(partial(_analyse_entry, manifest, n), entries, chunksize=chunk):
            done.append(result)
            tick()
    return done
