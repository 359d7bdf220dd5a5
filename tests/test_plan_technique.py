"""``cvfit plan`` with ``[series] technique``: the planned series simulated by that
technique, at the noise that gives the plan's per-file E½ error, and run end to end."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from cvfit.cli import main
from cvfit.errors import InputError
from cvfit.plan.inputs import plan_from_mapping
from cvfit.plan.simulate_plan import noise_fraction_for
from cvfit.simulate.program_series import PROGRAM_DEFAULTS, simulate_technique_record

PLAN = """\
[series]
electrons = 1
technique = "{technique}"
E_half_free_V = -0.05

[expect]
log10_beta_ratio = 5.0
delta_ligands = 1.0

[design]
ligand_min_M = 0.005
ligand_max_M = 0.2
points = 5
E_half_stderr_V = 2e-4
"""


def test_a_dpv_plan_is_simulated_by_dpv_and_runs(tmp_path, capsys):
    plan = tmp_path / "plan.toml"
    plan.write_text(PLAN.format(technique="dpv"), encoding="utf-8")
    sim = tmp_path / "sim"
    assert main(["plan", str(plan), "--simulate", str(sim), "--quiet"]) == 0
    assert 'technique = "dpv"' in (sim / "series.toml").read_text(encoding="utf-8")
    assert main(["run", str(sim / "series.toml"), "--out", str(tmp_path / "o"), "--quiet"]) == 0
    capsys.readouterr()
    data = json.loads((tmp_path / "o" / "results.json").read_text(encoding="utf-8"))
    lo, hi = data["fit"]["log10_beta_ratio"]["ci95"]
    assert lo <= 5.0 <= hi  # the plan's expected constant
    used = [v["E_half_stderr_V"] for v in data["voltammograms"] if v["used_in_fit"]]
    assert all(v["technique"] == "dpv" for v in data["voltammograms"])
    assert float(np.median(used)) == pytest.approx(2e-4, rel=0.3)


@pytest.mark.parametrize("technique", ["swv", "wave"])
def test_the_noise_of_a_technique_gives_the_planned_E_half_error(technique):
    # records at the noise the plan would use for σ = 0.3 mV (40 SWV, 100 waves, whose E½
    # scatter has longer tails): the SD of their E½ about its mean within 30 % of 0.3 mV
    # (an SD from 40 values is known to ~11 %)
    from pulse_helpers import measure

    prog = dict(PROGRAM_DEFAULTS[technique])
    clean = simulate_technique_record(technique, 0.0, (0.3, -0.3), prog, {"electrons": 1}, None)
    clean = getattr(clean, "record", clean)
    frac = noise_fraction_for(3e-4, 1, technique)
    settings = {} if technique == "wave" else prog
    scale = float(np.max(np.abs(clean.current_A)))
    rng = np.random.default_rng(3)
    E = []
    for _ in range(40 if technique == "swv" else 100):
        i = clean.current_A + rng.normal(0.0, frac * scale, clean.n_points)
        m = measure(technique, clean.potential_V, i, time=clean.time_s,
                    series={"bulk_form": "ox"}, **settings)  # fmt: skip
        E.append(m.half_wave_estimate().E_half_V)
    sd = math.sqrt(float(np.var(E, ddof=1)))
    assert sd == pytest.approx(3e-4, rel=0.3)


def test_an_unknown_technique_is_a_one_line_error():
    doc = {"series": {"technique": "polarograph"}, "expect": {"log10_beta_ratio": 5.0,
           "delta_ligands": 1.0}, "design": {"ligand_min_M": 0.005, "ligand_max_M": 0.2,
           "points": 5, "E_half_stderr_V": 2e-4}}  # fmt: skip
    with pytest.raises(InputError) as err:
        plan_from_mapping(doc, "plan.toml")
    assert err.value.key == "series.technique" and "\n" not in str(err.value)
