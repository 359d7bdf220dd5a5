"""``cvfit demo [--out DIR]``: the bundled example series, end to end.

The demo's data are simulated; ``DIR/simulated_with.toml`` holds the constants they were
simulated with (written by ``example_runs/make_demo.py``), which the command prints after the
summary and the report shows, so the constants found can be checked against them.
"""

from __future__ import annotations

import argparse
import shutil
import sys
from importlib import resources
from pathlib import Path

from cvfit.cli.run import run_manifest

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
    p.add_argument("--quiet", action="store_true", help="print only where results went")
    p.set_defaults(handler=handle)


def copy_demo_inputs(dest: Path) -> Path:
    """Copy the packaged demo series (its CSV files and manifest) into *dest*; returns the
    manifest path."""
    dest.mkdir(parents=True, exist_ok=True)
    src = resources.files(DEMO_PACKAGE)
    for item in src.iterdir():
        if item.name.endswith(".csv") or item.name == DEMO_MANIFEST:
            with resources.as_file(item) as p:
                shutil.copyfile(p, dest / item.name)
    return dest / DEMO_MANIFEST


def read_simulated_with(path: str | Path) -> tuple[str, ...]:
    """The lines of ``[simulation] lines`` in a simulated_with.toml file."""
    import tomllib

    data = tomllib.loads(Path(path).read_text(encoding="utf-8"))
    return tuple(str(line) for line in data["simulation"]["lines"])


def handle(args: argparse.Namespace) -> int:
    out = Path(args.out)
    manifest = copy_demo_inputs(out / "inputs")
    truth = out / SIMULATED_WITH
    with resources.as_file(resources.files(DEMO_PACKAGE) / SIMULATED_WITH) as p:
        shutil.copyfile(p, truth)
    simulated_with = read_simulated_with(truth)
    sys.stdout.write(f"demo series (simulated data) copied to {manifest.parent}/\n")
    status = run_manifest(
        manifest, out / "results", quiet=args.quiet, simulated_with=simulated_with
    )
    if not args.quiet:
        sys.stdout.write(
            f"\nThe demo was simulated with ({truth}) — compare the constants above:\n"
            + "".join(f"  {line}\n" for line in simulated_with)
        )
    return status
