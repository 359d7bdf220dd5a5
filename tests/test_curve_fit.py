"""Curve fit of single voltammograms: accuracy against the project's simulator and against
an independent computation (tests/independent_curves.py, convolution integral), intervals,
the reversible limit (k0 lower bound) and the refusal of a curve the model cannot describe.

Settings of the issue's validation: ψ 0.4–2 (k0 2e-3–1e-2 cm/s at D = 1e-5 cm²/s, v = 20 mV/s),
charging, a sloping background, 0.5 % noise and a little ohmic drop (20 Ω, fitted).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from independent_curves import independent_cv

from cvfit.errors import FitError
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.curve.fit import fit_curve
from cvfit.techniques.cv.curve.intervals import runs_test_z
from cvfit.techniques.cv.curve.model import curve_data

E_HALF = -0.2
V = 0.02
# Randles–Ševčík peak current of these settings (2.69e5 n^1.5 A C √D √v, common practice)
IP = 2.69e5 * 0.0707 * 1e-6 * math.sqrt(1e-5) * math.sqrt(V)
NOISE = 0.005 * IP
SETTINGS = dict(
    E_half_V=E_HALF,
    start_V=0.25,
    switch_V=-0.65,
    scan_rate_V_s=V,
    step_V=0.0009,
    resistance_ohm=20.0,
    double_layer_F=5e-6,
    background_offset_A=1e-7,
    background_slope_A_per_V=2e-6,
)
CASES = [(2e-3, 0.5), (5e-3, 0.4), (1e-2, 0.6)]


def _record(source: str, k0: float | None, alpha: float, seed: int = 1, **extra):
    kw = {**SETTINGS, **extra}
    if source == "independent":
        return independent_cv(**kw, k0_cm_s=k0, alpha=alpha, noise_A=NOISE, seed=seed)
    kw.pop("substeps", None)
    v = simulate_cv(**kw, k0_cm_s=k0, alpha=alpha, noise_fraction=0.005, seed=seed)
    return v.time_s, v.potential_V, v.current_A


def _fit(t, E, i, **kw):
    data = curve_data(
        E, i, time_s=t, scan_rate_V_s=V, stop=E.size - 1, electrons=1, temperature_K=298.15,
        bulk="ox", sigma_A=NOISE,
    )  # fmt: skip
    return fit_curve(data, E_half_start_V=E_HALF + 0.01, D_cm2_s=1e-5, **kw)


@pytest.mark.parametrize("source", ["project", "independent"])
@pytest.mark.parametrize(("k0", "alpha"), CASES)
def test_quasi_reversible_curve_gives_E_half_within_1_mV_and_k0_within_15_percent(
    source, k0, alpha
):
    t, E, i = _record(source, k0, alpha)
    assert E.size == 2001
    fit = _fit(t, E, i, resistance_ohm=None)
    assert fit.accepted
    assert abs(fit.E_half_V.value - E_HALF) < 1e-3
    assert abs(fit.k0_cm_s.value / k0 - 1.0) < 0.15
    assert abs(fit.alpha.value - alpha) < 0.03
    lo, hi = fit.E_half_V.ci95
    assert lo < E_HALF < hi  # the interval covers the truth (4 σ would fail if 10× too small)
    assert fit.E_half_V.stderr < 3e-4
    assert 0.8 < fit.reduced_chi2.value < 1.3
    assert abs(fit.runs_z) < 4
    assert fit.double_layer_F == pytest.approx(5e-6, rel=0.1)
    assert fit.k0_lower_bound_cm_s is None
    assert 20 < fit.simulations < 200


def test_known_resistance_is_used_not_fitted():
    t, E, i = _record("independent", 5e-3, 0.5, resistance_ohm=300.0)
    fit = _fit(t, E, i, resistance_ohm=300.0)
    assert fit.resistance_ohm is None and fit.accepted
    assert abs(fit.E_half_V.value - E_HALF) < 1e-3
    assert abs(fit.k0_cm_s.value / 5e-3 - 1.0) < 0.15
    # the same curve fitted as if there were no resistance: k0 absorbs the drop
    wrong = _fit(t, E, i, resistance_ohm=0.0)
    assert wrong.k0_cm_s.value < 0.85 * 5e-3


@pytest.mark.parametrize("source", ["project", "independent"])
def test_a_larger_ohmic_drop_is_fitted_without_bias_from_the_noise(source):
    # 300 Ω: 2.5 mV of drop at the peak. The drop is taken from the model's own current:
    # taken from the noisy measured current, it drove R_u to 0 (k0 −18 %)
    t, E, i = _record(source, 5e-3, 0.5, resistance_ohm=300.0, seed=4)
    fit = _fit(t, E, i, resistance_ohm=None)
    R = fit.resistance_ohm
    assert abs(R.value - 300.0) < 3 * R.stderr and R.stderr < 50
    assert abs(fit.k0_cm_s.value / 5e-3 - 1) < 0.1
    assert abs(fit.E_half_V.value - E_HALF) < 1e-3


def test_reversible_curve_gives_a_lower_bound_on_k0():
    # 24 substeps: with 8, the independent computation's own first-order error looks like a
    # finite k0 (ψ ≈ 18) to a fit this sensitive
    t, E, i = _record("independent", None, 0.5, resistance_ohm=0.0, substeps=24)
    fit = _fit(t, E, i)
    assert fit.accepted
    assert abs(fit.E_half_V.value - E_HALF) < 1e-3
    bound = fit.k0_lower_bound_cm_s
    assert bound is not None and math.isnan(fit.k0_cm_s.ci95[1])
    # reversible to the eye at this scan rate: ψ > 7 (Nicholson 1965, ΔEp < 61 mV, from memory)
    assert bound > 7 * math.sqrt(math.pi * 1e-5 * V * 38.92)
    assert "CURVE_FIT_K0_LOWER_BOUND" in {f.code for f in fit.flags}
    assert fit.to_dict()["k0_cm_s"]["lower_bound"] == pytest.approx(bound)


def test_two_overlapping_couples_are_refused_with_the_reason():
    t, E, i1 = _record("independent", 5e-3, 0.5, resistance_ohm=0.0)
    _, _, i2 = _record("independent", 5e-3, 0.5, seed=2, E_half_V=E_HALF - 0.12, resistance_ohm=0)
    fit = _fit(t, E, i1 + i2 - (SETTINGS["background_offset_A"] + 2e-6 * E))
    assert not fit.accepted
    refused = [f for f in fit.flags if f.code == "CURVE_FIT_REFUSED"]
    assert refused and "reduced χ²" in refused[0].message


def test_runs_test_separates_white_from_structured_residuals():
    rng = np.random.default_rng(3)
    white = rng.normal(size=2000)
    assert abs(runs_test_z(white)) < 4
    assert runs_test_z(np.sin(np.linspace(0, 6, 2000)) + 0.1 * white) < -20
    assert math.isnan(runs_test_z(np.ones(10)))


def test_oxidation_first_record_with_the_reduced_form_in_the_bulk():
    v = simulate_cv(
        **{**SETTINGS, "start_V": -0.65, "switch_V": 0.25, "resistance_ohm": 0.0},
        initial_species="red", k0_cm_s=4e-3, alpha=0.6, noise_fraction=0.005, seed=5,
    )  # fmt: skip
    data = curve_data(
        v.potential_V, v.current_A, time_s=v.time_s, scan_rate_V_s=V, stop=v.potential_V.size - 1,
        electrons=1, temperature_K=298.15, bulk="red", sigma_A=NOISE,
    )  # fmt: skip
    fit = fit_curve(data, E_half_start_V=E_HALF - 0.01, D_cm2_s=1e-5)
    assert fit.accepted
    assert abs(fit.E_half_V.value - E_HALF) < 1e-3
    assert abs(fit.k0_cm_s.value / 4e-3 - 1) < 0.15
    assert abs(fit.alpha.value - 0.6) < 0.03


def test_D_from_the_current_scale_and_the_assumed_D_flag():
    t, E, i = _record("project", 5e-3, 0.5, resistance_ohm=0.0)
    data = curve_data(
        E, i, time_s=t, scan_rate_V_s=V, stop=E.size - 1, electrons=1, temperature_K=298.15,
        bulk="ox", sigma_A=NOISE,
    )  # fmt: skip
    scaled = fit_curve(data, E_half_start_V=E_HALF, area_cm2=0.0707, concentration_M=1e-3)
    assert scaled.D_source == "current scale"
    assert scaled.D_cm2_s == pytest.approx(1e-5, rel=0.02)
    assert abs(scaled.k0_cm_s.value / 5e-3 - 1) < 0.15
    assumed = fit_curve(data, E_half_start_V=E_HALF)
    assert assumed.D_source == "assumed"
    assert "CURVE_FIT_D_ASSUMED" in {f.code for f in assumed.flags}


def test_a_record_the_model_cannot_take_is_a_fit_error_not_a_crash():
    t, E, i = _record("project", 5e-3, 0.5, resistance_ohm=0.0)
    i = i.copy()
    i[500] = np.inf
    with pytest.raises(FitError, match="not a finite number"):
        curve_data(
            E, i, time_s=t, scan_rate_V_s=V, stop=E.size - 1, electrons=1,
            temperature_K=298.15, bulk="ox", sigma_A=NOISE,
        )  # fmt: skip
    # an absurd R_u overflows the simulation: refused with the reason, no traceback
    data = curve_data(
        E, np.where(np.isfinite(i), i, 0.0), time_s=t, scan_rate_V_s=V,
        stop=E.size - 1, electrons=1, temperature_K=298.15, bulk="ox", sigma_A=NOISE,
    )  # fmt: skip
    fit = fit_curve(data, E_half_start_V=E_HALF, D_cm2_s=1e-5, resistance_ohm=1e9)
    assert not fit.accepted


def test_unequal_time_steps_cannot_be_curve_fitted():
    t, E, i = _record("project", 5e-3, 0.5, resistance_ohm=0.0)
    t = t.copy()
    t[100:] += 0.5 * (t[1] - t[0])  # one step half as long again
    with pytest.raises(FitError, match="not equally spaced"):
        curve_data(
            E, i, time_s=t, scan_rate_V_s=V, stop=E.size - 1, electrons=1,
            temperature_K=298.15, bulk="ox", sigma_A=NOISE,
        )  # fmt: skip


def test_intervals_cover_the_truth_at_their_level():
    # 200 noise seeds (project simulator, ψ 1.0, R_u known): the 95 % intervals of E½, k0
    # and α each cover the truth in 95 ± 4 % of them (2.6 binomial standard errors)
    hits = np.zeros(3)
    for seed in range(100, 300):
        t, E, i = _record("project", 5e-3, 0.5, resistance_ohm=0.0, seed=seed)
        fit = _fit(t, E, i, resistance_ohm=0.0)
        for k, (q, truth) in enumerate(((fit.E_half_V, E_HALF), (fit.k0_cm_s, 5e-3),
                                        (fit.alpha, 0.5))):  # fmt: skip
            hits[k] += q.ci95[0] < truth < q.ci95[1]
    assert np.all(np.abs(hits / 200 - 0.95) < 0.04), hits


@pytest.mark.parametrize(("k0", "alpha"), CASES)
def test_a_given_diffusion_ratio_gives_k0_and_a_wrong_one_biases_k0_not_E_half(k0, alpha):
    # D_R/D_O = 0.6 in the simulation. Given: E½ within 1 mV, k0 within 15 %. Left at 1:
    # the curve is the same one (the ratio trades exactly against k0,
    # cvfit.techniques.cv.curve.fit),
    # so E½ and χ² do not move and k0 is off by (1/0.6)^(α/2), 11–17 % here
    v = simulate_cv(
        **SETTINGS, k0_cm_s=k0, alpha=alpha, noise_fraction=0.005, seed=1, D_red_cm2_s=0.6e-5
    )
    given = _fit(v.time_s, v.potential_V, v.current_A, resistance_ohm=None, D_ratio=0.6)
    wrong = _fit(v.time_s, v.potential_V, v.current_A, resistance_ohm=None)
    assert given.accepted and wrong.accepted and given.D_ratio == 0.6
    assert abs(given.E_half_V.value - E_HALF) < 1e-3
    assert abs(given.k0_cm_s.value / k0 - 1.0) < 0.15
    assert abs(wrong.E_half_V.value - given.E_half_V.value) < 2e-4
    assert wrong.reduced_chi2.value == pytest.approx(given.reduced_chi2.value, rel=0.01)
    bias = wrong.k0_cm_s.value / given.k0_cm_s.value
    assert bias == pytest.approx((1 / 0.6) ** (alpha / 2), rel=0.02)
    assert given.to_dict()["D_ratio"] == 0.6
