"""Lingane fit: exact lines, round trips, fixed-integer refit, curvature and flags."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from cvfit.errors import InputError
from cvfit.flags import FitRefused, Flag
from cvfit.titration.lingane import (
    LinganeFit,
    TitrationPoint,
    check_points,
    fit_lingane,
    null_fit_dict,
)
from cvfit.units import thermal_voltage

T25 = 298.15
E_REF = 0.150  # invented ligand-free E½, V


def lingane_E_half(ligand_M, *, log10_ratio, delta, electrons, T=T25, E_ref=E_REF):
    """E½(c) from Lingane, Chem. Rev. 29 (1941) 1 (diffusion-coefficient term neglected)."""
    s = math.log(10.0) * thermal_voltage(T, electrons)
    return E_ref - s * log10_ratio - delta * s * np.log10(np.asarray(ligand_M, dtype=float))


def points(ligand_M, E_half, stderr=None):
    sd = [None] * len(ligand_M) if stderr is None else list(np.broadcast_to(stderr, len(ligand_M)))
    return [
        TitrationPoint(f"titr_{i:02d}.csv", float(c), float(e), None if s is None else float(s))
        for i, (c, e, s) in enumerate(zip(ligand_M, E_half, sd, strict=True))
    ]


def fit(pts, electrons=1, ref_sd=None, **kw):
    return fit_lingane(
        pts,
        electrons=electrons,
        temperature_K=kw.pop("T", T25),
        reference_E_half_V=kw.pop("E_ref", E_REF),
        reference_stderr_V=ref_sd,
        **kw,
    )


def codes(result):
    return {f.code for f in result.flags}


# --- exact lines -----------------------------------------------------------------------


@pytest.mark.parametrize("electrons, delta", [(1, 1), (1, 2), (2, 1), (2, 3)])
def test_noise_free_slope_and_constants(electrons, delta):
    # ln(10)·RT/F = 59.159 mV per decade at 298.15 K (calculated, CODATA 2018 R and F), so the
    # Lingane slope is −59.16 (p − q)/n mV/decade (Lingane, Chem. Rev. 29 (1941) 1, from
    # memory).
    # β·[L]^Δ >= 10^3.3 at the lowest point: a real series would be straight here too
    L = np.logspace(-3.0, -1.0, 7)
    ratio = 3.3 + 3.0 * delta
    E = lingane_E_half(L, log10_ratio=ratio, delta=delta, electrons=electrons)
    r = fit(points(L, E), electrons=electrons, ref_sd=0.0)
    assert r.slope_V_per_decade.value == pytest.approx(-0.059159 * delta / electrons, rel=2e-5)
    assert r.delta_ligands.value == pytest.approx(delta, abs=1e-9)
    assert r.delta_ligands_integer == delta
    assert r.log10_beta_ratio.value == pytest.approx(ratio, abs=1e-9)
    assert r.log10_beta_ratio_at_integer.value == pytest.approx(ratio, abs=1e-9)
    assert r.intercept_V.value == pytest.approx(-ratio * r.nernst_slope_V_per_decade, abs=1e-12)
    assert max(abs(x) for x in r.residuals_V) < 1e-12
    assert r.curvature_p_value == 1.0
    assert codes(r) <= {"WEIGHTS_UNAVAILABLE"}


def test_temperature_enters_the_slope():
    # At 37 °C the Nernst slope is 59.159 mV · 310.15/298.15 = 61.54 mV/decade [calc].
    L = np.logspace(-2.5, -0.5, 6)
    E = lingane_E_half(L, log10_ratio=2.0, delta=1, electrons=1, T=310.15)
    r = fit(points(L, E), ref_sd=0.0, T=310.15)
    assert r.nernst_slope_V_per_decade == pytest.approx(0.059159 * 310.15 / 298.15, rel=2e-5)
    assert r.log10_beta_ratio.value == pytest.approx(2.0, abs=1e-9)


# --- round trips -----------------------------------------------------------------------


def simulated_series(rng, *, electrons, noise_V, n_points, decades, delta, log10_ratio):
    lo = -3.2
    L = np.logspace(lo, lo + decades, n_points)
    E = lingane_E_half(L, log10_ratio=log10_ratio, delta=delta, electrons=electrons)
    return points(L, E + rng.normal(0.0, noise_V, n_points), noise_V)


CASES = [  # electrons, noise (V), points, decades, p − q, log10 ratio — invented scenarios
    (1, 0.3e-3, 6, 1.5, 1, 3.7),
    (1, 1.0e-3, 8, 2.5, 2, 6.1),
    (2, 0.5e-3, 7, 2.0, 1, 5.2),
    (2, 0.3e-3, 8, 2.5, 2, 8.4),
]


@pytest.mark.parametrize("electrons, noise, n_pts, decades, delta, ratio", CASES)
def test_round_trip_single_series(electrons, noise, n_pts, decades, delta, ratio):
    # Issue requirement: log10 ratio within 0.03 and p − q within 0.05 (fixed seeds).
    rng = np.random.default_rng(20261201 + n_pts)
    for _ in range(5):
        pts = simulated_series(
            rng,
            electrons=electrons,
            noise_V=noise,
            n_points=n_pts,
            decades=decades,
            delta=delta,
            log10_ratio=ratio,
        )
        r = fit(pts, electrons=electrons, ref_sd=noise)
        assert r.weighted
        assert r.delta_ligands_integer == delta
        assert abs(r.delta_ligands.value - delta) < 0.05
        assert abs(r.log10_beta_ratio_at_integer.value - ratio) < 0.03
        # The slope-free ratio is an extrapolation to log10[L] = 0; it is checked
        # against its own error bar here and on the mean below.
        assert abs(r.log10_beta_ratio.value - ratio) < 4 * r.log10_beta_ratio.stderr


@pytest.mark.parametrize("electrons, noise, n_pts, decades, delta, ratio", CASES)
def test_round_trip_mean_over_series(electrons, noise, n_pts, decades, delta, ratio):
    rng = np.random.default_rng(7 + 100 * electrons + n_pts)
    got = []
    for _ in range(20):
        pts = simulated_series(
            rng,
            electrons=electrons,
            noise_V=noise,
            n_points=n_pts,
            decades=decades,
            delta=delta,
            log10_ratio=ratio,
        )
        r = fit(pts, electrons=electrons, ref_sd=noise, weighting="none")
        got.append((r.log10_beta_ratio.value, r.delta_ligands.value))
    mean_ratio, mean_delta = np.mean(got, axis=0)
    assert abs(mean_ratio - ratio) < 0.03
    assert abs(mean_delta - delta) < 0.05


def test_reference_uncertainty_enters_intercept_only():
    rng = np.random.default_rng(3)
    pts = simulated_series(
        rng, electrons=1, noise_V=0.5e-3, n_points=7, decades=2.0, delta=1, log10_ratio=3.0
    )
    for weighting in ("none", "auto"):
        a = fit(pts, ref_sd=0.0, weighting=weighting)
        b = fit(pts, ref_sd=2e-3, weighting=weighting)
        assert b.slope_V_per_decade.stderr == pytest.approx(a.slope_V_per_decade.stderr)
        assert b.delta_ligands.ci95 == pytest.approx(a.delta_ligands.ci95, rel=1e-12)
        assert b.covariance[0][1] == pytest.approx(a.covariance[0][1], rel=1e-12)
        assert b.covariance[1][1] == pytest.approx(b.intercept_V.stderr**2, rel=1e-12)
    # Unweighted: var(intercept) = var(a') + σ_s² + s², the reference being one more
    # solution: its own error σ_s (known, independent measurement) plus the between-solution
    # variance s² the points show, here computed from the closed-form OLS line (Draper &
    # Smith, Applied Regression Analysis 3rd ed. (1998) ch. 1, from memory) and the moment
    # estimate Σ(rᵢ² − (1 − hᵢᵢ)σᵢ²)/(N − 2) (Searle, Casella & McCulloch, Variance
    # Components (1992) ch. 4). The interval adds t(N − 2) and normal half-widths in
    # quadrature (GUM-style).
    x = np.log10([p.ligand_M for p in pts])
    y = np.array([p.E_half_V for p in pts])
    sig = np.array([p.E_half_stderr_V for p in pts])
    slope, icpt = np.polyfit(x, y, 1)
    res = y - (icpt + slope * x)
    sxx = np.sum((x - x.mean()) ** 2)
    h = 1 / x.size + (x - x.mean()) ** 2 / sxx
    s2 = max(0.0, float(np.sum(res**2 - (1 - h) * sig**2)) / (x.size - 2))
    var_a = res @ res / (x.size - 2) * (1 / x.size + x.mean() ** 2 / sxx)
    b = fit(pts, ref_sd=2e-3, weighting="none")
    assert b.intercept_V.stderr**2 == pytest.approx(var_a + 4e-6 + s2, rel=1e-9)
    half_b = np.diff(b.intercept_V.ci95)[0] / 2
    t5 = 2.570582  # Student t, 5 dof, 97.5 % (any statistics table)
    assert half_b == pytest.approx(
        math.hypot(t5 * math.sqrt(var_a), 1.959964 * math.sqrt(4e-6 + s2)), rel=1e-6
    )
    assert b.dof < b.intercept_dof < math.inf
    assert "quadrature" in b.log10_beta_ratio.method
    # Weighted: the reference keeps its own variance, not scaled by the reduced χ²; the
    # interval combines t(N − 2) for the fit with the normal reference part
    a = fit(pts, ref_sd=0.0)
    b = fit(pts, ref_sd=2e-3)
    assert a.weighted and b.weighted
    assert b.intercept_V.stderr**2 == pytest.approx(a.intercept_V.stderr**2 + 4e-6, rel=1e-9)
    assert b.dof == 5 < b.intercept_dof < math.inf
    assert "quadrature" in b.log10_beta_ratio.method


def test_covariance_matches_closed_form_ols():
    # Ordinary least squares, Draper & Smith, Applied Regression Analysis, 3rd ed., Wiley
    # (1998), ch. 1 (from memory).
    rng = np.random.default_rng(11)
    L = np.logspace(-3, -1, 6)
    E = lingane_E_half(L, log10_ratio=2.0, delta=1, electrons=1) + rng.normal(0, 1e-3, 6)
    r = fit(points(L, E), ref_sd=0.0, weighting="none")
    x = np.log10(L)
    b, a = np.polyfit(x, E, 1)
    res = E - (a + b * x)
    s2 = res @ res / 4
    sxx = np.sum((x - x.mean()) ** 2)
    assert r.slope_V_per_decade.value == pytest.approx(b, rel=1e-9)
    assert r.slope_V_per_decade.stderr == pytest.approx(math.sqrt(s2 / sxx), rel=1e-6)
    # the intercept of the shift adds E½(s) as one more solution: with no per-file errors
    # the points' whole scatter s² is its between-solution variance
    assert r.intercept_V.stderr == pytest.approx(
        math.sqrt(s2 * (1 / 6 + x.mean() ** 2 / sxx) + s2), rel=1e-6
    )
    assert r.residuals_V == pytest.approx(tuple(res), abs=1e-12)


# --- fixed-integer refit ---------------------------------------------------------------


def test_fixed_integer_refit_dof_and_narrower_interval():
    rng = np.random.default_rng(5)
    for _ in range(10):
        pts = simulated_series(
            rng, electrons=1, noise_V=0.8e-3, n_points=7, decades=2.0, delta=2, log10_ratio=5.0
        )
        r = fit(pts, ref_sd=0.3e-3)
        assert r.delta_ligands_integer == 2
        assert r.dof == 5
        assert "dof=6" in r.log10_beta_ratio_at_integer.method or "Welch" in (
            r.log10_beta_ratio_at_integer.method
        )
        width = np.diff(r.log10_beta_ratio.ci95)[0]
        width_int = np.diff(r.log10_beta_ratio_at_integer.ci95)[0]
        assert width_int < width


def test_fixed_integer_refit_unweighted_dof_is_n_minus_1():
    rng = np.random.default_rng(8)
    pts = simulated_series(
        rng, electrons=2, noise_V=0.5e-3, n_points=6, decades=2.0, delta=1, log10_ratio=3.0
    )
    r = fit(pts, electrons=2, weighting="none")
    assert r.log10_beta_ratio_at_integer.method.startswith("student-t, dof=5")


# --- curvature -------------------------------------------------------------------------


def deford_hume_E_half(ligand_M, log_beta, electrons, E_ref=E_REF):
    """Reduced form uncomplexed: E½(c) − E½(s) = −(RT/nF) ln F0, F0 = Σ βj [L]^j.

    DeFord & Hume, J. Am. Chem. Soc. 73 (1951) 5321 (from memory), with Is/Ic = 1.
    """
    L = np.asarray(ligand_M, dtype=float)
    f0 = 1.0 + sum(10.0**lb * L ** (j + 1) for j, lb in enumerate(log_beta))
    return E_ref - thermal_voltage(T25, electrons) * np.log(f0)


def test_two_complex_curve_is_flagged_curved():
    rng = np.random.default_rng(42)
    L = np.logspace(-5.0, -1.5, 8)  # wide range across β1/β2 = 1e-3 M: ML then ML2
    for _ in range(10):
        E = deford_hume_E_half(L, (4.0, 7.0), 1) + rng.normal(0, 0.5e-3, L.size)
        r = fit(points(L, E, 0.5e-3), ref_sd=0.5e-3)
        assert r.curvature_p_value is not None and r.curvature_p_value < 0.01
        assert "LINE_CURVED" in codes(r)
        assert any("stepwise" in f.message for f in r.flags if f.code == "LINE_CURVED")


@pytest.mark.parametrize("weighting", ["auto", "none"])
def test_straight_line_not_flagged_curved(weighting):
    # Under the null the F-test p-value is uniform: about 1 % of straight lines flagged.
    # β·[L] >= 1000 here, so the free ion the line neglects moves E½ by <= 0.03 mV.
    rng = np.random.default_rng(99)
    L = np.logspace(-3.0, -1.0, 7)
    flagged = 0
    for _ in range(300):
        E = lingane_E_half(L, log10_ratio=6.0, delta=1, electrons=1)
        r = fit(
            points(L, E + rng.normal(0, 0.7e-3, 7), 0.7e-3), ref_sd=0.5e-3, weighting=weighting
        )
        flagged += "LINE_CURVED" in codes(r)
    assert flagged <= 9  # 3 %: binomial(300, 0.01) exceeds 9 with probability ~1e-3


def test_curvature_needs_four_points():
    L = np.array([1e-3, 1e-2, 1e-1])
    E = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + [1e-4, -2e-4, 1e-4]
    r = fit(points(L, E), ref_sd=1e-4)
    assert r.curvature_p_value is None
    assert r.dof == 1


# --- weighting -------------------------------------------------------------------------


def test_weights_not_credible_falls_back_to_unweighted():
    rng = np.random.default_rng(1)
    L = np.logspace(-3, -1, 7)
    E = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + rng.normal(0, 3e-3, 7)
    pts = points(L, E, 0.2e-3)  # stated errors 15× too small
    r = fit(pts, ref_sd=0.2e-3)
    assert not r.weighted
    assert "WEIGHTS_NOT_CREDIBLE" in codes(r)
    assert r.reduced_chi_square > 20
    # E½(s) came from the same analysis as the understated errors: it gets the scatter.
    plain = fit(pts, ref_sd=None, weighting="none")
    assert r.intercept_V.stderr == pytest.approx(plain.intercept_V.stderr, rel=1e-9)
    assert r.log10_beta_ratio.ci95 == pytest.approx(plain.log10_beta_ratio.ci95, rel=1e-9)
    forced = fit(pts, ref_sd=0.2e-3, weighting="stderr")
    assert forced.weighted and "WEIGHTS_NOT_CREDIBLE" in codes(forced)


def test_weights_used_when_credible_and_stderr_mode_needs_them():
    rng = np.random.default_rng(2)
    L = np.logspace(-3, -1, 7)
    sd = np.array([0.3, 0.3, 0.5, 0.5, 1.0, 1.5, 2.0]) * 1e-3
    E = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + rng.normal(0, sd)
    r = fit(points(L, E, sd), ref_sd=0.3e-3)
    assert r.weighted and "WEIGHTS_NOT_CREDIBLE" not in codes(r)
    assert fit(points(L, E, sd), weighting="none", ref_sd=0.3e-3).weighted is False
    missing = points(L, E, sd)
    missing[3] = TitrationPoint("titr_03.csv", L[3], E[3], float("nan"))
    assert missing[3].E_half_stderr_V is None
    r2 = fit(missing, ref_sd=0.3e-3)
    assert not r2.weighted and "WEIGHTS_UNAVAILABLE" in codes(r2)
    assert r2.reduced_chi_square is None
    with pytest.raises(InputError, match="titr_03.csv"):
        fit(missing, ref_sd=0.3e-3, weighting="stderr")


def test_unknown_reference_stderr_is_flagged_and_counted():
    L = np.logspace(-3, -1, 6)
    rng = np.random.default_rng(4)
    E = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + rng.normal(0, 1e-3, 6)
    known = fit(points(L, E), ref_sd=0.0, weighting="none")
    unknown = fit(points(L, E), ref_sd=None, weighting="none")
    assert "REFERENCE_STDERR_FROM_SCATTER" in codes(unknown)
    # closed-form OLS (Draper & Smith 1998, ch. 1, from memory): the reference scatters like
    # one more point, var = var(a') + s²; a reference given as exact (σ_s = 0) is still one
    # more solution and carries the same s² (no per-file errors: all scatter is between)
    x = np.log10(L)
    slope, icpt = np.polyfit(x, E, 1)
    res = E - (icpt + slope * x)
    s2 = res @ res / 4
    var_a = s2 * (1 / 6 + x.mean() ** 2 / np.sum((x - x.mean()) ** 2))
    assert unknown.intercept_V.stderr**2 == pytest.approx(var_a + s2, rel=1e-9)
    assert known.intercept_V.stderr**2 == pytest.approx(var_a + s2, rel=1e-9)


# --- flags on p − q and the ligand range -----------------------------------------------


def test_delta_ligands_flags():
    L = np.logspace(-3, -1, 7)
    rng = np.random.default_rng(6)
    half = lingane_E_half(L, log10_ratio=3.0, delta=1.5, electrons=1) + rng.normal(0, 1e-4, 7)
    r = fit(points(L, half, 1e-4), ref_sd=1e-4)
    assert "DELTA_LIGANDS_NOT_WHOLE" in codes(r)
    msg = next(f.message for f in r.flags if f.code == "DELTA_LIGANDS_NOT_WHOLE")
    assert 'model = "stepwise"' in msg  # the remedy, not only the diagnosis
    wide = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + rng.normal(0, 0.1, 7)
    assert "DELTA_LIGANDS_AMBIGUOUS" in codes(fit(points(L, wide), ref_sd=1e-3))
    flat = lingane_E_half(L, log10_ratio=0.5, delta=0, electrons=1) + rng.normal(0, 1e-4, 7)
    r0 = fit(points(L, flat), ref_sd=1e-4)
    assert r0.delta_ligands_integer == 0 and "DELTA_LIGANDS_NOT_POSITIVE" in codes(r0)
    good = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + rng.normal(0, 3e-4, 7)
    assert not {c for c in codes(fit(points(L, good, 3e-4), ref_sd=3e-4)) if "DELTA" in c}


def test_short_range_and_too_few_points():
    L = np.array([0.05, 0.07, 0.1, 0.2])
    E = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1)
    assert {f.code for f in check_points(points(L, E))} == {"SHORT_LIGAND_RANGE"}
    assert "SHORT_LIGAND_RANGE" in codes(fit(points(L, E), ref_sd=1e-4))
    two = points(L[:2], E[:2])
    (flag,) = check_points(two)
    assert flag.code == "TOO_FEW_POINTS" and flag.severity == "error"
    # an expected failure is a value carrying the flags and their message, not an exception
    refused = fit(two, ref_sd=1e-4)
    assert isinstance(refused, FitRefused) and refused.flags == (flag,)
    assert "at least 3" in refused.message
    same = points([0.1, 0.1, 0.1], E[:3])
    assert check_points(same)[0].code == "NO_LIGAND_RANGE"
    refused = fit(same, ref_sd=1e-4)
    assert isinstance(refused, FitRefused) and refused.flags[0].code == "NO_LIGAND_RANGE"
    with pytest.raises(ValueError, match="severity 'error'"):
        FitRefused((Flag("SHORT_LIGAND_RANGE", "a warning alone refuses nothing"),))


def test_null_fit_dict_has_the_same_keys():
    L = np.logspace(-3, -1, 5)
    r = fit(points(L, lingane_E_half(L, log10_ratio=1.0, delta=1, electrons=1)), ref_sd=0.0)
    flags = check_points(points(L[:1], [0.1]))
    null = null_fit_dict(1, flags)
    assert set(null) == set(r.to_dict())
    assert null["log10_beta_ratio"] == {"value": None, "stderr": None, "ci95": [None, None]}
    assert null["flags"][0]["code"] == "TOO_FEW_POINTS"


# --- input validation and the JSON record ----------------------------------------------


def test_non_positive_ligand_rejected_by_name():
    pts = points([1e-3, 1e-2, 1e-1], [0.1, 0.05, 0.0])
    pts[1] = TitrationPoint("titr_free.csv", 0.0, 0.05, None)
    with pytest.raises(ValueError, match="titr_free.csv.*ligand_M"):
        fit(pts, ref_sd=0.0)
    with pytest.raises(ValueError, match="x.csv: x must be >= 0"):  # x: the generic variable
        TitrationPoint("x.csv", -1e-3, 0.1, None)
    with pytest.raises(ValueError, match="E_half_stderr_V"):
        TitrationPoint("x.csv", 1e-3, 0.1, -1e-4)
    with pytest.raises(ValueError, match="E_half_V"):
        TitrationPoint("x.csv", 1e-3, float("inf"), None)


def test_bad_options_rejected():
    L = np.logspace(-3, -1, 4)
    pts = points(L, lingane_E_half(L, log10_ratio=1.0, delta=1, electrons=1))
    with pytest.raises(ValueError, match="weighting"):
        fit(pts, weighting="robust")
    with pytest.raises(ValueError, match="reference_stderr_V"):
        fit(pts, ref_sd=-1.0)
    with pytest.raises(ValueError, match="electrons"):
        fit(pts, electrons=0)


def test_caller_data_not_mutated_and_order_kept():
    rng = np.random.default_rng(9)
    L = np.logspace(-3, -1, 6)[::-1]
    E = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + rng.normal(0, 1e-3, 6)
    pts = points(L, E, 1e-3)
    before = list(pts)
    r = fit(pts, ref_sd=1e-3)
    assert pts == before
    x = np.log10(L)
    fitted = r.intercept_V.value + E_REF + r.slope_V_per_decade.value * x
    assert r.residuals_V == pytest.approx(tuple(E - fitted), abs=1e-12)


def test_to_dict_is_json_with_contract_keys():
    rng = np.random.default_rng(10)
    L = np.logspace(-3, -1, 6)
    E = lingane_E_half(L, log10_ratio=3.0, delta=1, electrons=1) + rng.normal(0, 1e-3, 6)
    r = fit(points(L, E, 1e-3), ref_sd=1e-3)
    assert isinstance(r, LinganeFit)
    d = json.loads(json.dumps(r.to_dict(), allow_nan=False))
    # the results.json "fit" contract (schemas/results.schema.json)
    for key in ("slope_V_per_decade", "intercept_V", "delta_ligands", "log10_beta_ratio"):
        assert set(d[key]) == {"value", "stderr", "ci95"}
        lo, hi = d[key]["ci95"]
        assert lo < d[key]["value"] < hi
    assert d["model"] == "lingane"
    assert d["delta_ligands_integer"] == 1
    assert d["n_points"] == 6 and d["dof"] == 4
    assert set(d["log10_beta_ratio_at_integer"]) == {"value", "stderr", "ci95"}
    assert len(d["residuals_V"]) == 6 and len(d["covariance"]) == 2
    assert d["weighted"] is True and isinstance(d["flags"], list)
    assert d["interval_methods"]["delta_ligands"] == "student-t, dof=4"
