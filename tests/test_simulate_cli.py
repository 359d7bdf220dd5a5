"""`cvfit simulate` and the titration-series writer: files, round trips, bad input."""

from __future__ import annotations

import argparse
import tomllib

import numpy as np
import pandas as pd
import pytest

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.cli import simulate as cli_simulate
from cvfit.errors import InputError, SimulationError
from cvfit.simulate import simulate_cv, simulate_series


def run(argv: list[str]) -> int:
    parser = argparse.ArgumentParser(prog="cvfit")
    sub = parser.add_subparsers(dest="command")
    cli_simulate.register(sub)
    args = parser.parse_args(["simulate", *argv])
    return args.handler(args)


def midpoint(E, i):
    turn = int(np.argmin(E))
    return 0.5 * (E[:turn][np.argmin(i[:turn])] + E[turn:][np.argmax(i[turn:])])


def test_cli_writes_csv_that_round_trips(tmp_path, capsys):
    out = tmp_path / "cv.csv"
    argv = ["--e-half", "0.1", "--start", "0.5", "--switch", "-0.3", "--scan-rate", "0.05",
            "--concentration", "2e-3", "--k0", "0.05", "--noise", "0.002", "--seed", "3",
            "--out", str(out)]  # fmt: skip
    assert run(argv) == 0
    printed = capsys.readouterr().out
    assert printed.count("\n") == 1 and str(out) in printed
    table = pd.read_csv(out)
    assert list(table.columns) == ["time_s", "potential_V", "current_A"]
    ref = simulate_cv(
        E_half_V=0.1, start_V=0.5, switch_V=-0.3, scan_rate_V_s=0.05, concentration_M=2e-3,
        k0_cm_s=0.05, noise_fraction=0.002, seed=3,
    )  # fmt: skip
    np.testing.assert_array_equal(table["current_A"].to_numpy(), ref.current_A)
    np.testing.assert_array_equal(table["potential_V"].to_numpy(), ref.potential_V)
    np.testing.assert_array_equal(table["time_s"].to_numpy(), ref.time_s)


def test_cli_refuses_to_overwrite_without_force(tmp_path, capsys):
    out = tmp_path / "cv.csv"
    out.write_text("keep me\n")
    with pytest.raises(InputError) as err:
        run(["--e-half", "0", "--out", str(out)])
    assert err.value.key == "--out" and out.read_text() == "keep me\n"
    assert run(["--e-half", "0", "--out", str(out), "--force"]) == 0
    assert out.read_text().startswith("time_s,potential_V,current_A\n")


def test_cli_several_vertices_by_repeat_and_comma(tmp_path):
    a, b = tmp_path / "a.csv", tmp_path / "b.csv"
    common = ["--e-half", "0", "--start", "0.2", "--step", "0.002"]
    assert run([*common, "--switch", "-0.3", "--switch", "0.4", "--out", str(a)]) == 0
    # a list that starts with a minus sign needs the "=" form for argparse
    assert run([*common, "--switch=-0.3,0.4", "--out", str(b)]) == 0
    Ea = np.loadtxt(a, delimiter=",", skiprows=1)[:, 1]
    np.testing.assert_array_equal(Ea, np.loadtxt(b, delimiter=",", skiprows=1)[:, 1])
    assert Ea.min() == pytest.approx(-0.3) and Ea.max() == pytest.approx(0.4)


@pytest.mark.parametrize(
    ("argv", "key"),
    [(["--scan-rate", "fast"], "--scan-rate"), (["--scan-rate", "-1"], "--scan-rate"),
     (["--electrons", "1.5"], "--electrons"), (["--alpha", "1.2"], "--alpha"),
     (["--k0", "0"], "--k0"), (["--concentration", "nan"], "--concentration"),
     (["--switch", "0.1,x"], "--switch"), (["--noise", "-0.1"], "--noise"),
     (["--diffusion", "0"], "--diffusion"), (["--seed", "-4"], "--seed")],
)  # fmt: skip
def test_cli_bad_values_raise_input_error(tmp_path, argv, key):
    with pytest.raises(InputError) as err:
        run(["--e-half", "0", "--out", str(tmp_path / "x.csv"), *argv])
    assert err.value.key == key and err.value.source == "<command line>"
    assert not (tmp_path / "x.csv").exists()


@pytest.mark.parametrize(
    "argv",
    [["--ligand-M", "0,0.1"], ["--log-beta-ox", "4"], ["--pH-values", "3,4"],
     ["--temperatures-C", "20,30"], ["--drift-step", "0.001"], ["--title", "t"],
     ["--technique", "dpv", "--log-beta-red", "2"]],
)  # fmt: skip
def test_series_options_without_series_are_refused_not_ignored(tmp_path, argv):
    """Issue 27 item 7: `--log-beta-ox` on a single file was silently ignored."""
    with pytest.raises(InputError) as err:
        run(["--e-half", "0", "--out", str(tmp_path / "x.csv"), *argv])
    flag = next(a for a in argv if a.startswith("--") and a != "--technique")
    assert err.value.key == flag and "--series" in str(err.value)
    assert not (tmp_path / "x.csv").exists()


def test_cli_missing_required_and_simulator_refusal(tmp_path, capsys):
    from cvfit.cli import main

    # --e-half is required, and marked so: usage shows it without brackets
    with pytest.raises(SystemExit) as stop:
        main(["simulate", "--out", str(tmp_path / "x.csv")])
    assert stop.value.code == 2
    err_text = capsys.readouterr().err
    assert err_text.count("\n") == 1 and "--e-half" in err_text
    with pytest.raises(SystemExit):
        main(["simulate", "--help"])
    usage = capsys.readouterr().out
    assert "--e-half V" in usage and "[--e-half" not in usage
    with pytest.raises(InputError) as err:  # --out is required (usage); an empty one too
        run(["--e-half", "0", "--out", ""])
    assert err.value.key == "--out"
    with pytest.raises(InputError) as err:  # switch equal to start: the path has no sweep
        run(["--e-half", "0", "--start", "0.2", "--switch", "0.2", "--out", str(tmp_path / "x")])
    assert err.value.source == "<command line>"


def test_series_writes_manifest_and_files_following_the_constants(tmp_path):
    ligands = [0.0, 1e-3, 1e-2, 1e-1]
    beta_ox, beta_red = [3.0, 5.5], [1.0]
    manifest = simulate_series(
        tmp_path / "s", ligand_M=ligands, E_half_free_V=0.05, log10_beta_ox=beta_ox,
        log10_beta_red=beta_red, title='say "hi"\\ok', noise_fraction=1e-3, seed=11,
        start_V=0.35, switch_V=-0.45, step_V=0.002, temperature_K=303.15,
    )  # fmt: skip
    data = tomllib.loads(manifest.read_text(encoding="utf-8"))
    assert set(data) == {"series", "voltammogram"}
    assert data["series"] == {"title": 'say "hi"\\ok', "temperature_C": pytest.approx(30.0),
                              "electrons": 1}  # fmt: skip
    entries = data["voltammogram"]
    assert [e["ligand_M"] for e in entries] == ligands
    expected = complexed_half_wave_V(0.05, ligand_M=np.array(ligands), log10_beta_ox=beta_ox,
                                     log10_beta_red=beta_red, temperature_K=303.15)  # fmt: skip
    noises = []
    for entry, E_half in zip(entries, expected, strict=True):
        assert (
            set(entry) == {"file", "ligand_M", "scan_rate_V_s"} and entry["scan_rate_V_s"] == 0.1
        )
        table = np.loadtxt(manifest.parent / entry["file"], delimiter=",", skiprows=1)
        # reversible midpoint (Epa + Epc)/2 sits within a few tenths of a mV of E1/2
        assert midpoint(table[:, 1], table[:, 2]) == pytest.approx(E_half, abs=1.5e-3)
        noises.append(table[:20, 2])  # flat region: noise only
    assert not np.allclose(noises[0], noises[1])  # each file has its own seed
    with pytest.raises(SimulationError):  # never overwrite silently
        simulate_series(tmp_path / "s", ligand_M=ligands, E_half_free_V=0.05,
                        log10_beta_ox=beta_ox, log10_beta_red=beta_red, start_V=0.35,
                        switch_V=-0.45)  # fmt: skip


def test_cli_series_form(tmp_path, capsys):
    out = tmp_path / "series"
    argv = ["--series", "--e-half", "-0.2", "--electrons", "2", "--ligand-M", "0.001,0.01,0.1",
            "--log-beta-ox", "6", "--step", "0.001", "--out", str(out)]  # fmt: skip
    assert run(argv) == 0
    assert "3 voltammograms" in capsys.readouterr().out
    data = tomllib.loads((out / "series.toml").read_text(encoding="utf-8"))
    assert data["series"]["electrons"] == 2
    assert data["series"]["E_half_free_V"] == -0.2  # no ligand-free file in this series
    E = [pd.read_csv(out / e["file"])["potential_V"] for e in data["voltammogram"]]
    assert all(list(pd.read_csv(out / e["file"]).columns)[1] == "potential_V"
               for e in data["voltammogram"])  # fmt: skip
    assert max(e.max() for e in E) > -0.2 and len(E) == 3
    with pytest.raises(InputError):
        run(argv)  # exists: refused
    assert run([*argv, "--force"]) == 0
    with pytest.raises(InputError) as err:
        run(["--series", "--e-half", "0", "--out", str(tmp_path / "t")])
    assert err.value.key == "--ligand-M"


def test_series_with_complexed_diffusion_coefficients(tmp_path):
    ligands = [0.0, 0.1]
    manifest = simulate_series(
        tmp_path, ligand_M=ligands, E_half_free_V=0.0, log10_beta_ox=[4.0], log10_beta_red=[],
        D_ox_cm2_s=1e-5, D_ox_complexed_cm2_s=0.5e-5, start_V=0.2, switch_V=-0.6,
    )  # fmt: skip
    entries = tomllib.loads(manifest.read_text(encoding="utf-8"))["voltammogram"]
    tables = [np.loadtxt(tmp_path / e["file"], delimiter=",", skiprows=1) for e in entries]
    ipc = [-t[:, 2].min() for t in tables]
    D_eff = (1e-5 + 0.5e-5 * 1e3) / (1 + 1e3)  # mole-fraction mean at beta[L] = 1000
    # Randles-Sevcik: ip proportional to D_O^1/2 (Nicholson & Shain, Anal. Chem. 36 (1964) 706;
    # confirmed)
    assert ipc[1] / ipc[0] == pytest.approx(np.sqrt(D_eff / 1e-5), rel=2e-3)
    E_half = complexed_half_wave_V(0.0, ligand_M=0.1, log10_beta_ox=[4.0], D_ox_cm2_s=1e-5,
                                   D_ox_complexed_cm2_s=0.5e-5)  # fmt: skip
    assert midpoint(tables[1][:, 1], tables[1][:, 2]) == pytest.approx(E_half, abs=1.5e-3)


def test_cli_series_complexed_diffusion_flag(tmp_path):
    base = ["--series", "--e-half", "0", "--ligand-M", "0,0.1,0.01,0.001", "--log-beta-ox",
            "4", "--step", "0.002"]  # fmt: skip
    with pytest.raises(InputError) as err:
        run([*base, "--diffusion-ox-complexed", "-1", "--out", str(tmp_path / "a")])
    assert err.value.key == "--diffusion-ox-complexed"
    assert run([*base, "--diffusion-ox-complexed", "5e-6", "--out", str(tmp_path / "b")]) == 0
    tables = [pd.read_csv(tmp_path / "b" / f"titr_0{k}.csv") for k in (0, 1)]
    ratio = tables[1]["current_A"].min() / tables[0]["current_A"].min()
    assert ratio == pytest.approx(np.sqrt((1e-5 + 5e-6 * 1e3) / 1001 / 1e-5), rel=3e-3)


def test_cli_concentration_is_in_mol_per_litre(tmp_path, capsys):
    """One unit with the manifests: mol/L; a value in mM is refused with the conversion."""
    with pytest.raises(InputError) as err:
        run(["--e-half", "0", "--concentration", "2", "--out", str(tmp_path / "x.csv")])
    assert err.value.key == "--concentration" and "give 0.002" in str(err.value)
    assert not (tmp_path / "x.csv").exists()
    from cvfit.cli import main

    with pytest.raises(SystemExit):
        main(["simulate", "--help"])
    text = " ".join(capsys.readouterr().out.split())
    assert "--concentration mol/L" in text and "--concentration mM" not in text
    assert "total, not per cm²" in text
    assert "overall log10 β_j of the oxidised form" in text


def test_cli_series_with_an_internal_standard(tmp_path, capsys):
    """--standard-e-half: every file holds the standard's wave too, the manifest quotes
    potentials against it, and the analysis finds the standard where it was put."""
    from cvfit.io import load_manifest
    from cvfit.pipeline.series import analyse_series

    out = tmp_path / "istd"
    argv = ["--series", "--e-half", "-0.05", "--ligand-M", "0,0.01,0.03,0.1",
            "--log-beta-ox", "5,9.6", "--log-beta-red", "4.2", "--standard-e-half", "0.25",
            "--drift-step", "0.003", "--seed", "2", "--out", str(out)]  # fmt: skip
    assert run(argv) == 0
    said = capsys.readouterr().out
    assert "with an internal standard at 0.2500 V" in said
    data = tomllib.loads((out / "series.toml").read_text(encoding="utf-8"))
    lo, hi = data["internal_standard"]["window_V"]
    assert lo < 0.25 < hi
    result = analyse_series(load_manifest(out / "series.toml"))
    stds = [f.internal_standard.E_half_V for f in result.files]
    assert np.ptp(stds) > 1e-3  # the electrode drifted by millivolts ...
    truth = complexed_half_wave_V(
        -0.05, ligand_M=[0.0, 0.01, 0.03, 0.1], log10_beta_ox=[5, 9.6], log10_beta_red=[4.2],
        electrons=1, temperature_K=298.15,
    )  # fmt: skip
    # ... and E½ against the standard (E_half_V = 0 for it) does not drift: 1 mV noise-free
    np.testing.assert_allclose([f.E_half_V for f in result.files], truth - 0.25, atol=1e-3)
    with pytest.raises(InputError) as err:
        run([*argv[:-2], "--standard-e-half", "0.6", "--start", "0.55", "--switch", "-0.7",
             "--out", str(tmp_path / "far")])  # fmt: skip
    assert err.value.key == "--standard-e-half"
