"""The cause of an excess peak separation that grows with the scan rate: an uncompensated
resistance or slow electron transfer, or neither.

Two one-parameter models of the excess n·ΔEp of a scan-rate study:

* iR: excess = c · i_p + e · v, e >= 0 (the drop of the forward peak current and of the
  charging current through R_u);
* kinetics: excess = X(K / √v) − X_rev + (1 − w)·(X_rev − X_N), with X(ψ) Nicholson's
  working curve at the table's switch (:mod:`cvfit.techniques.cv.screen.rate_constant`),
  X_rev its reversible limit, X_N the Nernstian n·ΔEp at the file's own switch, w the share
  of the switch effect that survives at X
  (:func:`cvfit.techniques.cv.screen.rate_constant.switch_effect_weight`) and
  K = k0/(π D n F/RT)^½ the one free parameter.

A model is named the cause when it does :data:`IR_MODEL_PREFERENCE` times better in χ²
than the other, the other fails its χ² test at :data:`MODEL_REJECT_P`, and the model itself
passes its own at :data:`MODEL_FIT_P`; when neither passes its own test, no cause is named
("undecided"). The R_u of the iR model has its error scaled by the model's misfit, and an
R_u far above what the electrode and electrolyte can give (:func:`plausible_resistance_ohm`)
is not named as the cause either.

References
----------
Nicholson, R. S. Anal. Chem. 37 (1965) 1351. Klingler, R. J.; Kochi, J. K. J. Phys.
Chem. 85 (1981) 1731. Newman, J. J. Electrochem. Soc. 113 (1966) 501.
"""

from __future__ import annotations

import math

import numpy as np
from scipy import optimize

from cvfit.flags import Flag
from cvfit.quantity import Quantity, chi2_upper_quantile
from cvfit.techniques.cv.screen.rate_constant import (
    PSI_TABLE,
    TABLE_SWITCH_PAST_E_HALF_V,
    switch_effect_weight,
)
from cvfit.techniques.cv.screen.reversibility import nernstian_delta_Ep_V
from cvfit.units import FARADAY, GAS_CONSTANT, STANDARD_TEMPERATURE_K

__all__ = [
    "IR_MODEL_PREFERENCE",
    "MODEL_FIT_P",
    "MODEL_REJECT_P",
    "fit_excess_models",
    "judge_excess",
    "plausible_resistance_ohm",
    "working_curve_n_delta_Ep_V",
]

#: One model of the excess ΔEp is named the cause when its χ² is this many times smaller
#: than the other's, the other is rejected by its χ² test at ``MODEL_REJECT_P`` and the
#: model itself passes that test (a model that fails it names no cause, however much
#: better it does than the other: "undecided").
IR_MODEL_PREFERENCE = 2.0
MODEL_REJECT_P = 0.01
#: The named model itself must pass its χ² test at this level: looser than the rejection
#: of the other, as the working curve it is built on carries a few tenths of a mV of
#: its own (common practice).
MODEL_FIT_P = 0.001
#: Lowest electrolyte conductivity taken as plausible, S/cm (common practice: a supporting
#: electrolyte of 0.05 M or more in a polar solvent gives 1–15 mS/cm; 0.1 M KCl in water
#: 12.9 mS/cm, from memory).
MIN_CONDUCTIVITY_S_CM = 1e-3
#: Largest R_u taken as plausible when no electrode area is given, Ω (common practice:
#: macroelectrodes in supporting electrolyte rarely exceed a few kΩ).
MAX_RESISTANCE_NO_AREA_OHM = 5000.0


def working_curve_n_delta_Ep_V(psi: np.ndarray, *, alpha: float = 0.5) -> np.ndarray:
    """Nicholson's n·ΔEp(ψ) at 25 °C, V (table switch), for any ψ > 0.

    Log-ψ interpolation of the table for 0.1 ≤ ψ ≤ 20, Klingler–Kochi's relation below
    ψ = 0.1, and an approach ∝ 1/ψ to the Nernstian 60.1 mV (at the table's switch) above ψ = 20.

    References
    ----------
    Nicholson, R. S. Anal. Chem. 37 (1965) 1351. Klingler, R. J.; Kochi, J. K. J. Phys.
    Chem. 85 (1981) 1731.
    """
    psi = np.asarray(psi, dtype=float)
    lp = np.log([p for p, _ in PSI_TABLE])[::-1]
    xs = np.array([x for _, x in PSI_TABLE])[::-1]
    f = FARADAY / (GAS_CONSTANT * STANDARD_TEMPERATURE_K)
    out = np.interp(np.log(psi), lp, xs) * 1e-3
    # Nernstian n·ΔEp at the table's switch (112.5 mV beyond E½), V
    x_rev = nernstian_delta_Ep_V(switching_offset_V=TABLE_SWITCH_PAST_E_HALF_V)
    hi = psi > PSI_TABLE[0][0]
    out[hi] = x_rev + (0.061 - x_rev) * PSI_TABLE[0][0] / psi[hi]
    lo = psi < PSI_TABLE[-1][0]
    out[lo] = -np.log(psi[lo] / (2.18 * math.sqrt(alpha / math.pi))) / (alpha**2 * f)
    return out


def fit_excess_models(
    v: np.ndarray,
    ip: np.ndarray,
    excess: np.ndarray,
    w: np.ndarray,
    own: np.ndarray,
    scale: float,
) -> tuple[float, float, float, float, int]:
    """χ² of the iR and kinetics models, the iR coefficient c (V/A) with its SD (from the
    weights alone), and the iR model's degrees of freedom.

    The iR model is excess = c·i_p + e·v with e >= 0: the drop of the charging current
    C_dl·v through R_u adds to that of the peak current (e = 2 R_u C_dl); when the
    unconstrained e comes out negative the model is c·i_p alone.
    ``own`` is n·ΔEp_N at each file's switch (V, at the temperature; NaN: the table's).
    """
    X = np.column_stack([ip, v])
    gram = X.T @ (w[:, None] * X)
    coef = np.linalg.solve(gram, X.T @ (w * excess))
    if coef[1] > 0:
        c = float(coef[0])
        sd_c = math.sqrt(float(np.linalg.inv(gram)[0, 0]))
        chi_ir = float(np.sum(w * (excess - X @ coef) ** 2))
        dof = v.size - 2
    else:
        c = float(np.sum(w * ip * excess) / np.sum(w * ip**2))
        sd_c = math.sqrt(1.0 / float(np.sum(w * ip**2)))
        chi_ir = float(np.sum(w * (excess - c * ip) ** 2))
        dof = v.size - 1
    base = working_curve_n_delta_Ep_V(np.array([1e6]))[0]
    # the switch effect between the table's switch and each file's own, where it survives
    gap = np.where(np.isnan(own), 0.0, base * scale - own)

    def chi_kin(logK: float) -> float:
        X = working_curve_n_delta_Ep_V(np.exp(logK) / np.sqrt(v))
        kept = np.array([switch_effect_weight(x) for x in X])
        model = (X - base) * scale + (1.0 - kept) * gap
        return float(np.sum(w * (excess - model) ** 2))

    grid = np.linspace(math.log(1e-4), math.log(1e3), 120)
    k = int(np.argmin([chi_kin(g) for g in grid]))
    lo, hi = grid[max(k - 1, 0)], grid[min(k + 1, grid.size - 1)]
    best = optimize.minimize_scalar(chi_kin, bounds=(lo, hi), method="bounded")
    return chi_ir, float(best.fun), c, sd_c, dof


def plausible_resistance_ohm(area_cm2: float | None) -> tuple[float, str]:
    """The largest R_u the electrode and electrolyte can plausibly give, Ω, and why.

    With the area of a disc: the whole resistance between a disc of radius r and a counter
    electrode far away, 1/(4κr) (Newman), at the lowest plausible conductivity
    :data:`MIN_CONDUCTIVITY_S_CM` — the uncompensated part is at most that. Without it,
    :data:`MAX_RESISTANCE_NO_AREA_OHM`.

    References
    ----------
    Newman, J. J. Electrochem. Soc. 1966, 113, 501 (resistance of a disc electrode).
    """
    if area_cm2 is None or not area_cm2 > 0:
        return MAX_RESISTANCE_NO_AREA_OHM, (
            f"{MAX_RESISTANCE_NO_AREA_OHM:.0f} Ω (no electrode_area_cm2; common practice for "
            "macroelectrodes in supporting electrolyte)"
        )
    r = math.sqrt(area_cm2 / math.pi)
    bound = 1.0 / (4.0 * MIN_CONDUCTIVITY_S_CM * r)
    return bound, (
        f"{bound:.0f} Ω, 1/(4κr) for a disc of {area_cm2:g} cm² in an electrolyte of "
        f"{1e3 * MIN_CONDUCTIVITY_S_CM:g} mS/cm or more (Newman 1966)"
    )


def judge_excess(
    v: np.ndarray,
    ip: np.ndarray,
    y: np.ndarray,
    w: np.ndarray,
    own: np.ndarray,
    *,
    scale: float,
    electrons: int,
    area_cm2: float | None,
) -> tuple[str, Quantity, float, float, list[Flag]]:
    """The cause of an excess ΔEp that grows with v: (cause, apparent R_u, χ² of the iR
    and of the kinetics model, flags); see the module notes.

    *v*, *ip*, *y*, *w*: scan rates (V/s), forward peak currents (A), excess n·ΔEp (V) and
    their weights; *own*: n·ΔEp_N at each file's switch (NaN: the table's); *scale*:
    T/298.15 K.
    """
    n = electrons
    flags: list[Flag] = []
    chi_ir, chi_kin, c, sd_c, dof_ir = fit_excess_models(v, ip, y, w, own, scale)
    # the error of R_u scaled by the iR model's misfit (its reduced χ²)
    sd_c *= math.sqrt(max(1.0, chi_ir / max(dof_ir, 1)))
    R = Quantity.from_t(c / (2 * n), sd_c / (2 * n), v.size - 1)
    chi_crit = chi2_upper_quantile(MODEL_REJECT_P, v.size - 1)
    chi_fit = chi2_upper_quantile(MODEL_FIT_P, v.size - 1)
    ir_fits, kin_fits = chi_ir <= chi_fit, chi_kin <= chi_fit
    bound, why = plausible_resistance_ohm(area_cm2)
    implausible = R.value - 2.0 * R.stderr > bound
    if chi_ir * IR_MODEL_PREFERENCE < chi_kin and chi_kin > chi_crit and implausible:
        cause = "undecided"
        flags.append(
            Flag(
                "IR_DROP_IMPLAUSIBLE",
                "the excess ΔEp grows with the peak current as an iR drop would "
                f"(χ² {chi_ir:.3g} against {chi_kin:.3g} for slow kinetics), but "
                f"it would need R_u ≈ {R.value:.0f} ± {R.stderr:.0f} Ω, far above "
                f"the {why}: not named as the cause (look for another process: "
                "adsorption, a film, a second step)",
            )
        )
    elif not (ir_fits or kin_fits):
        cause = "undecided"
        flags.append(
            Flag(
                "EXCESS_CAUSE_UNDECIDED",
                f"neither an iR drop (χ² {chi_ir:.3g}) nor slow kinetics (χ² "
                f"{chi_kin:.3g}) fits the excess ΔEp within its errors (χ² test "
                f"at {MODEL_FIT_P:g}: {chi_fit:.3g} for {v.size} scan rates): "
                "no cause is named",
            )
        )
    elif chi_ir * IR_MODEL_PREFERENCE < chi_kin and chi_kin > chi_crit and ir_fits:
        cause = "ir-drop"
        flags.append(
            Flag(
                "IR_DROP_SIGNATURE",
                "the excess ΔEp grows in proportion to the peak current (χ² "
                f"{chi_ir:.3g} against {chi_kin:.3g} for slow kinetics), the "
                "signature of uncompensated resistance (apparent R_u = excess/"
                f"(2n·i_p) ≈ {R.value:.0f} ± {R.stderr:.0f} Ω, an upper estimate: "
                "charging current adds to the drop): give resistance_ohm in the "
                "manifest or compensate it, and do not read k0 from these ΔEp",
            )
        )
    elif chi_kin * IR_MODEL_PREFERENCE < chi_ir and chi_ir > chi_crit and kin_fits:
        cause = "slow-kinetics"
        flags.append(
            Flag(
                "SLOW_KINETICS_SIGNATURE",
                "the excess ΔEp follows Nicholson's working curve with ψ ∝ v^−½ "
                f"(χ² {chi_kin:.3g} against {chi_ir:.3g} for an iR drop): slow "
                "electron transfer",
                "info",
            )
        )
    else:
        cause = "undecided"
        flags.append(
            Flag(
                "EXCESS_CAUSE_UNDECIDED",
                f"the excess ΔEp fits an iR drop (χ² {chi_ir:.3g}) and slow "
                f"kinetics (χ² {chi_kin:.3g}) alike; widen the scan-rate range",
            )
        )
    return cause, R, chi_ir, chi_kin, flags
