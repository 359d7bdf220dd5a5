"""Series with quasi-reversible files at the highest ligand concentrations, recovered by the
curve fit (``[fit] half_wave_source = "auto"``), against the same series all reversible.

Truth (tests/seriesfactory.py): p − q = 1, log10(β_ox/β_red) = 6.0. The three highest-[L]
files have k0 = 1e-2, 5e-3, 2e-3 cm/s (ψ 2.0, 1.0, 0.4 at D = 1e-5 cm²/s, v = 20 mV/s) and
20 Ω of uncompensated resistance that the manifest does not give. Every file carries
charging (5 µF), a sloping background and 0.5 % noise. Built twice: with the project's
simulator and with the independent convolution computation (tests/independent_curves.py).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import jsonschema
import pytest
from independent_curves import independent_cv
from seriesfactory import (
    E_HALF_FREE_V,
    LIGAND_M,
    LOG_BETA_OX,
    LOG_BETA_RED,
    TRUE_DELTA_LIGANDS,
    TRUE_LOG10_RATIO,
    write_manifest,
)

from cvfit.chemistry.complexation import complexed_half_wave_V
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.simulate.voltammogram import simulate_cv

SCHEMA = Path(__file__).resolve().parents[1] / "cvfit" / "schemas" / "results.schema.json"
V = 0.02
SLOW = {0.08: 1e-2, 0.15: 5e-3, 0.3: 2e-3}
IP = 2.69e5 * 0.0707 * 1e-6 * math.sqrt(1e-5) * math.sqrt(V)  # Randles–Ševčík, common practice
COMMON = dict(
    start_V=0.25,
    switch_V=-0.65,
    scan_rate_V_s=V,
    step_V=0.0009,
    double_layer_F=5e-6,
    background_offset_A=1e-7,
    background_slope_A_per_V=2e-6,
)


def true_E_half(ligand: float) -> float:
    return float(
        complexed_half_wave_V(
            E_HALF_FREE_V, ligand_M=ligand, log10_beta_ox=LOG_BETA_OX, log10_beta_red=LOG_BETA_RED
        )
    )


def write_series(folder: Path, *, source: str, slow: bool, fit: dict | None = None) -> Path:
    entries = []
    for k, ligand in enumerate(LIGAND_M):
        k0 = SLOW.get(ligand) if slow else None
        R = 20.0 if (slow and k0) else 0.0
        kw = dict(COMMON, E_half_V=true_E_half(ligand), k0_cm_s=k0, resistance_ohm=R)
        if source == "independent":
            t, E, i = independent_cv(**kw, noise_A=0.005 * IP, seed=40 + k)
        else:
            v = simulate_cv(**kw, noise_fraction=0.005, seed=40 + k)
            t, E, i = v.time_s, v.potential_V, v.current_A
        rows = ["time_s,potential_V,current_A"] + [
            f"{a!r},{b!r},{c!r}"
            for a, b, c in zip(t.tolist(), E.tolist(), i.tolist(), strict=True)
        ]
        (folder / f"f{k}.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
        entries.append({"file": f"f{k}.csv", "ligand_M": ligand, "scan_rate_V_s": V})
    series = {"electrons": 1, "diffusion_cm2_s": 1e-5}
    return write_manifest(folder / "series.toml", entries, series=series, fit=fit)


@pytest.fixture(scope="module", params=["project", "independent"])
def runs(request, tmp_path_factory):
    out = {}
    for name, slow, fit in (
        ("reversible", False, None),
        ("auto", True, None),
        ("peaks", True, {"half_wave_source": "peaks"}),
    ):
        folder = tmp_path_factory.mktemp(f"{request.param}_{name}")
        manifest = write_series(folder, source=request.param, slow=slow, fit=fit)
        out[name] = analyse_series(load_manifest(manifest))
    return out


def test_slow_files_are_recovered_with_E_half_within_1_mV_and_k0_within_15_percent(runs):
    res = runs["auto"]
    for f in res.files:
        if f.ligand_M in SLOW:
            assert f.reversible is False
            assert f.E_half_source == "curve" and f.used_in_fit
            assert abs(f.E_half_V - true_E_half(f.ligand_M)) < 1e-3
            assert abs(f.measurement.curve_fit.k0_cm_s.value / SLOW[f.ligand_M] - 1) < 0.15
            assert f.E_half_stderr_V == f.measurement.curve_fit.E_half_V.stderr
            used = next(g for g in f.flags if g.code == "CURVE_FIT_USED")
            # one unit per number pair (issue 27 item 7: it read "E½ -0.1425 V ± 0.05 mV")
            e = f.measurement.curve_fit.E_half_V
            assert f"E½ {1e3 * e.value:.2f} ± {1e3 * e.stderr:.2f} mV from" in used.message
        else:
            assert (
                f.reversible is True
                and f.E_half_source == "peaks"
                and f.measurement.curve_fit is None
            )
    assert res.fit.n_points == len(LIGAND_M) - 1


def test_constants_lie_within_the_intervals_of_the_all_reversible_series(runs):
    ref, got = runs["reversible"].fit, runs["auto"].fit
    for name, truth in (
        ("delta_ligands", TRUE_DELTA_LIGANDS),
        ("log10_beta_ratio", TRUE_LOG10_RATIO),
    ):
        lo, hi = getattr(ref, name).ci95
        assert lo <= truth <= hi
        assert lo <= getattr(got, name).value <= hi


def test_peaks_only_leaves_the_slow_files_out(runs):
    res = runs["peaks"]
    assert res.fit.n_points == len(LIGAND_M) - 1 - len(SLOW)
    for f in res.files:
        if f.ligand_M in SLOW:
            assert (
                not f.used_in_fit
                and f.measurement.curve_fit is None
                and f.E_half_source == "peaks"
            )


def test_results_json_says_the_source_and_validates(runs):
    data = runs["auto"].to_dict()
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(schema).validate(json.loads(json.dumps(data)))
    sources = {v["file"]: v["E_half_source"] for v in data["voltammograms"]}
    assert sources == {
        f"f{k}.csv": ("curve" if x in SLOW else "peaks") for k, x in enumerate(LIGAND_M)
    }
    slow = [v for v in data["voltammograms"] if v["E_half_source"] == "curve"]
    assert all(v["used_in_fit"] and v["curve_fit"]["accepted"] for v in slow)
    assert all(
        set(v["curve_fit"]["k0_cm_s"]) >= {"value", "stderr", "ci95", "lower_bound"} for v in slow
    )


def test_outputs_show_the_curve_fits(runs, tmp_path):
    from cvfit.report import write_outputs

    written = write_outputs(runs["auto"], tmp_path)
    assert written["curve_fits_figure"].name == "curve_fits.png"
    html = written["html_report"].read_text(encoding="utf-8")
    assert "Curve fits: for each voltammogram" in html and "curve" in html
    table = written["table"].read_text(encoding="utf-8").splitlines()
    head = table[0].split(",")
    col = head.index("E_half_source")
    assert sorted(row.split(",")[col] for row in table[1:]).count("curve") == len(SLOW)
    # a series without curve fits writes no such figure
    assert "curve_fits_figure" not in write_outputs(runs["peaks"], tmp_path / "peaks")


def test_an_irreversible_file_stays_out_with_the_reason(tmp_path):
    entries = []
    for k, (ligand, k0) in enumerate(((0.0, None), (0.01, None), (0.02, None), (0.04, None),
                                      (0.08, 1e-5))):  # fmt: skip
        v = simulate_cv(
            **COMMON, E_half_V=true_E_half(ligand), k0_cm_s=k0, noise_fraction=0.005, seed=k
        )
        rows = zip(v.time_s.tolist(), v.potential_V.tolist(), v.current_A.tolist(), strict=True)
        text = "\n".join(f"{a!r},{b!r},{c!r}" for a, b, c in rows)
        (tmp_path / f"g{k}.csv").write_text(
            "time_s,potential_V,current_A\n" + text + "\n", encoding="utf-8"
        )
        entries.append({"file": f"g{k}.csv", "ligand_M": ligand, "scan_rate_V_s": V})
    res = analyse_series(load_manifest(write_manifest(tmp_path / "s.toml", entries)))
    last = res.files[-1]
    assert not last.used_in_fit and last.E_half_source == "peaks"
    assert (
        last.measurement.curve_fit.accepted and last.measurement.curve_fit.psi < 0.01
    )  # fits, but far too slow
    why = [f for f in last.flags if f.code == "CURVE_FIT_IRREVERSIBLE"]
    assert why and "irreversible" in why[0].message


def test_an_unknown_half_wave_source_is_a_one_line_input_error(tmp_path):
    from cvfit.errors import InputError

    path = write_manifest(
        tmp_path / "s.toml",
        [{"file": "a.csv", "ligand_M": 0.0}],
        fit={"half_wave_source": "fit"},
    )
    with pytest.raises(InputError, match='half_wave_source must be "peaks", "curve" or "auto"'):
        load_manifest(path)


def test_global_fit_gets_the_constants_straight_from_the_curves(tmp_path):
    manifest = write_series(tmp_path, source="project", slow=True, fit={"global": True})
    res = analyse_series(load_manifest(manifest))
    g = res.global_fit
    assert g is not None and g.converged
    assert set(g.files) == {f"f{k}.csv" for k in range(len(LIGAND_M))}
    for q, truth in (
        (g.delta_ligands, TRUE_DELTA_LIGANDS),
        (g.log10_beta_ratio, TRUE_LOG10_RATIO),
    ):
        lo, hi = q.ci95
        assert lo < truth < hi
        assert q.method == "profile χ²"
        # the profile interval is about ±1.96 σ here (a near-quadratic χ²)
        assert 0.7 < (hi - lo) / (2 * 1.96 * q.stderr) < 1.4
    # the raw curves fix the constants at least as well as the two-step fit
    assert g.log10_beta_ratio.stderr < res.fit.log10_beta_ratio.stderr
    assert 0.8 < g.reduced_chi2 < 1.3
    data = res.to_dict()
    schema = json.loads(SCHEMA.read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(schema).validate(json.loads(json.dumps(data)))
    assert data["global_fit"]["log10_beta_ratio"]["value"] == pytest.approx(
        g.log10_beta_ratio.value
    )
    from cvfit.report.html import render_html

    html = render_html(data)
    assert "<h2>Global curve fit</h2>" in html and "two-step" in html
    from cvfit.report.summary import format_summary

    text = format_summary(res)
    assert f"Global curve fit of {len(LIGAND_M)} curves" in text
    assert text.count("— used") == len(SLOW)
    assert f"{g.log10_beta_ratio.value:.4f}"[:5] in html


def test_global_fit_without_its_two_step_fit_says_why_not(tmp_path):
    from cvfit.pipeline.global_stage import run_global
    from cvfit.pipeline.results import ReferenceHalfWave

    manifest = write_series(tmp_path, source="project", slow=False, fit={"global": True})
    m = load_manifest(manifest)
    stepwise = type(
        "M",
        (),
        {
            "fit": type("F", (), {"global_fit": True, "model": "stepwise"}),
            "internal_standard": None,
        },
    )
    fit, flags = run_global([], stepwise, None, ReferenceHalfWave(0.0, None, "file"))
    assert fit is None and flags[0].code == "GLOBAL_FIT_NOT_POSSIBLE"
    assert "two-step stepwise fit" in flags[0].message
    assert run_global([], m, None, ReferenceHalfWave(None, None, "file"))[1][0].code == (
        "GLOBAL_FIT_NOT_POSSIBLE"
    )


def test_a_recovered_file_offers_its_diffusion_limited_peak_for_current_ratios(runs):
    from cvfit.chemistry.randles_sevcik import randles_sevcik_peak_current_A

    ip = randles_sevcik_peak_current_A(
        electrons=1, concentration_M=1e-3, area_cm2=0.0707, D_cm2_s=1e-5, scan_rate_V_s=V
    )
    for f in runs["auto"].files:
        if f.ligand_M in SLOW:
            # the measured peak of a slow couple is low; the fitted scale's is not
            assert abs(f.measurement.peaks.ipc_A) < 0.97 * ip
            assert f.measurement.curve_fit.reversible_peak_A == pytest.approx(ip, rel=0.01)
            assert f.measurement.diffusion_current_A == pytest.approx(ip, rel=0.01)


@pytest.mark.parametrize(
    ("value", "message"),
    [
        ('"fit"', 'curve_diffusion_ratio cannot be "fit": a single curve'),
        ("0.0", "curve_diffusion_ratio must be a number 0.1–10"),
        ('"one"', "curve_diffusion_ratio must be a number 0.1–10"),
        ("20", "curve_diffusion_ratio must be a number 0.1–10"),
    ],
)
def test_a_bad_diffusion_ratio_is_a_one_line_error_naming_the_key(tmp_path, value, message):
    from cvfit.errors import InputError

    (tmp_path / "a.csv").write_text("potential_V,current_A\n0,0\n", encoding="utf-8")
    text = (
        f"[series]\nelectrons = 1\n[fit]\ncurve_diffusion_ratio = {value}\n"
        '[[voltammogram]]\nfile = "a.csv"\nligand_M = 0.0\n'
    )
    (tmp_path / "s.toml").write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match=message) as err:
        load_manifest(tmp_path / "s.toml")
    assert "\n" not in str(err.value) and "curve_diffusion_ratio" in str(err.value)


def test_the_diffusion_ratio_reaches_the_curve_fit(tmp_path):
    from cvfit.io.manifest import FitSettings

    assert FitSettings().curve_diffusion_ratio == 1.0
    manifest = write_series(
        tmp_path, source="project", slow=True, fit={"curve_diffusion_ratio": 0.8}
    )
    res = analyse_series(load_manifest(manifest))
    fitted = [f.measurement.curve_fit for f in res.files if f.measurement.curve_fit is not None]
    assert fitted and all(cf.D_ratio == 0.8 for cf in fitted)
