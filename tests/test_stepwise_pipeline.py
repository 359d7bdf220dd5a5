"""End to end: `cvfit run` with model = "stepwise" on simulated voltammograms.

Truth: ML, ML2, ML3 of the oxidised form (log β = 2.0, 3.7, 4.9), reduced form not
complexed (DeFord & Hume, J. Am. Chem. Soc. 73 (1951) 5321). The files are simulated at
the free-ligand concentration; the manifest lists the analytical ligand concentration
that mass balance and protonation imply, so the pipeline must undo both.
"""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema
import numpy as np
import pytest
from seriesfactory import write_manifest

from cvfit.chemistry.speciation import ligand_fraction_unprotonated, mean_ligand_number
from cvfit.cli import main
from cvfit.simulate.titration_series import simulate_series

TRUTH = (2.0, 3.7, 4.9)
METAL_M = 1.0e-3
PKA = (9.5,)
PH = 8.5
SCHEMAS = Path(__file__).resolve().parents[1] / "schemas"


@pytest.fixture(scope="module")
def stepwise_run(tmp_path_factory):
    folder = tmp_path_factory.mktemp("stepwise")
    free = np.array([0.0, *np.logspace(-3.3, -0.3, 11)])
    simulate_series(
        folder,
        ligand_M=free,
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        noise_fraction=0.002,
        seed=5,
        start_V=0.45,
        switch_V=-0.55,
    )
    aL = float(ligand_fraction_unprotonated(PH, PKA))
    total = free / aL + METAL_M * mean_ligand_number(free, TRUTH) * (free > 0)
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": float(t), "scan_rate_V_s": 0.1}
        for k, t in enumerate(total)
    ]
    series = {
        "electrons": 1,
        "title": "stepwise",
        "metal_total_M": METAL_M,
        "ligand_pKa": list(PKA),
        "pH": PH,
        "ionic_strength_M": 0.1,
        "metal_charge": 2,
        "ligand_charge": 0,
    }
    manifest = write_manifest(
        folder / "stepwise.toml",
        entries,
        series=series,
        fit={"model": "stepwise", "max_complexes": 4},
    )
    out = folder / "out"
    assert main(["run", str(manifest), "--out", str(out), "--quiet"]) == 0
    data = json.loads((out / "results.json").read_text(encoding="utf-8"))
    return data, out, free, aL


def test_stepwise_run_recovers_absolute_constants(stepwise_run):
    data, _, free, _ = stepwise_run
    fit = data["fit"]
    assert fit["model"] == "stepwise" and fit["n_complexes"] == 3
    got = [b["value"] for b in fit["log10_beta"]]
    assert np.all(np.abs(np.array(got) - TRUTH) < 0.05), got
    assert all(b["determined"] for b in fit["log10_beta"])
    # Free ligand per file is the corrected value (mass balance and protonation undone).
    files = [v for v in data["voltammograms"] if v["used_in_fit"]]
    np.testing.assert_allclose([v["free_ligand_M"] for v in files], free[1:], rtol=0.03)
    assert fit["free_ligand_iterations"] > 1
    cond = fit["conditional"][0]
    assert cond["pH"] == PH and cond["log10_alpha_L"] < -0.9
    assert fit["thermodynamic_log10_beta"] is not None


def test_stepwise_results_follow_the_schema_and_figures_exist(stepwise_run):
    data, out, _, _ = stepwise_run
    schema = json.loads((SCHEMAS / "results.schema.json").read_text(encoding="utf-8"))
    jsonschema.Draft202012Validator(schema).validate(data)
    for name in ("leden_functions.png", "species_distribution.png"):
        assert (out / name).stat().st_size > 1000


def test_low_ligand_excess_is_judged_by_the_bound_share(stepwise_run):
    """The lowest point is only 5.6-fold over the metal but, the ligand being mostly
    protonated and n̄ small, less than 1 % of it is bound: no LOW_LIGAND_EXCESS (the flat
    10-fold rule flagged it)."""
    data, _, free, aL = stepwise_run
    bound = METAL_M * mean_ligand_number(free[1], TRUTH)
    assert bound / (free[1] / aL + bound) < 0.01
    low = [
        fl for v in data["voltammograms"] for fl in v["flags"] if fl["code"] == "LOW_LIGAND_EXCESS"
    ]
    assert not low


def test_pKa_without_pH_is_an_input_error(tmp_path, capsys):
    simulate_series(
        tmp_path,
        ligand_M=[0.0, 0.01, 0.1, 0.3],
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        seed=1,
        start_V=0.45,
        switch_V=-0.55,
    )
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": c} for k, c in enumerate([0, 0.01, 0.1, 0.3])
    ]
    manifest = write_manifest(
        tmp_path / "m.toml",
        entries,
        series={"electrons": 1, "ligand_pKa": [9.0]},
        fit={"model": "stepwise"},
    )
    assert main(["run", str(manifest), "--out", str(tmp_path / "o"), "--quiet"]) == 2
    assert "pH" in capsys.readouterr().err


def test_fixed_constants_of_both_states_are_refused(tmp_path, capsys):
    simulate_series(
        tmp_path,
        ligand_M=[0.0, 0.01, 0.1, 0.3],
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        seed=1,
        start_V=0.45,
        switch_V=-0.55,
    )
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": c} for k, c in enumerate([0, 0.01, 0.1, 0.3])
    ]
    fit = {"model": "stepwise", "fixed_log10_beta_ox": [3.0], "fixed_log10_beta_red": [1.0]}
    manifest = write_manifest(tmp_path / "m.toml", entries, series={"electrons": 1}, fit=fit)
    assert main(["run", str(manifest), "--out", str(tmp_path / "o"), "--quiet"]) == 2
    assert "fixed_log10_beta" in capsys.readouterr().err


def test_bound_ligand_number_leaving_no_free_ligand_is_an_input_error(tmp_path, capsys):
    simulate_series(
        tmp_path,
        ligand_M=[0.0, 0.01, 0.1, 0.3],
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        seed=1,
        start_V=0.45,
        switch_V=-0.55,
    )
    levels = [0, 0.001, 0.1, 0.3]
    entries = [{"file": f"titr_{k:02d}.csv", "ligand_M": c} for k, c in enumerate(levels)]
    series = {"electrons": 1, "metal_total_M": 1e-3, "bound_ligand_number": 2}
    manifest = write_manifest(
        tmp_path / "m.toml", entries, series=series, fit={"model": "stepwise"}
    )
    assert main(["run", str(manifest), "--out", str(tmp_path / "o"), "--quiet"]) == 2
    assert "bound_ligand_number" in capsys.readouterr().err


def test_null_stepwise_record_follows_the_schema():
    from cvfit.flags import Flag
    from cvfit.titration.stepwise_result import null_stepwise_dict

    schema = json.loads((SCHEMAS / "results.schema.json").read_text(encoding="utf-8"))
    sub = {"$defs": schema["$defs"], "$ref": "#/$defs/stepwise_fit"}
    record = null_stepwise_dict(2, [Flag("TOO_FEW_POINTS", "two points", "error")])
    jsonschema.Draft202012Validator(sub).validate(record)


def test_current_ratio_term_corrects_slower_diffusing_complexes(tmp_path):
    """DeFord & Hume (1951): F0 = exp{(nF/RT)[E½(s) − E½(c)] + ln(Is/Ic)}.

    The complexes diffuse at half the free ion's D, which shifts E½ by (RT/2nF) ln(Ds/Dc)
    at full complexation (Lingane 1941); the peak-current ratio must take that out.
    """
    from cvfit.pipeline.series import analyse_manifest_file

    free = [0.0, *np.logspace(-3.3, -0.3, 9)]
    simulate_series(
        tmp_path,
        ligand_M=free,
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        noise_fraction=0.002,
        seed=8,
        start_V=0.45,
        switch_V=-0.55,
        D_ox_complexed_cm2_s=0.5e-5,
        D_ox_cm2_s=1.0e-5,
    )
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": float(c), "scan_rate_V_s": 0.1}
        for k, c in enumerate(free)
    ]
    got = {}
    for corr in (True, False):
        fit = {"model": "stepwise", "max_complexes": 4, "current_ratio_correction": corr}
        m = write_manifest(tmp_path / f"m_{corr}.toml", entries, series={"electrons": 1}, fit=fit)
        got[corr] = analyse_manifest_file(m).fit
    assert any(f.code == "CURRENT_RATIO_APPLIED" for f in got[True].flags)
    with_term = np.array(got[True].log10_beta_values)
    assert got[True].n_complexes == 3 and np.all(np.abs(with_term - TRUTH) < 0.05), with_term
    # Without the term the top constant is biased by about log10(√2) = 0.15.
    assert abs(got[False].log10_beta_values[-1] - TRUTH[-1]) > 0.08


def test_batch_summary_of_a_stepwise_series(stepwise_run, tmp_path):
    """A batch reports a stepwise series by its fit's type: log10 β_j, no Lingane ratio
    (reading the ratio of a stepwise fit used to crash the summary after the outputs)."""
    from cvfit.cli.batch import format_batch_summary, run_series

    _, out, _, _ = stepwise_run
    outcome = run_series(out.parent / "stepwise.toml", tmp_path / "batch")
    assert outcome.status == "ok", outcome.error
    assert outcome.log10_ratio is None and outcome.delta_ligands is None
    assert len(outcome.log10_beta) == 3
    assert all(abs(v - t) < 0.3 for (v, _), t in zip(outcome.log10_beta, TRUTH, strict=True))
    text = format_batch_summary([outcome])
    assert "log10 β_j (stepwise)" in text and "exit status 0" in text


def test_diffusion_term_with_both_forms_complexed(tmp_path):
    """Both forms complexed, the oxidised form's constant fixed, every complex diffusing at
    0.4 of its free ion's D (simulated truth log β_red,1 = 1.5). The right term is
    ½ ln[(D_O,s·D_R,c)/(D_R,s·D_O,c)] (Lingane, Chem. Rev. 29 (1941) 1); ln(Is/Ic) alone
    carried only D_O and gave 1.304 [1.296, 1.312]."""
    from cvfit.pipeline.series import analyse_manifest_file

    free = [0.0, *np.logspace(-3, 0, 9)]
    simulate_series(
        tmp_path,
        ligand_M=free,
        E_half_free_V=0.0,
        log10_beta_ox=(3.0,),
        log10_beta_red=(1.5,),
        noise_fraction=0.002,
        seed=3,
        start_V=0.45,
        switch_V=-0.55,
        D_ox_cm2_s=1e-5,
        D_red_cm2_s=1e-5,
        D_ox_complexed_cm2_s=0.4e-5,
        D_red_complexed_cm2_s=0.4e-5,
    )
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": float(c), "scan_rate_V_s": 0.1}
        for k, c in enumerate(free)
    ]
    fit = {"model": "stepwise", "max_complexes": 2, "fixed_log10_beta_ox": [3.0]}
    m = write_manifest(tmp_path / "m.toml", entries, series={"electrons": 1}, fit=fit)
    got = analyse_manifest_file(m).fit
    beta = got.log10_beta[0]
    assert beta.ci95[0] <= 1.5 <= beta.ci95[1] and abs(beta.value - 1.5) < 0.01, beta
    assert any(f.code == "DIFFUSION_TERM_SHARED_RATIO" for f in got.flags)


def test_anodic_first_series_balances_ligand_with_the_reduced_form(tmp_path):
    """Bulk metal in the reduced form (oxidation first), reduced form not complexed: no
    ligand is bound in the bulk, so free = total ligand (Bjerrum's mass balance with the
    bulk form's constants, none here). Taking the bulk as the oxidised form used to
    subtract M_T·n̄_ox and overstate the constants."""
    from cvfit.pipeline.series import analyse_manifest_file

    free = np.array([0.0, *np.logspace(-3.3, -0.3, 9)])
    simulate_series(
        tmp_path,
        ligand_M=free,
        E_half_free_V=0.0,
        log10_beta_ox=TRUTH,
        log10_beta_red=(),
        noise_fraction=0.002,
        seed=11,
        start_V=-0.55,
        switch_V=0.45,
        initial_species="red",
    )
    entries = [
        {"file": f"titr_{k:02d}.csv", "ligand_M": float(c), "scan_rate_V_s": 0.1}
        for k, c in enumerate(free)
    ]
    series = {"electrons": 1, "metal_total_M": METAL_M}
    fit = {"model": "stepwise", "max_complexes": 4}
    m = write_manifest(tmp_path / "m.toml", entries, series=series, fit=fit)
    result = analyse_manifest_file(m)
    used = [f for f in result.files if f.used_in_fit]
    np.testing.assert_allclose([f.free_ligand_M for f in used], free[1:], rtol=1e-9)
    got = np.array(result.fit.log10_beta_values)
    assert result.fit.n_complexes == 3 and np.all(np.abs(got - TRUTH) < 0.05), got


def test_stepwise_report_opens_with_the_beta_table(stepwise_run, tmp_path, monkeypatch):
    """The headline of a stepwise series is its β_j table, then the screen in words; the
    half-wave figure carries the same lines under its title."""
    from cvfit.io import load_manifest
    from cvfit.pipeline.series import analyse_series
    from cvfit.report.figures import stepwise as stepwise_figures
    from cvfit.report.headline import quantity_text

    data, out, _, _ = stepwise_run
    expected = [
        f"log10 β{j} = {quantity_text(q)}" for j, q in enumerate(data["fit"]["log10_beta"], 1)
    ]
    page = (out / "report.html").read_text(encoding="utf-8")
    top = page[page.index('<section class="headline"') : page.index("<h2>Conditions")]
    assert all(line in top for line in expected)
    assert "passed the reversibility screen" in top or "failed the reversibility" in top
    titles = []
    original = stepwise_figures._save

    def keep(fig, path, **kw):
        titles.append(fig.axes[0].get_title())
        return original(fig, path, **kw)

    monkeypatch.setattr(stepwise_figures, "_save", keep)
    result = analyse_series(load_manifest(data["manifest"]))
    stepwise_figures.plot_stepwise_shift(result, tmp_path / "shift.png")
    # the constants' lines, each wrapped to the one-column figure's width
    assert " ".join(titles[0].split()).endswith(" ".join(" ".join(expected).split()))


def test_stepwise_figures_are_lettered_at_least_7_pt_printed(stepwise_run):
    """Common practice of journals: lettering 7-9 pt at the printed size; the half-wave
    shift is printed one column wide (8.5 cm), the three-panel figures two (17.8 cm)."""
    from matplotlib.text import Text

    from cvfit.io import load_manifest
    from cvfit.pipeline.series import analyse_series
    from cvfit.report.figures.registry import FIGURES, draw_figure
    from cvfit.report.figures.titration import keep_figures

    _, out, _, _ = stepwise_run
    result = analyse_series(load_manifest(out.parent / "stepwise.toml"))
    widths = {"stepwise_shift": 8.5 / 2.54, "stepwise_leden": 17.8 / 2.54,
              "stepwise_species": 17.8 / 2.54}  # fmt: skip
    for key, width_in in widths.items():
        with keep_figures() as kept:
            draw_figure(FIGURES[key], result, out)
        (fig,) = kept
        fig.canvas.draw()
        sizes = [t.get_fontsize() for t in fig.findobj(Text)
                 if t.get_visible() and t.get_text().strip()]  # fmt: skip
        assert min(sizes) * width_in / fig.get_size_inches()[0] >= 7.0, key
        if key == "stepwise_shift":
            assert fig.axes[0].get_legend() is not None
