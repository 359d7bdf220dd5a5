"""``cvfit demo [--out DIR]``: the bundled example series, end to end.

The demo's data are simulated; ``DIR/simulated_with.toml`` holds the constants they were
simulated with (written by ``example_runs/make_demo.py``), which the command prints after the
summary and the report shows, so the constants found can be checked against them.
"""

from __future__ import annotations

import argparse
import os
import shutil
import sys
from importlib import resources
from pathlib import Path

from cvfit.cli.run import add_figure_format, run_manifest
from cvfit.errors import InputError

DEMO_PACKAGE = "cvfit.data.demo"
DEMO_MANIFEST = "series.toml"
#: The constants the demo was simulated with (package data, copied to DIR/).
SIMULATED_WITH = "simulated_with.toml"


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "demo",
        help="run the bundled example titration series end to end",
        description="Copy the bundled example series (simulated data) into DIR/inputs and "
        "analyse it into DIR/results; DIR/simulated_with.toml holds the constants it was "
        "simulated with, to check the results against.",
    )
    p.add_argument(
        "--out",
        metavar="DIR",
        default="cvfit_demo",
        help="folder for the demo (default: ./cvfit_demo)",
    )
    add_figure_format(p)
    p.add_argument("--quiet", action="store_true", help="print only where results went")
    p.set_defaults(handler=handle)


def _demo_items() -> list:
    """The packaged demo series: its CSV files and its manifest."""
    src = resources.files(DEMO_PACKAGE)
    return [i for i in src.iterdir() if i.name.endswith(".csv") or i.name == DEMO_MANIFEST]


def earlier_demo_inputs():
    """The demo's inputs folder written before sets carried their record: only the demo's
    files, each byte for byte the one this version ships."""
    from cvfit.report.ownership import EarlierSet

    items = {i.name: i for i in _demo_items()}

    def is_cvfits(folder: Path) -> bool:
        return all(items[p.name].read_bytes() == p.read_bytes() for p in folder.iterdir())

    return EarlierSet(frozenset(items), is_cvfits)


def copy_demo_inputs(dest: Path) -> Path:
    """Copy the packaged demo series (its CSV files and manifest) into the folder *dest*, as
    one output set (:func:`cvfit.report.atomic.output_set`: a folder that is not cvfit's is
    refused and left as it is); returns the manifest path."""
    from cvfit.report.atomic import output_set

    with output_set(dest, earlier=earlier_demo_inputs()) as stage:
        for item in _demo_items():
            with resources.as_file(item) as p:
                shutil.copyfile(p, stage / item.name)
    return dest / DEMO_MANIFEST


def read_simulated_with(path: str | Path) -> tuple[str, ...]:
    """The lines of ``[simulation] lines`` in a simulated_with.toml file."""
    import tomllib

    data = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    return tuple(str(line) for line in data["simulation"]["lines"])


def _check_truth(truth: Path, packaged: bytes) -> None:
    """Refuse to replace a ``simulated_with.toml`` that differs from the demo's own: it is not
    cvfit's (an earlier demo wrote the same bytes)."""
    if not os.path.lexists(truth):
        return
    if not truth.is_file() or truth.is_symlink() or truth.read_bytes() != packaged:
        raise InputError(
            f"{truth.name} there is not the one the demo writes; cvfit never replaces what is "
            "not its own: move it away or choose another --out folder",
            source=str(truth),
            key="--out",
        )


def handle(args: argparse.Namespace) -> int:
    from cvfit.report import check_output_folder
    from cvfit.report.atomic import atomic_path
    from cvfit.report.figures.print_style import parse_figure_formats
    from cvfit.report.ownership import check_output_folder as check_folder

    formats = parse_figure_formats(args.figure_format)
    out = Path(args.out)
    truth = out / SIMULATED_WITH
    packaged = (resources.files(DEMO_PACKAGE) / SIMULATED_WITH).read_bytes()
    # every part of DIR is checked before anything is written
    check_folder(out / "inputs", earlier=earlier_demo_inputs())
    check_output_folder(out / "results")
    _check_truth(truth, packaged)
    manifest = copy_demo_inputs(out / "inputs")
    if not truth.exists():
        with atomic_path(truth) as tmp:
            tmp.write_bytes(packaged)
    simulated_with = read_simulated_with(truth)
    sys.stdout.write(f"demo series (simulated data) copied to {manifest.parent}/\n")
    status = run_manifest(
        manifest,
        out / "results",
        quiet=args.quiet,
        simulated_with=simulated_with,
        figure_formats=formats,
    )
    if not args.quiet:
        sys.stdout.write(
            f"\nThe demo was simulated with ({truth}) — compare the constants above:\n"
            + "".join(f"  {line}\n" for line in simulated_with)
        )
    return status
