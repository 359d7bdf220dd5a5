"""Nicholson's ψ and k0 from the peak separation.

Reference values:
- Nicholson, Anal. Chem. 37 (1965) 1351; Bard & Faulkner Table 6.5.2 (from memory), α = 0.5,
  25 °C: ψ = 20, 7, 6, 5, 4, 3, 2, 1, 0.75, 0.5, 0.35, 0.25, 0.1 ↔ n·ΔEp = 61, 63, 64, 65, 66,
  68, 72, 84, 92, 105, 121, 141, 212 mV; ψ = k0 / (π D n F v / RT)^1/2.
- Lavagnini, Antiochia & Magno, Electroanalysis 16 (2004) 505 (from memory): within ~7 % of the
  table for 63–141 mV.
- Klingler & Kochi, J. Phys. Chem. 85 (1981) 1731 (from memory): k0 = 2.18 (DαnFv/RT)^1/2
  exp(−α² nFΔEp/RT) beyond ~200 mV.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from cvfit.peaks.analysis import analyse_peaks
from cvfit.quantity import Quantity
from cvfit.screen.kinetics import KineticsResult, diffusion_from_peak_current, estimate_kinetics
from cvfit.screen.rate_constant import (
    PSI_TABLE,
    delta_Ep_stderr_V,
    k0_from_psi_cm_s,
    k0_klingler_kochi_cm_s,
    psi_from_table,
    psi_lavagnini,
)
from cvfit.simulate.voltammogram import simulate_cv
from cvfit.units import FARADAY, GAS_CONSTANT

T = 298.15
D = 1.0e-5
V = 0.1
D_EXACT = Quantity(D, 0.0, (D, D))


def _k0(psi: float, n: int) -> float:
    # Nicholson, Anal. Chem. 37 (1965) 1351 (from memory): ψ = k0 / (π D n F v / RT)^1/2,
    # equal D
    return psi * math.sqrt(math.pi * D * n * FARADAY * V / (GAS_CONSTANT * T))


def _sim(n, psi, *, noise, seed, switch="table", alpha=0.5):
    k0 = None if psi is None else _k0(psi, n)
    if switch == "table":
        # the table's switch: 90/n mV past the forward peak (see cvfit.screen.rate_constant)
        probe = analyse_peaks(
            simulate_cv(
                E_half_V=0.0, start_V=0.25 / n, switch_V=-0.8, k0_cm_s=k0, electrons=n, alpha=alpha
            ),
            electrons=n,
        )
        sw = round(probe.Epc_V - 0.090 / n, 3)
    else:
        sw = -float(switch) / n
    return simulate_cv(
        E_half_V=0.0,
        start_V=0.25 / n,
        switch_V=sw,
        k0_cm_s=k0,
        electrons=n,
        alpha=alpha,
        double_layer_F=10e-6,
        background_slope_A_per_V=2e-6,
        noise_fraction=noise,
        seed=seed,
    )


def test_table_interpolation_reproduces_table_and_refuses_outside():
    for psi, x_mV in PSI_TABLE:
        # Nicholson, Anal. Chem. 37 (1965) 1351, table for α = 0.5 (from memory). Circular:
        # PSI_TABLE is the code's own copy, so only the interpolation is checked here.
        assert psi_from_table(x_mV * 1e-3) == pytest.approx(psi, rel=1e-9)
    assert psi_from_table(0.0605) is None and psi_from_table(0.213) is None
    # monotonic between entries (log-ψ interpolation)
    xs = np.linspace(0.061, 0.212, 200)
    ps = [psi_from_table(x) for x in xs]
    assert all(a > b for a, b in zip(ps, ps[1:], strict=False))
    # mV values scale with T/298.15 K
    assert psi_from_table(0.084 * 330 / T, temperature_K=330.0) == pytest.approx(1.0)


def test_lavagnini_inside_range_only():
    for psi, x_mV in PSI_TABLE:
        got = psi_lavagnini(x_mV * 1e-3)
        if 63 <= x_mV <= 141:
            # Lavagnini, Antiochia & Magno, Electroanalysis 16 (2004) 505 (from memory):
            # within ~7 % of Nicholson's table (the code's copy, PSI_TABLE)
            assert got == pytest.approx(psi, rel=0.08)
        else:
            assert got is None  # 61 and 212 mV: ~30 % off; pole at 58.8 mV


def test_klingler_kochi_joins_the_table_at_its_end():
    # at n·ΔEp = 212 mV the table gives ψ = 0.1 (Nicholson, Anal. Chem. 37 (1965) 1351);
    # Klingler & Kochi, J. Phys. Chem. 85 (1981) 1731 (from memory) agrees to ~15 %
    k_kk = k0_klingler_kochi_cm_s(0.212, D_cm2_s=D, scan_rate_V_s=V, electrons=1)
    k_tab = k0_from_psi_cm_s(0.1, D_cm2_s=D, scan_rate_V_s=V, electrons=1)
    assert k_kk == pytest.approx(k_tab, rel=0.15)


@pytest.mark.parametrize("n", [1, 2])
@pytest.mark.parametrize("psi", [0.2, 0.35, 0.5, 1.0, 2.0, 3.0, 5.0])
def test_k0_recovered_within_15_percent(n, psi):
    for switch, seed in (("table", 11), ("0.5", 12)):
        p = analyse_peaks(_sim(n, psi, noise=0.002, seed=seed, switch=switch), electrons=n)
        r = estimate_kinetics(p, electrons=n, temperature_K=T, scan_rate_V_s=V, D_cm2_s=D_EXACT)
        assert r.status == "determined", r.flags
        assert r.method == "nicholson-table"
        err = r.k0_cm_s.value / _k0(psi, n) - 1
        assert abs(err) < 0.15, (switch, err)
        # the stated uncertainty covers the error (within 3 SD)
        assert abs(math.log1p(err)) < 3 * r.k0_cm_s.stderr / r.k0_cm_s.value, (switch, err)
        lo, hi = r.k0_cm_s.ci95
        assert lo < r.k0_cm_s.value < hi and r.k0_cm_s.stderr > 0


def test_lavagnini_route_and_klingler_kochi_route_on_simulations():
    p = analyse_peaks(_sim(1, 1.0, noise=0.002, seed=3), electrons=1)
    r = estimate_kinetics(
        p, electrons=1, temperature_K=T, scan_rate_V_s=V, D_cm2_s=D_EXACT, method="lavagnini"
    )
    assert r.method == "lavagnini" and abs(r.k0_cm_s.value / _k0(1.0, 1) - 1) < 0.15
    p = analyse_peaks(_sim(1, 0.05, noise=0.002, seed=4, switch="0.7"), electrons=1)
    r = estimate_kinetics(p, electrons=1, temperature_K=T, scan_rate_V_s=V, D_cm2_s=D_EXACT)
    assert r.method == "klingler-kochi" and "212" in r.range_note
    assert abs(r.k0_cm_s.value / _k0(0.05, 1) - 1) < 0.15


@pytest.mark.parametrize("n", [1, 2])
def test_reversible_gives_no_k0_but_a_lower_bound(n):
    for seed in (1, 2, 3):
        p = analyse_peaks(_sim(n, None, noise=0.005, seed=seed, switch="0.3"), electrons=n)
        r = estimate_kinetics(p, electrons=n, temperature_K=T, scan_rate_V_s=V, D_cm2_s=D_EXACT)
        assert r.status == "reversible_limit"
        assert r.psi is None and r.k0_cm_s is None
        assert [f.code for f in r.flags] == ["K0_NOT_DETERMINABLE_REVERSIBLE"]
        assert "reversible, k0 not determinable" in r.flags[0].message
        # lower bound no higher than ψ = 20 allows, and positive
        assert 0 < r.k0_lower_bound_cm_s <= _k0(20.0, n) * (1 + 1e-9)


def test_no_D_gives_psi_only_and_missing_reverse_not_determinable():
    p = analyse_peaks(_sim(1, 1.0, noise=0.002, seed=5), electrons=1)
    r = estimate_kinetics(p, electrons=1, temperature_K=T, scan_rate_V_s=V)
    assert r.psi.value == pytest.approx(1.0, rel=0.15) and r.k0_cm_s is None
    assert "K0_NEEDS_D" in [f.code for f in r.flags]
    one_sided = simulate_cv(
        E_half_V=0.0, start_V=0.3, switch_V=-0.3, k0_cm_s=1e-6, noise_fraction=0.005, seed=1
    )
    r = estimate_kinetics(
        analyse_peaks(one_sided), electrons=1, temperature_K=T, scan_rate_V_s=V, D_cm2_s=D_EXACT
    )
    assert r.status == "not_determinable" and r.k0_cm_s is None


def test_delta_Ep_stderr_matches_monte_carlo_scatter():
    # σ(ΔEp) = 2σ(E½): check against the scatter of 60 simulations at 1 % noise
    d, s = [], []
    for seed in range(60):
        p = analyse_peaks(_sim(1, 1.0, noise=0.01, seed=100 + seed, switch="0.35"))
        d.append(p.delta_Ep_V)
        s.append(delta_Ep_stderr_V(p.E_half_stderr_V))
    ratio = np.std(d, ddof=1) / np.mean(s)
    assert 0.75 < ratio < 1.3


def test_k0_uncertainty_includes_D_and_records_validate():
    p = analyse_peaks(_sim(1, 0.5, noise=0.002, seed=6), electrons=1)
    sharp = estimate_kinetics(p, electrons=1, temperature_K=T, scan_rate_V_s=V, D_cm2_s=D_EXACT)
    fuzzy = estimate_kinetics(
        p,
        electrons=1,
        temperature_K=T,
        scan_rate_V_s=V,
        D_cm2_s=Quantity(D, 0.2 * D, (0.6 * D, 1.4 * D)),
    )
    rel_s = sharp.k0_cm_s.stderr / sharp.k0_cm_s.value
    rel_f = fuzzy.k0_cm_s.stderr / fuzzy.k0_cm_s.value
    assert rel_f == pytest.approx(math.hypot(rel_s, 0.1), rel=1e-6)  # ½·σ(D)/D
    assert fuzzy.to_dict()["k0_cm_s"]["value"] == pytest.approx(fuzzy.k0_cm_s.value)
    with pytest.raises(ValueError):
        KineticsResult("determined", "nicholson-table", "")
    with pytest.raises(ValueError):
        estimate_kinetics(p, electrons=1, temperature_K=T, scan_rate_V_s=V, method="guess")


def test_diffusion_from_reversible_peak_current():
    # Randles, Trans. Faraday Soc. 44 (1948) 327; Ševčík, Collect. Czech. Chem. Commun. 13
    # (1948) 349; Nicholson & Shain, Anal. Chem. 36 (1964) 706 (confirmed):
    # ip = 0.4463 nFAC (nFvD/RT)^1/2
    v = simulate_cv(E_half_V=0.0, start_V=0.3, switch_V=-0.3, noise_fraction=0.002, seed=7)
    p = analyse_peaks(v)
    q = diffusion_from_peak_current(
        p.ipc_A,
        ip_stderr_A=p.noise_A,
        electrons=1,
        area_cm2=0.0707,
        analyte_M=1e-3,
        scan_rate_V_s=V,
    )
    assert q.value == pytest.approx(D, rel=0.03)
    assert q.stderr > 0
