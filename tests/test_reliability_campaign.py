"""A fast subset of the campaign of scripts/fuzz_plan_simulate.py, run as tests.

Each case is the real ``cvfit`` command in a subprocess with a timeout and a memory limit,
judged by the campaign's own rules: a bad input ends in one line and exit 2, a good one in
exit 0 with nothing on stderr, no file of the user's is lost, no CSV cell is a formula, and
a simulated series is one ``cvfit run`` accepts. The whole campaign (with 20 rounds of two
concurrent runs and Ctrl-C to pooled runs) runs in CI: ``python scripts/fuzz_plan_simulate.py``.
"""

from __future__ import annotations

import importlib
import sys
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
TIMEOUT_S = 60


sys.path.insert(0, str(ROOT / "scripts"))
campaign = importlib.import_module("fuzz_plan_simulate")

#: Some 40 commands, two at a time: 20-50 s on two cores.
pytestmark = pytest.mark.slow

#: Folders that are not cvfit's (item 1 of the round): refused in one line, every file, folder
#: and link of the user's left as it was (the campaign compares them before and after).
OWNERSHIP = {
    "out: a cvfit set and the user's hidden .results.json.backup": "'.results.json.backup'",
    "out: a user folder named report.html": "'report.html', a folder",
    "out: results.json a link to the user's file": "'results.json', a symbolic link",
    "out: report.html a link to the user's folder": "'report.html', a symbolic link",
    "out: a cvfit set whose report.html the user edited": "changed after cvfit wrote it",
    "out: a user file named like cvfit's marker": "not a record cvfit wrote",
    "out: an earlier version's set and a hidden file": "'.report.html.old'",
    "out: a symbolic link loop": "symbolic link loop",
    "demo: over the user's inputs/series.toml": "not recognisably cvfit's",
    "demo: over the user's simulated_with.toml": "simulated_with.toml",
    "plan: over the user's plan.json": "not recognisably cvfit's",
    "plan: over a user folder named plan.html": "'plan.html', a folder",
}
#: The planner (item 3 of the round): each hung, crashed or wrote Infinity before (more
#: pilot shapes in process: tests/test_plan_simulate_guards.py).
PLANNER = [
    "plan: a FIFO as the plan file",
    "plan: /dev/zero as the plan file",
    "plan: arrays nested 100 000 deep",
    "plan: from_results a FIFO",
    "plan: from_results JSON nested 100 000 deep",
    "plan: a UTF-8 BOM",
    "plan: points = 1 000",
    "plan: points = 10**9",
    "plan: E_half_stderr_V = 1e300",
    "plan: stepwise log10_beta_ox = [300, 600]",
    "pilot: one-element ci95",
    "pilot: E_half_stderr_V = Infinity",
]
#: The simulator (item 4): checked before anything is computed.
SIMULATOR = [
    "simulate: --cycles 10**12",
    "simulate: --diffusion-red 1e-300",
    "simulate: --out /proc/version --force",
    "simulate series: --ligand-M 1e-3,1e-3",
    "simulate series: --log-beta-ox=,,11.3",
]
#: Input errors that were internal errors (item 5), and the CSV cell (item 8).
INPUTS = [
    "input: a data file name of 256 bytes",
    "input: a path too long",
    "input: batch with a 256-byte name",
    "input: [internal_standard] E_half_V = 1e308",
    "csv: a data file named =1+2.csv",
]
#: Raw library warnings that reached stderr on a successful run (item 7): each case now
#: ends in exit 0 with an empty stderr, or in an input error.
WARNINGS = [
    "warning: internal standard window outside the data",
    "plan: ligand_max_M = 1e300",
    "plan: E_half_stderr_V = 1e-300",
    "plan: metal_total_M = 20 with ligand up to 0.1 M",
    "plan: stepwise [100, 100] with metal (the bounds)",
]
SUBSET = [*OWNERSHIP, *PLANNER, *SIMULATOR, *INPUTS, *WARNINGS]


@pytest.fixture(scope="module")
def outcomes(tmp_path_factory) -> dict:
    """Every case of the subset, run two at a time: name -> Outcome."""
    root = tmp_path_factory.mktemp("campaign")
    fixtures = campaign.make_fixtures(root)
    cases = {c.name: c for c in campaign.all_cases(fixtures)}
    assert set(SUBSET) <= set(cases), sorted(set(SUBSET) - set(cases))
    chosen = [cases[name] for name in SUBSET]
    with ThreadPoolExecutor(2) as pool:
        done = pool.map(lambda ic: campaign.run_case(ic[1], root, ic[0], TIMEOUT_S),
                        enumerate(chosen))  # fmt: skip
        return {o.case: o for o in done}


@pytest.mark.parametrize(("name", "reason"), OWNERSHIP.items())
def test_a_folder_that_is_not_cvfits_is_refused_and_left_as_it_was(outcomes, name, reason):
    outcome = outcomes[name]
    assert outcome.kind == "clean", (outcome.kind, outcome.detail)
    assert reason in outcome.detail, outcome.detail


@pytest.mark.parametrize("name", PLANNER + SIMULATOR + INPUTS)
def test_case_ends_as_it_should(outcomes, name):
    outcome = outcomes[name]
    assert outcome.kind in campaign.GOOD, (outcome.kind, outcome.detail)


@pytest.mark.parametrize("name", WARNINGS)
def test_no_raw_warning_on_stderr_at_exit_0(outcomes, name):
    """Exit 0 with an empty stderr ('accepted'), or a one-line input error ('clean')."""
    outcome = outcomes[name]
    assert outcome.kind in campaign.GOOD, (outcome.kind, outcome.detail)
