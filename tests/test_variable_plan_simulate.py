"""Planning and simulating pH and temperature series (``cvfit plan``, ``cvfit simulate``).

The planner's predicted standard errors are checked against the Fisher information
computed here by finite differences of the relation written out (Clark 1960, from memory),
and against the straight-line formula SE(b) = σ/√Σ(T − T̄)² (any regression text); the
simulator's files against the relation they were simulated at.
"""

from __future__ import annotations

import json
import math
import tomllib
from pathlib import Path

import jsonschema
import numpy as np
import pytest
from scipy.constants import R, physical_constants

from cvfit.cli import main
from cvfit.plan.variables import plan_pH_series, plan_temperature_series

F = physical_constants["Faraday constant"][0]
SCHEMAS = Path(__file__).resolve().parents[1] / "cvfit" / "schemas"


def relation(theta, pH, n_ox: int) -> np.ndarray:
    """E½(pH) with theta = (E0, pKa_ox…, pKa_red…), 25 °C, n = 1."""
    E0, ox, red = theta[0], theta[1 : 1 + n_ox], theta[1 + n_ox :]
    h = 10.0 ** -np.asarray(pH, dtype=float)

    def poly(pKa):
        total, beta = np.ones_like(h), 1.0
        for j, p in enumerate(pKa, start=1):
            beta *= 10.0**p
            total = total + beta * h**j
        return total

    return E0 + R * 298.15 / F * np.log(poly(red) / poly(ox))


def test_pH_plan_standard_errors_are_the_fisher_information(tmp_path):
    plan = plan_pH_series(pKa_ox=[4.0], pKa_red=[7.5], pH_min=1.0, pH_max=12.0, points=10,
                          E_half_stderr_V=3e-4)  # fmt: skip
    theta = np.array([0.0, 4.0, 7.5])
    for design in plan.designs.values():
        pH = np.array(design["values"])
        J = np.column_stack([
            (relation(theta + d, pH, 1) - relation(theta - d, pH, 1)) / 2e-6
            for d in np.eye(3) * 1e-6
        ])  # fmt: skip
        cov = np.linalg.inv(J.T @ J) * (3e-4) ** 2
        got = design["stderr"]
        assert got["pKa_ox_1"] == pytest.approx(math.sqrt(cov[1, 1]), rel=1e-5)
        assert got["pKa_red_1"] == pytest.approx(math.sqrt(cov[2, 2]), rel=1e-5)
    # the recommended values bracket both pKa by 2 units; Ds-optimal is the most precise
    rec = plan.designs["recommended"]["values"]
    assert min(rec) == pytest.approx(2.0) and max(rec) == pytest.approx(9.5)
    ds = plan.designs["Ds-optimal"]["stderr"]
    assert ds["pKa_ox_1"] * ds["pKa_red_1"] <= 1.0001 * min(
        d["stderr"]["pKa_ox_1"] * d["stderr"]["pKa_red_1"] for d in plan.designs.values()
    )


def test_temperature_plan_standard_errors():
    plan = plan_temperature_series(temperature_min_C=15, temperature_max_C=45, points=7,
                                   E_half_stderr_V=3e-4)  # fmt: skip
    T = np.arange(15.0, 45.1, 5.0)
    se = 3e-4 / math.sqrt(np.sum((T - T.mean()) ** 2))
    got = plan.designs["recommended"]["stderr"]
    assert got["dE_half_dT_V_K"] == pytest.approx(se, rel=1e-9)
    assert got["reaction_entropy_J_mol_K"] == pytest.approx(F * se, rel=1e-9)


def test_cvfit_plan_of_a_pH_series_writes_a_plan_and_refuses_bad_keys(tmp_path, capsys):
    plan = tmp_path / "ph.toml"
    plan.write_text(
        "[series]\nelectrons = 1\n[expect]\npKa_ox = [4.0]\npKa_red = [7.5]\n[design]\n"
        "pH_min = 1\npH_max = 12\npoints = 8\nE_half_stderr_V = 5e-4\n",
        encoding="utf-8",
    )
    assert main(["plan", str(plan), "--out", str(tmp_path / "o"), "--quiet"]) == 0
    data = json.loads((tmp_path / "o" / "plan.json").read_text(encoding="utf-8"))
    schema = json.loads((SCHEMAS / "variable_plan.schema.json").read_text(encoding="utf-8"))
    jsonschema.validate(data, schema)
    assert data["kind"] == "pH" and len(data["designs"]["recommended"]["values"]) == 8
    plan.write_text(plan.read_text(encoding="utf-8").replace("pH_max = 12", 'pH_max = "x"'),
                    encoding="utf-8")  # fmt: skip
    assert main(["plan", str(plan), "--out", str(tmp_path / "o2")]) == 2
    assert "design.pH_max" in capsys.readouterr().err
    # a misspelt key was ignored before (the plan then used nothing the user meant)
    text = plan.read_text(encoding="utf-8").replace('pH_max = "x"', "pH_max = 12")
    typos = {
        "design.proposed_ph": text + "proposed_ph = [2, 3]\n",
        "series.technique": text.replace("[series]", '[series]\ntechnique = "dpv"'),
    }
    for key, typo in typos.items():
        plan.write_text(typo, encoding="utf-8")
        assert main(["plan", str(plan), "--out", str(tmp_path / "o3")]) == 2
        err = capsys.readouterr().err
        section, name = key.split(".")
        assert err.count("\n") == 1 and f"unknown key '{name}' in [{section}]" in err, err


def test_cvfit_simulate_writes_a_pH_series_at_the_relation(tmp_path, capsys):
    out = tmp_path / "ph"
    argv = ["simulate", "--series", "--out", str(out), "--e-half", "0.1", "--pH-values",
            "2,4,6,8", "--pKa-ox", "4.0", "--pKa-red", "7.5", "--seed", "1"]  # fmt: skip
    assert main(argv) == 0
    manifest = tomllib.loads((out / "series.toml").read_text(encoding="utf-8"))
    assert manifest["fit"]["model"] == "proton"
    assert [e["pH"] for e in manifest["voltammogram"]] == [2.0, 4.0, 6.0, 8.0]
    # noise-free reversible files: the peak midpoint lies at the relation's E½ (plus the
    # switching effect, < 0.3 mV at 0.35 V beyond the wave)
    for e, pH in zip(manifest["voltammogram"], (2.0, 4.0, 6.0, 8.0), strict=True):
        t, E, i = np.loadtxt(out / e["file"], delimiter=",", skiprows=1, unpack=True)
        turn = int(np.argmin(E))
        mid = 0.5 * (E[:turn][np.argmin(i[:turn])] + E[turn:][np.argmax(i[turn:])])
        assert mid == pytest.approx(relation(np.array([0.1, 4.0, 7.5]), pH, 1), abs=1.5e-3)
    assert main(argv) == 2  # the files exist: not replaced without --force
    assert "--force" in capsys.readouterr().err


def test_cvfit_simulate_writes_a_temperature_series(tmp_path):
    out = tmp_path / "t"
    argv = ["simulate", "--series", "--out", str(out), "--e-half", "0.1", "--temperatures-C",
            "15,25,35", "--entropy", "96.485"]  # fmt: skip
    assert main(argv) == 0
    manifest = tomllib.loads((out / "series.toml").read_text(encoding="utf-8"))
    assert manifest["series"]["reference_at"] == "constant_temperature"
    assert [e["temperature_C"] for e in manifest["voltammogram"]] == [15.0, 25.0, 35.0]
    # ΔS°rc = 96.485 J/(mol K) is 1.000 mV/K (F from CODATA): E½ 10 mV apart per 10 K
    mids = []
    for e in manifest["voltammogram"]:
        t, E, i = np.loadtxt(out / e["file"], delimiter=",", skiprows=1, unpack=True)
        turn = int(np.argmin(E))
        mids.append(0.5 * (E[:turn][np.argmin(i[:turn])] + E[turn:][np.argmax(i[turn:])]))
    assert np.diff(mids) == pytest.approx([96.485 / F * 10] * 2, abs=1.5e-3)
