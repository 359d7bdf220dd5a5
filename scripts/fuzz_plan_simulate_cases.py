"""The cases of scripts/fuzz_plan_simulate.py for the planner and the simulator (the others:
scripts/fuzz_folders_streams_cases.py). Each builds its files in a fresh folder and returns the
arguments of ``cvfit`` to run there; the runner judges how the command ends."""

from __future__ import annotations

import json
import os
import sys
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

CVFIT = [sys.executable, "-m", "cvfit"]

PLAN = """\
[series]
electrons = 1
[expect]
log10_beta_ratio = 4.0
delta_ligands = 2
[design]
ligand_min_M = 1e-4
ligand_max_M = 0.1
points = 6
E_half_stderr_V = 5e-4
"""
PLAN_STEPWISE = """\
[series]
electrons = 1
[expect]
log10_beta_ox = [3.0, 5.5]
[design]
ligand_min_M = 1e-4
ligand_max_M = 0.3
points = 6
E_half_stderr_V = 5e-4
"""
SIM = ["simulate", "--e-half", "0.1"]
SERIES = [*SIM, "--series", "--ligand-M", "0,1e-3,1e-2,0.1", "--log-beta-ox", "4"]


@dataclass
class Case:
    """A case: its name, a builder (folder -> arguments after ``cvfit``), what is right."""

    name: str
    build: Callable[[Path], list[str]]
    expect: str = "error"  # "error", "ok" or "either"
    env: dict[str, str] = field(default_factory=dict)
    stdout: str = "pipe"  # "pipe", "closed" (fd 1 closed) or "broken" (reader gone)
    replaceable: tuple[str, ...] = ()  # folders (relative) cvfit may replace whole
    batch: bool = False


def _plan(folder: Path, text: str = PLAN, *, name: str = "plan.toml") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    p = folder / name
    p.write_text(text, encoding="utf-8")
    return p


def _plan_args(p: Path | str, folder: Path) -> list[str]:
    return ["plan", str(p), "--out", str(folder / "planout"), "--quiet"]


def plan_cases(pilot: dict) -> list[Case]:
    def edited(name: str, old: str, new: str, *, text: str = PLAN, expect="error") -> Case:
        def build(folder: Path) -> list[str]:
            assert old in text, old
            return _plan_args(_plan(folder, text.replace(old, new, 1)), folder)

        return Case(f"plan: {name}", build, expect=expect)

    def special(name: str, make: Callable[[Path], str]) -> Case:
        def build(folder: Path) -> list[str]:
            folder.mkdir(parents=True)
            return _plan_args(make(folder), folder)

        return Case(f"plan: {name}", build)

    def with_pilot(name: str, mutate: Callable[[dict], object], expect="error") -> Case:
        def build(folder: Path) -> list[str]:
            folder.mkdir(parents=True)
            data = json.loads(json.dumps(pilot))
            doc = mutate(data)
            text = doc if isinstance(doc, str) else json.dumps(data if doc is None else doc)
            (folder / "pilot.json").write_text(text, encoding="utf-8")
            body = "[design]\nligand_min_M = 1e-4\nligand_max_M = 0.1\npoints = 6\n"
            return _plan_args(_plan(folder, body + 'from_results = "pilot.json"\n'), folder)

        return Case(f"pilot: {name}", build, expect=expect)

    def from_results(name: str, make: Callable[[Path], str]) -> Case:
        def build(folder: Path) -> list[str]:
            folder.mkdir(parents=True)
            target = make(folder)
            text = PLAN.replace("E_half_stderr_V = 5e-4", f"from_results = {json.dumps(target)}")
            return _plan_args(_plan(folder, text), folder)

        return Case(f"plan: from_results {name}", build)

    def fifo(folder: Path) -> str:
        os.mkfifo(folder / "plan.toml")
        return str(folder / "plan.toml")

    def fifo_json(folder: Path) -> str:
        os.mkfifo(folder / "pilot.json")
        return "pilot.json"

    def loop(folder: Path) -> str:
        os.symlink("b.toml", folder / "a.toml")
        os.symlink("a.toml", folder / "b.toml")
        return str(folder / "a.toml")

    def deep_toml(folder: Path) -> str:
        text = PLAN + "[series.x]\n" + "y = " + "[" * 100_000 + "]" * 100_000 + "\n"
        return str(_plan(folder, text.replace("[series]\n", "[series]\n", 1)))

    def deep_inline(folder: Path) -> str:
        return str(_plan(folder, PLAN + "title2 = " + "{a = " * 3_000 + "1" + "}" * 3_000))

    def deep_json(folder: Path) -> str:
        (folder / "pilot.json").write_text("[" * 100_000 + "]" * 100_000, encoding="utf-8")
        return "pilot.json"

    def bom(folder: Path) -> list[str]:
        p = folder / "plan.toml"
        folder.mkdir(parents=True)
        p.write_bytes(b"\xef\xbb\xbf" + PLAN.encode())
        return _plan_args(p, folder)

    def no_fit_records(d: dict) -> None:
        d["fit"]["log10_beta_ratio"] = 4.2

    def ci_one(d: dict) -> None:
        d["fit"]["log10_beta_ratio"]["ci95"] = [1.0]

    def ci_number(d: dict) -> None:
        d["fit"]["log10_beta_ratio"]["ci95"] = 3.0

    def ci_text(d: dict) -> None:
        d["fit"]["delta_ligands"]["ci95"] = ["a", "b"]

    def vg_number(d: dict) -> None:
        d["voltammograms"] = 5

    def vg_numbers(d: dict) -> None:
        d["voltammograms"] = [1, 2, 3]

    def stderr_inf(d: dict) -> str:
        for v in d["voltammograms"]:
            v["E_half_stderr_V"] = 1e999
        return json.dumps(d)

    def value_inf(d: dict) -> str:
        d["fit"]["log10_beta_ratio"]["value"] = 1e999
        return json.dumps(d)

    def value_nan(d: dict) -> str:
        d["fit"]["delta_ligands"]["value"] = float("nan")
        return json.dumps(d)

    def value_text(d: dict) -> None:
        d["fit"]["delta_ligands"]["value"] = "two"

    def stepwise_numbers(d: dict) -> None:
        d["fit"] = {"model": "stepwise", "log10_beta": [3.0, 5.0], "fitted_state": "ox"}

    def stepwise_ci(d: dict) -> None:
        d["fit"] = {
            "model": "stepwise",
            "fitted_state": "ox",
            "log10_beta": [{"value": 3.0, "ci95": 7}, {"value": 5.0, "ci95": [4]}],
        }

    def fit_list(d: dict) -> None:
        d["fit"] = [1, 2]

    def top_list(d: dict) -> object:
        return [d]

    big = "1e300"
    return [
        special("a FIFO as the plan file", fifo),
        special("/dev/zero as the plan file", lambda f: "/dev/zero"),
        special("a folder as the plan file", lambda f: str(f)),
        special("a symbolic link loop", loop),
        special("arrays nested 100 000 deep", deep_toml),
        special("inline tables nested 3 000 deep", deep_inline),
        from_results("a FIFO", fifo_json),
        from_results("/dev/zero", lambda f: "/dev/zero"),
        from_results("a folder", lambda f: "."),
        from_results("JSON nested 100 000 deep", deep_json),
        Case("plan: a UTF-8 BOM", bom, expect="ok"),
        edited("points = 1 000", "points = 6", "points = 1000"),
        edited("points = 10**9", "points = 6", "points = 1000000000"),
        edited("points = 2**70", "points = 6", "points = 1180591620717411303424"),
        edited("ligand_max_M = 1e300", "ligand_max_M = 0.1", f"ligand_max_M = {big}"),
        edited("ligand_min_M = 1e-300", "ligand_min_M = 1e-4", "ligand_min_M = 1e-300"),
        edited("E_half_stderr_V = 1e300", "E_half_stderr_V = 5e-4", f"E_half_stderr_V = {big}"),
        edited("E_half_stderr_V = 1e-300", "E_half_stderr_V = 5e-4", "E_half_stderr_V = 1e-300"),
        edited("log10_beta_ratio = 1e300", "log10_beta_ratio = 4.0", f"log10_beta_ratio = {big}"),
        edited("delta_ligands = 1e300", "delta_ligands = 2", f"delta_ligands = {big}"),
        edited("delta_ligands = 1e-300", "delta_ligands = 2", "delta_ligands = 1e-300"),
        edited("temperature_C = 1e300", "electrons = 1", f"electrons = 1\ntemperature_C = {big}"),
        edited("metal_total_M = 1e300", "electrons = 1", f"electrons = 1\nmetal_total_M = {big}"),
        edited("electrons = 10**15", "electrons = 1", "electrons = 1000000000000000"),
        edited(
            "target_stderr_log10 = 1e-300",
            "points = 6",
            "points = 6\ntarget_stderr_log10 = 1e-300",
        ),
        edited(
            "ratio range +-1e300",
            "delta_ligands = 2",
            f"delta_ligands = 2\nlog10_beta_ratio_range = [-{big}, {big}]",
        ),
        edited(
            "stepwise log10_beta_ox = [300, 600]",
            "[3.0, 5.5]",
            "[300.0, 600.0]",
            text=PLAN_STEPWISE,
        ),
        edited(
            "stepwise log10_beta_ox = [-300, 5]", "[3.0, 5.5]", "[-300.0, 5.0]", text=PLAN_STEPWISE
        ),
        edited(
            "stepwise 60 constants",
            "[3.0, 5.5]",
            str([float(k) for k in range(60)]),
            text=PLAN_STEPWISE,
        ),
        edited(
            "stepwise ligand 1e-12..1e3",
            "ligand_min_M = 1e-4\nligand_max_M = 0.3",
            "ligand_min_M = 1e-12\nligand_max_M = 1e3",
            text=PLAN_STEPWISE,
            expect="either",
        ),
        edited(
            "lingane ligand 1e-15..1e2",
            "ligand_min_M = 1e-4\nligand_max_M = 0.1",
            "ligand_min_M = 1e-15\nligand_max_M = 1e2",
            expect="either",
        ),
        edited(
            "proposed 100 000 points",
            "points = 6",
            "points = 6\nproposed_ligand_M = [" + ", ".join(["0.01"] * 100_000) + "]",
        ),
        edited(
            "proposed 1e300", "points = 6", f"points = 6\nproposed_ligand_M = [1e-3, 1e-2, {big}]"
        ),
        edited(
            "E_half_free_V = 1e300 (unused)",
            "electrons = 1",
            f"electrons = 1\nE_half_free_V = {big}",
        ),
        edited(
            "log10_beta_ratio = 100 (the bound)",
            "log10_beta_ratio = 4.0",
            "log10_beta_ratio = 100.0",
            expect="either",
        ),
        edited(
            "ligand 1e-12..20, noise 1e-7 V (the bounds)",
            "ligand_min_M = 1e-4\nligand_max_M = 0.1\npoints = 6\nE_half_stderr_V = 5e-4",
            "ligand_min_M = 1e-12\nligand_max_M = 20\npoints = 6\nE_half_stderr_V = 1e-7",
            expect="either",
        ),
        edited(
            "stepwise [100, 100] with metal (the bounds)",
            "[series]\nelectrons = 1",
            "[series]\nelectrons = 1\nmetal_total_M = 1e-3",
            text=PLAN_STEPWISE.replace("[3.0, 5.5]", "[100.0, 100.0]"),
            expect="either",
        ),
        edited(
            "metal_total_M = 20 with ligand up to 0.1 M",
            "electrons = 1",
            "electrons = 1\nmetal_total_M = 20",
            expect="either",
        ),
        with_pilot("fit value a record of numbers", no_fit_records),
        with_pilot("one-element ci95", ci_one),
        with_pilot("numeric ci95", ci_number),
        with_pilot("ci95 of text", ci_text),
        with_pilot("numeric voltammograms", vg_number),
        with_pilot("voltammograms as numbers", vg_numbers),
        with_pilot("E_half_stderr_V = Infinity", stderr_inf),
        with_pilot("value Infinity", value_inf),
        with_pilot("value NaN", value_nan),
        with_pilot("value text", value_text),
        with_pilot("stepwise constants as numbers", stepwise_numbers),
        with_pilot("stepwise ci95 numeric and one-element", stepwise_ci),
        with_pilot("fit a list", fit_list),
        with_pilot("the document a list", top_list),
        with_pilot("the pilot as it is", lambda d: None, expect="ok"),
    ]


# --- simulator cases ----------------------------------------------------------------------


def simulate_cases() -> list[Case]:
    def sim(name: str, *extra: str, series: bool = False, expect="error", force=False) -> Case:
        def build(folder: Path) -> list[str]:
            folder.mkdir(parents=True)
            out = folder / ("sim" if series else "sim.csv")
            base = SERIES if series else SIM
            return [*base, *extra, "--out", str(out), *(["--force"] if force else [])]

        return Case(f"simulate: {name}", build, expect=expect)

    def proc_out(folder: Path) -> list[str]:
        folder.mkdir(parents=True)
        return [*SIM, "--out", "/proc/version", "--force"]

    def series_args(*changes: tuple[str, str]) -> list[str]:
        args = list(SERIES)
        for flag, value in changes:
            if flag in args:
                args[args.index(flag) + 1] = value
            else:
                args += [flag, value]
        return args

    def series(name: str, *changes: tuple[str, str], expect="error") -> Case:
        def build(folder: Path) -> list[str]:
            folder.mkdir(parents=True)
            return [*series_args(*changes), "--out", str(folder / "sim")]

        return Case(f"simulate series: {name}", build, expect=expect)

    return [
        sim("--cycles 10**12", "--cycles", "1000000000000"),
        sim("--cycles 10**6", "--cycles", "1000000"),
        sim("--diffusion-red 1e-300", "--diffusion-red", "1e-300"),
        sim("--diffusion 1e300", "--diffusion", "1e300"),
        sim("--diffusion 1e-300", "--diffusion", "1e-300"),
        sim("--step 1e-12", "--step", "1e-12"),
        sim("--scan-rate 1e-300", "--scan-rate", "1e-300"),
        sim("--scan-rate 1e300", "--scan-rate", "1e300", expect="either"),
        sim("--k0 1e-300", "--k0", "1e-300", expect="either"),
        sim("--resistance 1e300", "--resistance", "1e300", expect="either"),
        sim("--cdl 1e300", "--cdl", "1e300", expect="either"),
        sim("--area 1e300", "--area", "1e300", expect="either"),
        sim("--concentration 1e-300", "--concentration", "1e-300", expect="either"),
        sim("--noise 1e300", "--noise", "1e300", expect="either"),
        sim("--temperature-C 1e300", "--temperature-C", "1e300"),
        sim("--electrons 10**15", "--electrons", "1000000000000000"),
        sim("--start 1e300", "--start", "1e300"),
        sim("--switch=1e300", "--switch=1e300"),
        sim("--seed 10**30", "--seed", "1" + "0" * 30, expect="either"),
        sim("--slope 1e300", "--slope", "1e300", expect="either"),
        Case("simulate: --out /proc/version --force", proc_out),
        sim("--out a folder name that exists", force=True, expect="ok"),
        series("--ligand-M 0,0,0", ("--ligand-M", "0,0,0"), expect="either"),
        series("--ligand-M 0", ("--ligand-M", "0"), expect="either"),
        series("--ligand-M 1e-3,1e-3", ("--ligand-M", "1e-3,1e-3")),
        series("--ligand-M 1e300", ("--ligand-M", "0,1e300")),
        series("--ligand-M=,,0.1", ("--ligand-M", ",,0.1")),
        series("--log-beta-ox=,,11.3", ("--log-beta-ox", ",,11.3")),
        series("--log-beta-ox 1e300", ("--log-beta-ox", "1e300")),
        series("--log-beta-ox 400", ("--log-beta-ox", "400")),
        series("--log-beta-red 2,,3", ("--log-beta-red", "2,,3")),
        series("--ligand-M with 20 000 items", ("--ligand-M", ",".join(["0.01"] * 20_000))),
        series("--standard-e-half 1e300", ("--standard-e-half", "1e300")),
        series(
            "--drift-step 1e300",
            ("--standard-e-half", "0.6"),
            ("--start", "0.9"),
            ("--drift-step", "1e300"),
        ),
        series("--title of 100 kB", ("--title", "t" * 100_000), expect="either"),
        series("a good series", expect="ok"),
    ]
