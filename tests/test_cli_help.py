"""`cvfit run --help` points to the manifest reference and gives the exit codes the command
line really uses; the demo's default output folder is ignored by git."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from cvfit.cli import EXIT_INPUT, EXIT_INTERNAL, EXIT_OK, main

ROOT = Path(__file__).resolve().parents[1]


def _help(capsys, *argv: str) -> str:
    with pytest.raises(SystemExit) as stop:
        main([*argv, "--help"])
    assert stop.value.code == 0
    return capsys.readouterr().out


def test_run_help_names_the_manifest_reference_and_the_exit_codes(capsys):
    text = _help(capsys, "run")
    assert "docs/manifest.md" in text
    assert (ROOT / "docs" / "manifest.md").is_file()
    codes = {int(m.group(1)): m.group(2) for m in re.finditer(r"^  (\d)  (\w+)", text, re.M)}
    assert codes == {EXIT_OK: "success", EXIT_INTERNAL: "internal", EXIT_INPUT: "bad"}


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
