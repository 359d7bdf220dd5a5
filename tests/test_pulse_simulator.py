"""The simulator's pulse and wave programs against independent computations and published
relations.

The independent computation is tests/pulse_superposition.py: for a reversible couple at a
planar electrode (equal D) a step program's current is an exact sum of Cottrell terms; it
shares no code with cvfit/simulate/.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from pulse_superposition import dpv_record, steady_wave, swv_record

from cvfit.errors import SimulationError
from cvfit.simulate.finite_difference import march
from cvfit.simulate.programs import (
    dpv_program,
    levich_layer_cm,
    simulate_pulse,
    simulate_wave,
    swv_program,
)
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.units import FARADAY, GAS_CONSTANT

NF = FARADAY / (GAS_CONSTANT * 298.15)
E_HALF = -0.0513


@pytest.mark.parametrize("direction", [-1, 1])
def test_dpv_program_matches_cottrell_superposition(direction):
    start, stop = (0.25, -0.35) if direction < 0 else (-0.35, 0.25)
    prog = dpv_program(start, stop, step_V=0.005, pulse_amplitude_V=direction * 0.05,
                       pulse_width_s=0.05, period_s=0.5)  # fmt: skip
    sim = simulate_pulse(prog, E_half_V=E_HALF)
    E, i = dpv_record(E_HALF, start, stop, step=0.005, amplitude=direction * 0.05,
                      width=0.05, period=0.5)  # fmt: skip
    assert np.allclose(sim.record.potential_V, E)
    scale = np.max(np.abs(i))
    assert np.max(np.abs(sim.record.current_A - i)) < 1e-3 * scale
    # the written sampled currents keep the difference exactly
    assert np.allclose(sim.first_A - sim.second_A, sim.record.current_A, rtol=0, atol=1e-15)


def test_swv_program_matches_cottrell_superposition():
    prog = swv_program(0.25, -0.35, step_V=0.005, amplitude_V=0.025, frequency_Hz=25.0)
    sim = simulate_pulse(prog, E_half_V=E_HALF)
    E, net, forward, reverse = swv_record(E_HALF, 0.25, -0.35, step=0.005, amplitude=0.025,
                                          frequency=25.0)  # fmt: skip
    scale = np.max(np.abs(net))
    assert np.max(np.abs(sim.record.current_A - net)) < 1e-3 * scale
    assert np.max(np.abs(sim.second_A - reverse)) < 1e-3 * np.max(np.abs(forward))


def test_dpv_peak_follows_parry_osteryoung():
    """Parry & Osteryoung, Anal. Chem. 37 (1965) 1634 (from memory): with a long base
    period the difference peak lies at E½ − ΔE/2 and its height is
    nFAC√(D/(π t_p))·(1 − σ)/(1 + σ), σ = exp(nFΔE/2RT) (magnitudes)."""
    dE, tp = -0.05, 0.02
    prog = dpv_program(0.2, -0.3, step_V=0.001, pulse_amplitude_V=dE, pulse_width_s=tp,
                       period_s=4.0)  # fmt: skip
    rec = simulate_pulse(prog, E_half_V=E_HALF).record
    k = int(np.argmax(np.abs(rec.current_A)))
    c = np.polyfit(rec.potential_V[k - 3 : k + 4], rec.current_A[k - 3 : k + 4], 2)
    E_peak = -c[1] / (2 * c[0])
    assert abs(E_peak - (E_HALF - dE / 2)) < 1.0e-3  # history moves it a little
    sigma = math.exp(NF * abs(dE) / 2)
    height = FARADAY * 0.0707 * 1e-6 * math.sqrt(1e-5 / (math.pi * tp)) * (sigma - 1) / (sigma + 1)
    assert abs(np.max(np.abs(rec.current_A)) / height - 1) < 0.02


def test_steady_wave_at_a_rotating_disc():
    """The slow sweep reaches the steady wave i = i_l/(1 + exp(nf(E − E½))) and the
    Levich limiting current 0.620 nFAD^(2/3) ω^(1/2) ν^(−1/6) C (Levich, Physicochemical
    Hydrodynamics, 1962; Bard & Faulkner, Electrochemical Methods, 2nd ed., eq. 9.3.22 —
    from memory; the Nernst-layer model gives 1/1.61 = 0.621)."""
    D, rpm, nu = 1e-5, 900.0, 0.00893
    w = simulate_wave(E_half_V=E_HALF, start_V=0.25, stop_V=-0.35, rotation_rate_rpm=rpm,
                      scan_rate_V_s=0.0005, step_V=0.002)  # fmt: skip
    omega = 2 * math.pi * rpm / 60
    levich = 0.620 * FARADAY * 0.0707 * D ** (2 / 3) * omega**0.5 * nu ** (-1 / 6) * 1e-6
    il = abs(w.current_A[-1])
    assert abs(il / levich - 1) < 0.005
    exact = steady_wave(w.potential_V, E_HALF, limiting_A=FARADAY * 0.0707 * D * 1e-6
                        / levich_layer_cm(D, rpm))  # fmt: skip
    assert np.max(np.abs(w.current_A - exact)) < 2e-3 * il


def test_programs_leave_the_cv_kernel_alone():
    """The CV simulator's march is untouched: a reversible CV peak still sits at
    E½ − 1.109 RT/nF (Nicholson & Shain, Anal. Chem. 36 (1964) 706, from memory)."""
    cv = simulate_cv(E_half_V=0.0, start_V=0.3, switch_V=-0.3, step_V=0.0005)
    k = int(np.argmin(cv.current_A))
    assert abs(cv.potential_V[k] + 1.109 / NF) < 1.0e-3
    assert march.__module__ == "cvfit.simulate.finite_difference"


@pytest.mark.parametrize(
    "call",
    [
        lambda: dpv_program(0.2, -0.3, step_V=0.005, pulse_amplitude_V=0.05,
                            pulse_width_s=0.05, period_s=0.5),  # against the scan
        lambda: dpv_program(0.2, -0.3, step_V=0.005, pulse_amplitude_V=-0.05,
                            pulse_width_s=0.5, period_s=0.5),  # pulse as long as period
        lambda: swv_program(0.2, 0.21, step_V=0.005, amplitude_V=0.025, frequency_Hz=25),
        lambda: swv_program(0.2, -0.3, step_V=1e-7, amplitude_V=0.025, frequency_Hz=25),
    ],
)  # fmt: skip
def test_bad_programs_are_refused(call):
    with pytest.raises(SimulationError):
        call()
