"""What only a series of cyclic voltammograms can tell: scan-rate studies, class, k0.

After every file was measured on its own (:func:`cvfit.techniques.cv.technique.analyse`):
the scan-rate studies of the solutions recorded at three or more scan rates (a file whose
ΔEp grows with v fails the screen with its study), the curve fit of a file whose verdict
the study changed (under ``half_wave_source = "auto"``, read again), and the class of
transfer and the kinetics (ψ, k0, with the best D the series offers) of every file.
Composition only: the mathematics is in :mod:`cvfit.techniques.cv.screen.scan_rate`,
:mod:`cvfit.techniques.cv.screen.classification` and :mod:`cvfit.techniques.cv.screen.kinetics`.
The measurements come back new; the pipeline then decides every file's E½ again.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING, cast

import numpy as np

from cvfit.flags import Flag
from cvfit.io import resistance_for
from cvfit.io.manifest_titration import file_analyte_M, for_file
from cvfit.quantity import Quantity
from cvfit.techniques.base import Reread, SeriesStudy, StudyItem
from cvfit.techniques.cv.curve.stage import curve_fit_for, curve_fit_used, wants_curve_fit
from cvfit.techniques.cv.measurement import CVMeasurement
from cvfit.techniques.cv.screen.classification import classify_voltammogram
from cvfit.techniques.cv.screen.kinetics import (
    KineticsResult,
    diffusion_from_peak_current,
    estimate_kinetics,
)
from cvfit.techniques.cv.screen.midpoint_alpha import midpoint_alpha_error_V
from cvfit.techniques.cv.screen.rate_constant import delta_Ep_stderr_V
from cvfit.techniques.cv.screen.scan_rate import (
    ScanRatePoint,
    ScanRateStudy,
    analyse_scan_rate_study,
    scan_rate_groups,
)

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest, SeriesSettings

__all__ = ["study_series"]


@dataclass(frozen=True)
class _Row:
    """One file as the study sees it: its name, solution and measurement."""

    file: str
    ligand_M: float
    scan_rate_V_s: float | None
    m: CVMeasurement

    @property
    def peaks(self):  # noqa: ANN201 (the measurement's PeakAnalysis)
        return self.m.peaks

    @property
    def screen(self):  # noqa: ANN201 (the measurement's ReversibilityScreen)
        return self.m.screen

    @property
    def reversible(self) -> bool | None:
        return self.m.reversible

    def with_flags(self, *flags: Flag, **changes: object) -> _Row:
        """This row with *flags* added to its measurement (and other measurement fields)."""
        m = replace(self.m, flags=(*self.m.flags, *flags), **changes)  # type: ignore[arg-type]
        return replace(self, m=m)


def _point(f: _Row, n: int) -> ScanRatePoint:
    p, s = f.peaks, f.screen
    excess = None
    if p.delta_Ep_V is not None and s.expected_delta_Ep_V is not None:
        excess = n * (p.delta_Ep_V - s.expected_delta_Ep_V)
    return ScanRatePoint(
        f.file,
        cast(float, f.scan_rate_V_s),  # grouped into a study: the file has a scan rate
        p.forward_height_A,
        p.noise_A,
        excess,
        delta_Ep_stderr_V(p.E_half_stderr_V),
        p.E_half_V,
        p.E_half_stderr_V,
        s.reversible,
        p.Epc_V if p.first_sweep == "reduction" else p.Epa_V,
        None if s.expected_delta_Ep_V is None else n * s.expected_delta_Ep_V,
    )


def _fail_by_trend(f: _Row, study: ScanRateStudy) -> _Row:
    slope = cast(Quantity, study.delta_Ep_slope_V_per_decade)  # measured: ΔEp grows
    flag = Flag(
        "DELTA_EP_GROWS_WITH_SCAN_RATE",
        f"in the scan-rate study at ligand_M = {study.ligand_M:g} M, n·(ΔEp − ΔEp_N) grows "
        f"by {1e3 * slope.value:.1f} ± {1e3 * slope.stderr:.1f} mV per decade of v: not "
        "Nernstian at these scan rates, so this file fails the screen with its study",
    )
    screen = replace(f.screen, reversible=False, flags=(*f.screen.flags, flag))
    return f.with_flags(flag, screen=screen)


def _manifest_D(series: SeriesSettings) -> Quantity | None:
    D = getattr(series, "diffusion_cm2_s", None)
    if D is None:
        return None
    sd = getattr(series, "diffusion_stderr_cm2_s", None) or 0.0
    return Quantity(D, sd, (D - 1.96 * sd, D + 1.96 * sd), "manifest")


def _file_D(f: _Row, n: int, T: float, area: float | None, conc: float | None) -> Quantity | None:
    """D from this file's forward peak by Randles–Ševčík, or None if it cannot be had."""
    ip = f.peaks.forward_height_A
    if area is None or conc is None or not ip or not f.scan_rate_V_s:
        return None
    return diffusion_from_peak_current(
        ip,
        ip_stderr_A=f.peaks.noise_A,
        electrons=n,
        area_cm2=area,
        analyte_M=conc,
        scan_rate_V_s=f.scan_rate_V_s,
        temperature_K=T,
    )


def _D_from_reversible_files(
    files: Sequence[_Row], n: int, T: float, area: float | None, concs: Sequence[float | None]
) -> Quantity | None:
    """Mean Randles–Ševčík D of the reversible files (each at its own concentration),
    with the larger of the standard error from their scatter and from their own errors;
    None without area and analyte_M."""
    if area is None:
        return None
    values = []
    errors = []
    for f, conc in zip(files, concs, strict=True):
        q = _file_D(f, n, T, area, conc) if f.reversible is True else None
        if q is not None:
            values.append(q.value)
            errors.append(q.stderr)
    if not values:
        return None
    k = len(values)
    mean = float(np.mean(values))
    se = float(np.sqrt(np.sum(np.square(errors)))) / k
    if k > 1:
        se = max(se, float(np.std(values, ddof=1)) / math.sqrt(k))
    return Quantity.from_t(mean, se, k - 1 if k > 1 else math.inf)


def _diagnose(
    rows: Sequence[_Row], manifest: Manifest
) -> tuple[list[_Row], tuple[ScanRateStudy, ...], tuple[Flag, ...]]:
    """Scan-rate studies, then the class and the kinetics of every file."""
    series = manifest.series
    criteria = manifest.reversibility
    n, T = series.electrons, series.temperature_K
    area = series.electrode_area_cm2
    # each solution's own analyte concentration (a titration by additions dilutes it)
    concs = [file_analyte_M(e, series) for e in manifest.voltammograms]
    if len(concs) != len(rows):  # rows not made from this manifest's files
        concs = [series.analyte_M] * len(rows)
    out = list(rows)
    studies: list[ScanRateStudy] = []
    study_of: dict[int, ScanRateStudy] = {}
    series_flags: list[Flag] = []
    for idx in scan_rate_groups([f.ligand_M for f in out], [f.scan_rate_V_s for f in out]):
        st = analyse_scan_rate_study(
            [_point(out[k], n) for k in idx],
            ligand_M=out[idx[0]].ligand_M,
            electrons=n,
            temperature_K=T,
            area_cm2=area,
            analyte_M=concs[idx[0]],
        )
        studies.append(st)
        for k in idx:
            study_of[k] = st
            if st.delta_Ep_grows:
                out[k] = _fail_by_trend(out[k], st)
        for fl in st.flags:
            if fl.severity != "info":
                where = f"scan-rate study at ligand_M = {st.ligand_M:g} M: "
                series_flags.append(Flag(fl.code, where + fl.message, fl.severity))
    D_manifest = _manifest_D(series)
    any_D = next((st for st in studies if st.D_cm2_s is not None and not st.delta_Ep_grows), None)
    D_reversible = _D_from_reversible_files(out, n, T, area, concs)
    for k, f in enumerate(out):
        extra: list[Flag] = []
        study = study_of.get(k)
        D, source = D_manifest, "manifest"
        if (
            D is None
            and study is not None
            and study.D_cm2_s is not None
            and not study.delta_Ep_grows
        ):
            D, source = study.D_cm2_s, "scan-rate study"
        if D is None and f.reversible is not True and any_D is not None:
            # a slow peak's current gives a low D: the series' study is the better estimate
            D, source = any_D.D_cm2_s, f"scan-rate study at ligand_M = {any_D.ligand_M:g} M"
            extra.append(
                Flag(
                    "D_FROM_OTHER_SOLUTION",
                    f"k0 uses D from the scan-rate study at ligand_M = {any_D.ligand_M:g} M; "
                    "complexation may change D (give diffusion_cm2_s to override)",
                    "info",
                )
            )
        if D is None and f.reversible is not True and D_reversible is not None:
            # the Randles–Ševčík current of the Nernstian files of the series is unbiased;
            # a slow peak's own current is not
            D, source = D_reversible, "reversible files of the series"
            extra.append(
                Flag(
                    "D_FROM_REVERSIBLE_FILES",
                    f"k0 uses D = {D.value:.3g} ± {D.stderr:.2g} cm²/s from the Randles–Ševčík "
                    "currents of the series' reversible voltammograms; complexation may change "
                    "D (give diffusion_cm2_s to override)",
                    "info",
                )
            )
        if D is None and (own := _file_D(f, n, T, area, concs[k])) is not None:
            D, source = own, "peak current"
            if f.reversible is not True:
                extra.append(
                    Flag(
                        "D_FROM_SLOW_PEAK",
                        "D from the Randles–Ševčík current of a peak that is not reversible "
                        "is too low (the current function falls with ψ), and k0 with it",
                    )
                )
        cls = classify_voltammogram(
            f.peaks, f.screen, electrons=n, temperature_K=T, alpha=series.alpha, criteria=criteria
        )
        kin = estimate_kinetics(
            f.peaks,
            electrons=n,
            temperature_K=T,
            scan_rate_V_s=f.scan_rate_V_s,
            D_cm2_s=D,
            D_source=source if D is not None else "",
            alpha=series.alpha,
        )
        if study is not None and study.excess_cause == "ir-drop" and kin.status == "determined":
            extra.append(
                Flag(
                    "K0_DOUBTFUL_IR_DROP",
                    "the scan-rate study shows the iR signature: this ψ and k0 measure the "
                    "ohmic drop more than the electron transfer",
                )
            )
        extra += _implausible(D, source, kin.k0_cm_s)
        out[k] = f.with_flags(cls.flag, *extra, classification=cls, kinetics=kin)
    return out, tuple(studies), tuple(series_flags)


def _fit_after_study(
    rows: list[_Row], own_verdicts: Sequence[bool | None], manifest: Manifest, reread: Reread
) -> list[_Row]:
    """The curve fit of each file whose own verdict asked for none but whose verdict after
    the studies does: a file that passed its own screen and failed with its study (ΔEp
    growing with the scan rate), read again (a handful of files: one solution's)."""
    source = manifest.fit.half_wave_source
    entries = manifest.voltammograms
    out = list(rows)
    for k, (f, own) in enumerate(zip(rows, own_verdicts, strict=True)):
        if wants_curve_fit(source, own) or not wants_curve_fit(source, f.reversible):
            continue
        resistance = resistance_for(entries[k], manifest.series)
        own_manifest = for_file(entries[k], manifest)
        fit, flags = curve_fit_for(reread(k), f.peaks, f.screen, own_manifest, resistance)
        out[k] = f.with_flags(*flags, curve_fit=fit)
    return out


def _midpoint_errors(rows: list[_Row], manifest: Manifest) -> list[_Row]:
    """Under ``half_wave_source = "auto"``: for each file that failed the screen, has no
    accepted curve fit and is not irreversible, the extra error its plain midpoint would
    carry for want of α at its ψ (:func:`midpoint_alpha_error_V`), so that it may serve
    as an approximate E½ (:class:`CVMeasurement`)."""
    if manifest.fit.half_wave_source != "auto":
        return rows
    out = []
    for f in rows:
        m = f.m
        kin, cls = m.kinetics, m.classification
        eligible = (
            m.reversible is not True
            and m.peaks.E_half_V is not None
            and not (m.curve_fit is not None and curve_fit_used(m.curve_fit))
            and (cls is None or cls.kind != "irreversible")
            and kin is not None
        )
        psi = _psi_of(kin) if eligible else None
        if psi is None:
            out.append(f)
            continue
        error = midpoint_alpha_error_V(psi, m.electrons, m.temperature_K)
        out.append(replace(f, m=replace(m, midpoint_alpha_error_V=error, psi=psi)))
    return out


def _psi_of(kin: KineticsResult | None) -> float | None:
    """ψ of a file's kinetics: the determined value, the table's end (ψ = 20) at the
    reversible limit, None when it could not be determined."""
    status = getattr(kin, "status", None)
    if status == "reversible_limit":
        return 20.0
    psi = getattr(kin, "psi", None)
    if status == "determined" and psi is not None and psi.value > 0:
        return float(psi.value)
    return None


def study_series(items: Sequence[StudyItem], manifest: Manifest, reread: Reread) -> SeriesStudy:
    """The series-level study of cyclic voltammetry (module docstring).

    Parameters
    ----------
    items : sequence of StudyItem
        Every file of the series in manifest order, with its :class:`CVMeasurement`.
    manifest : Manifest
    reread : callable
        ``reread(k)`` gives the record of file *k* again (for a curve fit after the study).
    """
    rows = [_Row(it.name, it.ligand_M, it.scan_rate_V_s, it.measurement) for it in items]
    own = [r.reversible for r in rows]
    rows, studies, flags = _diagnose(rows, manifest)
    rows = _fit_after_study(rows, own, manifest, reread)
    rows = _midpoint_errors(rows, manifest)
    return SeriesStudy(tuple(r.m for r in rows), studies, flags)


#: Physically possible diffusion coefficients in solution, cm²/s (common practice: small
#: ions in water about 1e-5; nothing in a liquid beyond 1e-3 or, as a molecule, below 1e-7).
D_PLAUSIBLE_CM2_S = (1e-7, 1e-3)
#: Fastest standard rate constant a voltammogram can show, cm/s (common practice).
K0_PLAUSIBLE_MAX_CM_S = 10.0


def _implausible(D, source: str, k0) -> list[Flag]:
    """Flags for a D or k0 no solution can have: most often a unit or area error."""
    out = []
    lo, hi = D_PLAUSIBLE_CM2_S
    if D is not None and not lo <= D.value <= hi:
        out.append(
            Flag(
                "D_IMPLAUSIBLE",
                f"D = {D.value:.3g} cm²/s ({source}) lies outside {lo:g}–{hi:g} cm²/s; check "
                "the current unit, electrode_area_cm2 and analyte_M",
            )
        )
    if k0 is not None and k0.value > K0_PLAUSIBLE_MAX_CM_S:
        out.append(
            Flag(
                "K0_IMPLAUSIBLE",
                f"k0 = {k0.value:.3g} cm/s exceeds {K0_PLAUSIBLE_MAX_CM_S:g} cm/s; check the "
                "current unit, electrode_area_cm2 and analyte_M",
            )
        )
    return out
