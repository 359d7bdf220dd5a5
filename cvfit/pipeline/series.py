"""Manifest → results: composition of the layers, no mathematics of its own.

``analyse_series`` imports every voltammogram, finds its peaks, screens it for
reversibility, takes the reference E½(s) from the ligand-free files (or the manifest),
and fits the titration model to the usable points.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import replace
from pathlib import Path
from typing import cast

import numpy as np

from cvfit.errors import InputError
from cvfit.flags import FitRefused, Flag
from cvfit.io import Manifest, load_manifest
from cvfit.pipeline.global_stage import run_global
from cvfit.pipeline.per_file import analyse_files, read_entry, with_measurement
from cvfit.pipeline.results import (
    FileResult,
    ReferenceHalfWave,
    SeriesConditions,
    SeriesResult,
    TitrationFit,
)
from cvfit.pipeline.table_points import table_points
from cvfit.techniques import technique_of
from cvfit.techniques.base import StudyItem
from cvfit.titration.base import TitrationData, TitrationModel, TitrationPoint
from cvfit.titration.error_budget import reference_mean
from cvfit.titration.lingane import MIN_POINTS as MIN_FIT_POINTS
from cvfit.titration.registry import model_named
from cvfit.version import __version__
from cvfit.voltammogram import Voltammogram

__all__ = ["analyse_series", "analyse_manifest_file", "MIN_FIT_POINTS"]


def analyse_manifest_file(path: str | Path, *, jobs: int = 1) -> SeriesResult:
    """Load a manifest and analyse its series (*jobs* processes share the files)."""
    return analyse_series(load_manifest(path), jobs=jobs)


#: The series flag of a run without ligand: the couple characterised, no titration fitted.
_NO_TITRATION = Flag(
    "NO_TITRATION",
    "every file is ligand-free (ligand_M = 0): the couple is characterised — E½, ΔEp, "
    "ipa/ipc, k0, D and the scan-rate studies — and no constants are fitted",
    "info",
)


#: E½(s) of a series whose model needs none (pH, temperature).
_NO_REFERENCE = ReferenceHalfWave(None, None, "none")


def _titration_x(f: FileResult, model: TitrationModel) -> float | None:
    """The file's value of the model's titration variable (for a ligand model the free
    ligand, which the model may correct; else ``pH`` or ``temperature_K`` as given)."""
    return f.free_ligand_M if model.variable == "ligand_M" else getattr(f, model.variable)


def _reference(files: Sequence[FileResult], manifest: Manifest) -> ReferenceHalfWave:
    """E½(s): mean of the ligand-free files whose E½ the decision accepted, else the
    manifest value."""
    free = [f for f in files if f.ligand_M == 0.0]
    usable = [f for f in free if f.half_wave.accepted]
    if usable:
        values = np.array([f.E_half_V for f in usable], dtype=float)
        errs = np.array(
            [
                np.nan if f.E_half_total_stderr_V is None else f.E_half_total_stderr_V
                for f in usable
            ]
        )
        mean, stderr, spread = reference_mean(values, errs)
        return ReferenceHalfWave(
            mean,
            stderr,
            "file",
            tuple(f.file for f in usable),
            spread_V=spread,
            file_E_half_V=tuple(float(v) for v in values),
        )
    if manifest.series.E_half_free_V is not None:
        return ReferenceHalfWave(
            manifest.series.E_half_free_V,
            manifest.series.E_half_free_stderr_V,
            "manifest",
        )
    if free:
        return ReferenceHalfWave(None, None, "file", tuple(f.file for f in free))
    raise InputError(
        "no ligand-free voltammogram (ligand_M = 0) and no E_half_free_V in [series]; "
        "add one of them so the shift of E½ can be measured",
        source=str(manifest.path),
        key="series.E_half_free_V",
    )


def _study(
    files: list[FileResult], manifest: Manifest, records: Mapping[str, Voltammogram] | None
) -> tuple[list[FileResult], tuple, tuple[Flag, ...]]:
    """The technique's series-level study; every file's E½ is decided again after it."""
    entries = manifest.voltammograms
    records = records or {}

    def reread(k: int) -> Voltammogram:
        return records.get(entries[k].name) or read_entry(entries[k])

    items = [StudyItem(f.file, f.ligand_M, f.scan_rate_V_s, f.measurement) for f in files]
    study = technique_of(manifest).study_series(items, manifest, reread)
    out = [
        with_measurement(f, m, manifest) for f, m in zip(files, study.measurements, strict=True)
    ]
    return out, study.studies, study.flags


def _sign_reversed(file: FileResult) -> bool:
    return any(f.code == "CURRENT_SIGN_REVERSED" for f in file.flags)


def _no_reference(reference: ReferenceHalfWave, files: Sequence[FileResult]) -> Flag:
    """Why E½(s) is missing, and what to do about it."""
    free = {f.file: f for f in files if f.file in reference.files}
    measured = [name for name, f in free.items() if f.E_half_V is not None]
    if measured:
        why = "; ".join(f"{name}: {free[name].half_wave.why}" for name in measured)
        text = (
            f"no ligand-free E½ was accepted ({why}); record the ligand-free solution again, "
            "give E_half_free_V in [series], or set exclude_non_nernstian = false in [fit] "
            "to use it all the same"
        )
    elif reversed_sign := [n for n, f in free.items() if _sign_reversed(f)]:
        text = (
            f"E½ of the ligand-free couple could not be measured: {', '.join(reversed_sign)} "
            "has no forward peak but a clean one with the current's sign reversed; set "
            'anodic_current = "negative" in [import] if the files give cathodic current '
            "positive"
        )
    else:
        text = (
            f"E½ of the ligand-free couple could not be measured ({', '.join(reference.files)}); "
            "record the ligand-free solution again or give E_half_free_V in [series]"
        )
    return Flag("NO_REFERENCE_E_HALF", text, "error")


def _point(f: FileResult, x: float) -> TitrationPoint:
    """A file as a titration point at *x*: its decided E½ and what its technique knows."""
    m = f.measurement
    if f.E_half_V is None:
        raise ValueError(f"{f.file} has no E½ to fit")  # only accepted files are points
    return TitrationPoint(
        f.file,
        x,
        f.E_half_V,
        f.E_half_total_stderr_V,
        bulk_form=m.bulk_form,
        diffusion_current_A=m.diffusion_current_A,
        scan_rate_V_s=f.scan_rate_V_s,
        pH=f.pH,
        metal_M=f.metal_M,
    )


def _fit_titration(
    files: list[FileResult], manifest: Manifest, reference: ReferenceHalfWave
) -> tuple[TitrationFit | FitRefused, list[FileResult]]:
    """The fit of the model asked for, or why none can be made; the files come back with
    the x the model fitted them at (the free ligand) and its notes on them.

    The model's own checks come first (a ligand model: three points over more than one
    ligand concentration), and a ligand model needs a reference E½(s).
    """
    model = model_named(manifest.fit.model)
    # a fitted file is a point, so the model's variable is given for it
    points = tuple(_point(f, cast(float, _titration_x(f, model))) for f in files if f.used_in_fit)
    checks = model.check_points(points)
    why: list[Flag] = []
    if model.needs_reference and reference.E_half_V is None:
        why.append(_no_reference(reference, files))
    if why or any(f.severity == "error" for f in checks):
        return FitRefused((*why, *checks)), files
    refs = tuple(_point(f, 0.0) for f in files if f.file in reference.files)
    data = TitrationData(points, reference, refs)
    outcome = model.fit(data, manifest)
    out = []
    for f in files:
        note = outcome.notes.get(f.file)
        if note is not None:
            free = note.x if model.variable == "ligand_M" else f.free_ligand_M
            f = replace(f, free_ligand_M=free, series_flags=(*f.series_flags, *note.flags))
        out.append(f)
    return outcome.fit, out  # type: ignore[return-value]


def _reference_flags(reference: ReferenceHalfWave, files: Sequence[FileResult]) -> list[Flag]:
    """What the series must say about E½(s): the files it rests on and those it left out."""
    out: list[Flag] = []
    if reference.E_half_V is None:
        return out
    from_files = reference.source == "file"
    used = [f for f in files if from_files and f.file in reference.files]
    doubtful = [f.file for f in used if f.half_wave.kind not in ("nernstian", "kinetic_model")]
    if doubtful:
        out.append(
            Flag(
                "REFERENCE_NOT_NERNSTIAN",
                "E½(s) rests on ligand-free voltammograms that failed the reversibility "
                f"screen ({', '.join(doubtful)}); it may bias every shift",
            )
        )
    left_out = [f.file for f in files if f.ligand_M == 0.0 and not f.half_wave.accepted]
    if left_out and from_files:
        out.append(
            Flag(
                "REFERENCE_FILES_LEFT_OUT",
                f"ligand-free file(s) left out of E½(s): {', '.join(left_out)} "
                "(their E½ was not accepted; see their flags)",
                "info",
            )
        )
    if reference.stderr_V is None:
        out.append(
            Flag(
                "REFERENCE_UNCERTAINTY_UNKNOWN",
                "no standard error for E½(s) (give E_half_free_stderr_V); the fit gives the "
                "reference the scatter of the titration points instead",
                "info",
            )
        )
    return out


def analyse_series(
    manifest: Manifest,
    *,
    records: Mapping[str, Voltammogram] | None = None,
    jobs: int = 1,
    progress: Callable[[], object] | None = None,
) -> SeriesResult:
    """Analyse one titration series described by a loaded manifest.

    Parameters
    ----------
    manifest : Manifest
        As returned by :func:`cvfit.io.load_manifest` (or built in memory).
    records : mapping of str to Voltammogram, optional
        Voltammograms already in memory, keyed by the entries' ``name``; entries not in
        it are read from their files.
    jobs : int
        Processes for the per-file work (import, peaks, screen): 1 runs it all here, more
        maps the files over a pool of that many workers. The results do not depend on it.
        Ignored when *records* is given.
    progress : callable, optional
        Called once per file analysed (the command line's progress bar).

    Returns
    -------
    SeriesResult
        Per-file peak data, the reversibility verdicts, the reference E½ and the fit
        (``None`` with a series flag when fewer than three usable points remain).
    """
    model = model_named(manifest.fit.model)
    entries = (*manifest.voltammograms, *manifest.points)
    titrating = [e for e in entries if model.is_point(getattr(e, model.variable))]
    if (titrating or not model.needs_reference) and len(titrating) < MIN_FIT_POINTS:
        what = "voltammogram(s)" if not manifest.points else "voltammogram(s) and point(s)"
        rest = " (or list only ligand-free files to characterise the couple without a titration)"
        raise InputError(
            f"the manifest lists {len(titrating)} {what} with {model.point_rule}; a "
            f"titration fit needs at least {MIN_FIT_POINTS} — add more [[voltammogram]] tables"
            + (rest if model.needs_reference else ""),
            source=str(manifest.path),
            key="voltammogram",
        )
    files = analyse_files(manifest, records=dict(records or {}), jobs=jobs, progress=progress)
    files, studies, study_flags = _study(files, manifest, records)
    files += table_points(manifest)  # [[point]] entries: E½ given, no file to study
    reference = _reference(files, manifest) if model.needs_reference else _NO_REFERENCE
    exclude = manifest.fit.exclude_non_nernstian
    series_flags: list[Flag] = list(study_flags)

    final: list[FileResult] = []
    n_points = 0
    excluded: list[str] = []
    for f in files:
        point = model.is_point(_titration_x(f, model))
        usable = point and f.half_wave.accepted
        by_screen = f.E_half_V is not None and f.excluded_by_user is None
        if point and not f.half_wave.accepted and by_screen:
            excluded.append(f.file)
        if usable:
            n_points += 1
        final.append(replace(f, used_in_fit=usable))

    kept = [f for f in final if f.excluded_by_user is None]  # the user's exclusions aside
    nernstian = all(f.reversible is True for f in kept)
    if excluded:
        series_flags.append(
            Flag(
                "FILES_EXCLUDED",
                f"{len(excluded)} voltammogram(s) failed the reversibility screen and were "
                f"not fitted: {', '.join(excluded)}",
            )
        )
    if not exclude and not nernstian:
        bad = [f.file for f in kept if f.reversible is not True]
        series_flags.append(
            Flag(
                "FIT_USES_FLAGGED_DATA",
                "exclude_non_nernstian = false: the constants rest on voltammograms that "
                f"failed the reversibility screen ({', '.join(bad)}); treat them with caution",
            )
        )
    series_flags += _reference_flags(reference, final)

    fit = None
    if not titrating:
        series_flags.append(_NO_TITRATION)
    else:
        outcome, final = _fit_titration(final, manifest, reference)
        if isinstance(outcome, FitRefused):
            series_flags.extend(outcome.flags)
        else:
            fit = outcome
    global_fit, global_flags = run_global(final, manifest, fit, reference, records)
    series_flags.extend(global_flags)

    return SeriesResult(
        cvfit_version=__version__,
        manifest=str(manifest.path),
        series=SeriesConditions(
            manifest.series, manifest.fit.model, technique_of(manifest).name, manifest.titration
        ),
        files=tuple(final),
        reference=reference,
        fit=fit,
        nernstian=nernstian,
        exclude_non_nernstian=exclude,
        criteria=manifest.reversibility,
        flags=tuple(series_flags),
        fit_n_points=n_points,
        scan_rate_studies=studies,
        global_fit=global_fit,
    )
