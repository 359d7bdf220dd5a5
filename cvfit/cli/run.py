"""``cvfit run MANIFEST... [--out DIR] [--jobs N]``: analyse one titration series or a batch.

Only the argument set-up is imported with the command line; the analysis and the figures
load when a series runs (``cvfit --help`` stays quick).
"""

from __future__ import annotations

import argparse
import contextlib
import sys
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path

from cvfit.cli.file_jobs import PARALLEL_MIN_FILES, available_cores, default_file_jobs

#: Shown under ``cvfit run --help``: where every manifest key is described, and what the
#: exit status means (the values of :data:`cvfit.cli.EXIT_OK` and its neighbours).
RUN_EPILOG = """\
manifest: a TOML file with a [series] table and one [[voltammogram]] table per CSV file
  (or [[point]] tables of E½ measured elsewhere); 'cvfit guide manifest' prints the
  manifest guide installed with cvfit: every key with its unit, default and meaning.

exit status:
  0  success, also when no constants could be fitted (they are then null in
     results.json and a series flag says why)
  1  internal error (a bug: rerun with --debug and report the traceback)
  2  bad input: one line on stderr names the file (and line or key) and what to do;
     in a batch, any series with bad input
"""


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "run",
        help="analyse a titration series described by a TOML manifest",
        description="Analyse a titration series: E½ of every file (cyclic, pulse or "
        "steady-state voltammetry), the reversibility screen, and the titration model's "
        "constants with confidence intervals.",
        epilog=RUN_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    from cvfit.cli.guide import manifest_key_summary

    p.epilog_more = manifest_key_summary
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
        help="worker processes: for a batch, series run in parallel (default: one per CPU "
        "core, at most one per series); for one series, its files are read and measured by "
        f"N workers (default: one per CPU core from {PARALLEL_MIN_FILES} files on, else "
        "none); 1 runs everything in this process; at most one per CPU core (a larger N is "
        "cut, with a note)",
    )
    add_figure_format(p)
    p.add_argument("--quiet", action="store_true", help="print only where results went")
    p.set_defaults(handler=handle)


def add_figure_format(p: argparse.ArgumentParser) -> None:
    """The ``--figure-format`` option (``cvfit run``, ``cvfit demo``)."""
    p.add_argument(
        "--figure-format",
        metavar="LIST",
        default="png",
        help="figure files to write, a comma list of png, svg, pdf (default: png; PNG is "
        "always written, at 200 dpi, for the HTML report)",
    )


@contextlib.contextmanager
def _progress(total: int, *, enabled: bool) -> Iterator[Callable[[], object]]:
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


def run_manifest(
    manifest_path: Path,
    out: Path | None,
    *,
    quiet: bool = False,
    jobs: int | None = None,
    simulated_with: Sequence[str] = (),
    figure_formats: Sequence[str] = ("png",),
) -> int:
    """Analyse the series of *manifest_path* into *out*, print the summary; exit status.

    *simulated_with*: for simulated data (the demo), the constants they were simulated with,
    in words; the HTML report shows them.
    """
    from cvfit.cli.output_paths import check_outputs_spare_inputs, default_out_dir
    from cvfit.errors import InputError, printable
    from cvfit.io import load_manifest
    from cvfit.pipeline.per_file import check_jobs
    from cvfit.pipeline.series import analyse_series
    from cvfit.report import check_output_folder, format_summary, write_outputs

    if jobs is not None:
        check_jobs(jobs)
    manifest = load_manifest(manifest_path)
    out_dir = out if out is not None else default_out_dir(manifest.path)
    if out_dir.exists() and not out_dir.is_dir():
        raise InputError(f"--out {out_dir} exists and is not a folder", source="<command line>")
    check_outputs_spare_inputs(
        out_dir, [manifest.path, *(e.file for e in manifest.voltammograms)], manifest.path
    )
    check_output_folder(out_dir)  # before the analysis, not after it
    n_files = len(manifest.voltammograms)
    file_jobs = default_file_jobs(n_files) if jobs is None else jobs
    with _progress(n_files, enabled=not quiet) as tick:
        result = analyse_series(manifest, jobs=file_jobs, progress=tick)
    written = write_outputs(
        result, out_dir, simulated_with=simulated_with, figure_formats=figure_formats
    )
    if not quiet:
        sys.stdout.write(format_summary(result) + "\n\n")
    sys.stdout.write(
        f"results written to {printable(out_dir)}/ "
        f"({', '.join(p.name for p in written.values())})\n"
    )
    return 0


def capped_jobs(jobs: int | None) -> int | None:
    """*jobs* (``--jobs``) at most the CPU cores this process may use, with a note when cut:
    more processes than cores only share them, and each takes its own memory."""
    if jobs is None:
        return None
    from cvfit.pipeline.per_file import check_jobs

    cores = available_cores()
    if check_jobs(jobs) > cores:
        sys.stderr.write(
            f"cvfit: note: --jobs {jobs} is more than the {cores} CPU core"
            f"{'s' if cores > 1 else ''} this run may use; using {cores}\n"
        )
        return cores
    return jobs


def handle(args: argparse.Namespace) -> int:
    from cvfit.report.figures.print_style import parse_figure_formats

    formats = parse_figure_formats(args.figure_format)
    args.jobs = capped_jobs(args.jobs)
    out = Path(args.out) if args.out else None
    if len(args.manifest) == 1 and not Path(args.manifest[0]).is_dir():
        return run_manifest(
            Path(args.manifest[0]), out, quiet=args.quiet, jobs=args.jobs, figure_formats=formats
        )
    from cvfit.cli.batch import expand_manifests, handle_batch

    manifests = expand_manifests(args.manifest)
    if len(manifests) == 1:
        return run_manifest(
            manifests[0], out, quiet=args.quiet, jobs=args.jobs, figure_formats=formats
        )
    return handle_batch(manifests, out, jobs=args.jobs, figure_formats=formats)
