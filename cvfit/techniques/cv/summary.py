"""What cyclic voltammetry says in the reports: its per-file columns and summary lines.

The terminal summary and the reports render a technique's part of the per-file table from
:meth:`CVMeasurement.summary_cells <cvfit.techniques.cv.measurement.CVMeasurement>` and
its series lines from :func:`summary_lines` (electron-transfer class, ψ and k0, the
scan-rate studies, the curve fits).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

from cvfit.formatting import format_pm
from cvfit.quantity import Quantity
from cvfit.techniques.base import FileView
from cvfit.techniques.cv.screen.scan_rate import ScanRateStudy

__all__ = ["summary_lines", "kinetics_lines", "curve_lines", "REPORT_COLUMNS", "HIDDEN_KEYS"]

#: Columns of the technique in the HTML per-file table: (header, results.json key, scale of
#: the value, decimals shown).
REPORT_COLUMNS: tuple[tuple[str, str, float, int], ...] = (
    ("ΔEp / mV", "delta_Ep_V", 1e3, 1),
    ("Nernstian ΔEp / mV", "expected_delta_Ep_V", 1e3, 1),
    ("ipa/ipc", "current_ratio", 1.0, 2),
)
#: results.json keys of the technique the HTML per-file table leaves out (in results.json
#: and voltammograms.csv).
HIDDEN_KEYS = frozenset(
    {
        "cycle",
        "first_sweep",
        "switching_potential_V",
        "Epc_V",
        "Epa_V",
        "Ep_half_c_V",
        "Ep_half_a_V",
        "ipc_A",
        "ipa_A",
        "noise_A",
    }
)


def summary_lines(files: Sequence[FileView], studies: Sequence[ScanRateStudy]) -> list[str]:
    """The technique's lines of the terminal summary: kinetics, studies, curve fits."""
    return [*kinetics_lines(files, studies), *curve_lines(files)]


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


def kinetics_lines(files: Sequence[FileView], studies: Sequence[ScanRateStudy]) -> list[str]:
    """A few lines: class of every file, ψ and k0 where determined, each scan-rate study."""
    files = [f for f in files if f.measurement.classification is not None]
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
    for st in studies:
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


def curve_lines(files: Sequence[FileView]) -> list[str]:
    """One line per curve-fitted file: the E½ used (or why not), k0, α, reduced χ²."""
    fitted = [f for f in files if f.measurement.curve_fit is not None]
    if not fitted:
        return []
    lines = ["Curve fits (E½ of these files from the whole curve where marked 'used'):"]
    for f in fitted:
        c = f.measurement.curve_fit
        if c.k0_lower_bound_cm_s is not None:
            k0 = f"k0 > {c.k0_lower_bound_cm_s:.3g} cm/s"
        else:
            k0 = "k0 " + format_pm(c.k0_cm_s.value, c.k0_cm_s.stderr, unit="cm/s")
        state = "used" if f.E_half_source == "curve" else "not used"
        name = f.file if len(f.file) <= 22 else "…" + f.file[-21:]
        lines.append(
            f"  {name:<22} E½ {format_pm(c.E_half_V.value, c.E_half_V.stderr, scale=1e3)} mV, "
            f"{k0}, α {c.alpha.value:.2f}, reduced χ² {c.reduced_chi2.value:.2f} — {state}"
        )
    lines.append("")
    return lines
