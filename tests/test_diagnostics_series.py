"""Reversibility verdicts over many simulated files and through the pipeline.

Reference values (from memory): a Nernstian couple shows n·ΔEp = 57–61 mV depending on the
switch, |Ep − Ep/2| = 2.20 RT/nF and ipa/ipc = 1 (Nicholson & Shain, Anal. Chem. 36 (1964)
706; Nicholson, Anal. Chem. 38 (1966) 1406); ψ ≤ 1 gives n·ΔEp ≥ 84 mV (Nicholson, Anal.
Chem. 37 (1965) 1351); ip ∝ v^1/2 with 0.4463 nFAC(nFvD/RT)^1/2 (Randles 1948; Ševčík 1948).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.classification import classify_voltammogram
from cvfit.techniques.cv.screen.reversibility import screen_reversibility
from cvfit.units import FARADAY, GAS_CONSTANT

T = 298.15
D = 1e-5


def _k0(psi, n, v=0.1):
    # Nicholson, Anal. Chem. 37 (1965) 1351 (from memory): ψ = k0 / (π D n F v / RT)^1/2
    return psi * math.sqrt(math.pi * D * n * FARADAY * v / (GAS_CONSTANT * T))


def _verdict(rng, *, psi):
    n = int(rng.choice([1, 2]))
    first = str(rng.choice(["reduction", "oxidation"]))
    d = -1.0 if first == "reduction" else 1.0
    E_half = float(rng.uniform(-0.2, 0.2))
    off = float(rng.uniform(0.2, 0.5))
    v = simulate_cv(
        E_half_V=E_half,
        start_V=E_half - d * 0.25 / n**0.5,
        switch_V=E_half + d * off / n,
        electrons=n,
        initial_species="ox" if first == "reduction" else "red",
        k0_cm_s=None if psi is None else _k0(psi, n),
        double_layer_F=float(rng.uniform(0, 20e-6)),
        background_slope_A_per_V=float(rng.uniform(-5e-6, 5e-6)),
        noise_fraction=float(rng.uniform(0.002, 0.01)),
        seed=int(rng.integers(2**31)),
    )
    p = analyse_peaks(v, electrons=n)
    s = screen_reversibility(p, electrons=n, temperature_K=T)
    return s, classify_voltammogram(p, s, electrons=n, temperature_K=T)


@pytest.fixture(scope="module")
def reversible_verdicts():
    rng = np.random.default_rng(20261201)
    return [_verdict(rng, psi=None) for _ in range(320)]


@pytest.fixture(scope="module")
def slow_verdicts():
    rng = np.random.default_rng(4)
    psis = np.exp(rng.uniform(math.log(0.2), math.log(1.0), 320))
    return [_verdict(rng, psi=float(p)) for p in psis]


def test_false_flag_rate_below_one_percent(reversible_verdicts):
    flagged = [c.reason for s, c in reversible_verdicts if s.reversible is not True]
    assert len(flagged) / len(reversible_verdicts) < 0.01, flagged
    kinds = [c.kind for s, c in reversible_verdicts if s.reversible is True]
    assert set(kinds) == {"reversible"}


def test_miss_rate_below_one_percent_for_psi_up_to_1(slow_verdicts):
    missed = [c.reason for s, c in slow_verdicts if s.reversible is not False]
    assert len(missed) / len(slow_verdicts) < 0.01, missed
    quasi = sum(c.kind == "quasi-reversible" for _, c in slow_verdicts)
    assert quasi / len(slow_verdicts) > 0.99


# ---------------------------------------------------------------- through the pipeline
from seriesfactory import LIGAND_M, simulate_point, write_manifest, write_plain_csv  # noqa: E402
from test_pipeline import validate  # noqa: E402

from cvfit.cli import main  # noqa: E402
from cvfit.errors import InputError  # noqa: E402
from cvfit.io import load_manifest  # noqa: E402
from cvfit.pipeline.series import analyse_series  # noqa: E402
from cvfit.report import results_to_json  # noqa: E402

AREA, CONC = 0.0707, 1e-3  # simulate_cv defaults: cm², mol/L
RATES = (0.02, 0.05, 0.1, 0.2, 0.5)


def _series(
    folder,
    *,
    slow_at=(),
    k0=0.002,
    electrons=1,
    noise=0.005,
    seed=0,
    study=None,
    series_extra=None,
    entry_extra=None,
    study_only_free=False,
    fit=None,
):
    """Titration files at 0.1 V/s, plus (study) ligand-free files at several scan rates."""
    entries = []
    for k, ligand in enumerate(LIGAND_M):
        if study_only_free and ligand == 0.0:
            continue  # the study alone holds the ligand-free files
        v = simulate_point(
            ligand,
            seed=seed + k,
            electrons=electrons,
            noise_fraction=noise,
            k0_cm_s=k0 if ligand in slow_at else None,
        )
        name = f"t{k:02d}.csv"
        write_plain_csv(folder / name, v)
        entries.append(
            {
                "file": name,
                "ligand_M": ligand,
                "scan_rate_V_s": 0.1,
                **(entry_extra or {}).get(name, {}),
            }
        )
    for j, rate in enumerate(RATES if study is not None else ()):
        v = simulate_cv(
            E_half_V=0.0,
            start_V=0.25,
            switch_V=-0.4,
            scan_rate_V_s=rate,
            k0_cm_s=study.get("k0"),
            resistance_ohm=study.get("R", 0.0),
            double_layer_F=5e-6,
            noise_fraction=noise,
            seed=100 + j,
        )
        name = f"rate{j}.csv"
        write_plain_csv(folder / name, v)
        entries.append({"file": name, "ligand_M": 0.0})  # scan rate from the time column
    series = {"electrons": electrons, "title": "diagnostics"}
    series.update(series_extra or {})
    return write_manifest(folder / "series.toml", entries, series=series, fit=fit)


@pytest.mark.parametrize("n", [1, 2])
def test_slow_kinetics_at_high_ligand_flags_exactly_those_files(tmp_path, n):
    slow = (0.15, 0.3)
    result = analyse_series(
        load_manifest(_series(tmp_path, slow_at=slow, electrons=n, k0=0.002 / n))
    )
    for f in result.files:
        if f.ligand_M in slow:
            assert f.measurement.classification.kind == "quasi-reversible", (
                f.measurement.classification.reason
            )
            # recovered by the curve fit (half_wave_source = "auto", the default)
            assert f.used_in_fit and f.E_half_source == "curve"
            assert abs(f.measurement.curve_fit.k0_cm_s.value / (0.002 / n) - 1) < 0.15
            codes = {fl.code for fl in f.flags}
            assert {
                "DELTA_EP_TOO_LARGE",
                "CLASS_QUASI_REVERSIBLE",
                "CURVE_FIT_USED",
            } <= codes
            msg = next(fl.message for fl in f.flags if fl.code == "CLASS_QUASI_REVERSIBLE")
            assert "n·ΔEp" in msg and "mV" in msg and "slow electron transfer" in msg
            assert (
                f.measurement.kinetics.status == "determined"
                and f.measurement.kinetics.psi.value < 1.0
            )
        else:
            assert f.measurement.classification.kind == "reversible", (
                f.measurement.classification.reason
            )
            assert f.reversible is True
    assert result.fit is not None and result.fit.n_points == len(LIGAND_M) - 1


def test_scan_rate_study_gives_D_and_k0_in_results(tmp_path):
    manifest = _series(
        tmp_path,
        slow_at=(0.3,),
        study={},
        series_extra={"electrode_area_cm2": AREA, "analyte_M": CONC},
    )
    result = analyse_series(load_manifest(manifest))
    (st,) = result.scan_rate_studies
    assert st.ligand_M == 0.0 and len(st.files) == len(RATES) + 1  # with t00.csv
    assert st.log_log_slope.value == pytest.approx(0.5, abs=0.02)
    # D from the Randles–Ševčík slope (Randles, Trans. Faraday Soc. 44 (1948) 327; Ševčík,
    # Collect. Czech. Chem. Commun. 13 (1948) 349; confirmed)
    assert st.D_cm2_s.value == pytest.approx(D, rel=0.03)
    assert not st.delta_Ep_grows
    slow = result.files[len(LIGAND_M) - 1]
    assert slow.measurement.kinetics.D_source.startswith("scan-rate study")
    assert "D_FROM_OTHER_SOLUTION" in {fl.code for fl in slow.flags}
    # k0 = 0.002 cm/s simulated (ψ ≈ 0.18): recovered within 15 %
    assert slow.measurement.kinetics.k0_cm_s.value == pytest.approx(0.002, rel=0.15)
    data = json.loads(results_to_json(result))
    validate(data, "results.schema.json")
    assert data["scan_rate_studies"][0]["D_cm2_s"]["value"] == pytest.approx(D, rel=0.03)
    k0 = data["voltammograms"][len(LIGAND_M) - 1]["kinetics"]["k0_cm_s"]
    assert k0["value"] > 0 and k0["stderr"] > 0
    assert data["voltammograms"][0]["classification"]["kind"] == "reversible"


def test_growing_delta_Ep_fails_the_whole_study(tmp_path):
    # k0 = 0.02 cm/s: the slowest rate passes on its own, the trend fails them all
    manifest = _series(tmp_path, study={"k0": 0.02}, study_only_free=True)
    result = analyse_series(load_manifest(manifest))
    (st,) = result.scan_rate_studies
    assert st.delta_Ep_grows
    study_files = [f for f in result.files if f.file.startswith("rate")]
    assert all(f.reversible is False for f in study_files)
    assert all("DELTA_EP_GROWS_WITH_SCAN_RATE" in {fl.code for fl in f.flags} for f in study_files)
    assert all(f.measurement.classification.kind == "quasi-reversible" for f in study_files)
    assert "DELTA_EP_GROWS_WITH_SCAN_RATE" in {f.code for f in result.flags}
    # half_wave_source = "auto" (the default): every file of the failed study is
    # curve-fitted, also those that passed on their own and failed only with the study
    # (rate0, rate1); E½ simulated 0 V, k0 0.02 cm/s
    passed_alone = [f for f in study_files if f.file in ("rate0.csv", "rate1.csv")]
    assert all("DELTA_EP_TOO_LARGE" not in {fl.code for fl in f.flags} for f in passed_alone)
    for f in study_files:
        assert f.E_half_source == "curve" and "CURVE_FIT_USED" in {fl.code for fl in f.flags}
        assert abs(f.E_half_V) < 3 * f.E_half_total_stderr_V + 2e-5
        assert f.measurement.curve_fit.k0_cm_s.value == pytest.approx(0.02, rel=0.15)
    assert abs(result.reference.E_half_V) < 5e-5


def test_a_study_failure_gets_no_curve_fit_when_e_half_comes_from_the_peaks(tmp_path):
    manifest = _series(
        tmp_path, study={"k0": 0.02}, study_only_free=True, fit={"half_wave_source": "peaks"}
    )
    result = analyse_series(load_manifest(manifest))
    study_files = [f for f in result.files if f.file.startswith("rate")]
    assert all(f.reversible is False and f.measurement.curve_fit is None for f in study_files)
    assert all(f.E_half_source == "peaks" for f in study_files)


def test_resistance_key_corrects_potentials_and_iR_study_is_recognised(tmp_path):
    manifest = _series(tmp_path, study={"R": 1000.0}, study_only_free=True)
    result = analyse_series(load_manifest(manifest))
    (st,) = result.scan_rate_studies
    assert st.excess_cause == "ir-drop"
    assert "IR_DROP_SIGNATURE" in {f.code for f in result.flags}
    # the same study with R_u given: the correction takes most of the excess away
    fixed_dir = tmp_path / "fixed"
    fixed_dir.mkdir()
    m2 = _series(
        fixed_dir,
        study={"R": 1000.0},
        series_extra={"resistance_ohm": 1000.0},
        entry_extra={"t01.csv": {"resistance_ohm": 0.0}},
        study_only_free=True,
    )
    before = (fixed_dir / "rate4.csv").read_bytes()
    fixed = analyse_series(load_manifest(m2))
    assert (fixed_dir / "rate4.csv").read_bytes() == before
    raw_fast = next(f for f in result.files if f.file == "rate4.csv")
    fix_fast = next(f for f in fixed.files if f.file == "rate4.csv")
    assert fix_fast.resistance_ohm == 1000.0
    assert fixed.files[0].file == "t01.csv"
    assert fixed.files[0].resistance_ohm is None  # per-file 0 overrides the series value
    codes = {fl.code for fl in fix_fast.flags}
    assert {"OHMIC_DROP_CORRECTED", "OHMIC_CORRECTION_INCOMPLETE"} <= codes
    assert fix_fast.measurement.peaks.delta_Ep_V < raw_fast.measurement.peaks.delta_Ep_V - 0.02
    validate(json.loads(results_to_json(fixed)), "results.schema.json")


@pytest.mark.parametrize(
    ("key", "value"),
    [
        ("resistance_ohm", -5.0),
        ("alpha", 1.2),
        ("electrode_area_cm2", 0.0),
        ("analyte_M", "1 mM"),
        ("diffusion_stderr_cm2_s", 1e-7),
    ],
)
def test_bad_electrode_keys_are_input_errors(tmp_path, key, value):
    manifest = _series(tmp_path, series_extra={key: value})
    with pytest.raises(InputError, match=key):
        load_manifest(manifest)
    assert main(["run", str(manifest), "--quiet"]) == 2


def test_cli_writes_diagnostics_figure_and_summary_shows_class_and_k0(tmp_path, capsys):
    from cvfit.report import OUTPUT_NAMES

    manifest = _series(tmp_path, slow_at=(0.3,), series_extra={"diffusion_cm2_s": D})
    out = tmp_path / "out"
    assert main(["run", str(manifest), "--out", str(out)]) == 0
    assert OUTPUT_NAMES["diagnostics_figure"] == "diagnostics.png"
    png = out / "diagnostics.png"
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and png.stat().st_size > 10_000
    text = capsys.readouterr().out
    assert "quasi-reversible" in text and "k0 = (" in text and "D: manifest" in text
    assert "k0 not determinable (ψ > 20)" in text
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    validate(data, "results.schema.json")
    kin = data["voltammograms"][-1]["kinetics"]
    assert kin["D_source"] == "manifest" and kin["method"] == "nicholson-table"
    assert kin["k0_cm_s"]["value"] == pytest.approx(0.002, rel=0.15)
