"""Error budget of the Lingane fit: parts that add up, and honest intervals under
solution-to-solution offsets.

The Monte-Carlo draws E½ values on Lingane's line (Lingane, Chem. Rev. 29 (1941) 1) with a
per-file noise of 0.2 mV and, for every solution (the ligand-free ones too), an offset of
1–3 mV of random sign — a reference electrode that drifts between solutions. The 95 %
intervals must still hold the truth in >= 90 % of the series (issue requirement); with
2000 series the binomial standard error of a 95 % rate is 0.49 %.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from cvfit.titration.error_budget import (
    ErrorBudget,
    budget_of,
    extra_scatter_variance,
    reference_mean,
    within_file_variance,
)
from cvfit.titration.lingane import TitrationPoint, fit_lingane
from cvfit.units import nernst_slope_V_per_decade

TRUE_RATIO = 4.6  # invented log10(β_ox/β_red)
E_REF = -0.120  # invented ligand-free E½, V
L = np.logspace(-3.0, -1.0, 7)
SLOPE = nernst_slope_V_per_decade(298.15, 1)
KEYS = ("log10_beta_ratio", "delta_ligands", "log10_beta_ratio_at_integer")


def offsets(rng, n, low=1e-3, high=3e-3):
    return rng.choice([-1.0, 1.0], n) * rng.uniform(low, high, n)


def one_series(rng, *, noise=0.2e-3, n_ref=1, low=1e-3, high=3e-3):
    sd = np.full(L.size, noise)
    E = E_REF - SLOPE * TRUE_RATIO - SLOPE * np.log10(L) + offsets(rng, L.size, low, high)
    E = E + rng.normal(0.0, sd)
    refs = E_REF + offsets(rng, n_ref, low, high) + rng.normal(0.0, noise, n_ref)
    mean, stderr, _ = reference_mean(refs, np.full(n_ref, noise))
    pts = [
        TitrationPoint(f"t{i}.csv", c, e, s)
        for i, (c, e, s) in enumerate(zip(L, E, sd, strict=True))
    ]
    return fit_lingane(
        pts,
        electrons=1,
        temperature_K=298.15,
        reference_E_half_V=mean,
        reference_stderr_V=stderr,
        reference_count=n_ref,
    )


def coverage(seed, trials, **kw):
    rng = np.random.default_rng(seed)
    hits = np.zeros(3)
    for _ in range(trials):
        fit = one_series(rng, **kw)
        for k, (key, truth) in enumerate(zip(KEYS, (TRUE_RATIO, 1.0, TRUE_RATIO), strict=True)):
            lo, hi = getattr(fit, key).ci95
            hits[k] += lo <= truth <= hi
    return hits / trials


@pytest.mark.parametrize("n_ref", [1, 2])
def test_offsets_of_1_to_3_mV_keep_90_percent_coverage(n_ref):
    cov = coverage(2024 + n_ref, 2000, n_ref=n_ref)
    print(f"coverage with 1-3 mV offsets, {n_ref} reference file(s): {cov}")
    assert cov.min() >= 0.90, cov


def test_budget_parts_add_up_to_the_reported_standard_errors():
    fit = one_series(np.random.default_rng(3), n_ref=2)
    assert fit.error_budget is not None
    for key in (*KEYS, "slope_V_per_decade", "intercept_V"):
        b = fit.error_budget[key]
        assert b.total == pytest.approx(getattr(fit, key).stderr, rel=1e-9)
        parts = (b.within_file or 0.0) ** 2 + b.between_solutions**2 + b.reference**2
        assert math.sqrt(parts) == pytest.approx(b.total, rel=1e-9)
    assert fit.error_budget["delta_ligands"].reference == 0.0
    # offsets of 1-3 mV against 0.2 mV noise: the scatter between solutions dominates
    b = fit.error_budget["log10_beta_ratio"]
    assert b.between_solutions > 3 * b.within_file
    assert b.reference > b.within_file
    assert 0.8e-3 < fit.extra_scatter_V < 4e-3
    d = fit.to_dict()
    assert d["error_budget"]["log10_beta_ratio"]["unit"] == "log10 units"
    assert d["extra_scatter_V"] == pytest.approx(fit.extra_scatter_V)


def test_noise_only_series_is_within_file_and_scatter_estimate_is_small():
    rng = np.random.default_rng(11)
    fit = one_series(rng, low=0.0, high=0.0)
    b = fit.error_budget["delta_ligands"]
    assert fit.weighted
    assert b.within_file is not None and b.within_file >= b.between_solutions
    assert fit.extra_scatter_V < 0.4e-3


def test_extra_scatter_estimate_is_unbiased_over_many_lines():
    # s² is estimated without bias before the truncation at 0: over many lines with
    # s = 1 mV and heteroscedastic noise its mean is 1e-6 V² within a few per cent.
    rng = np.random.default_rng(5)
    x = np.log10(L)
    X = np.column_stack([x, np.ones_like(x)])
    sigma = np.linspace(0.2e-3, 0.8e-3, x.size)
    est = []
    for weights in (np.ones_like(x), 1 / sigma**2):
        for _ in range(4000):
            y = 0.1 - 0.059 * x + rng.normal(0, 1e-3, x.size) + rng.normal(0, sigma)
            a = np.linalg.solve((X.T * weights) @ X, (X.T * weights) @ y)
            r = y - X @ a
            est.append(extra_scatter_variance(X, weights, r, sigma))
        assert np.mean(est[-4000:]) == pytest.approx(1e-6, rel=0.06)
    # and the within-file part is the noise propagated through the estimator
    v = within_file_variance(X, 1 / sigma**2, sigma)
    assert v == pytest.approx(np.linalg.inv((X.T / sigma**2) @ X), rel=1e-9)


def test_reference_mean_of_files_before_and_after_the_series():
    # two ligand-free files 3 mV apart with 0.2 mV noise each: the mean's standard
    # error comes from their spread (SD/√2 = 2.12 mV), not from their noise
    mean, stderr, spread = reference_mean(np.array([0.100, 0.103]), np.array([2e-4, 2e-4]))
    assert mean == pytest.approx(0.1015)
    assert spread == pytest.approx(0.003 / math.sqrt(2))
    assert stderr == pytest.approx(spread / math.sqrt(2))
    # agreeing files: the weighted mean, with the noise-based error
    mean, stderr, _ = reference_mean(np.array([0.1, 0.1001]), np.array([1e-4, 3e-4]))
    assert mean == pytest.approx(0.1 + 0.1e-3 * 0.1, abs=1e-9)
    assert stderr == pytest.approx(1 / math.sqrt(1e8 + 1e8 / 9))
    one = reference_mean(np.array([0.1]), np.array([np.nan]))
    assert one == (0.1, None, None)


def test_budget_records_validate():
    b = budget_of("V", 4e-6, 1e-6, 9e-6)
    assert (b.within_file, b.between_solutions, b.reference) == pytest.approx(
        (1e-3, math.sqrt(3) * 1e-3, 3e-3)
    )
    assert b.scaled(-2.0, "x").total == pytest.approx(2 * b.total)
    assert budget_of("V", 1e-6, 4e-6, 0.0).between_solutions == 0.0
    with pytest.raises(ValueError, match="add up"):
        ErrorBudget("V", 1.0, 1.0, 0.0, 1.0)
    with pytest.raises(ValueError, match="reference"):
        ErrorBudget("V", 1.0, 0.0, -1.0, 1.0)


@pytest.mark.slow
def test_offsets_through_whole_voltammograms_keep_90_percent_coverage():
    # 400 series of 7 simulated CVs (seriesfactory's truth: p − q = 1, log10 ratio 6.0),
    # each solution's potentials shifted by its own 1-3 mV offset, 0.5 % noise, through
    # peaks → screen → switching correction → Lingane fit. Binomial SE of 95 % at 400
    # series: 1.1 %; the fixed seed keeps the test deterministic.
    from dataclasses import replace

    from seriesfactory import LIGAND_M, TRUE_DELTA_LIGANDS, TRUE_LOG10_RATIO, simulate_point
    from test_coverage_voltammograms import in_memory_manifest

    from cvfit.pipeline.series import analyse_series

    manifest = in_memory_manifest()
    base = {
        e.name: simulate_point(e.ligand_M, seed=k, noise_fraction=0.0)
        for k, e in enumerate(manifest.voltammograms)
    }
    rng = np.random.default_rng(99)
    hits = np.zeros(3)
    n_series = 400
    for _ in range(n_series):
        records = {}
        for name, v in base.items():
            i = np.asarray(v.current_A)
            noisy = i + rng.normal(0.0, 0.005 * float(np.abs(i).max()), i.size)
            shift = float(offsets(rng, 1)[0])
            records[name] = replace(
                v, potential_V=np.asarray(v.potential_V) + shift, current_A=noisy
            )
        fit = analyse_series(manifest, records=records).fit
        assert fit is not None and fit.n_points == len(LIGAND_M) - 1
        truths = (TRUE_LOG10_RATIO, TRUE_DELTA_LIGANDS, TRUE_LOG10_RATIO)
        for k, (key, truth) in enumerate(zip(KEYS, truths, strict=True)):
            lo, hi = getattr(fit, key).ci95
            hits[k] += lo <= truth <= hi
    cov = hits / n_series
    print(f"coverage through voltammograms with 1-3 mV offsets: {cov}")
    assert cov.min() >= 0.90, cov


def test_demo_report_has_the_budget_table_and_schema_valid_json():
    import json
    from importlib import resources

    import jsonschema

    from cvfit.pipeline.series import analyse_manifest_file
    from cvfit.report.html import render_html
    from cvfit.report.results_json import load_schema

    demo = resources.files("cvfit") / "data" / "demo" / "series.toml"
    data = json.loads(json.dumps(analyse_manifest_file(str(demo)).to_dict()))
    jsonschema.validate(data, load_schema("results"))
    budget = data["fit"]["error_budget"]["log10_beta_ratio"]
    assert budget["total"] == pytest.approx(data["fit"]["log10_beta_ratio"]["stderr"])
    page = render_html(data)
    assert "<h2>Error budget</h2>" in page
    assert page.index("Error budget") > page.index("<h2>Constants</h2>")
    assert f'data-value="{budget["total"]!r}"' in page


@pytest.mark.parametrize("offset_mV", [0.0, 2.0])
def test_stepwise_budget_adds_up_and_sees_the_offsets(offset_mV):
    # three complexes of the oxidised form (invented constants); 0.2 mV noise per file and
    # optionally a 1-3 mV offset per solution
    from cvfit.chemistry.complexation import complexed_half_wave_V
    from cvfit.titration.stepwise import StepwisePoint, fit_stepwise

    rng = np.random.default_rng(21)
    truth = (2.0, 3.7, 4.9)
    lig = np.logspace(-3.5, 0.0, 14)
    E = complexed_half_wave_V(0.0, ligand_M=lig, log10_beta_ox=truth, log10_beta_red=())
    hi = offset_mV * 1e-3
    E = E + rng.normal(0.0, 0.2e-3, lig.size) + offsets(rng, lig.size, hi / 2, hi)
    pts = [StepwisePoint(f"p{i}", float(c), float(e), 0.2e-3) for i, (c, e) in enumerate(
        zip(lig, E, strict=True))]  # fmt: skip
    fit = fit_stepwise(
        pts,
        electrons=1,
        temperature_K=298.15,
        reference_E_half_V=float(offsets(rng, 1, hi / 2, hi)[0]) if hi else 0.0,
        reference_stderr_V=0.2e-3,
        max_complexes=3,
    )
    assert fit.error_budget is not None and len(fit.error_budget) == fit.n_complexes
    for q, b in zip(fit.log10_beta, fit.error_budget, strict=True):
        assert b.total == pytest.approx(q.stderr, rel=1e-6)
        assert b.unit == "log10 units"
    d = fit.to_dict()
    assert set(d["error_budget"]) == {f"log10_beta_{j}" for j in range(1, fit.n_complexes + 1)}
    first = fit.error_budget[0]
    if offset_mV:
        assert first.between_solutions > first.within_file
        assert fit.extra_scatter_V > 0.5e-3
    else:
        assert fit.extra_scatter_V < 0.4e-3


def test_budget_table_lists_stepwise_constants():
    from cvfit.report.html_sections import error_budget_section

    entry = {"unit": "log10 units", "within_file": 0.01, "between_solutions": 0.02,
             "reference": 0.0, "total": math.sqrt(5e-4)}  # fmt: skip
    data = {"fit": {"error_budget": {"log10_beta_2": entry, "log10_beta_1": entry}}}
    page = error_budget_section(data)
    assert page.index("log10 β1") < page.index("log10 β2")
    assert error_budget_section({"fit": {"error_budget": None}}) == ""
