"""Electrode kinetics from the peak separation: Nicholson's ψ and the standard rate constant.

Three routes from n·ΔEp (mV at 25 °C) to ψ, each used only inside its range:

* Nicholson's table for α = 0.5 (Nicholson 1965), n·ΔEp = 61–212 mV (ψ = 20–0.1),
  interpolated linearly in log ψ — the default;
* Lavagnini's closed form, only for 63–141 mV where it reproduces the table within ~7 %
  (it has a pole at 58.8 mV);
* Klingler–Kochi beyond the table (n·ΔEp > 212 mV), which gives k0 directly.

Below the table (n·ΔEp < 61 mV, ψ > 20) the couple is reversible at this scan rate and
k0 is not determinable; a lower bound is reported instead. Then
k0 = ψ·(π D n F v / RT)^½ (equal diffusion coefficients assumed unless both are given,
when the factor (D_O/D_R)^{α/2} is applied).

Nicholson's table was computed for one switching potential that is not recalled here. An
independent convolution-integral computation (tests/convolution_cv.py, no code shared with
cvfit.simulate) reproduces the table within 0.35 mV for ψ = 7 … 0.35 (1.2 mV at ψ = 0.25)
with the switch n·|Eλ − E½| = 112.5 mV, so that is taken as the table's switch, and a
measured ΔEp is first moved to it, :func:`switch_corrected_delta_Ep_V`. The Nernstian
dependence of ΔEp on the switching potential (Nicholson & Shain 1964) holds in the
reversible limit only: as the electron transfer slows, the dependence fades. The same
computation gives, for the switch moved from 112.5 to 200 mV beyond E½, n·ΔEp falling by
1.54 mV (reversible), 1.34 (ψ = 2), 1.13 (ψ = 1), 0.69 (ψ = 0.5), 0.31 (ψ = 0.35) and
−0.18 mV (ψ = 0.25) — about the reversible shift times (141 − n·ΔEp)/(141 − 57). The
Nernstian correction is scaled by that weight (mV at 25 °C, clipped to 0…1). The Nernstian
shift itself is the simulated switching table
(:mod:`cvfit.techniques.cv.screen.switching_table`), whose reversible shift from 112.5 to
200 mV is the same 1.54 mV; the reversible n·ΔEp at the table's switch is 59.70 mV.

References
----------
Nicholson, R. S. Anal. Chem. 37 (1965) 1351.
Lavagnini, I.; Antiochia, R.; Magno, F. Electroanalysis 16 (2004) 505.
Klingler, R. J.; Kochi, J. K. J. Phys. Chem. 85 (1981) 1731.
Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
"""

from __future__ import annotations

import math

import numpy as np

from cvfit.units import FARADAY, GAS_CONSTANT, STANDARD_TEMPERATURE_K

__all__ = [
    "PSI_TABLE",
    "TABLE_SWITCH_PAST_E_HALF_V",
    "psi_from_table",
    "psi_lavagnini",
    "k0_klingler_kochi_cm_s",
    "k0_from_psi_cm_s",
    "switch_corrected_delta_Ep_V",
    "switch_effect_weight",
    "delta_Ep_stderr_V",
]

#: Nicholson (1965), Bard & Faulkner Table 6.5.2, α = 0.5, 25 °C (from memory):
#: (ψ, n·ΔEp in mV).
PSI_TABLE = (
    (20.0, 61.0),
    (7.0, 63.0),
    (6.0, 64.0),
    (5.0, 65.0),
    (4.0, 66.0),
    (3.0, 68.0),
    (2.0, 72.0),
    (1.0, 84.0),
    (0.75, 92.0),
    (0.50, 105.0),
    (0.35, 121.0),
    (0.25, 141.0),
    (0.10, 212.0),
)
_X_MV = np.array([x for _, x in PSI_TABLE])
_LOG_PSI = np.log(np.array([p for p, _ in PSI_TABLE]))
#: Range of n·ΔEp (mV, 25 °C) covered by the table.
TABLE_RANGE_MV = (61.0, 212.0)
#: Range of n·ΔEp (mV, 25 °C) where Lavagnini's formula follows the table within ~7 %.
LAVAGNINI_RANGE_MV = (63.0, 141.0)
#: The table's entries are given to 1 mV: rounding adds an SD of 1/√12 mV.
TABLE_ROUNDING_SD_MV = 1.0 / math.sqrt(12.0)
#: Switching potential assumed for the table: n·|Eλ − E½| at 25 °C, V (see the module notes).
TABLE_SWITCH_PAST_E_HALF_V = 0.1125
#: n·ΔEp (mV, 25 °C) of the reversible limit and of ψ = 0.25, where the switching
#: correction is full and where it has faded (see :func:`switch_corrected_delta_Ep_V`).
SWITCH_EFFECT_RANGE_MV = (57.0, 141.0)
#: Nicholson's working curve was computed for α = 0.5 and is nearly independent of α for
#: 0.3 < α < 0.7 (Nicholson 1965, from memory); outside that range it is flagged.
ALPHA_TABLE_RANGE = (0.3, 0.7)


def _mV(x: float) -> str:
    return f"{1e3 * x:.1f} mV"


def _at_25C_mV(n_delta_Ep_V: float, temperature_K: float) -> float:
    # rounded to 1e-9 mV so that table entries given in V map onto themselves
    return round(1e3 * n_delta_Ep_V * STANDARD_TEMPERATURE_K / temperature_K, 9)


def psi_from_table(n_delta_Ep_V: float, *, temperature_K: float = 298.15) -> float | None:
    """ψ from n·ΔEp by interpolation of Nicholson's table in log ψ.

    Parameters
    ----------
    n_delta_Ep_V : float
        n times the peak separation, V (corrected to the table's switching potential).
    temperature_K : float
        Temperature, K; the table's mV values scale with T/298.15 K.

    Returns
    -------
    float or None
        ψ, or None outside the table (n·ΔEp < 61 or > 212 mV at 25 °C).

    References
    ----------
    Nicholson, R. S. Anal. Chem. 37 (1965) 1351 (table for α = 0.5, from memory).
    """
    x = _at_25C_mV(n_delta_Ep_V, temperature_K)
    if not (TABLE_RANGE_MV[0] <= x <= TABLE_RANGE_MV[1]):
        return None
    return float(math.exp(np.interp(x, _X_MV, _LOG_PSI)))


def _dlogpsi_dx_per_mV(x_mV: float) -> float:
    """Slope d ln ψ / d(n·ΔEp) of the interpolated table (one-sided at its ends)."""
    k = int(np.clip(np.searchsorted(_X_MV, x_mV) - 1, 0, _X_MV.size - 2))
    return float((_LOG_PSI[k + 1] - _LOG_PSI[k]) / (_X_MV[k + 1] - _X_MV[k]))


def psi_lavagnini(n_delta_Ep_V: float, *, temperature_K: float = 298.15) -> float | None:
    """ψ = (−0.6288 + 0.0021 X)/(1 − 0.017 X), X = n·ΔEp in mV; None outside 63–141 mV.

    References
    ----------
    Lavagnini, I.; Antiochia, R.; Magno, F. Electroanalysis 16 (2004) 505 (from memory).
    """
    x = _at_25C_mV(n_delta_Ep_V, temperature_K)
    if not (LAVAGNINI_RANGE_MV[0] <= x <= LAVAGNINI_RANGE_MV[1]):
        return None
    return (-0.6288 + 0.0021 * x) / (1.0 - 0.017 * x)


def _f(temperature_K: float) -> float:
    return FARADAY / (GAS_CONSTANT * temperature_K)


def k0_from_psi_cm_s(
    psi: float,
    *,
    D_cm2_s: float,
    scan_rate_V_s: float,
    electrons: int,
    temperature_K: float = 298.15,
    D_red_cm2_s: float | None = None,
    alpha: float = 0.5,
) -> float:
    """k0 = ψ (π D_O n F v / RT)^½ / (D_O/D_R)^{α/2}, cm/s.

    References
    ----------
    Nicholson, R. S. Anal. Chem. 37 (1965) 1351; Bard & Faulkner eq. 6.5.5 (from memory).
    """
    ratio = 1.0 if D_red_cm2_s is None else (D_cm2_s / D_red_cm2_s) ** (alpha / 2)
    return (
        psi * math.sqrt(math.pi * D_cm2_s * electrons * _f(temperature_K) * scan_rate_V_s) / ratio
    )


def k0_klingler_kochi_cm_s(
    delta_Ep_V: float,
    *,
    D_cm2_s: float,
    scan_rate_V_s: float,
    electrons: int,
    alpha: float = 0.5,
    temperature_K: float = 298.15,
) -> float:
    """k0 = 2.18 (D α n F v/RT)^½ exp(−α² n F ΔEp / RT), cm/s (large ΔEp).

    References
    ----------
    Klingler, R. J.; Kochi, J. K. J. Phys. Chem. 85 (1981) 1731 (from memory).
    """
    f = _f(temperature_K)
    return (
        2.18
        * math.sqrt(D_cm2_s * alpha * electrons * f * scan_rate_V_s)
        * math.exp(-(alpha**2) * electrons * f * delta_Ep_V)
    )


def switch_effect_weight(n_delta_Ep_V: float, *, temperature_K: float = 298.15) -> float:
    """Share of the Nernstian switch effect on ΔEp kept at this n·ΔEp (1 … 0).

    (141 − n·ΔEp)/(141 − 57) with n·ΔEp in mV at 25 °C, clipped to 0…1; see the module
    notes for the independent computation behind it.
    """
    x25 = 1e3 * n_delta_Ep_V * STANDARD_TEMPERATURE_K / temperature_K
    low, high = SWITCH_EFFECT_RANGE_MV
    return min(1.0, max(0.0, (high - x25) / (high - low)))


def switch_corrected_delta_Ep_V(
    delta_Ep_V: float,
    *,
    switching_offset_V: float,
    electrons: int,
    temperature_K: float = 298.15,
) -> float:
    """ΔEp moved to the table's switching potential (112.5/n mV beyond E½).

    The Nernstian shift of ΔEp with the switching potential (Nicholson & Shain's table,
    :func:`cvfit.techniques.cv.screen.reversibility.nernstian_delta_Ep_V`) is added as a
    correction, scaled by the weight w = (141 − n·ΔEp)/(141 − 57) (mV at 25 °C, clipped to 0…1):
    ΔEp + w·[ΔEp_N(table switch) − ΔEp_N(actual switch)]. In the reversible limit w = 1;
    from ψ = 0.25 (n·ΔEp = 141 mV) on, where ΔEp hardly moves with the switch, w = 0 (see
    the module notes for the independent computation behind the weight).

    Parameters
    ----------
    delta_Ep_V : float
        Measured Epa − Epc, V.
    switching_offset_V : float
        |Eλ − E½|, V.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706 (the reversible dependence).
    Nicholson, R. S. Anal. Chem. 37 (1965) 1351.
    """
    from cvfit.techniques.cv.screen.reversibility import nernstian_delta_Ep_V

    scale = temperature_K / STANDARD_TEMPERATURE_K
    weight = switch_effect_weight(electrons * delta_Ep_V, temperature_K=temperature_K)
    if weight == 0.0:
        return float(delta_Ep_V)
    table_offset = TABLE_SWITCH_PAST_E_HALF_V * scale / electrons
    table = nernstian_delta_Ep_V(
        switching_offset_V=table_offset, electrons=electrons, temperature_K=temperature_K
    )
    own = nernstian_delta_Ep_V(
        switching_offset_V=abs(switching_offset_V),
        electrons=electrons,
        temperature_K=temperature_K,
    )
    return delta_Ep_V + weight * (table - own)


def delta_Ep_stderr_V(E_half_stderr_V: float | None) -> float | None:
    """Standard error of ΔEp from that of E½ = (Epa + Epc)/2: 2·σ(E½).

    The noise terms of the two vertices add to var(ΔEp) = var(Epa) + var(Epc), four
    times their share of var(E½). Monte Carlo on simulated CVs with 1 % noise, sloping
    background and charging current gave SD(ΔEp) = 0.79 mV against 2·σ(E½) = 0.77 mV
    (reversible) and 0.82 vs 0.87 mV (ψ = 1); tests/test_kinetics.py repeats the check.
    """
    return None if E_half_stderr_V is None else 2.0 * float(E_half_stderr_V)
