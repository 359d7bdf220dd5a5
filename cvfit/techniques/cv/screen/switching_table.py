"""Peak potentials of a Nernstian couple against the switching distance, from cvfit's simulator.

In the dimensionless potential ξ = nF(E − E½)/RT a reversible voltammogram depends on the
switching distance ξλ = nF|Eλ − E½|/RT alone (semi-infinite planar diffusion; n and T enter
only through RT/nF). The forward peak lies ``FORWARD_PEAK_THERMAL`` RT/nF before E½ for every
switch past it; the reverse peak lies ``FORWARD_PEAK_THERMAL + e(ξλ)`` RT/nF beyond it, so

    n·ΔEp = (2·1.10893 + e)·RT/F,    (Epa + Epc)/2 − E½ = ±e/2 · RT/nF.

``NODES`` holds e(ξλ) at 42 switching distances from 1.5 to 79 RT/nF (39 mV to 2 V for n = 1
at 25 °C), computed by ``scripts/switching_table.py``: noise-free simulations at potential
steps of 0.05 and 0.025 mV (the table holds the finer; the two differ by at most 3·10⁻⁴ mV),
peaks located by a quartic through the 13 samples around each extremum. Between nodes e is
interpolated by cubic Hermite pieces in log e against log ξλ (slopes from second-order
differences; largest error at the geometric midpoints between nodes 4·10⁻⁵ mV); beyond the
last node it continues as a power law with the last node's exponent (e falls like
ξλ^−1.45 there, towards the ξλ^−3/2 of a diffusion tail).

Checked by tests/test_switching_table.py against an independent computation, the
convolution integral of tests/convolution_cv.py (no code shared with the simulator): within
0.005 mV from 50 to 400 mV. Nicholson and Shain's published values (n·ΔEp = 60.5, 59.2,
58.3, 57.8 mV at 100, 150, 200, 300 mV past E½; 57.0 mV far away) lie 0.1–0.4 mV above this
table: they were computed with the numerical means of 1964 and are given to 0.1 mV; the
tests keep them as a coarse check (within 0.5 mV).

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706 (the dependence on the switch; the
forward peak 1.109 RT/nF before E½).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "FORWARD_PEAK_THERMAL",
    "NODES",
    "MIN_SWITCH_THERMAL",
    "excess_thermal",
    "midpoint_offset_thermal",
    "n_delta_Ep_thermal",
]

#: |Epc − E½| of a reversible forward peak in RT/nF (simulated, converged to 1e-5).
FORWARD_PEAK_THERMAL = 1.10893

#: (ξλ, e): switching distance nF|Eλ − E½|/RT and the excess e of the reverse peak, RT/nF.
NODES: tuple[tuple[float, float], ...] = (
    (1.5000, 0.374726),
    (1.6500, 0.344652),
    (1.8150, 0.314985),
    (1.9965, 0.286042),
    (2.1962, 0.258127),
    (2.4158, 0.231538),
    (2.6573, 0.206517),
    (2.9231, 0.183231),
    (3.2154, 0.161828),
    (3.5369, 0.142364),
    (3.8906, 0.124833),
    (4.2797, 0.109181),
    (4.7076, 0.095314),
    (5.1784, 0.083094),
    (5.6962, 0.072379),
    (6.2659, 0.063010),
    (6.8925, 0.054838),
    (7.5817, 0.047720),
    (8.3399, 0.041521),
    (9.1739, 0.036126),
    (10.0912, 0.031430),
    (11.1004, 0.027342),
    (12.2104, 0.023784),
    (13.4315, 0.020685),
    (14.7746, 0.017988),
    (16.2521, 0.015640),
    (17.8773, 0.013597),
    (19.6650, 0.011818),
    (21.6315, 0.010270),
    (23.7946, 0.008924),
    (26.1741, 0.007753),
    (28.7915, 0.006734),
    (31.6707, 0.005849),
    (34.8377, 0.005079),
    (38.3215, 0.004410),
    (42.1537, 0.003828),
    (46.3690, 0.003323),
    (51.0059, 0.002884),
    (56.1065, 0.002503),
    (61.7172, 0.002172),
    (67.8889, 0.001885),
    (74.6778, 0.001635),
)

_LOG_X = np.log(np.array([x for x, _ in NODES]))
_LOG_E = np.log(np.array([e for _, e in NODES]))
# slopes d log e / d log ξλ at the nodes (second-order differences), for cubic Hermite pieces
_SLOPE = np.gradient(_LOG_E, _LOG_X, edge_order=2)

#: Smallest switching distance covered by the table, RT/nF.
MIN_SWITCH_THERMAL = NODES[0][0]


def excess_thermal(switch_thermal: float) -> float:
    """e(ξλ): how far the reverse peak lies beyond its far-switch position, in RT/nF.

    Parameters
    ----------
    switch_thermal : float
        ξλ = nF|Eλ − E½|/RT, at least :data:`MIN_SWITCH_THERMAL`.

    Raises
    ------
    ValueError
        When ξλ is not finite or lies closer to E½ than the table reaches.
    """
    x = abs(float(switch_thermal))
    if not math.isfinite(x):
        raise ValueError(f"switching distance must be finite, got {switch_thermal}")
    if x < MIN_SWITCH_THERMAL:
        raise ValueError(
            f"switching distance {x:.3f} RT/nF is closer to E½ than the table reaches "
            f"({MIN_SWITCH_THERMAL} RT/nF)"
        )
    u = math.log(x)
    if u >= _LOG_X[-1]:
        return float(math.exp(_LOG_E[-1] + _SLOPE[-1] * (u - _LOG_X[-1])))
    k = min(int(np.searchsorted(_LOG_X, u, side="right")) - 1, _LOG_X.size - 2)
    h = _LOG_X[k + 1] - _LOG_X[k]
    t = (u - _LOG_X[k]) / h
    # cubic Hermite basis on [node k, node k + 1]
    h00, h10 = (1 + 2 * t) * (1 - t) ** 2, t * (1 - t) ** 2
    h01, h11 = t * t * (3 - 2 * t), t * t * (t - 1)
    log_e = h00 * _LOG_E[k] + h10 * h * _SLOPE[k] + h01 * _LOG_E[k + 1] + h11 * h * _SLOPE[k + 1]
    return float(math.exp(log_e))


def n_delta_Ep_thermal(switch_thermal: float) -> float:
    """n·ΔEp in RT/F for a switch ξλ past E½ (2·1.10893 RT/F far away)."""
    return 2.0 * FORWARD_PEAK_THERMAL + excess_thermal(switch_thermal)


def midpoint_offset_thermal(switch_thermal: float) -> float:
    """|(Epa + Epc)/2 − E½| in RT/nF for a switch ξλ past E½: e/2."""
    return 0.5 * excess_thermal(switch_thermal)
