"""``cvfit plan PLAN.toml`` of a pH series or a temperature series (docs/plan.md).

Writes plan.json (schema ``cvfit/schemas/variable_plan.schema.json``) into the output
folder and prints the designs with their predicted standard errors; ``--simulate DIR``
writes the recommended series as simulated voltammograms and a manifest.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from cvfit.errors import InputError

_CMD = "<command line>"

__all__ = ["handle_variable_plan"]


def handle_variable_plan(args: argparse.Namespace, plan_path: Path, out_dir: Path) -> int | None:
    """Plan a pH or temperature series; None when the plan file plans a ligand titration."""
    from cvfit.errors import SimulationError
    from cvfit.plan.variables import load_variable_plan, simulate_variable_plan
    from cvfit.report.atomic import atomic_write_text

    plan = load_variable_plan(plan_path)
    if plan is None:
        return None
    if out_dir.exists() and not out_dir.is_dir():
        raise InputError(f"--out {out_dir} exists and is not a folder", source=_CMD, key="--out")
    if (out_dir / "plan.json").resolve() == plan_path.resolve():
        raise InputError(
            f"writing plan.json into {out_dir} would overwrite the plan file; choose another "
            "--out folder",
            source=_CMD,
            key="--out",
        )
    out_dir.mkdir(parents=True, exist_ok=True)
    data = {"plan_file": str(plan_path), **plan.to_dict()}
    atomic_write_text(out_dir / "plan.json", json.dumps(data, indent=2, allow_nan=False) + "\n")
    if not args.quiet:
        sys.stdout.write(plan.table() + "\n\n")
    sys.stdout.write(f"plan written to {out_dir}/ (plan.json)\n")
    if args.simulate:
        sim = Path(args.simulate)
        if sim.exists() and not sim.is_dir():
            raise InputError(
                f"--simulate {sim} exists and is not a folder", source=_CMD, key="--simulate"
            )
        try:
            manifest = simulate_variable_plan(plan, sim, overwrite=bool(args.force))
        except SimulationError as exc:
            hint = "; use --force to replace" if "exists" in str(exc) else ""
            raise InputError(f"{exc}{hint}", source=_CMD, key="--simulate") from None
        sys.stdout.write(f"simulated series written to {manifest} (try: cvfit run {manifest})\n")
    return 0
