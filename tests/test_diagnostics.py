"""First reversibility screen.

Reference values:
- Nicholson & Shain, Anal. Chem. 36 (1964) 706; Bard & Faulkner, Electrochemical Methods 2nd
  ed., Wiley (2001), Table 6.2.1 (from memory): n·ΔEp = 60.5, 59.2, 58.3, 57.8, 57.0 mV for a
  switch 71.5, 121.5, 171.5, 271.5 mV and ∞ beyond the forward PEAK (= 100, 150, 200, 300 mV
  beyond E½), 25 °C. TABLE below keeps that published meaning.
  The table itself is checked in tests/test_switching_table.py.
- |Ep − Ep/2| = 2.20 RT/nF for a reversible peak (Nicholson & Shain 1964, from memory).
- Nicholson, Anal. Chem. 37 (1965) 1351: ψ = k0/(π D n F v/RT)^1/2; ψ = 0.5 gives n·ΔEp ≈ 105 mV
  (Bard & Faulkner Table 6.5.2, from memory).
"""

from __future__ import annotations

import math
from dataclasses import replace

import pytest

from cvfit.reversibility_criteria import ReversibilityCriteria
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.peaks.analysis import PeakAnalysis, analyse_peaks
from cvfit.techniques.cv.screen.reversibility import (
    MIN_TABULATED_OFFSET_V,
    ReversibilityScreen,
    nernstian_delta_Ep_V,
    screen_reversibility,
)
from cvfit.techniques.cv.screen.switching import corrected_half_wave_V
from cvfit.units import FARADAY, GAS_CONSTANT


def test_nernstian_delta_Ep_limit_and_monotonic():
    # far switch: 2·1.109 RT/F = 57.0 mV/n (Nicholson & Shain, Anal. Chem. 36 (1964) 706, from
    # memory); the table itself is checked in tests/test_switching_table.py
    assert nernstian_delta_Ep_V(switching_offset_V=100.0) == pytest.approx(0.0570, abs=5e-5)
    offsets = [0.05, 0.1, 0.12, 0.15, 0.2, 0.25, 0.3, 0.4, 0.6, 1.0]
    values = [nernstian_delta_Ep_V(switching_offset_V=x) for x in offsets]
    assert all(a > b for a, b in zip(values, values[1:], strict=False))
    # sign of the offset does not matter
    assert nernstian_delta_Ep_V(switching_offset_V=-0.2) == nernstian_delta_Ep_V(
        switching_offset_V=0.2
    )


def test_nernstian_delta_Ep_below_table_is_clamped():
    # closer than the table reaches (38.5 mV) its edge value is a lower bound
    assert MIN_TABULATED_OFFSET_V == pytest.approx(0.050)
    edge = nernstian_delta_Ep_V(switching_offset_V=0.035)
    assert nernstian_delta_Ep_V(switching_offset_V=0.03) == edge
    with pytest.raises(ValueError):
        nernstian_delta_Ep_V(switching_offset_V=0.1, electrons=0)


def _psi_k0(psi: float, n: int, D: float = 1e-5, v: float = 0.1) -> float:
    # Nicholson, Anal. Chem. 37 (1965) 1351 (from memory): ψ = k0 / (π D n F v / RT)^1/2 with
    # equal diffusion coefficients
    return psi * math.sqrt(math.pi * D * n * FARADAY * v / (GAS_CONSTANT * 298.15))


def _sim(n, *, noise, seed, first="reduction", k0=None, switch_off=0.3):
    d = -1.0 if first == "reduction" else 1.0
    return simulate_cv(
        E_half_V=-0.05,
        start_V=-0.05 - d * 0.22 / n**0.5,
        switch_V=-0.05 + d * switch_off / n,
        electrons=n,
        initial_species="ox" if first == "reduction" else "red",
        k0_cm_s=k0,
        double_layer_F=20e-6,
        background_slope_A_per_V=5e-6,
        noise_fraction=noise,
        seed=seed,
    )


@pytest.mark.parametrize("n", [1, 2])
@pytest.mark.parametrize("noise", [0.002, 0.005, 0.01])
def test_reversible_simulations_pass(n, noise):
    for seed, first in ((1, "reduction"), (2, "oxidation"), (3, "reduction")):
        peaks = analyse_peaks(_sim(n, noise=noise, seed=seed, first=first), electrons=n)
        screen = screen_reversibility(peaks, electrons=n, temperature_K=298.15)
        assert screen.reversible is True, [f.message for f in screen.flags]
        assert screen.flags == ()
        # 2.20 RT/nF (Nicholson & Shain, Anal. Chem. 36 (1964) 706, from memory): 56.5/n mV
        assert screen.expected_peak_width_V == pytest.approx(0.0565 / n, abs=1e-4)
        assert 0.0570 / n < screen.expected_delta_Ep_V < 0.0583 / n


@pytest.mark.parametrize("n", [1, 2])
def test_quasi_reversible_is_flagged_with_numbers(n):
    # ψ = 0.5 → n·ΔEp ≈ 105 mV (Nicholson, Anal. Chem. 37 (1965) 1351; Bard & Faulkner 2nd ed.
    # Table 6.5.2, from memory)
    peaks = analyse_peaks(_sim(n, noise=0.005, seed=5, k0=_psi_k0(0.5, n)), electrons=n)
    assert n * peaks.delta_Ep_V == pytest.approx(0.105, abs=0.008)
    screen = screen_reversibility(peaks, electrons=n, temperature_K=298.15)
    assert screen.reversible is False
    flag = next(f for f in screen.flags if f.code == "DELTA_EP_TOO_LARGE")
    assert f"{1e3 * peaks.delta_Ep_V:.1f} mV" in flag.message
    assert f"{1e3 * screen.expected_delta_Ep_V:.1f} mV" in flag.message


def test_missing_reverse_peak_is_not_determinable():
    v = simulate_cv(E_half_V=0.0, start_V=0.3, switch_V=0.02, noise_fraction=0.005, seed=2)
    screen = screen_reversibility(analyse_peaks(v), electrons=1, temperature_K=298.15)
    assert screen.reversible is None
    codes = {f.code for f in screen.flags}
    assert {"NO_FORWARD_PEAK", "NO_REVERSE_PEAK"} <= codes
    assert screen.expected_delta_Ep_V is None


def _peaks(**changes) -> PeakAnalysis:
    """A hand-made reversible reduction-first record at 25 °C, n = 1."""
    base = PeakAnalysis(
        source="hand",
        cycle_number=1,
        first_sweep="reduction",
        switching_potential_V=-0.30,
        Epc_V=-0.0285,
        Epa_V=0.0290,
        ipc_A=1e-5,
        ipa_A=1e-5,
        Ep_half_c_V=0.0280,
        Ep_half_a_V=-0.0280,
        E_half_V=0.00025,
        E_half_stderr_V=1e-4,
        delta_Ep_V=0.0575,
        current_ratio=1.0,
        noise_A=1e-8,
    )
    return replace(base, **changes)


def test_hand_made_record_passes_and_each_criterion_fails_alone():
    T = 298.15
    assert screen_reversibility(_peaks(), electrons=1, temperature_K=T).reversible is True
    cases = {
        "DELTA_EP_TOO_LARGE": {"Epa_V": 0.045, "delta_Ep_V": 0.0735, "E_half_V": 0.00825},
        "DELTA_EP_TOO_SMALL": {"Epa_V": 0.016, "delta_Ep_V": 0.0445, "E_half_V": -0.00625},
        "PEAK_WIDTH_OFF": {"Ep_half_c_V": 0.045},
        "CURRENT_RATIO_OFF": {"current_ratio": 0.70},
    }
    for code, change in cases.items():
        screen = screen_reversibility(_peaks(**change), electrons=1, temperature_K=T)
        assert screen.reversible is False
        assert [f.code for f in screen.flags] == [code]
        assert "mV" in screen.flags[0].message or "ratio" in screen.flags[0].message


def test_margins_are_n_scaled_and_scale_with_temperature():
    crit = ReversibilityCriteria(n_delta_Ep_margin_V=0.010)
    for n, T in ((1, 298.15), (2, 298.15), (1, 330.0), (2, 330.0)):
        offset = 0.30
        expected = nernstian_delta_Ep_V(switching_offset_V=offset, electrons=n, temperature_K=T)
        allowed = 0.010 * (T / 298.15) / n
        rt_nf = GAS_CONSTANT * T / (n * FARADAY)
        for factor, ok in ((0.9, True), (1.1, False)):
            dEp = expected + factor * allowed
            Epc = -1.109 * rt_nf
            p = _peaks(
                switching_potential_V=Epc + 0.5 * dEp - offset,
                Epc_V=Epc,
                Epa_V=Epc + dEp,
                E_half_V=Epc + 0.5 * dEp,
                delta_Ep_V=dEp,
                Ep_half_c_V=Epc + 2.20 * rt_nf,
            )
            screen = screen_reversibility(p, electrons=n, temperature_K=T, criteria=crit)
            assert screen.reversible is ok, (n, T, factor, screen.flags)


def test_switch_too_close_is_flagged_and_delta_not_tested():
    p = _peaks(switching_potential_V=-0.04, Epa_V=0.040, delta_Ep_V=0.0685, E_half_V=0.00575)
    screen = screen_reversibility(p, electrons=1, temperature_K=298.15)
    codes = [f.code for f in screen.flags]
    assert codes == ["SWITCHING_TOO_CLOSE"]
    assert screen.expected_delta_Ep_V is None
    assert screen.reversible is True


def test_only_forward_peak_uses_forward_E_half_and_can_still_fail():
    # E½ from the forward peak: Epc + 1.109 RT/nF (Nicholson & Shain, Anal. Chem. 36 (1964)
    # 706, from memory)
    p = _peaks(
        Epa_V=None,
        ipa_A=None,
        Ep_half_a_V=None,
        E_half_V=None,
        E_half_stderr_V=None,
        delta_Ep_V=None,
        current_ratio=None,
    )
    screen = screen_reversibility(p, electrons=1, temperature_K=298.15)
    assert screen.reversible is None
    assert screen.expected_delta_Ep_V == pytest.approx(
        nernstian_delta_Ep_V(switching_offset_V=0.30), abs=2e-5
    )
    wide = replace(p, Ep_half_c_V=0.050)
    assert screen_reversibility(wide, electrons=1, temperature_K=298.15).reversible is False


def test_screen_record_validates_and_serialises():
    s = screen_reversibility(_peaks(), electrons=1, temperature_K=298.15)
    d = s.to_dict()
    assert d["reversible"] is True and d["flags"] == []
    with pytest.raises(ValueError):
        ReversibilityScreen(reversible="yes", expected_delta_Ep_V=None, expected_peak_width_V=0.05)
    with pytest.raises(ValueError):
        screen_reversibility(_peaks(), electrons=0, temperature_K=298.15)


@pytest.mark.parametrize(("n", "T"), [(1, 278.15), (2, 330.0)])
def test_reversible_simulation_passes_at_other_temperatures(n, T):
    # Nernstian n·ΔEp scales with T/298.15 K (57–58 mV at 25 °C, Nicholson & Shain, Anal. Chem.
    # 36 (1964) 706, from memory): a reversible couple at 5 °C or 57 °C must pass with the
    # scaled criteria
    v = simulate_cv(
        E_half_V=0.1,
        start_V=0.32,
        switch_V=0.1 - 0.3 / n,
        electrons=n,
        temperature_K=T,
        double_layer_F=20e-6,
        background_slope_A_per_V=5e-6,
        noise_fraction=0.005,
        seed=9,
    )
    peaks = analyse_peaks(v, electrons=n, temperature_K=T)
    screen = screen_reversibility(peaks, electrons=n, temperature_K=T)
    assert screen.reversible is True, [f.message for f in screen.flags]
    assert n * peaks.delta_Ep_V == pytest.approx(0.0575 * T / 298.15, abs=1.5e-3)
    # the midpoint lies ~0.4/n mV above E½ for this switch; corrected, within 0.5 mV
    E_half, _ = corrected_half_wave_V(peaks, electrons=n, temperature_K=T)
    assert abs(E_half - 0.1) < 0.5e-3


@pytest.mark.parametrize("n", [1, 2])
@pytest.mark.parametrize("n_offset_V", [0.18, 0.25, 0.35])
def test_nicholson_ratio_near_one_for_various_switches(n, n_offset_V):
    # Nicholson, Anal. Chem. 38 (1966) 1406 (from memory): 1.00 ± 0.02 on reversible CVs
    for seed, first in ((21, "reduction"), (22, "oxidation")):
        p = analyse_peaks(
            _sim(n, noise=0.002, seed=seed, first=first, switch_off=n_offset_V), electrons=n
        )
        assert p.current_ratio == pytest.approx(1.0, abs=0.02), (first, p.current_ratio)
