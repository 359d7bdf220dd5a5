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
from cvfit.record_json import record_json

_CMD = "<command line>"
#: Files ``cvfit plan`` writes into its output folder.
PLAN_OUTPUTS = {"json": "plan.json", "figure": "plan.png", "html": "plan.html"}
#: Shown under ``cvfit plan --help`` (the numbers are those of cvfit/plan/limits.py; a test
#: holds them equal, so the help loads no numerical library).
PLAN_EPILOG = """\
limits: points (and the concentrations of proposed_ligand_M) at most 100, at least one
  more than the constants; at most 8 stepwise constants per form; log10 constants and their
  ranges within +-100; delta_ligands 0.01 to 20; ligand concentrations 1e-12 to 20 mol/L;
  E_half_stderr_V 1e-7 to 1 V; temperature_C 0 to 100; electrons 1 to 10. The plan file
  and a pilot results.json are read only from regular files (at most 1 MiB and 64 MiB).

output: plan.json, plan.png and plan.html, written as one set with its record
  (.cvfit-set.json) and swapped in whole, like the outputs of cvfit run: a folder holding
  anything cvfit did not write is refused and left untouched.
"""


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "plan",
        help="recommend the ligand concentrations of a titration from rough constants",
        description="Experiment planning: predicted precision of the constants for the "
        "recommended, the log-spaced and your proposed ligand concentrations.",
        epilog=PLAN_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    from cvfit.cli.guide import plan_key_summary

    p.epilog_more = plan_key_summary
    p.add_argument("plan", help="the plan file (TOML; its keys are listed below)")
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


def earlier_plan_set():
    """A plan folder written before sets carried their record: the three names, and a
    plan.json that cvfit wrote."""
    from cvfit.report.ownership import EarlierSet, cvfit_json

    return EarlierSet(frozenset(PLAN_OUTPUTS.values()), cvfit_json(PLAN_OUTPUTS["json"]))


def _check_out(out_dir: Path, plan_path: Path) -> None:
    """Refuse an --out folder that is not cvfit's to replace, or that holds the plan file."""
    from cvfit.report.ownership import check_output_folder, resolved_output_folder

    check_output_folder(out_dir, earlier=earlier_plan_set())
    if resolved_output_folder(out_dir).resolve() in plan_path.resolve().parents:
        raise InputError(
            f"the plan file lies in the output folder {out_dir}, which cvfit replaces whole; "
            "choose another --out folder",
            source=_CMD,
            key="--out",
        )


def handle(args: argparse.Namespace) -> int:
    from cvfit.errors import SimulationError
    from cvfit.plan import load_plan, make_plan
    from cvfit.plan.html import render_plan_html
    from cvfit.plan.table import plan_table
    from cvfit.report.atomic import atomic_path, atomic_write_text, output_set

    plan_path = Path(args.plan)
    out_dir = Path(args.out) if args.out else plan_path.parent / f"{plan_path.stem}_plan"
    from cvfit.cli.plan_variables import handle_variable_plan

    status = handle_variable_plan(
        args, plan_path, out_dir, check_out=_check_out, earlier=earlier_plan_set
    )
    if status is not None:
        return status  # a pH or temperature series
    req = load_plan(plan_path)
    _check_out(out_dir, plan_path)
    result = make_plan(req)
    data = plan_json(result)

    from cvfit.plan.figure import plan_figure

    fig = plan_figure(result)
    with output_set(out_dir, earlier=earlier_plan_set()) as stage:
        png = stage / PLAN_OUTPUTS["figure"]
        with atomic_path(png) as tmp:
            fig.savefig(tmp, format="png")
        atomic_write_text(stage / PLAN_OUTPUTS["json"], data)
        html = render_plan_html(json.loads(data), png.read_bytes())
        atomic_write_text(stage / PLAN_OUTPUTS["html"], html)
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
            raise InputError.from_simulation(exc, key="--simulate") from None
        sys.stdout.write(f"simulated series written to {manifest} (try: cvfit run {manifest})\n")
    return 0


def plan_json(result) -> str:
    """plan.json's text; a number the plan could not make finite is an input error (the
    plan's values are beyond what can be computed), never Infinity or NaN in the file."""
    try:
        return record_json(result.to_dict()) + "\n"
    except ValueError:
        raise InputError(
            "the plan's numbers overflow (a constant, range or concentration too extreme to "
            "compute with); give values a titration can reach",
            source=result.request.source,
        ) from None
