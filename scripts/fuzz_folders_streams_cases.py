"""More cases of scripts/fuzz_plan_simulate.py: output folders that are not cvfit's, input
paths, streams and CSV cells; and the list of every case of the campaign."""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import sys
from collections.abc import Callable
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from fuzz_inputs import copy_base, edit_manifest, run_args  # noqa: E402
from fuzz_plan_simulate_cases import (  # noqa: E402
    CVFIT,
    Case,
    _plan,
    _plan_args,
    plan_cases,
    simulate_cases,
)

# --- output folders: ownership -------------------------------------------------------------


def ownership_cases(base: Path, earlier: Path) -> list[Case]:
    def run_into(
        name: str, prepare: Callable[[Path], None], expect="error", *, replace=()
    ) -> Case:
        def build(folder: Path) -> list[str]:
            manifest = copy_base(base, folder)
            prepare(folder)
            return run_args(manifest, folder / "out")

        return Case(f"out: {name}", build, expect=expect, replaceable=replace)

    def earlier_set(folder: Path) -> None:
        shutil.copytree(earlier, folder / "out", symlinks=True)

    def hidden_backup(folder: Path) -> None:
        earlier_set(folder)
        (folder / "out" / ".results.json.backup").write_text("my backup", encoding="utf-8")

    def folder_named_report(folder: Path) -> None:
        (folder / "out" / "report.html").mkdir(parents=True)
        (folder / "out" / "report.html" / "notes.txt").write_text("notes", encoding="utf-8")

    def link_to_mine(folder: Path) -> None:
        (folder / "mine.txt").write_text("precious", encoding="utf-8")
        (folder / "out").mkdir()
        os.symlink(folder / "mine.txt", folder / "out" / "results.json")

    def link_to_folder(folder: Path) -> None:
        (folder / "keep").mkdir()
        (folder / "keep" / "a.txt").write_text("a", encoding="utf-8")
        (folder / "out").mkdir()
        os.symlink(folder / "keep", folder / "out" / "report.html")

    def edited_report(folder: Path) -> None:
        earlier_set(folder)
        with open(folder / "out" / "report.html", "a", encoding="utf-8") as fh:
            fh.write("<!-- my annotations -->")

    def forged_marker(folder: Path) -> None:
        (folder / "out").mkdir()
        (folder / "out" / ".cvfit-set.json").write_text("my notes, not JSON", encoding="utf-8")

    def legacy(folder: Path) -> None:
        earlier_set(folder)
        for p in (folder / "out").iterdir():
            if p.name.startswith("."):
                p.unlink()

    def legacy_with_hidden(folder: Path) -> None:
        legacy(folder)
        (folder / "out" / ".report.html.old").write_text("mine", encoding="utf-8")

    def loop_out(folder: Path) -> list[str]:
        manifest = copy_base(base, folder)
        os.symlink("loop_b", folder / "loop_a")
        os.symlink("loop_a", folder / "loop_b")
        return run_args(manifest, folder / "loop_a")

    def demo_over_inputs(folder: Path) -> list[str]:
        (folder / "d" / "inputs").mkdir(parents=True)
        (folder / "d" / "inputs" / "series.toml").write_text("# my manifest\n", encoding="utf-8")
        return ["demo", "--out", str(folder / "d"), "--quiet"]

    def demo_over_truth(folder: Path) -> list[str]:
        (folder / "d").mkdir(parents=True)
        (folder / "d" / "simulated_with.toml").write_text("# mine\n", encoding="utf-8")
        return ["demo", "--out", str(folder / "d"), "--quiet"]

    def demo_twice(folder: Path) -> list[str]:
        folder.mkdir(parents=True)
        subprocess.run([*CVFIT, "demo", "--out", str(folder / "d"), "--quiet"], check=True,
                       capture_output=True, cwd=folder)  # fmt: skip
        return ["demo", "--out", str(folder / "d"), "--quiet"]

    def plan_over(make: Callable[[Path], None]) -> Callable[[Path], list[str]]:
        def build(folder: Path) -> list[str]:
            p = _plan(folder)
            (folder / "planout").mkdir()
            make(folder / "planout")
            return _plan_args(p, folder)

        return build

    def plan_twice(folder: Path) -> list[str]:
        p = _plan(folder)
        subprocess.run([*CVFIT, *_plan_args(p, folder)], check=True, capture_output=True,
                       cwd=folder)  # fmt: skip
        return _plan_args(p, folder)

    def users_plan_json(out: Path) -> None:
        (out / "plan.json").write_text('{"mine": true}', encoding="utf-8")

    def plan_folder_html(out: Path) -> None:
        (out / "plan.html").mkdir()
        (out / "plan.html" / "n.txt").write_text("n", encoding="utf-8")

    return [
        run_into("a cvfit set and the user's hidden .results.json.backup", hidden_backup),
        run_into("a user folder named report.html", folder_named_report),
        run_into("results.json a link to the user's file", link_to_mine),
        run_into("report.html a link to the user's folder", link_to_folder),
        run_into("a cvfit set whose report.html the user edited", edited_report),
        run_into("a user file named like cvfit's marker", forged_marker),
        run_into("an earlier cvfit set", earlier_set, expect="ok", replace=("out",)),
        run_into("an earlier version's set (no marker)", legacy, expect="ok", replace=("out",)),
        run_into("an earlier version's set and a hidden file", legacy_with_hidden),
        Case("out: a symbolic link loop", loop_out),
        Case("demo: over the user's inputs/series.toml", demo_over_inputs),
        Case("demo: over the user's simulated_with.toml", demo_over_truth),
        Case("demo: twice into one folder", demo_twice, expect="ok", replaceable=("d",)),
        Case("plan: over the user's plan.json", plan_over(users_plan_json)),
        Case("plan: over a user folder named plan.html", plan_over(plan_folder_html)),
        Case("plan: twice into one folder", plan_twice, expect="ok", replaceable=("planout",)),
    ]


# --- input errors, streams, warnings, CSV cells ---------------------------------------------


def input_cases(base: Path, standard: Path) -> list[Case]:
    def renamed(name: str, new: str) -> Case:
        def build(folder: Path) -> list[str]:
            manifest = copy_base(base, folder)
            edit_manifest(manifest, 'file = "titr_02.csv"', f'file = "{new}"')
            return run_args(manifest, folder / "out")

        return Case(f"input: {name}", build)

    def batch_long_name(folder: Path) -> list[str]:
        good = copy_base(base, folder / "good")
        bad = copy_base(base, folder / "bad")
        edit_manifest(bad, 'file = "titr_02.csv"', f'file = "{"a" * 252}.csv"')
        return ["run", str(good), str(bad), "--out", str(folder / "out"), "--jobs", "1"]

    def standard_edit(name: str, old: str, new: str, expect="error") -> Case:
        def build(folder: Path) -> list[str]:
            manifest = copy_base(standard, folder)
            text = manifest.read_text(encoding="utf-8")
            manifest.write_text(re.sub(old, new, text, count=1, flags=re.M), encoding="utf-8")
            return run_args(manifest, folder / "out")

        return Case(name, build, expect=expect)

    return [
        renamed("a data file name of 256 bytes", "a" * 252 + ".csv"),
        renamed("a path too long", "/".join(["d" * 200] * 25) + "/x.csv"),
        Case("input: batch with a 256-byte name", batch_long_name, batch=True),
        standard_edit(
            "input: [internal_standard] E_half_V = 1e308", r"^E_half_V = .*$", "E_half_V = 1e308"
        ),
        standard_edit(
            "warning: internal standard window outside the data",
            r"^window_V = .*$",
            "window_V = [5.0, 5.2]",
            expect="ok",
        ),
    ]


def stream_cases(base: Path) -> list[Case]:
    def run_base(folder: Path) -> list[str]:
        return run_args(copy_base(base, folder), folder / "out")[:-2] + ["--jobs", "1"]

    def loud(folder: Path) -> list[str]:
        return [a for a in run_base(folder) if a != "--quiet"]

    def no_args(folder: Path) -> list[str]:
        folder.mkdir(parents=True)
        return []

    def many_jobs(folder: Path) -> list[str]:
        args = run_base(folder)
        return args[: args.index("--jobs")] + ["--jobs", "64"]

    def formula_name(folder: Path) -> list[str]:
        manifest = copy_base(base, folder)
        os.rename(folder / "titr_02.csv", folder / "=1+2.csv")
        edit_manifest(manifest, 'file = "titr_02.csv"', 'file = "=1+2.csv"')
        edit_manifest(manifest, 'title = "simulated titration"', 'title = "@SUM(A1)"')
        return run_args(manifest, folder / "out")

    return [
        Case("stream: cp1252 terminal", loud, expect="ok", env={"PYTHONIOENCODING": "cp1252"}),
        Case("stream: ascii terminal", loud, expect="ok", env={"PYTHONIOENCODING": "ascii"}),
        Case("stream: stdout closed", loud, expect="ok", stdout="closed"),
        Case("stream: stdout reader gone (| head -c0)", loud, expect="ok", stdout="broken"),
        Case("stream: no arguments", no_args),
        Case("stream: --jobs 64", many_jobs, expect="ok"),
        Case("csv: a data file named =1+2.csv", formula_name, expect="ok"),
    ]


def all_cases(fixtures: dict) -> list[Case]:
    return (
        plan_cases(fixtures["pilot"])
        + simulate_cases()
        + ownership_cases(fixtures["base"], fixtures["earlier"])
        + input_cases(fixtures["base"], fixtures["standard"])
        + stream_cases(fixtures["base"])
    )
