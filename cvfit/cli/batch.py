"""Several series at once: ``cvfit run A.toml B.toml FOLDER/ [--jobs N] [--out DIR]``.

Each series runs in a worker process of a pool, into its own output folder; a series that
fails is reported with its one-line error and does not stop the others. The batch files
itself: ``batch_summary.csv`` and ``batch_summary.json``, one row per series with titles
whole (the terminal table clips them at 36 characters), go into ``--out`` or the folder
holding every output; a value not measured is an empty CSV cell and a JSON null.
"""

from __future__ import annotations

import csv
import io
import json
import math
import os
import sys
from collections.abc import Sequence
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Any

from cvfit.errors import InputError, OutputError, printable

__all__ = [
    "SeriesOutcome",
    "expand_manifests",
    "batch_out_dirs",
    "run_series",
    "run_batch",
    "format_batch_summary",
    "summary_rows",
    "write_batch_summary",
]

STATUS_OK = "ok"
STATUS_INPUT = "bad input"
STATUS_INTERNAL = "internal error"
STATUS_OUTPUT = "cannot write"


@dataclass(frozen=True)
class SeriesOutcome:
    """What became of one series of a batch (plain data, sent back from a worker).

    ``log10_ratio`` and ``delta_ligands`` (p − q) with their standard errors come from a
    Lingane fit, ``log10_beta`` (log10 β_j with its standard error, j = 1 … N) from a
    stepwise fit; they are ``None`` (or empty) when the series failed, gave no constants or
    was fitted with the other model. ``error`` is the one-line message of a failed series;
    ``screen`` what the reversibility screen found (``"1 of 8 failed, left out"``).
    """

    manifest: str
    out_dir: str
    status: str
    title: str | None = None
    log10_ratio: float | None = None
    log10_ratio_stderr: float | None = None
    delta_ligands: float | None = None
    delta_ligands_stderr: float | None = None
    n_points: int | None = None
    error: str | None = None
    log10_beta: tuple[tuple[float, float], ...] = ()
    screen: str | None = None
    #: For the van 't Hoff summary: the series' temperature and what else it was run under.
    temperature_K: float | None = None
    conditions: str | None = None

    def __post_init__(self) -> None:
        if self.status not in (STATUS_OK, STATUS_INPUT, STATUS_INTERNAL, STATUS_OUTPUT):
            raise ValueError(f"unknown series status {self.status!r}")


def expand_manifests(arguments: Sequence[str | Path]) -> list[Path]:
    """Manifest paths from the command line: files as given, folders → their ``*.toml``.

    A path given twice (or found twice) is kept once. A folder without a ``.toml`` file is
    an :class:`InputError`; a missing file is left for its series to report.
    """
    found: list[Path] = []
    seen: set[Path] = set()
    for arg in arguments:
        p = Path(arg)
        if p.is_dir():
            inside = sorted(q for q in p.glob("*.toml") if q.is_file())
            if not inside:
                raise InputError(
                    "this folder holds no .toml manifest; name the manifests or "
                    "a folder that has them",
                    source=str(p),
                )
        else:
            inside = [p]
        for q in inside:
            key = q.resolve()
            if key not in seen:
                seen.add(key)
                found.append(q)
    return found


def batch_out_dirs(manifests: Sequence[Path], out: Path | None) -> list[Path]:
    """One output folder per manifest: beside it by default, else ``out/<stem>``.

    When every manifest is ``series.toml`` (one series per folder, as ``cvfit init``
    writes them), the folder under *out* is named after the manifest's folder instead.
    Names that collide under *out* get ``-2``, ``-3`` … in command-line order.
    """
    from cvfit.cli.output_paths import default_out_dir

    if out is None:
        return [default_out_dir(m) for m in manifests]
    by_folder = all(m.name == "series.toml" for m in manifests)
    dirs: list[Path] = []
    used: set[str] = set()
    for m in manifests:
        stem = (m.absolute().parent.name or m.stem) if by_folder else m.stem
        name, k = stem, 1
        while name.casefold() in used:
            k += 1
            name = f"{stem}-{k}"
        used.add(name.casefold())
        dirs.append(out / name)
    return dirs


def run_series(
    manifest_path: str | Path, out_dir: str | Path, figure_formats: Sequence[str] = ("png",)
) -> SeriesOutcome:
    """Analyse one series into *out_dir*; never raises (failures become the outcome)."""
    from cvfit.cli.output_paths import check_outputs_spare_inputs
    from cvfit.io import load_manifest
    from cvfit.pipeline.series import analyse_series
    from cvfit.report import check_output_folder, write_outputs

    manifest_path, out_dir = Path(manifest_path), Path(out_dir)
    title = None
    try:
        manifest = load_manifest(manifest_path)
        title = manifest.series.title
        if out_dir.exists() and not out_dir.is_dir():
            raise InputError(
                f"output folder {out_dir} exists and is not a folder", source="<command line>"
            )
        check_outputs_spare_inputs(
            out_dir, [manifest.path, *(e.file for e in manifest.voltammograms)], manifest.path
        )
        check_output_folder(out_dir)
        result = analyse_series(manifest)
        write_outputs(result, out_dir, figure_formats=figure_formats)
    except InputError as exc:
        return SeriesOutcome(
            str(manifest_path), str(out_dir), STATUS_INPUT, title, error=exc.one_line()
        )
    except OutputError as exc:
        return SeriesOutcome(
            str(manifest_path), str(out_dir), STATUS_OUTPUT, title, error=exc.one_line()
        )
    except OSError as exc:
        path_error = InputError.from_path_error(exc)
        if path_error is None:
            return _internal_outcome(manifest_path, out_dir, title, exc)
        return SeriesOutcome(
            str(manifest_path), str(out_dir), STATUS_INPUT, title, error=path_error.one_line()
        )
    except Exception as exc:  # noqa: BLE001 - one broken series must not stop the batch
        return _internal_outcome(manifest_path, out_dir, title, exc)
    return _outcome(str(manifest_path), str(out_dir), title, result)


def _internal_outcome(
    manifest_path: Path, out_dir: Path, title: str | None, exc: BaseException
) -> SeriesOutcome:
    first = str(exc).splitlines()[0] if str(exc) else ""
    return SeriesOutcome(
        str(manifest_path),
        str(out_dir),
        STATUS_INTERNAL,
        title,
        error=f"{printable(manifest_path)}: {type(exc).__name__}: {printable(first)}",
    )


def _outcome(manifest: str, out_dir: str, title: str | None, result) -> SeriesOutcome:
    """The outcome of an analysed series: its constants, by the type of its fit."""
    from cvfit.cli.batch_van_t_hoff import conditions_key
    from cvfit.report.headline import screen_short
    from cvfit.titration.lingane import LinganeFit
    from cvfit.titration.stepwise_result import StepwiseFit

    fit = result.fit
    screen = screen_short(result.to_dict())
    if isinstance(fit, LinganeFit):
        return SeriesOutcome(
            manifest,
            out_dir,
            STATUS_OK,
            title,
            screen=screen,
            log10_ratio=fit.log10_beta_ratio.value,
            log10_ratio_stderr=fit.log10_beta_ratio.stderr,
            delta_ligands=fit.delta_ligands.value,
            delta_ligands_stderr=fit.delta_ligands.stderr,
            n_points=fit.n_points,
            temperature_K=result.series.temperature_K,
            conditions=conditions_key(result),
        )
    if isinstance(fit, StepwiseFit):
        return SeriesOutcome(
            manifest,
            out_dir,
            STATUS_OK,
            title,
            screen=screen,
            n_points=fit.n_points,
            log10_beta=tuple((q.value, q.stderr) for q in fit.log10_beta),
        )
    return SeriesOutcome(
        manifest, out_dir, STATUS_OK, title, n_points=result.fit_n_points, screen=screen
    )


def _run_pair(pair: tuple[Path, Path, tuple[str, ...]]) -> SeriesOutcome:
    """:func:`run_series` of one (manifest, output folder, formats), as a worker runs it."""
    return run_series(*pair)


def default_jobs(n_series: int) -> int:
    from cvfit.pipeline.parallel import available_cpus

    return max(1, min(available_cpus(), n_series))


def run_batch(
    manifests: Sequence[Path],
    out_dirs: Sequence[Path],
    *,
    jobs: int | None = None,
    progress: bool = True,
    figure_formats: Sequence[str] = ("png",),
) -> list[SeriesOutcome]:
    """Run every series; outcomes in the order of *manifests*.

    With ``jobs == 1`` the series run one after the other in this process; otherwise in a
    pool of ``jobs`` worker processes. The progress bar (tqdm, on stderr) shows only when
    stderr is a terminal.
    """
    from tqdm import tqdm

    n = len(manifests)
    jobs = default_jobs(n) if jobs is None else max(1, min(jobs, n))
    outcomes: list[SeriesOutcome | None] = [None] * n

    def progress_bar() -> tqdm[Any]:
        return tqdm(
            total=n,
            unit="series",
            file=sys.stderr,
            leave=False,
            disable=None if progress else True,
            desc="cvfit",
        )

    if jobs == 1:
        with progress_bar() as bar:
            for k, (m, o) in enumerate(zip(manifests, out_dirs, strict=True)):
                outcomes[k] = run_series(m, o, figure_formats)
                bar.update()
    else:
        from cvfit.pipeline.parallel import results_in_order

        formats = tuple(figure_formats)
        pairs = [(m, o, formats) for m, o in zip(manifests, out_dirs, strict=True)]
        with progress_bar() as bar:
            outcomes[:] = results_in_order(_run_pair, pairs, jobs, done=bar.update)
    return [o for o in outcomes if o is not None]


def _pm(value: float | None, stderr: float | None) -> str:
    from cvfit.formatting import format_pm

    return format_pm(value, stderr) if value is not None else "n/d"


def _clip(text: str, width: int) -> str:
    return text if len(text) <= width else text[: width - 1] + "…"


def format_batch_summary(outcomes: Sequence[SeriesOutcome]) -> str:
    """A table of every series, then the errors of the failed ones, then the tally.

    A column of stepwise constants log10 β_j joins the table when some series has them.
    """
    stepwise = any(o.log10_beta for o in outcomes)
    head: tuple[str, ...] = ("series", "status", "log10(β_ox/β_red)", "p − q")
    head += ("log10 β_j (stepwise)",) * stepwise + ("n", "screen", "output folder")
    rows = []
    for o in outcomes:
        betas = (", ".join(_pm(v, s) for v, s in o.log10_beta) or "n/d",) * stepwise
        rows.append(
            (
                _clip(printable(o.title or Path(o.manifest).stem), 36),
                o.status,
                _pm(o.log10_ratio, o.log10_ratio_stderr),
                _pm(o.delta_ligands, o.delta_ligands_stderr),
                *betas,
                "" if o.n_points is None else str(o.n_points),
                o.screen or "-",
                printable(o.out_dir) if o.status == STATUS_OK else "-",
            )
        )
    widths = [max(len(h), *(len(r[k]) for r in rows)) for k, h in enumerate(head)]
    fmt = "  ".join(f"{{:<{w}}}" for w in widths[:-1]) + "  {}"
    lines = [fmt.format(*head), "  ".join("-" * w for w in widths)]
    lines += [fmt.format(*r) for r in rows]
    failed = [o for o in outcomes if o.status != STATUS_OK]
    if failed:
        lines.append("")
        lines.append("Failed series:")
        for o in failed:
            error = o.error or ""
            name = printable(o.manifest)
            lines.append(f"  {error}" if name in error else f"  {name} → {error}")
    n_ok = len(outcomes) - len(failed)
    n_input = sum(o.status == STATUS_INPUT for o in failed)
    n_output = sum(o.status == STATUS_OUTPUT for o in failed)
    n_internal = len(failed) - n_input - n_output
    tally = f"{n_ok} of {len(outcomes)} series analysed"
    if n_input:
        tally += f"; {n_input} failed on bad input"
    if n_output:
        tally += f"; {n_output} could not be written"
    if n_internal:
        tally += f"; {n_internal} failed on an internal error"
    from cvfit.cli.batch_van_t_hoff import van_t_hoff_lines

    lines += van_t_hoff_lines(outcomes)
    status = batch_exit_status(outcomes)
    lines.append("")
    lines.append(f"{tally} (exit status {status}).")
    return "\n".join(lines)


def batch_exit_status(outcomes: Sequence[SeriesOutcome]) -> int:
    """0 all succeeded; 2 any failed on bad input or could not be written; else 1 when any
    failed internally."""
    if any(o.status in (STATUS_INPUT, STATUS_OUTPUT) for o in outcomes):
        return 2
    if any(o.status == STATUS_INTERNAL for o in outcomes):
        return 1
    return 0


def handle_batch(
    manifests: Sequence[Path],
    out: Path | None,
    *,
    jobs: int | None,
    figure_formats: Sequence[str] = ("png",),
) -> int:
    if out is not None and out.exists() and not out.is_dir():
        raise InputError(f"--out {out} exists and is not a folder", source="<command line>")
    if jobs is not None and jobs < 1:
        raise InputError(f"--jobs must be at least 1, got {jobs}", source="<command line>")
    dirs = batch_out_dirs(manifests, out)
    outcomes = run_batch(manifests, dirs, jobs=jobs, figure_formats=figure_formats)
    sys.stdout.write(format_batch_summary(outcomes) + "\n")
    folder = summary_folder(dirs, out)
    try:
        written = write_batch_summary(outcomes, folder)
    except OSError as exc:
        raise InputError(
            f"cannot write the batch summary here ({exc.strerror or exc}); give --out DIR",
            source=str(folder),
        ) from None
    sys.stdout.write(f"Batch summary: {printable(written[0])} (and .json beside it).\n")
    return batch_exit_status(outcomes)


#: Stem of the summary files: ``batch_summary.csv`` and ``batch_summary.json``.
SUMMARY_STEM = "batch_summary"
_COLUMNS = (
    "title",
    "status",
    "log10_ratio",
    "log10_ratio_stderr",
    "delta_ligands",
    "delta_ligands_stderr",
    "n_points",
    "screen",
    "temperature_K",
    "conditions",
    "manifest",
    "out_dir",
    "error",
)


def summary_folder(out_dirs: Sequence[Path], out: Path | None) -> Path:
    """Where the summary goes: ``--out`` when given, else the folder holding every output."""
    if out is not None:
        return out
    return Path(os.path.commonpath([str(d.absolute().parent) for d in out_dirs]))


def _finite(x: Any) -> Any:
    return None if isinstance(x, float) and not math.isfinite(x) else x


def summary_rows(outcomes: Sequence[SeriesOutcome]) -> list[dict[str, Any]]:
    """One mapping per series: the outcome's fields, stepwise log10 β_j as columns."""
    order = max((len(o.log10_beta) for o in outcomes), default=0)
    rows = []
    for o in outcomes:
        fields = asdict(o)
        row = {key: _finite(fields[key]) for key in _COLUMNS}
        if row["title"] is None:
            row["title"] = Path(o.manifest).stem
        for j in range(1, order + 1):
            value, stderr = o.log10_beta[j - 1] if j <= len(o.log10_beta) else (None, None)
            row[f"log10_beta_{j}"] = _finite(value)
            row[f"log10_beta_{j}_stderr"] = _finite(stderr)
        rows.append(row)
    return rows


#: The JSON summary's mark: a file that carries it was written by cvfit and may be replaced.
SUMMARY_FORMAT = "cvfit batch summary, version 1"


def _ours(csv_path: Path, json_path: Path) -> bool:
    """Both names free, or taken by an earlier summary of cvfit's (never a user's file)."""
    if csv_path.exists():
        try:
            head = csv_path.read_text(encoding="utf-8", errors="replace").split("\n", 1)[0]
        except OSError:
            return False
        if not head.startswith(",".join(_COLUMNS[:4])):
            return False
    if json_path.exists():
        try:
            mark = json.loads(json_path.read_text(encoding="utf-8")).get("format")
        except (OSError, ValueError, AttributeError):
            return False
        return bool(mark == SUMMARY_FORMAT)
    return True


def summary_paths(folder: Path) -> tuple[Path, Path]:
    """``batch_summary.csv``/``.json`` in *folder*, or ``batch_summary-2`` … where a file of
    that name is not an earlier cvfit summary (a file the user has is never replaced)."""
    k = 1
    while True:
        stem = SUMMARY_STEM if k == 1 else f"{SUMMARY_STEM}-{k}"
        paths = folder / f"{stem}.csv", folder / f"{stem}.json"
        if _ours(*paths):
            return paths
        k += 1


def write_batch_summary(outcomes: Sequence[SeriesOutcome], folder: Path) -> tuple[Path, Path]:
    """Write ``batch_summary.csv`` and ``batch_summary.json`` into *folder* (see
    :func:`summary_paths`); their paths. Text cells are safe for a spreadsheet."""
    from cvfit.record_json import record_json
    from cvfit.report.atomic import atomic_write_text
    from cvfit.report.file_table import text_cell
    from cvfit.version import __version__

    rows = summary_rows(outcomes)
    folder.mkdir(parents=True, exist_ok=True)
    text = io.StringIO()
    writer = csv.DictWriter(text, fieldnames=list(rows[0]) if rows else list(_COLUMNS))
    writer.writeheader()
    writer.writerows(
        {k: "" if v is None else text_cell(v) if isinstance(v, str) else v for k, v in r.items()}
        for r in rows
    )
    csv_path, json_path = summary_paths(folder)
    atomic_write_text(csv_path, text.getvalue())
    record = {"format": SUMMARY_FORMAT, "cvfit_version": __version__, "series": rows}
    atomic_write_text(json_path, record_json(record) + "\n")
    return csv_path, json_path
