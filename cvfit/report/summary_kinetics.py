"""Terminal-summary lines for the electron-transfer class, ψ, k0 and scan-rate studies."""

from __future__ import annotations

import math

from cvfit.pipeline.results import SeriesResult
from cvfit.quantity import Quantity

__all__ = ["kinetics_lines"]


def _sci(q: Quantity) -> str:
    """k0 as ``(2.1 ± 0.3)e-3`` with the 95 % interval (an open upper side shows as ∞)."""
    if q.value <= 0 or not math.isfinite(q.value):
        return "n/d"
    e = math.floor(math.log10(q.value))
    m, s = q.value / 10**e, q.stderr / 10**e
    lo, hi = q.ci95
    hi_txt = "∞" if not math.isfinite(hi) else f"{hi:.2g}"
    return f"({m:.2f} ± {s:.2f})e{e:d} cm/s, 95 % [{lo:.2g}, {hi_txt}]"


def _psi(q: Quantity) -> str:
    return f"{q.value:.3g} ± {q.stderr:.2g}"


def kinetics_lines(result: SeriesResult) -> list[str]:
    """A few lines: class of every file, ψ and k0 where determined, each scan-rate study."""
    files = [f for f in result.files if f.measurement.classification is not None]
    if not files:
        return []
    lines = ["Electron transfer at the scan rate used (ψ and k0 from ΔEp, Nicholson 1965):"]
    for f in files:
        name = f.file if len(f.file) <= 22 else "…" + f.file[-21:]
        kin = f.measurement.kinetics
        what = ""
        if kin is not None and kin.status == "determined":
            what = f"ψ = {_psi(kin.psi)}"
            if kin.k0_cm_s is not None:
                what += f", k0 = {_sci(kin.k0_cm_s)} (D: {kin.D_source})"
            what += f" [{kin.method}]"
        elif kin is not None and kin.status == "reversible_limit":
            what = "k0 not determinable (ψ > 20)"
            if kin.k0_lower_bound_cm_s is not None:
                what += f", k0 ≥ {kin.k0_lower_bound_cm_s:.2g} cm/s"
        lines.append(f"  {name:<22} {f.measurement.classification.kind:<17} {what}".rstrip())
    for st in result.scan_rate_studies:
        v = st.scan_rates_V_s
        text = (
            f"  scan-rate study at [L] = {st.ligand_M:.3g} M: {len(v)} rates, "
            f"{min(v):.3g}–{max(v):.3g} V/s"
        )
        if st.log_log_slope is not None:
            lo, hi = st.log_log_slope.ci95
            text += f"; log-log slope {st.log_log_slope.value:.3f} (95 % [{lo:.3f}, {hi:.3f}])"
        if st.D_cm2_s is not None:
            text += f"; D = {_sci(st.D_cm2_s).replace('cm/s', 'cm²/s')}"
        if st.delta_Ep_slope_V_per_decade is not None:
            q = st.delta_Ep_slope_V_per_decade
            text += f"; n·ΔEp excess {1e3 * q.value:.1f} ± {1e3 * q.stderr:.1f} mV/decade"
        if st.alpha_n is not None:
            text += f"; no reverse peaks, αn = {st.alpha_n.value:.2f} ± {st.alpha_n.stderr:.2f}"
        text += "; ΔEp grows with v" if st.delta_Ep_grows else "; ΔEp steady"
        if st.excess_cause not in ("none",):
            text += f" (cause: {st.excess_cause})"
        lines.append(text)
    lines.append("")
    return lines
