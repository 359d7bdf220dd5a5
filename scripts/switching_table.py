"""Rebuild the Nernstian switching table of cvfit/techniques/cv/screen/switching_table.py.

The reverse peak of a reversible couple depends on how far past E½ the sweep was switched.
For each node of the dimensionless switching distance ξλ = nF|Eλ − E½|/RT this script
simulates a noise-free reversible voltammogram with cvfit's own simulator (no charging,
no background, equal diffusion coefficients, start 16 RT/nF before E½) at two potential
steps, 0.05 and 0.025 mV, locates both peaks of the faradaic current (a quartic through
the 13 samples around each extremum) and prints

* the forward peak offset ξc = nF(Epc − E½)/RT (the same at every node),
* the excess e(ξλ) = ξa + ξc of the reverse peak, in RT/nF, where ξa = nF(Epa − E½)/RT
  (for a reduction-first sweep): n·ΔEp = (−2ξc + e)·RT/F and the midpoint
  (Epa + Epc)/2 lies e/2·RT/nF beyond E½,
* the largest change of e between the two steps (the convergence of the table),
* the error of the table's interpolation at the geometric midpoints between nodes.

Run from the repository root (about two minutes on one core):

    python scripts/switching_table.py

and paste the printed ``NODES`` into the module. tests/test_switching_table.py checks the
table against an independent computation (tests/convolution_cv.py).
"""

from __future__ import annotations

import math

import numpy as np

from cvfit.simulate.voltammogram import simulate_cv
from cvfit.techniques.cv.screen.switching_table import NODES as TABLE
from cvfit.techniques.cv.screen.switching_table import excess_thermal
from cvfit.units import thermal_voltage

START_THERMAL = 16.0
STEPS_MV = (0.05, 0.025)
NODES = np.round(1.5 * 1.1 ** np.arange(42), 4)  # ξλ from 1.5 to 79 (39 mV to 2 V)


def _vertex(E: np.ndarray, y: np.ndarray) -> float:
    k = int(np.argmax(y))
    window = slice(k - 6, k + 7)
    coef = np.polyfit(E[window] - E[k], y[window], 4)
    roots = np.roots(np.polyder(coef))
    real = roots[np.isreal(roots)].real
    return float(E[k] + real[np.argmin(np.abs(real))])


def peak_offsets(switch_thermal: float, step_mV: float) -> tuple[float, float]:
    """(ξc, ξa) of a reduction-first reversible voltammogram switched ξλ past E½."""
    rt_f = thermal_voltage(298.15)
    v = simulate_cv(
        E_half_V=0.0,
        start_V=START_THERMAL * rt_f,
        switch_V=-switch_thermal * rt_f,
        step_V=step_mV * 1e-3,
    )
    xi = v.potential_V / rt_f
    k = int(np.argmin(xi))
    return _vertex(xi[: k + 1], -v.current_A[: k + 1]), _vertex(xi[k:], v.current_A[k:])


def main() -> None:
    forward = []
    rows = []
    worst_step = 0.0
    for node in NODES:
        coarse = peak_offsets(float(node), STEPS_MV[0])
        fine = peak_offsets(float(node), STEPS_MV[1])
        forward.append(fine[0])
        rows.append((float(node), fine[0] + fine[1]))
        worst_step = max(worst_step, abs(sum(fine) - sum(coarse)))
    print(f"FORWARD_PEAK_THERMAL = {-np.mean(forward):.5f}  # spread {np.ptp(forward):.1e}")
    print("NODES = (")
    for node, excess in rows:
        print(f"    ({node:.4f}, {excess:.6f}),")
    print(")")
    rt_f_mV = 1e3 * thermal_voltage(298.15)
    print(
        f"largest change of e, step {STEPS_MV[0]} -> {STEPS_MV[1]} mV: "
        f"{worst_step:.2e} RT/F = {worst_step * rt_f_mV:.2e} mV (n = 1)"
    )
    if not TABLE:
        return  # paste the nodes into the module, then run again for the interpolation check
    worst_interp = 0.0
    for lo, hi in zip(NODES[:-1], NODES[1:], strict=True):
        mid = math.sqrt(lo * hi)
        c, a = peak_offsets(mid, STEPS_MV[1])
        worst_interp = max(worst_interp, abs(excess_thermal(mid) - (a + c)))
    print(f"largest interpolation error at the midpoints: {worst_interp * rt_f_mV:.2e} mV")


if __name__ == "__main__":
    main()
