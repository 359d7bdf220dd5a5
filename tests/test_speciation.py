"""Solution chemistry: Leden functions, fractions, n̄, protonation, mass balance, Davies."""

from __future__ import annotations

import math

import numpy as np
import pytest

from cvfit.chemistry.activity import davies_log10_gamma, thermodynamic_log10_beta
from cvfit.chemistry.complexation import complexed_half_wave_V, leden_F0
from cvfit.chemistry.speciation import (
    absolute_log10_beta,
    conditional_log10_beta,
    fraction_peak_ligand_M,
    free_ligand_M,
    leden_F_functions,
    ligand_fraction_unprotonated,
    mean_ligand_number,
    species_fractions,
)
from cvfit.errors import InputError
from cvfit.titration.stepwise import complex_standard_potential_V
from cvfit.units import thermal_voltage

BETA = (2.0, 3.7, 4.9)
L = np.logspace(-3, 0, 12)


def test_leden_functions_follow_the_published_recursion():
    # Leden, Z. Phys. Chem. A188 (1941) 160 (from memory):
    # F1 = (F0 - 1)/[L] = β1 + β2[L] + β3[L]²,
    # F2 = (F1 - β1)/[L] = β2 + β3[L], F3 = β3.
    b = 10.0 ** np.array(BETA)
    F0, F1, F2, F3 = leden_F_functions(L, leden_F0(L, BETA), BETA, order=3)
    np.testing.assert_allclose(F1, b[0] + b[1] * L + b[2] * L**2, rtol=1e-10)
    np.testing.assert_allclose(F2, b[1] + b[2] * L, rtol=1e-8)
    np.testing.assert_allclose(F3, b[2], rtol=1e-6)


def test_deford_hume_F0_from_shift_and_current_ratio():
    # DeFord & Hume, J. Am. Chem. Soc. 73 (1951) 5321 (from memory):
    # F0 = exp{(nF/RT)[E½(s) - E½(c)] + ln(Is/Ic)}, with I ∝ D^½ of the complexed form.
    D_s, D_c = 1.0e-5, 0.6e-5
    Ec = complexed_half_wave_V(
        0.1, ligand_M=L, log10_beta_ox=BETA, D_ox_cm2_s=D_s, D_ox_complexed_cm2_s=D_c
    )
    F0 = leden_F0(L, BETA)
    D_eff = (D_s + D_c * (F0 - 1)) / F0
    ln_Is_Ic = 0.5 * np.log(D_s / D_eff)
    F0_measured = np.exp((0.1 - Ec) / thermal_voltage(298.15, 1) + ln_Is_Ic)
    np.testing.assert_allclose(F0_measured, F0, rtol=1e-9)


def test_fractions_sum_to_one_and_mean_ligand_number_is_dlnF0_dlnL():
    # Bjerrum, Metal Ammine Formation in Aqueous Solution, Haase, Copenhagen (1941); DeFord &
    # Hume, J. Am. Chem. Soc. 73 (1951) 5321: n̄ = d ln F0 / d ln[L] (from memory).
    a = species_fractions(L, BETA)
    np.testing.assert_allclose(a.sum(axis=0), 1.0, rtol=1e-12)
    h = 1e-5
    num = (np.log(leden_F0(L * math.exp(h), BETA)) - np.log(leden_F0(L * math.exp(-h), BETA))) / (
        2 * h
    )
    np.testing.assert_allclose(mean_ligand_number(L, BETA), num, rtol=1e-6)


def test_fraction_of_an_intermediate_complex_peaks_where_nbar_equals_j():
    Lp = fraction_peak_ligand_M(BETA, 2)
    grid = np.geomspace(Lp / 3, Lp * 3, 2001)
    a2 = species_fractions(grid, BETA)[2]
    assert grid[np.argmax(a2)] == pytest.approx(Lp, rel=0.01)
    assert float(mean_ligand_number(Lp, BETA)) == pytest.approx(2.0, abs=1e-8)


def test_silver_ammine_standard_potential():
    # CRC Handbook of Chemistry and Physics, electrochemical series / Smith & Martell,
    # Critical Stability Constants, Plenum, New York (from memory): E°(Ag+/Ag) = 0.7996 V,
    # log β2(Ag(NH3)2+) = 7.21 → E° = 0.373 V.
    E = complex_standard_potential_V(0.7996, log10_beta_ox=7.21, electrons=1)
    assert E == pytest.approx(0.373, abs=0.002)
    # The same through the Leden function at unit ligand concentration (β1 negligible here).
    E_leden = complexed_half_wave_V(0.7996, ligand_M=1.0, log10_beta_ox=(-10.0, 7.21))
    assert E_leden == pytest.approx(0.373, abs=0.002)


def test_standard_potential_refuses_celsius_and_fractional_n():
    # 25 "K" is 25 °C given as kelvin: no electrolyte solution is liquid below ~200 K
    with pytest.raises(InputError, match=r"298.15 K"):
        complex_standard_potential_V(0.7996, log10_beta_ox=7.21, temperature_K=25.0)
    for bad_n in (1.5, 0, True, float("nan")):
        with pytest.raises(InputError, match="whole number"):
            complex_standard_potential_V(0.7996, log10_beta_ox=7.21, electrons=bad_n)
    with pytest.raises(InputError, match="finite"):
        complex_standard_potential_V(0.7996, log10_beta_ox=float("inf"))
    with pytest.raises(InputError, match="kelvin"):
        complexed_half_wave_V(0.0, ligand_M=0.1, log10_beta_ox=[3.0], temperature_K=37.0)
    # a whole n given as 2.0 and a warm cell are fine: the Nernst slope halves with n
    one = complex_standard_potential_V(0.0, log10_beta_ox=2.0, temperature_K=310.0)
    two = complex_standard_potential_V(0.0, log10_beta_ox=2.0, electrons=2.0, temperature_K=310.0)
    assert two == pytest.approx(one / 2, rel=1e-12)


def test_ligand_for_a_fraction_of_the_metal():
    from cvfit.chemistry.speciation import ligand_for_fraction_M

    # one complex: α1 = β[L]/(1 + β[L]) = f at [L] = f/((1 − f)β) (Leden 1941)
    assert ligand_for_fraction_M([3.0], 1, 0.2) == pytest.approx(0.25e-3, rel=1e-8)
    # an intermediate complex peaks at [L] = β2^-1/2 with α1 = r/(2 + r), r = β1/√β2:
    # log β = (3, 7) gives 0.137 at most, so 20 % is never reached
    assert ligand_for_fraction_M([3.0, 7.0], 1, 0.2) is None
    assert ligand_for_fraction_M([3.0, 7.0], 1, 0.13) is not None


def test_fraction_unprotonated_against_explicit_acid_constants():
    # Ringbom, Complexation in Analytical Chemistry, Interscience, New York (1963):
    # α_L = Ka1Ka2/([H]² + Ka1[H] + Ka1Ka2)
    # for H2L with pKa1 < pKa2 (dissociation constants, from memory).
    pKa = (9.2, 6.1)
    for pH in (4.0, 6.1, 7.0, 9.2, 12.0):
        H = 10.0**-pH
        Ka1, Ka2 = 10.0**-6.1, 10.0**-9.2
        expected = Ka1 * Ka2 / (H**2 + Ka1 * H + Ka1 * Ka2)
        assert float(ligand_fraction_unprotonated(pH, pKa)) == pytest.approx(expected, rel=1e-10)
    assert float(ligand_fraction_unprotonated(9.2, [9.2])) == pytest.approx(0.5)


def test_conditional_and_absolute_constants_are_inverse():
    cond = conditional_log10_beta(BETA, -1.5)
    assert cond == pytest.approx([0.5, 0.7, 0.4])
    assert absolute_log10_beta(cond, -1.5) == pytest.approx(list(BETA))


def test_mass_balance_closes():
    MT, LT, aL = 1e-3, 4e-3, 0.3
    L_free = free_ligand_M(LT, MT, BETA, alpha_L=aL)
    bound = MT * float(mean_ligand_number(L_free, BETA))
    assert L_free / aL + bound == pytest.approx(LT, rel=1e-10)
    assert free_ligand_M(0.0, MT, BETA) == 0.0


def test_davies_check_values():
    # Davies, C. W. Ion Association, Butterworths, London (1962) p. 41 (confirmed):
    # log γ = −A z² [√I/(1 + √I) − 0.3 I], A = 0.509 at 25 °C; values calculated from it:
    # I = 0.1 M → γ(1) = 0.7816, γ(2) = 0.3732, γ(3) = 0.1089.
    for z, g in ((1, 0.7816), (2, 0.3732), (3, 0.1089)):
        assert 10.0 ** davies_log10_gamma(z, 0.1, A=0.509) == pytest.approx(g, abs=5e-5)
    assert davies_log10_gamma(2, 0.0) == 0.0


def test_one_debye_huckel_A_for_the_api_and_the_command():
    # Robinson & Stokes, Electrolyte Solutions 2nd ed. (1959), Appendix 7.1 (from memory):
    # A = 0.5115 (mol/kg)^-1/2 for water at 25 °C (0.5116 on the molar scale, calculated).
    # The default of the Python API is that value, not Davies' older 0.509, so that it
    # matches `cvfit run` (which takes A at the series' temperature).
    r = math.sqrt(0.1)
    default = -davies_log10_gamma(1, 0.1) / (r / (1.0 + r) - 0.03)
    assert default == pytest.approx(0.5115, abs=2e-4)
    t = thermodynamic_log10_beta([3.0], metal_charge=2, ligand_charge=-1, ionic_strength_M=0.1)
    assert t[0] == pytest.approx(3.0 + default * 4 * (r / (1.0 + r) - 0.03), abs=1e-12)
    hot = -davies_log10_gamma(1, 0.1, temperature_K=333.15) / (r / (1.0 + r) - 0.03)
    assert hot > default + 0.02  # A grows with T: ε_r·T falls (Malmberg & Maryott 1956)


def test_thermodynamic_constant_of_a_neutral_ligand_complex():
    # M²⁺ + 2 L (neutral) → ML2²⁺: charges unchanged, no Davies correction.
    assert thermodynamic_log10_beta(
        [3.0, 5.0], metal_charge=2, ligand_charge=0, ionic_strength_M=0.1
    ) == pytest.approx([3.0, 5.0])
    # M²⁺ + L⁻ → ML⁺: log β° = log β + log γ(1) - log γ(2) - log γ(1) = log β - log γ(2).
    t = thermodynamic_log10_beta(
        [3.0], metal_charge=2, ligand_charge=-1, ionic_strength_M=0.1, A=0.509
    )
    assert t[0] == pytest.approx(3.0 - math.log10(0.3732), abs=1e-4)


def test_debye_huckel_A_follows_the_permittivity_of_water():
    from cvfit.chemistry.activity import debye_huckel_A, water_relative_permittivity

    # Malmberg & Maryott, J. Res. NBS 56 (1956) 1, ε_r of water (from memory):
    # 87.74 at 0 °C, 78.30 at 25 °C, 69.91 at 50 °C, 55.72 at 100 °C.
    for t, eps in ((0.0, 87.74), (25.0, 78.30), (50.0, 69.91), (100.0, 55.72)):
        T = 273.15 + t
        assert water_relative_permittivity(T) == pytest.approx(eps, abs=0.02)
        # Robinson & Stokes, Electrolyte Solutions (1959): A = 1.8246e6 (ε_r T)^-3/2
        # (from memory); 0.4918 at 0 °C, about 0.51 at 25 °C.
        assert debye_huckel_A(T) == pytest.approx(1.8246e6 * (eps * T) ** -1.5, rel=5e-4)
    assert debye_huckel_A(273.15) == pytest.approx(0.4918, abs=5e-4)
    assert debye_huckel_A(333.15) > debye_huckel_A(298.15) > debye_huckel_A(273.15)
    with pytest.raises(ValueError):
        debye_huckel_A(393.15)
