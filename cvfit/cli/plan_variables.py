"""``cvfit plan PLAN.toml`` of a pH series or a temperature series (docs/plan.md).

Writes plan.json (schema ``cvfit/schemas/variable_plan.schema.json``) into the output
folder and prints the designs with their predicted standard errors; ``--simulate DIR``
writes the recommended series as simulated voltammograms and a manifest.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

from cvfit.errors import InputError
from cvfit.record_json import record_json

_CMD = "<command line>"

__all__ = ["handle_variable_plan"]


def handle_variable_plan(
    args: argparse.Namespace,
    plan_path: Path,
    out_dir: Path,
    *,
    check_out: Callable[[Path, Path], None],
    earlier: Callable[[], Any],
) -> int | None:
    """Plan a pH or temperature series; None when the plan file plans a ligand titration.

    *check_out* and *earlier* are ``cvfit plan``'s check of the output folder and its
    description of an earlier plan set: the folder is handled as a titration plan's.
    """
    from cvfit.errors import SimulationError
    from cvfit.plan.variables import load_variable_plan, simulate_variable_plan
    from cvfit.report.atomic import atomic_write_text

    plan = load_variable_plan(plan_path)
    if plan is None:
        return None
    from cvfit.report.atomic import output_set

    check_out(out_dir, plan_path)
    data = {"plan_file": str(plan_path), **plan.to_dict()}
    try:
        text = record_json(data) + "\n"
    except ValueError:
        raise InputError(
            "the plan's numbers overflow; give values a series can reach", source=str(plan_path)
        ) from None
    with output_set(out_dir, earlier=earlier()) as stage:
        atomic_write_text(stage / "plan.json", text)
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
            raise InputError.from_simulation(exc, key="--simulate") from None
        sys.stdout.write(f"simulated series written to {manifest} (try: cvfit run {manifest})\n")
    return 0
