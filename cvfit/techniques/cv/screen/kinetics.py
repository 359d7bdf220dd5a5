"""Estimation of ψ and k0 for one voltammogram, and the record that holds them."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import cast

from cvfit.chemistry.randles_sevcik import randles_sevcik_peak_current_A
from cvfit.flags import Flag
from cvfit.quantity import Quantity
from cvfit.techniques.cv.peaks.analysis import PeakAnalysis
from cvfit.techniques.cv.screen.rate_constant import (
    PSI_TABLE,
    TABLE_RANGE_MV,
    TABLE_ROUNDING_SD_MV,
    _at_25C_mV,
    _dlogpsi_dx_per_mV,
    _f,
    delta_Ep_stderr_V,
    psi_from_table,
    psi_lavagnini,
    switch_corrected_delta_Ep_V,
)
from cvfit.units import STANDARD_TEMPERATURE_K

__all__ = ["KineticsResult", "estimate_kinetics", "diffusion_from_peak_current"]


@dataclass(frozen=True)
class KineticsResult:
    """ψ and k0 of one voltammogram, or why they could not be determined.

    Attributes
    ----------
    status : {"determined", "reversible_limit", "not_determinable"}
        ``reversible_limit``: n·ΔEp below the table (ψ > 20), k0 not determinable but
        ``k0_lower_bound_cm_s`` is given when D is known.
    method : str
        ``"nicholson-table"``, ``"lavagnini"``, ``"klingler-kochi"`` or ``""``.
    range_note : str
        The method's range and where this ΔEp lies in it.
    n_delta_Ep_corrected_V : float or None
        n·ΔEp moved to the table's switching potential, V.
    psi : Quantity or None
        Nicholson's ψ (log-normal interval).
    k0_cm_s : Quantity or None
        Standard rate constant, cm/s, when D is known.
    k0_lower_bound_cm_s : float or None
        Lower bound (95 %) on k0 at the reversible limit, cm/s.
    D_cm2_s : Quantity or None
        The diffusion coefficient used, cm²/s.
    D_source : str
        ``"manifest"``, ``"scan-rate study"``, ``"peak current"`` or ``""``.
    flags : tuple of Flag
    """

    status: str
    method: str
    range_note: str
    n_delta_Ep_corrected_V: float | None = None
    psi: Quantity | None = None
    k0_cm_s: Quantity | None = None
    k0_lower_bound_cm_s: float | None = None
    D_cm2_s: Quantity | None = None
    D_source: str = ""
    flags: tuple[Flag, ...] = ()

    def __post_init__(self) -> None:
        if self.status not in ("determined", "reversible_limit", "not_determinable"):
            raise ValueError(f"unknown kinetics status {self.status!r}")
        if self.status == "determined" and self.psi is None and self.k0_cm_s is None:
            raise ValueError("a determined kinetics result needs psi or k0")
        if self.status != "determined" and (self.psi is not None or self.k0_cm_s is not None):
            raise ValueError("psi and k0 are only given when determined")
        flags = tuple(self.flags)
        if not all(isinstance(f, Flag) for f in flags):
            raise TypeError("flags must be Flag instances")
        object.__setattr__(self, "flags", flags)

    def to_dict(self) -> dict:
        """JSON-ready mapping (Quantities as dicts, None for missing)."""

        def q(x: Quantity | None) -> dict | None:
            return None if x is None else x.to_dict()

        return {
            "status": self.status,
            "method": self.method,
            "range_note": self.range_note,
            "n_delta_Ep_corrected_V": self.n_delta_Ep_corrected_V,
            "psi": q(self.psi),
            "k0_cm_s": q(self.k0_cm_s),
            "k0_lower_bound_cm_s": self.k0_lower_bound_cm_s,
            "D_cm2_s": q(self.D_cm2_s),
            "D_source": self.D_source,
            "flags": [f.to_dict() for f in self.flags],
        }


def _lognormal(value: float, rel_sd: float, method: str, *, upper_open: bool = False) -> Quantity:
    lo = value * math.exp(-1.96 * rel_sd)
    hi = math.inf if upper_open else value * math.exp(1.96 * rel_sd)
    return Quantity(value, value * rel_sd, (lo, hi), method)


#: Relative SD of ψ for the method itself, in quadrature with the ΔEp term. Table: ψ from
#: noise-free simulated CVs deviates from the simulated truth by up to ~5 % for ψ = 0.2–5
#: (interpolation between entries, the table recalled from memory); Lavagnini: its ~7 %
#: agreement with the table; Klingler–Kochi: its ~10 % mismatch with the table at 212 mV.
TABLE_REL_SD = 0.03
LAVAGNINI_REL_SD = 0.07
KK_REL_SD = 0.10


def diffusion_from_peak_current(
    ip_A: float,
    *,
    ip_stderr_A: float,
    electrons: int,
    area_cm2: float,
    analyte_M: float,
    scan_rate_V_s: float,
    temperature_K: float = 298.15,
) -> Quantity:
    """D from a reversible peak current, D = [ip / (0.4463 nFAC (nFv/RT)^½)]², cm²/s.

    On a quasi-reversible peak the current function is below 0.4463, so this D is low
    (by up to ~20 % at ψ = 0.5, Nicholson 1965); callers flag that.

    References
    ----------
    Randles, J. E. B. Trans. Faraday Soc. 44 (1948) 327; Ševčík, A. Collect. Czech. Chem.
    Commun. 13 (1948) 349; Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
    """
    unit = randles_sevcik_peak_current_A(
        electrons=electrons,
        concentration_M=analyte_M,
        area_cm2=area_cm2,
        D_cm2_s=1.0,
        scan_rate_V_s=scan_rate_V_s,
        temperature_K=temperature_K,
    )
    D = (ip_A / unit) ** 2
    rel = 2.0 * ip_stderr_A / ip_A
    return Quantity(D, D * rel, (D * (1 - 1.96 * rel), D * (1 + 1.96 * rel)), "normal")


def estimate_kinetics(
    peaks: PeakAnalysis,
    *,
    electrons: int,
    temperature_K: float,
    scan_rate_V_s: float | None,
    D_cm2_s: Quantity | None = None,
    D_source: str = "",
    D_red_cm2_s: float | None = None,
    alpha: float = 0.5,
    method: str = "nicholson-table",
) -> KineticsResult:
    """Nicholson's ψ and k0 from the peak separation of one voltammogram.

    Parameters
    ----------
    peaks : PeakAnalysis
        Output of :func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks`.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.
    scan_rate_V_s : float or None
        Scan rate, V/s; without it ψ is given but not k0.
    D_cm2_s : Quantity or None
        Diffusion coefficient of the species in solution, cm²/s, with its standard error.
    D_source : str
        Where D came from (echoed in the result).
    D_red_cm2_s : float or None
        D of the other form; with it the factor (D_O/D_R)^{α/2} is applied.
    alpha : float
        Transfer coefficient assumed (Klingler–Kochi; the table is for α = 0.5).
    method : {"nicholson-table", "lavagnini"}
        Route inside the table's range; Lavagnini's formula only within 63–141 mV,
        otherwise the table is used and the result says so.

    Returns
    -------
    KineticsResult

    References
    ----------
    Nicholson, R. S. Anal. Chem. 37 (1965) 1351.
    Lavagnini, I.; Antiochia, R.; Magno, F. Electroanalysis 16 (2004) 505.
    Klingler, R. J.; Kochi, J. K. J. Phys. Chem. 85 (1981) 1731.
    """
    if method not in ("nicholson-table", "lavagnini"):
        raise ValueError(f"method must be 'nicholson-table' or 'lavagnini', got {method!r}")
    if not 0.0 < alpha < 1.0:
        raise ValueError(f"alpha must lie strictly between 0 and 1, got {alpha}")
    n = electrons
    scale = temperature_K / STANDARD_TEMPERATURE_K
    E_fwd = peaks.forward_peak_V
    if peaks.delta_Ep_V is None or peaks.E_half_V is None or E_fwd is None:
        return KineticsResult(
            "not_determinable",
            "",
            "ψ needs both peaks: no peak separation was measured",
            D_cm2_s=D_cm2_s,
            D_source=D_source,
            flags=(
                Flag(
                    "KINETICS_NOT_DETERMINABLE",
                    "ψ and k0 not determinable: ΔEp needs both peaks (see the peak flags)",
                    "info",
                ),
            ),
        )
    flags: list[Flag] = []
    dEp = switch_corrected_delta_Ep_V(
        peaks.delta_Ep_V,
        switching_offset_V=peaks.switching_potential_V - peaks.E_half_V,
        electrons=n,
        temperature_K=temperature_K,
    )
    X = n * dEp
    x25 = _at_25C_mV(X, temperature_K)
    sd_dEp = delta_Ep_stderr_V(peaks.E_half_stderr_V)
    sd_X_mV = math.hypot(
        0.0 if sd_dEp is None else 1e3 * n * sd_dEp / scale, TABLE_ROUNDING_SD_MV
    )  # at 25 °C
    if sd_dEp is None:
        flags.append(
            Flag(
                "DELTA_EP_UNCERTAINTY_UNKNOWN",
                "no standard error for the peak positions; ψ's uncertainty includes only "
                "the table's rounding",
            )
        )
    fv = (
        None
        if scan_rate_V_s is None
        else math.sqrt(math.pi * n * _f(temperature_K) * scan_rate_V_s)
    )
    d_ratio = (
        1.0
        if D_red_cm2_s is None or D_cm2_s is None
        else ((D_cm2_s.value / D_red_cm2_s) ** (alpha / 2))
    )
    note_x = f"n·ΔEp = {x25:.1f} mV at 25 °C (moved to the table's switch 112.5/n mV beyond E½)"

    def k0_of(psi: float) -> float | None:
        if fv is None or D_cm2_s is None:
            return None
        return psi * fv * math.sqrt(D_cm2_s.value) / d_ratio

    if x25 < TABLE_RANGE_MV[0]:
        x_up = x25 + 1.96 * sd_X_mV
        psi_lb = (
            psi_from_table(x_up * 1e-3 * scale, temperature_K=temperature_K)
            if (x_up >= TABLE_RANGE_MV[0])
            else PSI_TABLE[0][0]
        )
        if x_up > TABLE_RANGE_MV[1]:
            psi_lb = None
        k_lb = None
        if psi_lb is not None and D_cm2_s is not None and fv is not None:
            D_lo = max(D_cm2_s.value - 1.96 * D_cm2_s.stderr, 0.0)
            k_lb = psi_lb * fv * math.sqrt(D_lo) / d_ratio
        bound = "" if k_lb is None else f"; k0 ≥ {k_lb:.2g} cm/s (95 %)"
        psi_txt = "" if psi_lb is None else f", ψ ≥ {psi_lb:.3g}"
        flags.append(
            Flag(
                "K0_NOT_DETERMINABLE_REVERSIBLE",
                f"reversible, k0 not determinable: {note_x} lies below the table's "
                f"{TABLE_RANGE_MV[0]:.0f} mV (ψ = 20){psi_txt}{bound}",
                "info",
            )
        )
        return KineticsResult(
            "reversible_limit",
            "nicholson-table",
            f"table covers n·ΔEp = 61–212 mV (ψ = 20–0.1); {note_x} is below it",
            n_delta_Ep_corrected_V=X,
            k0_lower_bound_cm_s=k_lb,
            D_cm2_s=D_cm2_s,
            D_source=D_source,
            flags=tuple(flags),
        )

    if x25 <= TABLE_RANGE_MV[1]:
        used = method
        psi = psi_lavagnini(X, temperature_K=temperature_K) if method == "lavagnini" else None
        if psi is None:
            used = "nicholson-table"
            # n·ΔEp lies inside the table's range here: the table gives a ψ
            psi = cast(float, psi_from_table(X, temperature_K=temperature_K))
            if method == "lavagnini":
                flags.append(
                    Flag(
                        "LAVAGNINI_OUT_OF_RANGE",
                        f"{note_x} lies outside 63–141 mV where Lavagnini's formula follows "
                        "the table; the table was interpolated instead",
                        "info",
                    )
                )
        rel = math.hypot(
            abs(_dlogpsi_dx_per_mV(x25)) * sd_X_mV,
            LAVAGNINI_REL_SD if used == "lavagnini" else TABLE_REL_SD,
        )
        open_top = x25 - 1.96 * sd_X_mV < TABLE_RANGE_MV[0]
        note = f"table range n·ΔEp = 61–212 mV (ψ = 20–0.1); {note_x}"
        if used == "lavagnini":
            note = f"Lavagnini's formula, valid 63–141 mV; {note_x}"
        if not 0.3 <= alpha <= 0.7:
            flags.append(
                Flag(
                    "ALPHA_OUTSIDE_TABLE",
                    f"α = {alpha:g} assumed, outside 0.3–0.7 where Nicholson's α = 0.5 "
                    "table applies (from memory); ψ may be off",
                )
            )
    else:
        used = "klingler-kochi"
        # ψ = k0/(π D n f v)^½ with Klingler–Kochi's k0: D cancels.
        psi = 2.18 * math.sqrt(alpha / math.pi) * math.exp(-(alpha**2) * _f(temperature_K) * X)
        rel = math.hypot(alpha**2 * _f(STANDARD_TEMPERATURE_K) * sd_X_mV * 1e-3, KK_REL_SD)
        open_top = False
        note = f"Klingler–Kochi, for n·ΔEp beyond the table's 212 mV; {note_x}"
    psi_q = _lognormal(psi, rel, "log-normal from σ(ΔEp)", upper_open=open_top)
    k0 = k0_of(psi)
    k0_q = None
    if k0 is not None and D_cm2_s is not None:  # (k0 is found only with a D)
        rel_k = math.hypot(rel, 0.5 * D_cm2_s.stderr / D_cm2_s.value)
        k0_q = _lognormal(k0, rel_k, "log-normal from σ(ΔEp), σ(D)", upper_open=open_top)
    else:
        flags.append(
            Flag(
                "K0_NEEDS_D",
                f"ψ = {psi:.3g} but no k0: "
                + (
                    "no scan rate"
                    if fv is None
                    else "no diffusion coefficient (give "
                    "diffusion_cm2_s, or electrode_area_cm2 and analyte_M)"
                ),
                "info",
            )
        )
    if open_top:
        flags.append(
            Flag(
                "K0_UPPER_LIMIT_OPEN",
                f"{note_x} is within 1.96 SD of the reversible limit (61 mV): the 95 % "
                "interval of ψ and k0 has no upper limit",
                "info",
            )
        )
    return KineticsResult(
        "determined",
        used,
        note,
        n_delta_Ep_corrected_V=X,
        psi=psi_q,
        k0_cm_s=k0_q,
        D_cm2_s=D_cm2_s,
        D_source=D_source,
        flags=tuple(flags),
    )
