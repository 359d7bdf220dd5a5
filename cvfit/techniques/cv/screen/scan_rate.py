"""Scan-rate studies: several voltammograms of one solution at different scan rates.

For a reversible couple the peak current grows as v^½ (Randles–Ševčík: log-log slope 0.5)
and ΔEp and E½ do not move with v. Slow electron transfer makes ΔEp grow with log v
(ψ ∝ v^−½, Nicholson 1965); uncompensated resistance makes it grow in proportion to the
peak current (ΔEp − ΔEp_N ≈ 2 i_p R_u, common practice). This module fits those
relations, estimates D from the Randles–Ševčík slope when area and concentration are
known, decides whether ΔEp grows with v, and tells the iR signature from slow kinetics
by comparing two one-parameter models of the excess n·ΔEp
(:mod:`cvfit.techniques.cv.screen.excess_cause`: an iR drop, slow kinetics, or
"undecided" when neither fits or the R_u it would need is implausible). Scan rates are
counted once each (files at one rate are repeats).

References
----------
Randles, J. E. B. Trans. Faraday Soc. 44 (1948) 327; Ševčík, A. Collect. Czech. Chem.
Commun. 13 (1948) 349; Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
Nicholson, R. S. Anal. Chem. 37 (1965) 1351.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from cvfit.chemistry.randles_sevcik import randles_sevcik_peak_current_A
from cvfit.flags import Flag
from cvfit.quantity import Quantity, clean_number, t_quantile
from cvfit.techniques.cv.screen.excess_cause import (
    IR_MODEL_PREFERENCE,
    judge_excess,
    plausible_resistance_ohm,
    working_curve_n_delta_Ep_V,
)
from cvfit.units import FARADAY, GAS_CONSTANT, STANDARD_TEMPERATURE_K

__all__ = [
    "ScanRatePoint",
    "ScanRateStudy",
    "analyse_scan_rate_study",
    "scan_rate_groups",
    "working_curve_n_delta_Ep_V",
    "MIN_SCAN_RATES",
    "IR_MODEL_PREFERENCE",
    "plausible_resistance_ohm",
]

#: Fewest distinct scan rates that make a study (a slope with an interval needs 3).
MIN_SCAN_RATES = 3
#: Distinct scan rates differ by more than this fraction.
DISTINCT_RATE_FRACTION = 0.05
#: Smallest growth of the excess n·ΔEp across the study that counts as a trend, V at 25 °C
#: (common practice: a Nernstian ΔEp moves by less than ~2 mV).
MIN_TREND_GROWTH_V = 0.002
#: Common practice: at least 5 scan rates over at least one decade.
ADVISED_RATES, ADVISED_DECADES = 5, 1.0


@dataclass(frozen=True)
class ScanRatePoint:
    """One voltammogram of a scan-rate study (values from its peak analysis).

    ``excess_n_delta_Ep_V`` is n·(ΔEp − ΔEp_N) with ΔEp_N the Nernstian value for the
    file's own switch, so files with different switching potentials compare;
    ``nernstian_n_delta_Ep_V`` is that n·ΔEp_N, V (None: taken as at the table's switch).
    """

    file: str
    scan_rate_V_s: float
    ip_A: float | None
    ip_stderr_A: float | None
    excess_n_delta_Ep_V: float | None
    delta_Ep_stderr_V: float | None
    E_half_V: float | None
    E_half_stderr_V: float | None
    reversible: bool | None = None
    Ep_forward_V: float | None = None
    nernstian_n_delta_Ep_V: float | None = None

    def __post_init__(self) -> None:
        v = float(self.scan_rate_V_s)
        if not (math.isfinite(v) and v > 0):
            raise ValueError(f"scan_rate_V_s must be positive, got {v}")
        object.__setattr__(self, "scan_rate_V_s", v)


@dataclass(frozen=True)
class ScanRateStudy:
    """Result of one scan-rate study.

    Attributes
    ----------
    ligand_M : float
    files : tuple of str
    scan_rates_V_s : tuple of float
    log_log_slope : Quantity or None
        d log10 i_p / d log10 v (0.5 for diffusion control).
    randles_sevcik_slope_A_s05_V05 : Quantity or None
        i_p / v^½ through the origin, A (V/s)^−½.
    D_cm2_s : Quantity or None
        From the Randles–Ševčík slope when area and concentration are given, cm²/s.
    delta_Ep_slope_V_per_decade, E_half_slope_V_per_decade : Quantity or None
        Slopes of n·(ΔEp − ΔEp_N) and of E½ against log10 v, V per decade.
    delta_Ep_grows : bool
        ΔEp grows significantly with v (the couple is not Nernstian at these rates).
    excess_cause : {"none", "ir-drop", "slow-kinetics", "undecided"}
        Which model of the excess ΔEp fits (only when ``delta_Ep_grows``); "undecided"
        when both fit alike, when neither passes its own χ² test, or when the R_u the iR
        model needs is far above what the electrode can give
        (:func:`plausible_resistance_ohm`).
    ir_resistance_ohm : Quantity or None
        Apparent R_u of the iR model (excess n·ΔEp = 2 n R_u i_p), Ω, its error scaled by
        the model's misfit (√ of its reduced χ² when above 1); an upper estimate, since
        charging current adds to the drop (~1.5 × R_u on simulations with 10 µF and 20 µA
        peaks).
    chi2_ir, chi2_kinetics : float or None
        χ² of the two models of the excess ΔEp.
    flags : tuple of Flag
    Ep_slope_V_per_decade : Quantity or None
        Slope of the forward peak potential against log10 v, V per decade.
    alpha_n : Quantity or None
        αn from that slope, 29.6 mV·(T/298.15 K)/|slope| (Matsuda & Ayabe; from memory),
        given only when no file of the study has a reverse peak (irreversible couple).
    """

    ligand_M: float
    files: tuple[str, ...]
    scan_rates_V_s: tuple[float, ...]
    log_log_slope: Quantity | None
    randles_sevcik_slope_A_s05_V05: Quantity | None
    D_cm2_s: Quantity | None
    delta_Ep_slope_V_per_decade: Quantity | None
    E_half_slope_V_per_decade: Quantity | None
    delta_Ep_grows: bool
    excess_cause: str
    ir_resistance_ohm: Quantity | None
    chi2_ir: float | None
    chi2_kinetics: float | None
    flags: tuple[Flag, ...] = ()
    Ep_slope_V_per_decade: Quantity | None = None
    alpha_n: Quantity | None = None

    def __post_init__(self) -> None:
        if self.excess_cause not in ("none", "ir-drop", "slow-kinetics", "undecided"):
            raise ValueError(f"unknown excess_cause {self.excess_cause!r}")
        if len(self.files) != len(self.scan_rates_V_s):
            raise ValueError("files and scan_rates_V_s must have the same length")
        object.__setattr__(self, "flags", tuple(self.flags))

    def to_dict(self) -> dict:
        """JSON-ready mapping."""

        def q(x: Quantity | None) -> dict | None:
            return None if x is None else x.to_dict()

        return {
            "ligand_M": self.ligand_M,
            "files": list(self.files),
            "scan_rates_V_s": list(self.scan_rates_V_s),
            "log_log_slope": q(self.log_log_slope),
            "randles_sevcik_slope_A_s05_V05": q(self.randles_sevcik_slope_A_s05_V05),
            "D_cm2_s": q(self.D_cm2_s),
            "delta_Ep_slope_V_per_decade": q(self.delta_Ep_slope_V_per_decade),
            "E_half_slope_V_per_decade": q(self.E_half_slope_V_per_decade),
            "delta_Ep_grows": self.delta_Ep_grows,
            "excess_cause": self.excess_cause,
            "ir_resistance_ohm": q(self.ir_resistance_ohm),
            "chi2_ir": clean_number(self.chi2_ir),
            "chi2_kinetics": clean_number(self.chi2_kinetics),
            "Ep_slope_V_per_decade": q(self.Ep_slope_V_per_decade),
            "alpha_n": q(self.alpha_n),
            "flags": [f.to_dict() for f in self.flags],
        }


def scan_rate_groups(
    ligand_M: Sequence[float], scan_rate_V_s: Sequence[float | None]
) -> list[list[int]]:
    """Indices of files that form scan-rate studies: one ligand_M, ≥ 3 distinct rates."""
    groups: dict[float, list[int]] = {}
    for k, (c, v) in enumerate(zip(ligand_M, scan_rate_V_s, strict=True)):
        if v is not None and math.isfinite(v) and v > 0:
            groups.setdefault(float(c), []).append(k)
    out = []
    for idx in groups.values():
        rates = sorted(float(scan_rate_V_s[k]) for k in idx)  # type: ignore[arg-type]
        distinct = 1 + sum(
            1
            for a, b in zip(rates, rates[1:], strict=False)
            if b > a * (1 + DISTINCT_RATE_FRACTION)
        )
        if distinct >= MIN_SCAN_RATES:
            out.append(idx)
    return out


def _line(x: np.ndarray, y: np.ndarray, w: np.ndarray | None = None) -> tuple[Quantity, float]:
    """Slope of y on x (weighted if w given, errors scaled by the scatter), with intercept."""
    X = np.column_stack([np.ones_like(x), x])
    W = np.ones_like(x) if w is None else w
    A = X.T @ (W[:, None] * X)
    coef = np.linalg.solve(A, X.T @ (W * y))
    dof = x.size - 2
    res = y - X @ coef
    s2 = float(np.sum(W * res**2) / dof) if dof > 0 else math.nan
    cov = np.linalg.inv(A) * s2
    return Quantity.from_t(float(coef[1]), math.sqrt(max(cov[1, 1], 0.0)), dof), float(coef[0])


def _distinct_rates(v: np.ndarray) -> int:
    """Scan rates that differ by more than DISTINCT_RATE_FRACTION, counted once each."""
    rates = np.sort(v)
    return 1 + int(np.sum(rates[1:] > rates[:-1] * (1 + DISTINCT_RATE_FRACTION)))


def analyse_scan_rate_study(
    points: Sequence[ScanRatePoint],
    *,
    ligand_M: float,
    electrons: int,
    temperature_K: float,
    area_cm2: float | None = None,
    analyte_M: float | None = None,
) -> ScanRateStudy:
    """Fit the scan-rate relations of one study and judge the trend of ΔEp.

    Parameters
    ----------
    points : sequence of ScanRatePoint
        At least three distinct scan rates.
    ligand_M : float
        The ligand concentration shared by the files, mol/L.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.
    area_cm2, analyte_M : float or None
        Electrode area (cm²) and bulk concentration of the electroactive species (mol/L);
        with both, D follows from the Randles–Ševčík slope.

    Returns
    -------
    ScanRateStudy

    References
    ----------
    Randles 1948; Ševčík 1948; Nicholson & Shain, Anal. Chem. 36 (1964) 706 (ip ∝ v^½,
    0.4463 nFAC(nFvD/RT)^½). Nicholson, Anal. Chem. 37 (1965) 1351 (ψ ∝ v^−½).
    """
    pts = sorted(points, key=lambda p: p.scan_rate_V_s)
    flags: list[Flag] = []
    n = electrons
    scale = temperature_K / STANDARD_TEMPERATURE_K
    v_all = np.array([p.scan_rate_V_s for p in pts])
    decades = float(np.log10(v_all.max() / v_all.min()))
    distinct = _distinct_rates(v_all)
    if distinct < ADVISED_RATES or decades < ADVISED_DECADES:
        repeats = "" if distinct == len(pts) else f" ({len(pts)} files)"
        flags.append(
            Flag(
                "SCAN_RATE_RANGE_NARROW",
                f"{distinct} scan rates{repeats} over {decades:.2f} decades; check "
                "reversibility over "
                f"at least {ADVISED_RATES} rates spanning 1–2 decades (common practice)",
                "info",
            )
        )
    with_ip = [p for p in pts if p.ip_A is not None and p.ip_A > 0]
    log_slope = rs = D = None
    if len(with_ip) >= MIN_SCAN_RATES:
        v = np.array([p.scan_rate_V_s for p in with_ip])
        ip = np.array([p.ip_A for p in with_ip])
        log_slope, _ = _line(np.log10(v), np.log10(ip))
        sv = np.sqrt(v)
        s = float(sv @ ip / (sv @ sv))
        dof = ip.size - 1
        s_sd = math.sqrt(float(np.sum((ip - s * sv) ** 2)) / dof / float(sv @ sv))
        rs = Quantity.from_t(s, s_sd, dof)
        lo, hi = log_slope.ci95
        if not lo <= 0.5 <= hi:
            flags.append(
                Flag(
                    "PEAK_CURRENT_NOT_DIFFUSION_CONTROLLED",
                    f"log-log slope of i_p against v is {log_slope.value:.3f} (95 % "
                    f"[{lo:.3f}, {hi:.3f}]), not 0.5: adsorption (→ 1), slow kinetics or "
                    "iR drop (Randles–Ševčík)",
                )
            )
        if area_cm2 is not None and analyte_M is not None:
            # i_p per (vD)^½ (Randles–Ševčík; Nicholson & Shain 1964)
            unit = randles_sevcik_peak_current_A(
                electrons=n,
                concentration_M=analyte_M,
                area_cm2=area_cm2,
                D_cm2_s=1.0,
                scan_rate_V_s=1.0,
                temperature_K=temperature_K,
            )
            Dv = (s / unit) ** 2
            D_t = Quantity.from_t(Dv, 2 * Dv * s_sd / s, dof)
            D = Quantity(Dv, D_t.stderr, D_t.ci95, f"Randles–Ševčík slope, {D_t.method}")
    exc = [p for p in pts if p.excess_n_delta_Ep_V is not None]
    dEp_slope = None
    grows = False
    cause = "none"
    R = chi_ir = chi_kin = None
    if len(exc) >= MIN_SCAN_RATES:
        v = np.array([p.scan_rate_V_s for p in exc])
        y = np.array([p.excess_n_delta_Ep_V for p in exc])
        sd = np.array(
            [math.hypot(n * (p.delta_Ep_stderr_V or 0.0), 0.3e-3 * scale) for p in exc]
        )  # 0.3 mV: systematic floor of the peak positions on simulated CVs
        w = 1.0 / sd**2
        dEp_slope, _ = _line(np.log10(v), y, w)
        growth = dEp_slope.value * math.log10(v.max() / v.min())
        t_one = t_quantile(0.95, max(v.size - 2, 1))
        significant = dEp_slope.value - t_one * dEp_slope.stderr > 0
        grows = bool(significant and growth > MIN_TREND_GROWTH_V * scale)
        if grows:
            flags.append(
                Flag(
                    "DELTA_EP_GROWS_WITH_SCAN_RATE",
                    f"n·(ΔEp − ΔEp_N) grows by {1e3 * dEp_slope.value:.1f} ± "
                    f"{1e3 * dEp_slope.stderr:.1f} mV per decade of v ({1e3 * growth:.1f} mV "
                    f"from {v.min():.3g} to {v.max():.3g} V/s): not Nernstian at these scan "
                    "rates, even where one file passes on its own",
                )
            )
            ipx = np.array([p.ip_A or 0.0 for p in exc])
            if np.all(ipx > 0):
                own = np.array(
                    [
                        math.nan if p.nernstian_n_delta_Ep_V is None else p.nernstian_n_delta_Ep_V
                        for p in exc
                    ]
                )
                cause, R, chi_ir, chi_kin, judged = judge_excess(
                    v, ipx, y, w, own, scale=scale, electrons=n, area_cm2=area_cm2
                )
                flags.extend(judged)
    eh = [p for p in pts if p.E_half_V is not None]
    E_slope = None
    if len(eh) >= MIN_SCAN_RATES:
        v = np.array([p.scan_rate_V_s for p in eh])
        E_slope, _ = _line(np.log10(v), np.array([p.E_half_V for p in eh]))
    Ep_slope = alpha_n = None
    ep = [p for p in pts if p.Ep_forward_V is not None]
    if len(ep) >= MIN_SCAN_RATES:
        v = np.array([p.scan_rate_V_s for p in ep])
        Ep_slope, _ = _line(np.log10(v), np.array([p.Ep_forward_V for p in ep]))
        if not exc and abs(Ep_slope.value) > 3 * Ep_slope.stderr:
            # totally irreversible: Ep moves 29.6/(αn) mV per decade at 25 °C (Matsuda &
            # Ayabe 1955; Nicholson & Shain 1964; from memory) = ln10·RT/(2αnF)
            per_decade = math.log(10) * GAS_CONSTANT * temperature_K / (2 * FARADAY)
            an = per_decade / abs(Ep_slope.value)
            rel = Ep_slope.stderr / abs(Ep_slope.value)
            lo, hi = Ep_slope.ci95
            low, high = sorted(per_decade / max(abs(x), 1e-12) for x in (lo, hi))
            ci = (low, high) if lo * hi > 0 else (an * (1 - 1.96 * rel), math.inf)
            alpha_n = Quantity(an, an * rel, ci, f"from the Ep slope, {Ep_slope.method}")
    return ScanRateStudy(
        ligand_M=float(ligand_M),
        files=tuple(p.file for p in pts),
        scan_rates_V_s=tuple(float(x) for x in v_all),
        log_log_slope=log_slope,
        randles_sevcik_slope_A_s05_V05=rs,
        D_cm2_s=D,
        delta_Ep_slope_V_per_decade=dEp_slope,
        E_half_slope_V_per_decade=E_slope,
        delta_Ep_grows=grows,
        excess_cause=cause,
        ir_resistance_ohm=R,
        chi2_ir=chi_ir,
        chi2_kinetics=chi_kin,
        flags=tuple(flags),
        Ep_slope_V_per_decade=Ep_slope,
        alpha_n=alpha_n,
    )
