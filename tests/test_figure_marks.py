"""The voltammogram figure marks each peak and the baseline its height was measured from.

A reversible record with a known sloping background (no charging current): the drawn
forward baseline lies on that background, the marked forward peak lies on the record at
Ep = E½ − 1.109 RT/nF (Nicholson & Shain, Anal. Chem. 36 (1964) 706, from memory), and its
drop line is the peak height over the background, the Randles–Ševčík current
0.4463 nFAC (nFvD/RT)^½ (Randles 1948; Ševčík 1948) computed here independently.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import R as GAS_CONSTANT
from scipy.constants import physical_constants

from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.measurement import CVMeasurement
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.reversibility import screen_reversibility

F = physical_constants["Faraday constant"][0]
T = 298.15
SLOPE, OFFSET = 2e-6, 1e-7  # A/V, A


@pytest.fixture(scope="module")
def marks():
    v = simulate_cv(
        E_half_V=0.1, start_V=0.4, switch_V=-0.25, scan_rate_V_s=0.1, step_V=0.0005,
        background_slope_A_per_V=SLOPE, background_offset_A=OFFSET,
    )  # fmt: skip
    peaks = analyse_peaks(v, cycle="last", electrons=1, temperature_K=T)
    screen = screen_reversibility(peaks, electrons=1, temperature_K=T)
    return v, CVMeasurement(peaks, screen, 1, T).figure_marks()


def test_the_forward_baseline_is_the_background(marks):
    _, (lines, _) = marks
    E, i = (np.asarray(x) for x in lines[0])
    peak_scale = 2e-5
    assert np.max(np.abs(i - (SLOPE * E + OFFSET))) < 0.01 * peak_scale


def test_the_marked_forward_peak_is_on_the_record_with_its_height(marks):
    v, (_, peaks) = marks
    E_p, i_p, level = peaks[0]
    rt_f = GAS_CONSTANT * T / F
    assert E_p == pytest.approx(0.1 - 1.109 * rt_f, abs=0.5e-3)
    n = int(np.argmin(v.potential_V))
    k = int(np.argmin(np.abs(v.potential_V[:n] - E_p)))
    assert i_p == pytest.approx(float(v.current_A[k]), rel=5e-3)
    # the simulator's defaults: A = 0.0707 cm², C = 1 mM, D = 1e-5 cm²/s
    c = 1e-3 / 1000.0  # mol/cm³
    ip = 0.4463 * F * 0.0707 * c * math.sqrt(F * 0.1 * 1e-5 / (GAS_CONSTANT * T))
    assert abs(level - i_p) == pytest.approx(ip, rel=0.02)


def test_both_peaks_are_marked_with_a_line_each(marks):
    _, (lines, peaks) = marks
    assert len(lines) == 2 and len(peaks) == 2
