"""Scan-rate studies, the ohmic-drop correction and the iR signature.

Reference values:
- Randles 1948 / Ševčík 1948; Nicholson & Shain, Anal. Chem. 36 (1964) 706: reversible
  ip = 0.4463 nFAC (nFvD/RT)^1/2, so log ip against log v has slope 0.5; ΔEp and E½ do not
  move with v (Wang, Analytical Electrochemistry, from memory).
- Nicholson, Anal. Chem. 37 (1965) 1351 (from memory): ψ ∝ v^−1/2 for slow kinetics.
- Uncompensated resistance inflates ΔEp in proportion to the current (common practice).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from convolution_cv import peak_potentials

from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.ohmic_drop import correct_ohmic_drop
from cvfit.techniques.cv.screen.rate_constant import delta_Ep_stderr_V
from cvfit.techniques.cv.screen.reversibility import screen_reversibility
from cvfit.techniques.cv.screen.scan_rate import (
    ScanRatePoint,
    analyse_scan_rate_study,
    scan_rate_groups,
    working_curve_n_delta_Ep_V,
)
from cvfit.units import thermal_voltage

T = 298.15
RATES = (0.02, 0.05, 0.1, 0.2, 0.5, 1.0)
AREA, CONC, D = 0.0707, 1e-3, 1e-5


def _study(*, k0=None, R=0.0, n=1, noise=0.005, seed=0, correct=None):
    pts = []
    for j, v in enumerate(RATES):
        vg = simulate_cv(
            E_half_V=0.0,
            start_V=0.3 / n,
            switch_V=-0.4 / n,
            scan_rate_V_s=v,
            k0_cm_s=k0,
            resistance_ohm=R,
            electrons=n,
            double_layer_F=10e-6,
            D_ox_cm2_s=D,
            background_slope_A_per_V=2e-6,
            noise_fraction=noise,
            seed=seed * 10 + j,
            area_cm2=AREA,
            concentration_M=CONC,
        )
        if correct is not None:
            vg = correct_ohmic_drop(vg, resistance_ohm=correct)
        p = analyse_peaks(vg, electrons=n)
        s = screen_reversibility(p, electrons=n, temperature_K=T)
        exc = n * (p.delta_Ep_V - s.expected_delta_Ep_V)
        pts.append(
            ScanRatePoint(
                f"v{j}",
                v,
                p.ipc_A,
                p.noise_A,
                exc,
                delta_Ep_stderr_V(p.E_half_stderr_V),
                p.E_half_V,
                p.E_half_stderr_V,
                s.reversible,
                nernstian_n_delta_Ep_V=n * s.expected_delta_Ep_V,
            )
        )
    st = analyse_scan_rate_study(
        pts, ligand_M=0.01, electrons=n, temperature_K=T, area_cm2=AREA, analyte_M=CONC
    )
    return pts, st


@pytest.fixture(scope="module")
def reversible():
    return {(n, seed): _study(n=n, seed=seed) for n in (1, 2) for seed in (0, 1)}


@pytest.mark.parametrize("n", [1, 2])
@pytest.mark.parametrize("seed", [0, 1])
def test_reversible_study_slope_D_and_no_trend(reversible, n, seed):
    pts, st = reversible[(n, seed)]
    # Randles, Trans. Faraday Soc. 44 (1948) 327; Ševčík, Collect. Czech. Chem. Commun. 13
    # (1948) 349 (confirmed): ip ∝ v^1/2, slope 0.50 ± 0.02 and its interval holds 0.5
    assert st.log_log_slope.value == pytest.approx(0.5, abs=0.02)
    lo, hi = st.log_log_slope.ci95
    assert lo <= 0.5 <= hi
    assert st.D_cm2_s.value == pytest.approx(D, rel=0.03)
    assert st.D_cm2_s.stderr > 0
    assert not st.delta_Ep_grows and st.excess_cause == "none"
    assert abs(st.E_half_slope_V_per_decade.value) < 0.5e-3
    codes = {f.code for f in st.flags}
    assert "DELTA_EP_GROWS_WITH_SCAN_RATE" not in codes
    assert "PEAK_CURRENT_NOT_DIFFUSION_CONTROLLED" not in codes
    assert all(p.reversible for p in pts)
    assert st.to_dict()["files"] == [f"v{j}" for j in range(len(RATES))]


def test_trend_flags_a_study_where_the_slowest_file_passes_alone():
    # k0 = 0.02 cm/s: ψ ≈ 4 at 0.02 V/s (passes the single-file screen), 0.6 at 1 V/s
    pts, st = _study(k0=0.02)
    assert pts[0].reversible is True
    assert st.delta_Ep_grows
    flag = next(f for f in st.flags if f.code == "DELTA_EP_GROWS_WITH_SCAN_RATE")
    assert "mV per decade" in flag.message
    assert st.excess_cause in ("slow-kinetics", "undecided")  # near-reversible: ΔEp ∝ v^½ too


@pytest.mark.parametrize(
    ("k0", "R", "cause"),
    [
        (0.005, 0.0, "slow-kinetics"),
        (0.01, 0.0, "slow-kinetics"),
        (None, 300.0, "ir-drop"),
        (None, 1000.0, "ir-drop"),
    ],
)
def test_ir_drop_told_apart_from_slow_kinetics(k0, R, cause):
    _, st = _study(k0=k0, R=R, seed=1)
    assert st.delta_Ep_grows
    assert st.excess_cause == cause, (st.chi2_ir, st.chi2_kinetics)
    if cause == "ir-drop":
        flag = next(f for f in st.flags if f.code == "IR_DROP_SIGNATURE")
        assert "resistance_ohm" in flag.message
        # apparent R_u is an upper estimate (charging current adds to the drop)
        assert R < st.ir_resistance_ohm.value < 2.0 * R


def test_ohmic_drop_correction_is_new_record_and_restores_delta_Ep():
    kw = dict(E_half_V=0.0, start_V=0.3, switch_V=-0.4, noise_fraction=0.0)
    true = analyse_peaks(simulate_cv(**kw)).delta_Ep_V
    # residual after post-hoc correction (simulator's author): ~1 mV at 50 Ω, ~3 mV at 200 Ω,
    # ~12 mV at 1000 Ω with ~20 µA peaks
    for R, allowed in ((50.0, 1.0e-3), (200.0, 4.0e-3), (1000.0, 15e-3)):
        raw = simulate_cv(**kw, resistance_ohm=R)
        before = raw.potential_V.copy()
        fixed = correct_ohmic_drop(raw, resistance_ohm=R)
        assert np.array_equal(raw.potential_V, before)  # input untouched
        assert fixed is not raw and fixed.metadata["ohmic_drop_corrected_ohm"] == repr(R)
        err_raw = analyse_peaks(raw).delta_Ep_V - true
        err_fix = analyse_peaks(fixed).delta_Ep_V - true
        assert abs(err_fix) < allowed and abs(err_fix) < 0.5 * err_raw
    with pytest.raises(ValueError):
        correct_ohmic_drop(raw, resistance_ohm=-1.0)


def test_groups_and_working_curve():
    groups = scan_rate_groups([0.0, 0.0, 0.0, 0.01, 0.01, 0.02], [0.1, 0.2, 0.5, 0.1, 0.2, 0.1])
    assert groups == [[0, 1, 2]]
    assert scan_rate_groups([0.0] * 3, [0.1, 0.102, 0.5]) == []  # two distinct rates only
    assert scan_rate_groups([0.0] * 3, [0.1, None, 0.5]) == []
    # Nicholson, Anal. Chem. 37 (1965) 1351; Bard & Faulkner 2nd ed. Table 6.5.2 (from
    # memory), α = 0.5, 25 °C, typed here from the source: ψ -> n·ΔEp in mV
    published = [(20, 61), (7, 63), (6, 64), (5, 65), (4, 66), (3, 68), (2, 72), (1, 84),
                 (0.75, 92), (0.5, 105), (0.35, 121), (0.25, 141), (0.1, 212)]  # fmt: skip
    psi = np.array([p for p, _ in published], dtype=float)
    assert np.allclose(working_curve_n_delta_Ep_V(psi) * 1e3, [x for _, x in published])
    tail = working_curve_n_delta_Ep_V(np.array([1e3, 0.05, 0.01]))
    # reversible limit: the Nernstian n·ΔEp at the table's switch, 112.5 mV beyond E½, by
    # the independent convolution integral (tests/convolution_cv.py, steps 0.004 and
    # 0.002 extrapolated: 59.70 mV); at ψ = 1000 the curve has come 20/1000 of the way
    # back from the table's 61 mV at ψ = 20
    rt_f_mV = 1e3 * thermal_voltage(298.15)
    seps = [np.subtract(*peak_potentials(start=10.0, switch=-112.5 / rt_f_mV, h=h)[::-1])
            for h in (0.004, 0.002)]  # fmt: skip
    reversible_mV = rt_f_mV * (2 * seps[1] - seps[0])
    expected_mV = reversible_mV + (61.0 - reversible_mV) * 20 / 1e3
    assert 1e3 * tail[0] == pytest.approx(expected_mV, abs=0.005)
    assert tail[1] > 0.212 and tail[2] > tail[1]


def test_no_false_trend_on_reversible_studies():
    # a Nernstian ΔEp does not move with v (Nicholson & Shain, Anal. Chem. 36 (1964) 706, from
    # memory): 30 studies, noise 0.2–1 %
    studies = [
        _study(n=1 + s % 2, seed=200 + s, noise=(0.002, 0.005, 0.01)[s % 3])[1] for s in range(30)
    ]
    assert sum(st.delta_Ep_grows for st in studies) == 0


def test_irreversible_study_gives_alpha_n_from_the_peak_shift():
    # Matsuda & Ayabe, Z. Elektrochem. 59 (1955) 494; Nicholson & Shain, Anal. Chem. 36
    # (1964) 706 (from memory): Ep moves 29.6/(αn) mV per
    # decade of v for a totally irreversible wave
    pts = []
    for j, v in enumerate(RATES):
        vg = simulate_cv(
            E_half_V=0.0,
            start_V=0.3,
            switch_V=-0.8,
            scan_rate_V_s=v,
            k0_cm_s=1e-5,
            alpha=0.5,
            noise_fraction=0.003,
            seed=50 + j,
        )
        p = analyse_peaks(vg)
        assert p.Epa_V is None  # no reverse peak inside the window
        pts.append(
            ScanRatePoint(f"v{j}", v, p.ipc_A, p.noise_A, None, None, None, None, None, p.Epc_V)
        )
    st = analyse_scan_rate_study(pts, ligand_M=0.0, electrons=1, temperature_K=T)
    # slope −ln10·RT/(2αnF) = −59.16 mV/decade for αn = 0.5 (calculated from CODATA R, F);
    # measured −59.10 ± 0.16 mV and αn = 0.5005 ± 0.0014 (was checked to 10 %)
    slope = -math.log(10.0) * thermal_voltage(T) / (2 * 0.5)
    assert st.Ep_slope_V_per_decade.value == pytest.approx(slope, abs=0.5e-3)
    lo, hi = st.Ep_slope_V_per_decade.ci95
    assert lo < slope < hi
    assert st.alpha_n.value == pytest.approx(0.5, abs=0.005)
    lo, hi = st.alpha_n.ci95
    assert lo < 0.5 < hi
    assert st.to_dict()["alpha_n"]["value"] == pytest.approx(st.alpha_n.value)
