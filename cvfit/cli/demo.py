"""``cvfit demo [--out DIR]``: the bundled example series, end to end."""

from __future__ import annotations

import argparse
import shutil
import sys
from importlib import resources
from pathlib import Path

from .run import run_manifest

DEMO_PACKAGE = "cvfit.data.demo"
DEMO_MANIFEST = "series.toml"


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "demo",
        help="run the bundled example titration series end to end",
        description="Copy the bundled example series into DIR/inputs and analyse it "
        "into DIR/results.",
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
    """Copy the packaged demo series into *dest*; returns the manifest path."""
    dest.mkdir(parents=True, exist_ok=True)
    src = resources.files(DEMO_PACKAGE)
    for item in src.iterdir():
        if item.name.endswith((".csv", ".toml")):
            with resources.as_file(item) as p:
                shutil.copyfile(p, dest / item.name)
    return dest / DEMO_MANIFEST


def handle(args: argparse.Namespace) -> int:
    out = Path(args.out)
    manifest = copy_demo_inputs(out / "inputs")
    sys.stdout.write(f"demo series copied to {manifest.parent}/\n")
    return run_manifest(manifest, out / "results", quiet=args.quiet)
