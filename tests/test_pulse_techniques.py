"""DPV, SWV and waves behind the technique seam: E½ of exact reversible records, the
published reversible relations, and quasi-reversible records flagged, never used."""

from __future__ import annotations

import math

import numpy as np
import pytest
from pulse_helpers import measure
from pulse_superposition import dpv_record, steady_wave, swv_record

from cvfit.io.manifest_standard import InternalStandard
from cvfit.pipeline.half_wave import decide_half_wave
from cvfit.simulate.programs import dpv_program, simulate_pulse, simulate_wave, swv_program
from cvfit.techniques.base import Measurement
from cvfit.units import FARADAY, GAS_CONSTANT

NF = FARADAY / (GAS_CONSTANT * 298.15)
E_HALF = -0.0487
TRUE_OX = {"bulk_form": "ox"}  # the independent records reduce a bulk oxidised form


def _window(direction: int) -> tuple[float, float]:
    return (0.25, -0.35) if direction < 0 else (-0.35, 0.25)


@pytest.mark.parametrize("amplitude", [0.010, 0.025, 0.050, 0.100])
@pytest.mark.parametrize("direction", [-1, 1])
def test_dpv_e_half_of_exact_reversible_records(amplitude, direction):
    start, stop = _window(direction)
    dE = direction * amplitude
    E, i = dpv_record(E_HALF, start, stop, step=0.005, amplitude=dE, width=0.05, period=0.5)
    m = measure("dpv", E, i, series=TRUE_OX, pulse_amplitude_V=dE, pulse_width_s=0.05,
                step_V=0.005, period_s=0.5)  # fmt: skip
    assert isinstance(m, Measurement)
    est = m.half_wave_estimate()
    assert est.kind == "nernstian" and est.source == "dpv_peak"
    assert abs(est.E_half_V - E_HALF) < 0.05e-3
    # Parry & Osteryoung, Anal. Chem. 37 (1965) 1634: the peak lies near E½ − ΔE/2
    assert abs(m.to_dict()["peak_potential_V"] - (E_HALF - dE / 2)) < 0.5e-3


@pytest.mark.parametrize("amplitude", [0.010, 0.025, 0.050])
@pytest.mark.parametrize("direction", [-1, 1])
def test_swv_e_half_of_exact_reversible_records(amplitude, direction):
    start, stop = _window(direction)
    E, net, _, _ = swv_record(E_HALF, start, stop, step=0.005, amplitude=amplitude, frequency=25)
    m = measure("swv", E, net, series=TRUE_OX, amplitude_V=amplitude, frequency_Hz=25.0,
                step_V=0.005, time=np.arange(E.size) * 0.04)  # fmt: skip
    est = m.half_wave_estimate()
    assert est.kind == "nernstian" and est.source == "swv_peak"
    assert abs(est.E_half_V - E_HALF) < 0.05e-3
    # Osteryoung & O'Dea, Electroanal. Chem. 14 (1986) 209: the net peak lies at E½
    assert abs(m.to_dict()["peak_potential_V"] - E_HALF) < 1.5e-3


@pytest.mark.parametrize("slope", [0.0, 2e-6])
def test_wave_e_half_of_exact_reversible_records(slope):
    E = np.arange(0.25, -0.35, -0.002)
    i = steady_wave(E, E_HALF, limiting_A=2e-5) + 1e-7 + slope * E
    m = measure("wave", E, i)
    est = m.half_wave_estimate()
    assert est.kind == "nernstian" and est.source == "wave_fit"
    assert abs(est.E_half_V - E_HALF) < 0.05e-3
    d = m.to_dict()
    # Heyrovský & Ilkovič, Collect. Czech. Chem. Commun. 7 (1935) 198: log-plot slope
    # 2.303 RT/nF = 59.16 mV at 25 °C, n = 1
    assert abs(d["log_slope_V"] - 0.05916) < 0.05e-3
    # Tomeš, Collect. Czech. Chem. Commun. 9 (1937) 12: E¼ − E¾ = 56.4/n mV at 25 °C
    # (from memory)
    assert abs(d["quartile_difference_V"] - 0.0564) < 0.3e-3
    assert abs(d["limiting_current_A"] - 2e-5) < 1e-9


def test_reversible_widths_against_published_values():
    """Parry & Osteryoung (1965): W½ → 3.52 RT/nF = 90.4/n mV at small amplitude (from
    memory); Osteryoung & O'Dea (1986): the square-wave net peak of nE_sw = 50 mV,
    nΔE_s = 10 mV has W½ = 126/n mV and Δψ_p = 0.93 (from memory)."""
    E, i = dpv_record(0.0, 0.25, -0.25, step=0.001, amplitude=-0.001, width=0.05, period=1.0)
    m = measure("dpv", E, i, series=TRUE_OX, pulse_amplitude_V=-0.001, pulse_width_s=0.05,
                step_V=0.001, period_s=1.0)  # fmt: skip
    assert abs(m.to_dict()["expected_peak_width_V"] - 0.0904) < 0.4e-3
    E, net, _, _ = swv_record(0.0, 0.25, -0.25, step=0.010, amplitude=0.050, frequency=25)
    m = measure("swv", E, net, series=TRUE_OX, amplitude_V=0.05, frequency_Hz=25.0,
                step_V=0.01, time=np.arange(E.size) * 0.04)  # fmt: skip
    d = m.to_dict()
    assert abs(d["expected_peak_width_V"] - 0.126) < 1.0e-3
    scale = FARADAY * 0.0707 * 1e-6 * math.sqrt(1e-5)  # nFAC√D of the records
    assert abs(abs(d["peak_height_A"]) * math.sqrt(math.pi * 0.02) / scale - 0.93) < 0.01


def test_peak_height_against_the_reversible_formula():
    E, i = dpv_record(E_HALF, 0.25, -0.35, step=0.005, amplitude=-0.05, width=0.05, period=0.5)
    known = {"electrode_area_cm2": 0.0707, "analyte_M": 1e-3, "diffusion_cm2_s": 1e-5}
    settings = dict(pulse_amplitude_V=-0.05, pulse_width_s=0.05, step_V=0.005, period_s=0.5)
    m = measure("dpv", E, i, series={**TRUE_OX, **known}, **settings)
    d = m.to_dict()
    assert abs(abs(d["peak_height_A"]) / d["expected_peak_height_A"] - 1) < 1e-3
    low = measure("dpv", E, 0.7 * i, series={**TRUE_OX, **known}, **settings)
    assert "PULSE_PEAK_HEIGHT" in {f.code for f in low.flags}


@pytest.mark.parametrize("technique", ["dpv", "swv", "wave"])
def test_quasi_reversible_records_are_flagged_and_not_used(technique):
    couple = {"E_half_V": E_HALF, "k0_cm_s": 0.005, "noise_fraction": 0.005, "seed": 4}
    if technique == "wave":
        rec = simulate_wave(start_V=0.25, stop_V=-0.45, step_V=0.002, **couple)
        m = measure("wave", rec.potential_V, rec.current_A)
        code = "WAVE_SLOPE_NOT_NERNSTIAN"
    elif technique == "dpv":
        prog = dpv_program(0.25, -0.45, step_V=0.005, pulse_amplitude_V=-0.05,
                           pulse_width_s=0.05, period_s=0.5)  # fmt: skip
        rec = simulate_pulse(prog, **couple).record
        m = measure("dpv", rec.potential_V, rec.current_A, time=rec.time_s,
                    pulse_amplitude_V=-0.05, pulse_width_s=0.05, step_V=0.005,
                    period_s=0.5)  # fmt: skip
        code = "PULSE_WIDTH_NOT_NERNSTIAN"
    else:
        prog = swv_program(0.25, -0.45, step_V=0.005, amplitude_V=0.025, frequency_Hz=25)
        rec = simulate_pulse(prog, **couple).record
        m = measure("swv", rec.potential_V, rec.current_A, time=rec.time_s, amplitude_V=0.025,
                    frequency_Hz=25.0, step_V=0.005)  # fmt: skip
        code = "PULSE_WIDTH_NOT_NERNSTIAN"
    assert m.reversible is False
    assert code in {f.code for f in m.flags}
    est = m.half_wave_estimate()
    assert est.kind == "unusable" and est.why
    decision = decide_half_wave(m, internal_standard=None, exclude_non_nernstian=True)
    assert not decision.accepted
    assert "EXCLUDED_NON_NERNSTIAN" in {f.code for f in decision.flags}


def test_noisy_reversible_simulations_pass_their_screens():
    for seed in range(3):
        prog = dpv_program(0.25, -0.45, step_V=0.005, pulse_amplitude_V=-0.025,
                           pulse_width_s=0.05, period_s=0.5)  # fmt: skip
        rec = simulate_pulse(prog, E_half_V=E_HALF, noise_fraction=0.01, seed=seed,
                             background_slope_A_per_V=2e-6).record  # fmt: skip
        m = measure("dpv", rec.potential_V, rec.current_A, time=rec.time_s,
                    pulse_amplitude_V=-0.025, pulse_width_s=0.05, step_V=0.005,
                    period_s=0.5)  # fmt: skip
        assert m.reversible is True, [f.message for f in m.flags]
        est = m.half_wave_estimate()
        assert abs(est.E_half_V - E_HALF) < 4 * est.stderr_V


def test_settings_that_contradict_the_file_are_flagged():
    E, i = dpv_record(E_HALF, 0.25, -0.35, step=0.005, amplitude=-0.05, width=0.05, period=0.5)
    m = measure("dpv", E, i, series=TRUE_OX, pulse_amplitude_V=-0.05, pulse_width_s=0.05,
                step_V=0.010, period_s=0.25)  # fmt: skip
    messages = [f.message for f in m.flags if f.code == "TECHNIQUE_SETTING_CONTRADICTS_FILE"]
    assert any("step_V" in t for t in messages) and any("period_s" in t for t in messages)
    against = measure("dpv", E, i, series=TRUE_OX, pulse_amplitude_V=0.05,
                      pulse_width_s=0.05, step_V=0.005, period_s=0.5)  # fmt: skip
    assert any("direction" in f.message for f in against.flags)


def test_a_record_without_a_peak_or_wave_gives_no_e_half():
    E = np.linspace(0.25, -0.35, 121)
    flat = 1e-8 * E
    for technique, settings, code in (
        ("dpv", dict(pulse_amplitude_V=-0.05, pulse_width_s=0.05, step_V=0.005), "PULSE_NO_PEAK"),
        ("wave", {}, "WAVE_NOT_FOUND"),
    ):
        m = measure(technique, E, flat, **settings)
        est = m.half_wave_estimate()
        assert est.kind == "unusable"
        assert code in {f.code for f in m.flags}


def test_pulse_measurements_have_no_internal_standard():
    E, i = dpv_record(E_HALF, 0.25, -0.35, step=0.005, amplitude=-0.05, width=0.05, period=0.5)
    m = measure("dpv", E, i, pulse_amplitude_V=-0.05, pulse_width_s=0.05, step_V=0.005)
    decision = decide_half_wave(
        m, internal_standard=InternalStandard(window_V=(0.3, 0.4)), exclude_non_nernstian=True
    )
    assert decision.E_half_V is None and not decision.accepted


@pytest.mark.parametrize("technique", ["dpv", "swv", "wave"])
def test_a_peak_or_wave_near_zero_volts_is_still_fitted(technique):
    # the fit starts from the record's point nearest the peak (or the wave's middle); at a
    # point a rounding error away from 0 V the relative finite-difference step of the
    # solver is zero and the fit used to stay at its start: E½ was the grid point, 2 mV off
    E_half = {"dpv": -0.0270, "swv": -0.0020, "wave": -0.0020}[technique]
    if technique == "wave":
        E = 0.35 - 0.002 * np.arange(350)
        m = measure("wave", E, steady_wave(E, E_half, limiting_A=2e-5))
    elif technique == "dpv":
        E, i = dpv_record(E_half, 0.35, -0.35, step=0.005, amplitude=-0.05, width=0.05,
                          period=0.5)  # fmt: skip
        m = measure("dpv", E, i, series=TRUE_OX, pulse_amplitude_V=-0.05, pulse_width_s=0.05,
                    step_V=0.005, period_s=0.5)  # fmt: skip
    else:
        E, i, _, _ = swv_record(E_half, 0.35, -0.35, step=0.005, amplitude=0.025, frequency=25)
        m = measure("swv", E, i, series=TRUE_OX, amplitude_V=0.025, frequency_Hz=25.0,
                    step_V=0.005, time=np.arange(E.size) * 0.04)  # fmt: skip
    assert 0 < abs(E[np.argmin(np.abs(E))]) < 1e-12  # a point a rounding error off 0 V
    assert abs(m.half_wave_estimate().E_half_V - E_half) < 0.05e-3
