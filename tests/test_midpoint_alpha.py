"""The extra error of a peak midpoint used as E½ for want of α
(cvfit/techniques/cv/screen/midpoint_alpha.py), against the independent convolution
computation (tests/convolution_cv.py, which shares no code with the simulator): the same
peak analysis applied to its currents gives the same range of the midpoint over α."""

from __future__ import annotations

import math

import numpy as np
import pytest
from convolution_cv import convolution_cv
from scipy.constants import R as GAS_R
from scipy.constants import physical_constants

from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.midpoint_alpha import (
    PSI_MIN,
    midpoint_alpha_error_V,
    midpoint_alpha_shift,
)
from cvfit.voltammogram import Voltammogram

F = physical_constants["Faraday constant"][0]


def independent_midpoint_V(psi: float, alpha: float) -> float:
    """Peak midpoint − E½ of the independent computation (±20 RT/F, 298.15 K, n = 1), V."""
    rt_f = GAS_R * 298.15 / F
    sub, step = 4, 0.04
    xi, chi, _ = convolution_cv(start=20.0, switch=-20.0, h=step / sub, psi=psi, alpha=alpha)
    E, i = xi[::sub] * rt_f, -chi[::sub] * 1e-5
    v = Voltammogram(
        potential_V=E, current_A=i, time_s=np.arange(E.size) * step * rt_f / 0.1,
        scan_rate_V_s=0.1, source="independent",
    )  # fmt: skip
    p = analyse_peaks(v, electrons=1)
    return 0.5 * (p.Epa_V + p.Epc_V)


@pytest.mark.parametrize("psi", [0.3, 1.0])
def test_the_range_over_alpha_agrees_with_the_independent_computation(psi):
    ours = midpoint_alpha_shift(psi, 1, 298.15)
    theirs = independent_midpoint_V(psi, 0.7) - independent_midpoint_V(psi, 0.3)
    got = ours.shift_V[0.7] - ours.shift_V[0.3]
    # 5 % or 0.05 mV: the two computations' own step errors
    assert abs(got - theirs) < max(0.05 * abs(theirs), 5e-5), (got, theirs)
    assert ours.stderr_V == pytest.approx(ours.range_V / math.sqrt(12.0))


def test_the_error_falls_with_psi_scales_with_RT_over_nF_and_is_infinite_below_the_range():
    e = [midpoint_alpha_error_V(p, 1, 298.15) for p in (0.1, 0.3, 1.0, 3.0, 10.0)]
    assert all(a > b for a, b in zip(e, e[1:], strict=False))
    # Nicholson 1965 (from memory): at ψ = 1 the couple is clearly quasi-reversible
    # (n·ΔEp ≈ 84 mV); the midpoint's α-uncertainty is then of order a millivolt
    assert 0.1e-3 < e[2] < 2e-3
    assert midpoint_alpha_error_V(1.0, 2, 298.15) == pytest.approx(e[2] / 2)
    assert midpoint_alpha_error_V(1.0, 1, 2 * 298.15) == pytest.approx(2 * e[2])
    assert math.isinf(midpoint_alpha_error_V(0.5 * PSI_MIN, 1, 298.15))
    with pytest.raises(ValueError, match="kelvin"):
        midpoint_alpha_error_V(1.0, 1, -25.0)
    with pytest.raises(ValueError, match="whole number"):
        midpoint_alpha_error_V(1.0, 1.5, 298.15)
