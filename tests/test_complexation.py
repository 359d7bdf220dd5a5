"""Half-wave shift on complexation: Lingane's line and the DeFord–Hume F0 relation."""

from __future__ import annotations

import math

import numpy as np
import pytest

from cvfit.chemistry.complexation import (
    complexed_half_wave_V,
    effective_diffusion_cm2_s,
    leden_F0,
    log_leden_F0,
)
from cvfit.errors import InputError
from cvfit.units import FARADAY, GAS_CONSTANT


def test_leden_F0_by_hand():
    # F0 = 1 + b1 L + b2 L^2 with b1 = 1e3, b2 = 1e5 at L = 0.01: 1 + 10 + 10 = 21
    assert float(leden_F0(0.01, [3.0, 5.0])) == pytest.approx(21.0, rel=1e-14)
    np.testing.assert_allclose(leden_F0([0.0, 0.1], []), [1.0, 1.0])
    assert float(leden_F0(0.0, [8.0])) == 1.0


def test_log_F0_survives_huge_constants():
    ln = log_leden_F0(np.array([0.0, 1e-2, 1.0]), [150.0, 300.0])
    assert ln[0] == 0.0
    assert ln[2] == pytest.approx(300.0 * math.log(10.0), rel=1e-12)
    assert np.all(np.isfinite(ln))


@pytest.mark.parametrize(("p", "q", "n"), [(2, 0, 1), (3, 1, 2), (1, 0, 2)])
def test_lingane_slope_for_one_dominant_complex(p, q, n):
    # Lingane, Chem. Rev. 29 (1941) 1 (from memory): slope -59.16 (p - q)/n mV per decade
    # at 25 °C when one complex dominates on each side (beta [L]^j >> 1).
    beta_ox = [0.0] * (p - 1) + [20.0]
    beta_red = [0.0] * (q - 1) + [12.0] if q else []
    L = np.array([1e-3, 1e-2, 1e-1])
    E = complexed_half_wave_V(0.2, ligand_M=L, log10_beta_ox=beta_ox, log10_beta_red=beta_red,
                              electrons=n)  # fmt: skip
    slope_mV = np.polyfit(np.log10(L), E * 1e3, 1)[0]
    assert slope_mV == pytest.approx(-59.16 * (p - q) / n, abs=0.01)
    # and the intercept gives log10(beta_ox/beta_red): E = E_s - (RT/nF) ln(b_ox/b_red) - ...
    rt_nf = GAS_CONSTANT * 298.15 / (n * FARADAY)
    intercept = 0.2 - rt_nf * math.log(10.0) * (20.0 - (12.0 if q else 0.0))
    assert np.polyfit(np.log10(L), E, 1)[1] == pytest.approx(intercept, abs=1e-6)


def test_deford_hume_F0_when_reduced_form_is_free():
    # DeFord & Hume, J. Am. Chem. Soc. 73 (1951) 5321 (from memory), equal currents:
    # F0([L]) = exp{(nF/RT)[E1/2(s) - E1/2(c)]} = sum_j beta_j [L]^j
    logb = [2.5, 4.8, 6.1]
    L = np.logspace(-4, 0, 9)
    for n, T in ((1, 298.15), (2, 310.0)):
        E = complexed_half_wave_V(-0.1, ligand_M=L, log10_beta_ox=logb, electrons=n,
                                  temperature_K=T)  # fmt: skip
        F0 = np.exp(n * FARADAY / (GAS_CONSTANT * T) * (-0.1 - E))
        np.testing.assert_allclose(F0, leden_F0(L, logb), rtol=1e-10)


def test_both_forms_complexed_and_scalar_return():
    E = complexed_half_wave_V(0.0, ligand_M=0.05, log10_beta_ox=[4.0], log10_beta_red=[2.0])
    assert isinstance(E, float)
    rt_f = GAS_CONSTANT * 298.15 / FARADAY
    assert E == pytest.approx(-rt_f * math.log((1 + 1e4 * 0.05) / (1 + 1e2 * 0.05)), rel=1e-12)
    assert complexed_half_wave_V(0.123, ligand_M=0.0, log10_beta_ox=[9.0]) == 0.123


@pytest.mark.parametrize(
    "kw",
    [dict(ligand_M=-1e-3), dict(ligand_M=float("nan")), dict(log10_beta_ox=[float("inf")]),
     dict(electrons=0), dict(temperature_K=0.0)],
)  # fmt: skip
def test_bad_input_raises_input_error(kw):
    args = dict(ligand_M=1e-3, log10_beta_ox=[3.0])
    args.update(kw)
    with pytest.raises(InputError):
        complexed_half_wave_V(0.0, **args)


def test_diffusion_term_of_lingane_equation():
    # Lingane, Chem. Rev. 29 (1941) 1 (from memory; the derivation was re-done by hand):
    # E1/2(c) - E1/2(s) = -(RT/nF) ln(b_ox/b_red) - (p - q)(RT/nF) ln[L]
    #                     + (RT/2nF) ln[(D_O,s D_R,c)/(D_R,s D_O,c)]
    n, L = 2, np.array([0.05, 0.5])
    Dos, Doc, Drs, Drc = 1.0e-5, 0.6e-5, 0.8e-5, 0.7e-5
    E = complexed_half_wave_V(0.0, ligand_M=L, log10_beta_ox=[0.0, 0.0, 18.0],
                              log10_beta_red=[9.0], electrons=n, D_ox_cm2_s=Dos,
                              D_ox_complexed_cm2_s=Doc, D_red_cm2_s=Drs,
                              D_red_complexed_cm2_s=Drc)  # fmt: skip
    rt_nf = GAS_CONSTANT * 298.15 / (n * FARADAY)
    lingane = (-rt_nf * math.log(10.0) * (18.0 - 9.0) - (3 - 1) * rt_nf * np.log(L)
               + 0.5 * rt_nf * math.log(Dos * Drc / (Drs * Doc)))  # fmt: skip
    np.testing.assert_allclose(E, lingane, atol=1e-9)
    assert effective_diffusion_cm2_s(0.0, [5.0], D_free_cm2_s=Dos, D_complexed_cm2_s=Doc) == Dos
    with pytest.raises(InputError):
        complexed_half_wave_V(0.0, ligand_M=L, log10_beta_ox=[3.0], D_ox_complexed_cm2_s=Doc)
