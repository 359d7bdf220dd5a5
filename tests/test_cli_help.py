"""`cvfit run --help` points to the manifest reference and gives the exit codes the command
line really uses; the demo's default output folder is ignored by git."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import pytest

from cvfit.cli import EXIT_INPUT, EXIT_INTERNAL, EXIT_OK, main

ROOT = Path(__file__).resolve().parents[1]


def _help(capsys, *argv: str) -> str:
    with pytest.raises(SystemExit) as stop:
        main([*argv, "--help"])
    assert stop.value.code == 0
    return capsys.readouterr().out


def test_run_help_names_the_manifest_guide_and_the_exit_codes(capsys):
    text = _help(capsys, "run")
    assert "cvfit guide manifest" in text
    codes = {int(m.group(1)): m.group(2) for m in re.finditer(r"^  (\d)  (\w+)", text, re.M)}
    assert codes == {EXIT_OK: "success", EXIT_INTERNAL: "internal", EXIT_INPUT: "bad"}


def _toml_keys(docs: list[dict]) -> set[str]:
    """Every table and key name used in parsed TOML documents."""
    out: set[str] = set()

    def walk(value):
        if isinstance(value, dict):
            for k, v in value.items():
                out.add(k)
                walk(v)
        elif isinstance(value, list):
            for v in value:
                walk(v)

    for d in docs:
        walk(d)
    return out


def _toml_blocks(markdown: Path) -> list[dict]:
    blocks = re.findall(r"```toml\n(.*?)```", markdown.read_text(encoding="utf-8"), re.S)
    return [tomllib.loads(b) for b in blocks]


def test_run_help_lists_every_key_real_manifests_use(capsys):
    """The keys of the example and demo manifests and of the manifest guide's examples all
    appear in `cvfit run --help`, so the help is enough without the documents."""
    manifests = [*ROOT.glob("example_runs/**/*.toml"), *ROOT.glob("cvfit/data/demo/*.toml")]
    docs = [tomllib.loads(p.read_text(encoding="utf-8")) for p in manifests]
    docs = [d for d in docs if "series" in d]
    keys = _toml_keys(docs + _toml_blocks(ROOT / "docs" / "manifest.md"))
    assert len(docs) >= 4 and len(keys) > 25
    text = _help(capsys, "run")
    missing = sorted(k for k in keys if not re.search(rf"\b{re.escape(k)}\b", text))
    assert not missing


def test_plan_help_lists_every_key_the_plan_file_takes(capsys):
    """Every key the ligand-titration plan loader accepts, and every key of the plan
    guide's example files (pH and temperature plans too), is in `cvfit plan --help`."""
    from cvfit.plan.inputs import _SECTIONS

    keys = {k for section in _SECTIONS.values() for k in section}
    keys |= _toml_keys(_toml_blocks(ROOT / "docs" / "plan.md"))
    text = _help(capsys, "plan")
    missing = sorted(
        k
        for k in keys
        if not re.search(rf"\b{re.escape(k)}\b", text)
        and not (k.endswith("_range") and "<key>_range" in text)
    )
    assert not missing
    assert "docs/plan.md" not in text


def test_the_documents_are_installed_with_the_package(capsys):
    """`cvfit guide TOPIC` prints the documents from the package (cvfit/guide is docs/,
    listed as package data), so an installed cvfit carries them."""
    assert (ROOT / "cvfit" / "guide").resolve() == (ROOT / "docs").resolve()
    pyproject = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    assert "guide/*.md" in pyproject["tool"]["setuptools"]["package-data"]["cvfit"]
    assert main(["guide", "manifest"]) == EXIT_OK
    assert capsys.readouterr().out == (ROOT / "docs" / "manifest.md").read_text("utf-8")
    assert main(["guide"]) == EXIT_OK
    listed = capsys.readouterr().out
    assert all(t in listed for t in ("manifest", "plan", "methods", "flags"))
    with pytest.raises(SystemExit) as stop:
        main(["guide", "nonsense"])
    assert stop.value.code == EXIT_INPUT
    err = capsys.readouterr().err
    assert err.startswith("cvfit: error: <command line>:") and err.count("\n") == 1


def test_demo_help_says_the_data_are_simulated(capsys):
    text = " ".join(_help(capsys, "demo").split())
    assert "simulated_with.toml" in text


def test_demo_output_folder_is_ignored_by_git():
    lines = (ROOT / ".gitignore").read_text(encoding="utf-8").splitlines()
    assert "/cvfit_demo/" in lines


def test_readme_says_how_long_the_tests_take():
    readme = " ".join((ROOT / "README.md").read_text(encoding="utf-8").split())
    assert re.search(r"python -m pytest -q.*takes about \d+ s", readme)


def test_simulate_help_shows_out_as_required_and_states_every_default(capsys):
    """Issue 27 item 7: ``--out`` was shown as optional, and several defaults were not said."""
    import argparse

    from cvfit.cli import build_parser

    text = _help(capsys, "simulate")
    usage = " ".join(text.split("options:")[0].split())
    assert "--out FILE|DIR" in usage and "[--out FILE|DIR]" not in usage
    sub = next(a for a in build_parser()._actions if isinstance(a, argparse._SubParsersAction))
    silent = [
        a.option_strings[0]
        for a in sub.choices["simulate"]._actions
        if a.option_strings
        and a.default not in (None, False, argparse.SUPPRESS)
        and "default" not in (a.help or "")
    ]
    assert silent == []


def test_simulate_without_out_is_a_one_line_error(capsys):
    with pytest.raises(SystemExit) as stop:
        main(["simulate", "--e-half", "0.1"])
    assert stop.value.code == 2
    err = capsys.readouterr().err
    assert err.startswith("cvfit: error:") and "--out" in err and err.count("\n") == 1
