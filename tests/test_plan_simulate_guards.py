"""The planner and the simulator check what they are given before they compute (in process;
the same cases through the command are in tests/test_reliability_campaign.py)."""

from __future__ import annotations

import json
import math
import re
from pathlib import Path
from types import SimpleNamespace

import pytest

from cvfit.cli import build_parser
from cvfit.cli.plan import PLAN_EPILOG, plan_json
from cvfit.cli.simulate import GRID_POINTS, MIN_TITRATION_FILES, SIMULATE_EPILOG
from cvfit.errors import InputError, SimulationError
from cvfit.plan import load_plan, make_plan
from cvfit.plan.limits import LIMITS, MAX_CONSTANTS, MAX_POINTS

ROOT = Path(__file__).resolve().parents[1]

PILOT = {
    "cvfit_version": "0",
    "fit": {
        "model": "lingane",
        "log10_beta_ratio": {"value": 4.0, "stderr": 0.1, "ci95": [3.8, 4.2]},
        "delta_ligands": {"value": 2.0, "stderr": 0.1, "ci95": [1.8, 2.2]},
    },
    "voltammograms": [{"used_in_fit": True, "E_half_stderr_V": 4e-4}] * 3,
}


def _plan_with_pilot(tmp_path: Path, pilot: object, *, raw: str | None = None) -> Path:
    (tmp_path / "pilot.json").write_text(
        raw if raw is not None else json.dumps(pilot), encoding="utf-8"
    )
    plan = tmp_path / "plan.toml"
    plan.write_text(
        "[design]\nligand_min_M = 1e-4\nligand_max_M = 0.1\npoints = 6\n"
        'from_results = "pilot.json"\n',
        encoding="utf-8",
    )
    return plan


def _edit(path: list, value: object) -> dict:
    data = json.loads(json.dumps(PILOT))
    node = data
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value
    return data


@pytest.mark.parametrize(
    "pilot",
    [
        _edit(["fit", "log10_beta_ratio", "ci95"], [1.0]),
        _edit(["fit", "log10_beta_ratio", "ci95"], 3.0),
        _edit(["fit", "delta_ligands", "ci95"], ["a", "b"]),
        _edit(["fit", "log10_beta_ratio"], 4.2),
        _edit(["voltammograms"], 5),
        _edit(["voltammograms"], [1, 2, 3]),
        _edit(["fit"], {"model": "stepwise", "fitted_state": "ox", "log10_beta": [3.0, 5.0]}),
        _edit(["fit"], {"model": "stepwise", "log10_beta": [{"value": 3.0, "ci95": 7}]}),
        _edit(
            ["fit"], {"model": "stepwise", "log10_beta": [{"value": 3}], "fixed_log10_beta": 2}
        ),  # fmt: skip
        [PILOT],
    ],
)
def test_a_malformed_pilot_is_one_input_error(tmp_path, pilot):
    with pytest.raises(InputError) as err:
        load_plan(_plan_with_pilot(tmp_path, pilot))
    assert "\n" not in str(err.value) and "design.from_results" in str(err.value)


@pytest.mark.parametrize("value", ["Infinity", "NaN", "1e999"])
def test_a_pilot_noise_of_infinity_is_refused(tmp_path, value):
    text = json.dumps(PILOT).replace('"E_half_stderr_V": 0.0004', f'"E_half_stderr_V": {value}')
    with pytest.raises(InputError):
        load_plan(_plan_with_pilot(tmp_path, None, raw=text))


def test_the_pilot_as_cvfit_writes_it_is_read(tmp_path):
    req = load_plan(_plan_with_pilot(tmp_path, PILOT))
    assert req.values == (4.0, 2.0) and req.ranges == ((3.8, 4.2), (1.8, 2.2))
    assert req.E_half_stderr_V == 4e-4


def test_a_plan_file_with_a_byte_order_mark_is_read(tmp_path):
    plan = tmp_path / "plan.toml"
    text = "[expect]\nlog10_beta_ratio = 4.0\ndelta_ligands = 2\n[design]\nligand_min_M = 1e-4\n"
    plan.write_bytes(b"\xef\xbb\xbf" + (text + "ligand_max_M = 0.1\npoints = 4\n"
                                       "E_half_stderr_V = 5e-4\n").encode())  # fmt: skip
    assert load_plan(plan).points == 4


def test_plan_json_never_holds_infinity(tmp_path):
    plan = tmp_path / "plan.toml"
    plan.write_text(
        "[expect]\nlog10_beta_ratio = 4.0\ndelta_ligands = 2\n[design]\nligand_min_M = 1e-4\n"
        "ligand_max_M = 0.1\npoints = 4\nE_half_stderr_V = 5e-4\n",
        encoding="utf-8",
    )
    result = make_plan(load_plan(plan))
    text = plan_json(result)
    assert "Infinity" not in text and "NaN" not in text
    broken = SimpleNamespace(to_dict=lambda: {"x": math.inf}, request=result.request)
    with pytest.raises(InputError, match="overflow"):
        plan_json(broken)


def test_the_limits_in_the_help_and_the_docs_are_the_codes():
    docs = (ROOT / "docs" / "plan.md").read_text(encoding="utf-8")
    assert f"to **{MAX_POINTS}**" in docs and f"at most {MAX_POINTS}" in PLAN_EPILOG
    assert f"at most {MAX_CONSTANTS} stepwise" in PLAN_EPILOG
    assert LIMITS["design.E_half_stderr_V"][:2] == (1e-7, 1.0)
    assert "E_half_stderr_V 1e-7 to 1 V" in PLAN_EPILOG
    from cvfit.io.manifest import MAX_COMPLEXES_LIMIT

    assert MAX_CONSTANTS == MAX_COMPLEXES_LIMIT
    help_text = build_parser()._subparsers._group_actions[0].choices["plan"].format_help()
    assert "at most 100" in help_text


def test_the_simulators_limits_in_its_help_are_the_codes():
    from cvfit.pipeline.series import MIN_FIT_POINTS
    from cvfit.simulate.voltammogram import MAX_GRID_POINTS

    assert GRID_POINTS == MAX_GRID_POINTS and MIN_TITRATION_FILES == MIN_FIT_POINTS
    assert re.search(r"at most\s+1,000 points", SIMULATE_EPILOG)


def test_the_simulator_refuses_a_long_path_before_building_it():
    from cvfit.simulate.voltammogram import build_waveform

    # it built the path of all 10^12 cycles first (a MemoryError after 20-51 s)
    with pytest.raises(SimulationError, match="points asked for"):
        build_waveform(0.4, -0.2, cycles=10**12, step_V=0.001, scan_rate_V_s=0.1)


def test_the_simulator_refuses_a_grid_too_large_before_building_it():
    from cvfit.simulate.voltammogram import simulate_cv

    with pytest.raises(SimulationError, match="space grid would need"):
        simulate_cv(E_half_V=0.1, start_V=0.4, switch_V=-0.2, D_red_cm2_s=1e-300)
