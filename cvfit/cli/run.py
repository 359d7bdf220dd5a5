"""``cvfit run MANIFEST... [--out DIR] [--jobs N]``: analyse one titration series or a batch."""

from __future__ import annotations

import argparse
import contextlib
import sys
from collections.abc import Callable, Iterator
from pathlib import Path

from .._file_stage import PARALLEL_MIN_FILES, default_file_jobs
from .._workers import available_cpus, worker_pool
from ..errors import InputError
from ..io import load_manifest
from ..pipeline import analyse_series
from ..report import OUTPUT_NAMES, format_summary, import_figure_modules, write_outputs


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "run",
        help="analyse a titration series described by a TOML manifest",
        description="Analyse a titration series: peaks, reversibility screen, Lingane fit.",
    )
    p.add_argument(
        "manifest",
        nargs="+",
        help="the series manifest (TOML); several manifests, or folders of them, run as a batch",
    )
    p.add_argument(
        "--out",
        metavar="DIR",
        help="output folder (default: MANIFEST-STEM_cvfit beside the manifest); with "
        "several manifests each series goes to DIR/MANIFEST-STEM",
    )
    p.add_argument(
        "--jobs",
        metavar="N",
        type=int,
        help="processes to work in: for a batch, series run in parallel (default: one per "
        "CPU core, at most one per series); for one series, N processes (this one and N - 1 "
        "workers) share the reading and measuring of its files (default: one per CPU core "
        f"from {PARALLEL_MIN_FILES} files on) and the drawing of its figures; 1 runs "
        "everything in one process",
    )
    p.add_argument("--quiet", action="store_true", help="print only where results went")
    p.set_defaults(handler=handle)


@contextlib.contextmanager
def _progress(total: int, *, enabled: bool) -> Iterator[Callable[[], None]]:
    """A per-file progress bar on stderr (tqdm) for long series; shown only on a terminal."""
    from tqdm import tqdm

    with tqdm(
        total=total,
        unit="file",
        file=sys.stderr,
        leave=False,
        desc="cvfit",
        disable=None if enabled and total >= PARALLEL_MIN_FILES else True,
    ) as bar:
        yield bar.update


def default_out_dir(manifest_path: Path) -> Path:
    return manifest_path.parent / f"{manifest_path.stem}_cvfit"


def check_outputs_spare_inputs(out_dir: Path, inputs: list[Path], manifest: Path) -> None:
    """Refuse an output folder where an output would replace an input file."""
    protected = {p.resolve() for p in inputs}
    for name in OUTPUT_NAMES.values():
        target = (out_dir / name).resolve()
        if target in protected:
            raise InputError(
                f"writing {name} into {out_dir} would overwrite the input file {target}; "
                "choose another --out folder",
                source=str(manifest),
                key="--out",
            )


def run_manifest(
    manifest_path: Path, out: Path | None, *, quiet: bool = False, jobs: int | None = None
) -> int:
    manifest = load_manifest(manifest_path)
    out_dir = out if out is not None else default_out_dir(manifest.path)
    if out_dir.exists() and not out_dir.is_dir():
        raise InputError(f"--out {out_dir} exists and is not a folder", source="<command line>")
    check_outputs_spare_inputs(
        out_dir, [manifest.path, *(e.file for e in manifest.voltammograms)], manifest.path
    )
    n_files = len(manifest.voltammograms)
    file_jobs = default_file_jobs(n_files) if jobs is None else jobs
    # by default the figures are drawn in parallel even when the files are read here
    processes = max(file_jobs, min(available_cpus(), 2)) if jobs is None else jobs
    # the figure modules are imported before the workers start, so none imports them again
    import_figure_modules()
    # worker_pool refuses --jobs below 1 before anything runs
    with worker_pool(processes) as pool, _progress(n_files, enabled=not quiet) as tick:
        result = analyse_series(manifest, pool=pool if file_jobs > 1 else None, progress=tick)
        written = write_outputs(result, out_dir, pool=pool)
    if not quiet:
        sys.stdout.write(format_summary(result) + "\n\n")
    sys.stdout.write(
        f"results written to {out_dir}/ ({', '.join(p.name for p in written.values())})\n"
    )
    return 0


def handle(args: argparse.Namespace) -> int:
    out = Path(args.out) if args.out else None
    if len(args.manifest) == 1 and not Path(args.manifest[0]).is_dir():
        return run_manifest(Path(args.manifest[0]), out, quiet=args.quiet, jobs=args.jobs)
    from .batch import expand_manifests, handle_batch

    manifests = expand_manifests(args.manifest)
    if len(manifests) == 1:
        return run_manifest(manifests[0], out, quiet=args.quiet, jobs=args.jobs)
    return handle_batch(manifests, out, jobs=args.jobs)
