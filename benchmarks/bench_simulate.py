"""Speed of the voltammogram simulator: a 4 000-point reversible CV.

Run: ``.venv/bin/python benchmarks/bench_simulate.py``. Prints the time of

* ``simulate_cv`` (default back end: compiled Thomas sweeps when numba is installed),
* the pure-NumPy back end (dense precomputed interior inverse),
* a straightforward reference: the same grid and BDF2 scheme, with the tridiagonal system
  of each species assembled and solved by ``scipy.linalg.solve_banded`` at every step
  (Nernstian Dirichlet surface value, equal D),

and the ratios reference/simulator. No assertions: numbers depend on the machine.
"""

from __future__ import annotations

import math

import numpy as np
from _timing import best_of
from scipy.linalg import solve_banded

from cvfit.simulate import finite_difference as _sim_kernel
from cvfit.simulate.voltammogram import _simulate_raw, simulate_cv
from cvfit.units import FARADAY, GAS_CONSTANT

SETTINGS = dict(E_half_V=0.0, start_V=1.0, switch_V=-1.0, step_V=0.001, scan_rate_V_s=0.1)
D = 1e-5
C = 1e-6  # mol/cm3
AREA = 0.0707


def reference_cv(E: np.ndarray, dt: float, x: np.ndarray) -> np.ndarray:
    """Reversible CV, BDF2 in time, solve_banded per step (the plain way)."""
    f = FARADAY / (GAS_CONSTANT * 298.15)
    N = x.size - 1
    hm = x[1:N] - x[: N - 1]
    hp = x[2:] - x[1:N]
    lo = -D * 2 / (hm * (hm + hp))
    up = -D * 2 / (hp * (hm + hp))
    lap = D * 2 / (hm * hp)
    h1, h2 = x[1], x[2] - x[1]
    s = (-(2 * h1 + h2) / (h1 * (h1 + h2)), (h1 + h2) / (h1 * h2), -h1 / (h2 * (h1 + h2)))
    cO = np.full(N + 1, C)
    prev = cO.copy()
    i = np.zeros(E.size)
    for m in range(1, E.size):
        kap = 1 / dt if m == 1 else 1.5 / dt
        rhs = cO[1:N] / dt if m == 1 else (4 * cO[1:N] - prev[1:N]) / (2 * dt)
        theta = math.exp(f * E[m])
        c0 = C * theta / (1 + theta)
        rhs = rhs.copy()
        rhs[0] -= lo[0] * c0
        rhs[-1] -= up[-1] * C
        ab = np.zeros((3, N - 1))
        ab[0, 1:] = up[:-1]
        ab[1] = kap + lap
        ab[2, :-1] = lo[1:]
        prev = cO.copy()
        cO[0] = c0
        cO[1:N] = solve_banded((1, 1), ab, rhs)
        i[m] = -FARADAY * AREA * D * (s[0] * cO[0] + s[1] * cO[1] + s[2] * cO[2])
    return i


def main() -> None:
    wave, raw, settings = _simulate_raw(**SETTINGS)  # also compiles once if needed
    points = wave.potential_V.size
    grid = int(settings["grid_points"])
    t_sim = best_of(lambda: simulate_cv(**SETTINGS), 20)
    t_numpy = best_of(lambda: _simulate_raw(**SETTINGS, backend="numpy"), 3)
    t_ref = best_of(lambda: reference_cv(wave.potential_V, wave.dt_s, raw.grid.x_cm), 3)
    i_ref = reference_cv(wave.potential_V, wave.dt_s, raw.grid.x_cm)
    agree = np.max(np.abs(i_ref - raw.faradaic_A)) / np.max(np.abs(raw.faradaic_A))
    backend = "numba" if _sim_kernel.HAVE_NUMBA else "numpy"
    print(f"4000-point reversible CV: {points} points x {grid} grid nodes")
    rows = [
        (f"simulate_cv ({backend} back end)", f"{t_sim * 1e3:.2f} ms"),
        ("pure-NumPy back end", f"{t_numpy * 1e3:.2f} ms"),
        ("reference (solve_banded per step)", f"{t_ref * 1e3:.2f} ms"),
        ("ratio reference / simulate_cv", f"{t_ref / t_sim:.1f}"),
        ("ratio reference / NumPy back end", f"{t_ref / t_numpy:.1f}"),
        ("max |i_ref - i_sim| / max |i|", f"{agree:.1e}"),
    ]
    for label, value in rows:
        print(f"  {label:<36s}{value:>12s}")


if __name__ == "__main__":
    main()
