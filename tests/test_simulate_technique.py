"""``cvfit simulate --technique dpv|swv|wave``: one record, a series that ``cvfit run``
analyses, and one-line errors for options the technique has not or values out of bounds."""

from __future__ import annotations

import json
import tomllib

import numpy as np
import pytest
from test_simulate_cli import run

from cvfit.cli import main
from cvfit.cli import simulate_technique as cli_technique
from cvfit.errors import InputError


def _table(path):
    return np.loadtxt(path, delimiter=",", skiprows=1)


@pytest.mark.parametrize(
    ("technique", "shift_V"),
    # where the record's peak lies for a reversible couple, from published relations:
    # DPV at E½ − ΔE/2 with ΔE signed (Parry & Osteryoung, Anal. Chem. 1965, 37, 1634; a
    # cathodic scan: ΔE = −0.05 V), the SWV net peak at E½ (Osteryoung & O'Dea,
    # Electroanal. Chem. 1986, 14, 209); the wave is at half its limiting current at E½
    # (Heyrovský & Ilkovič, Collect. Czech. Chem. Commun. 1935, 7, 198)
    [("dpv", 0.025), ("swv", 0.0), ("wave", None)],
)
def test_one_record_has_its_published_landmark(tmp_path, capsys, technique, shift_V):
    out = tmp_path / "a.csv"
    assert run(["--technique", technique, "--e-half", "-0.1", "--out", str(out)]) == 0
    assert f"wrote {out}: {technique}" in capsys.readouterr().out
    t = _table(out)
    E, i = t[:, 1], t[:, 2]
    assert E[0] == pytest.approx(0.2) and E[-1] == pytest.approx(-0.4)  # 0.3 V beyond E½
    if shift_V is None:
        limit = i[-1]
        assert np.interp(-0.1, E[::-1], i[::-1]) == pytest.approx(limit / 2, rel=0.01)
    else:
        assert t.shape[1] == 5  # and the two sampled currents, their difference the record's
        np.testing.assert_allclose(t[:, 3] - t[:, 4], i, rtol=1e-12, atol=1e-20)
        assert E[np.argmax(np.abs(i))] == pytest.approx(-0.1 + shift_V, abs=0.0026)


def test_dpv_series_runs_through_cvfit_run(tmp_path, capsys):
    folder = tmp_path / "s"
    argv = ["simulate", "--technique", "dpv", "--series", "--out", str(folder), "--e-half",
            "-0.1", "--ligand-M", "0,0.01,0.02,0.05,0.1,0.2", "--log-beta-ox", "5", "--noise",
            "0.005", "--seed", "7", "--amplitude", "0.025", "--start", "0.15", "--stop",
            "-0.55"]  # fmt: skip
    assert main(argv) == 0
    manifest = tomllib.loads((folder / "series.toml").read_text(encoding="utf-8"))
    assert manifest["series"]["technique"] == "dpv"
    assert manifest["technique"]["pulse_amplitude_V"] == -0.025  # signed: a cathodic scan
    assert main(["run", str(folder / "series.toml"), "--out", str(tmp_path / "o")]) == 0
    capsys.readouterr()
    fit = json.loads((tmp_path / "o" / "results.json").read_text(encoding="utf-8"))["fit"]
    lo, hi = fit["log10_beta_ratio"]["ci95"]
    assert lo <= 5.0 <= hi and hi - lo < 0.1  # the simulated constant, within its interval
    lo, hi = fit["delta_ligands"]["ci95"]
    assert lo <= 1.0 <= hi


@pytest.mark.parametrize("technique", ["swv", "wave"])
def test_swv_and_wave_series_run_through_cvfit_run(tmp_path, capsys, technique):
    folder = tmp_path / "s"
    argv = ["simulate", "--technique", technique, "--series", "--out", str(folder),
            "--e-half", "0.1", "--ligand-M", "0,0.1,0.3,1", "--log-beta-red", "3",
            "--initial", "red", "--noise", "0.003", "--seed", "2"]  # fmt: skip
    assert main(argv) == 0
    assert main(["run", str(folder / "series.toml"), "--out", str(tmp_path / "o")]) == 0
    capsys.readouterr()
    fit = json.loads((tmp_path / "o" / "results.json").read_text(encoding="utf-8"))["fit"]
    # the reduced form binds one ligand: p − q = −1, log10(β_ox/β_red) = −3
    assert fit["delta_ligands"]["value"] == pytest.approx(-1.0, abs=0.05)
    assert fit["log10_beta_ratio"]["value"] == pytest.approx(-3.0, abs=0.1)


@pytest.mark.parametrize(
    ("argv", "key"),
    [(["--switch", "0.3"], "--switch"), (["--cycles", "2"], "--cycles"),
     (["--cdl", "1e-6"], "--cdl"), (["--resistance", "10"], "--resistance"),
     (["--standard-e-half", "0.3"], "--standard-e-half"), (["--pH-values", "3,4"], "--pH-values"),
     (["--frequency", "10"], "--frequency"), (["--rotation-rate", "900"], "--rotation-rate"),
     (["--scan-rate", "0.1"], "--scan-rate"), (["--amplitude", "0"], "--amplitude"),
     (["--amplitude", "2"], "--amplitude"), (["--period", "x"], "--period"),
     (["--pulse-width", "0.6"], "--pulse-width"), (["--step", "1e-5"], "--step"),
     (["--start", "-0.1", "--stop", "-0.12"], "--step"), (["--stop", "nan"], "--stop"),
     (["--stop", "20"], "--stop"),
     (["--series", "--ligand-M", "0,0.1"], "--ligand-M"),
     (["--series", "--ligand-M", "0,1,2,3,4,5,6,7,8,9,10,11", "--step", "1e-4",
      "--start", "0.9", "--stop", "-1"], "--ligand-M"),
     (["--series"], "--ligand-M")],
)  # fmt: skip
def test_bad_options_are_one_line_errors_before_anything_is_written(tmp_path, argv, key):
    out = tmp_path / "x"
    with pytest.raises(InputError) as err:
        run(["--technique", "dpv", "--e-half", "0", "--out", str(out), *argv])
    assert err.value.key == key and err.value.source == "<command line>"
    assert "\n" not in str(err.value) and not out.exists()


def test_refused_existing_file_and_help_limits(tmp_path, capsys):
    out = tmp_path / "a.csv"
    out.write_text("keep\n", encoding="utf-8")
    with pytest.raises(InputError) as err:
        run(["--technique", "wave", "--e-half", "0", "--out", str(out)])
    assert err.value.key == "--out" and out.read_text(encoding="utf-8") == "keep\n"
    with pytest.raises(SystemExit):
        main(["simulate", "--help"])
    assert "--technique" in capsys.readouterr().out


def test_limits_repeated_for_the_help_equal_the_simulator():
    from cvfit.simulate.program_series import PROGRAM_DEFAULTS
    from cvfit.simulate.programs import MAX_PROGRAM_STEPS

    assert cli_technique.MAX_PULSE_STEPS == MAX_PROGRAM_STEPS
    assert cli_technique.DEFAULTS == PROGRAM_DEFAULTS
