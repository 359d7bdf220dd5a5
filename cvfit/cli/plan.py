"""``cvfit plan PLAN.toml [--out DIR] [--simulate DIR]``: choose the ligand concentrations
of a titration before making the solutions (docs/plan.md).

Writes plan.json, plan.png and plan.html into DIR (default PLAN-STEM_plan beside the plan)
and prints the table. The planning code loads only when the command runs.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path

from cvfit.errors import InputError

_CMD = "<command line>"
#: Files ``cvfit plan`` writes into its output folder.
PLAN_OUTPUTS = {"json": "plan.json", "figure": "plan.png", "html": "plan.html"}


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "plan",
        help="recommend the ligand concentrations of a titration from rough constants",
        description="Experiment planning: predicted precision of the constants for the "
        "recommended, the log-spaced and your proposed ligand concentrations.",
    )
    p.add_argument("plan", help="the plan file (TOML; keys in docs/plan.md)")
    p.add_argument("--out", metavar="DIR", help="output folder (default: PLAN-STEM_plan)")
    p.add_argument(
        "--simulate",
        metavar="DIR",
        help="also write the recommended series as simulated voltammograms and a manifest "
        "into DIR, to try the plan with 'cvfit run'",
    )
    p.add_argument("--force", action="store_true", help="replace existing simulated files")
    p.add_argument("--quiet", action="store_true", help="print only where the plan went")
    p.set_defaults(handler=handle)


def handle(args: argparse.Namespace) -> int:
    from cvfit.errors import SimulationError
    from cvfit.plan import load_plan, make_plan
    from cvfit.plan.html import render_plan_html
    from cvfit.plan.table import plan_table
    from cvfit.report.atomic import atomic_path, atomic_write_text

    plan_path = Path(args.plan)
    out_dir = Path(args.out) if args.out else plan_path.parent / f"{plan_path.stem}_plan"
    from cvfit.cli.plan_variables import handle_variable_plan

    if (status := handle_variable_plan(args, plan_path, out_dir)) is not None:
        return status  # a pH or temperature series
    req = load_plan(plan_path)
    if out_dir.exists() and not out_dir.is_dir():
        raise InputError(f"--out {out_dir} exists and is not a folder", source=_CMD, key="--out")
    protected = {plan_path.resolve()}
    for name in PLAN_OUTPUTS.values():
        if (out_dir / name).resolve() in protected:
            raise InputError(
                f"writing {name} into {out_dir} would overwrite the plan file; choose another "
                "--out folder",
                source=_CMD,
                key="--out",
            )
    result = make_plan(req)
    data = result.to_dict()
    out_dir.mkdir(parents=True, exist_ok=True)

    from cvfit.plan.figure import plan_figure

    fig = plan_figure(result)
    png = out_dir / PLAN_OUTPUTS["figure"]
    with atomic_path(png) as tmp:
        fig.savefig(tmp, format="png")
    atomic_write_text(
        out_dir / PLAN_OUTPUTS["json"], json.dumps(data, indent=2, allow_nan=False) + "\n"
    )
    atomic_write_text(out_dir / PLAN_OUTPUTS["html"], render_plan_html(data, png.read_bytes()))
    if not args.quiet:
        sys.stdout.write(plan_table(result) + "\n\n")
    sys.stdout.write(f"plan written to {out_dir}/ ({', '.join(PLAN_OUTPUTS.values())})\n")
    if args.simulate:
        from cvfit.plan.simulate_plan import simulate_plan

        sim = Path(args.simulate)
        if sim.exists() and not sim.is_dir():
            raise InputError(
                f"--simulate {sim} exists and is not a folder", source=_CMD, key="--simulate"
            )
        try:
            manifest = simulate_plan(result, sim, overwrite=bool(args.force))
        except SimulationError as exc:
            hint = "; use --force to replace" if "exists" in str(exc) else ""
            raise InputError(f"{exc}{hint}", source=_CMD, key="--simulate") from None
        sys.stdout.write(f"simulated series written to {manifest} (try: cvfit run {manifest})\n")
    return 0
