"""Per-file step of an internal reference couple: its E½, and the analyte's E½ against it.

With ``[internal_standard]`` in the manifest every voltammogram holds two waves. The
standard's peaks are measured in its own window
(:func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks`
with ``window_V``), screened for reversibility with its own n, and its E½ is corrected for
the switching potential like the analyte's when it passes. The analyte's E½ is then quoted
as ``E½,analyte − E½,standard + E_half_V`` (``E_half_V`` the value assigned to the standard,
0 by default), so a drift of the reference electrode between solutions, which moves both
waves alike, cancels; the standard's standard error adds in quadrature to the analyte's
(:attr:`cvfit.pipeline.results.FileResult.E_half_total_stderr_V`).
"""

from __future__ import annotations

from typing import Literal

from cvfit.flags import Flag
from cvfit.io import Manifest
from cvfit.pipeline.results import InternalStandardResult
from cvfit.techniques.cv.peaks.analysis import analyse_peaks
from cvfit.techniques.cv.screen.reversibility import screen_reversibility
from cvfit.techniques.cv.screen.switching import corrected_half_wave_V
from cvfit.voltammogram import Voltammogram

__all__ = ["measure_standard", "referenced_half_wave"]


def measure_standard(
    v: Voltammogram, cycle: int | Literal["last"], manifest: Manifest
) -> InternalStandardResult:
    """E½ of the internal standard in one record (the record as the analyte's, iR-corrected).

    Raises ``ValueError`` if the manifest has no ``[internal_standard]``.
    """
    std = manifest.internal_standard
    if std is None:
        raise ValueError("the manifest has no [internal_standard]")
    T = manifest.series.temperature_K
    peaks = analyse_peaks(
        v, cycle=cycle, electrons=std.electrons, temperature_K=T, window_V=std.window_V
    )
    screen = screen_reversibility(
        peaks, electrons=std.electrons, temperature_K=T, criteria=manifest.reversibility
    )
    e_half = peaks.E_half_V
    if screen.reversible is True:
        e_half, _ = corrected_half_wave_V(peaks, electrons=std.electrons, temperature_K=T)
    flags = list(peaks.flags)
    flags += [f for f in screen.flags if f.code not in {g.code for g in flags}]
    return InternalStandardResult(
        E_half_V=e_half,
        E_half_stderr_V=peaks.E_half_stderr_V,
        reversible=screen.reversible,
        delta_Ep_V=peaks.delta_Ep_V,
        flags=tuple(flags),
    )


def referenced_half_wave(
    e_half_V: float | None, standard: InternalStandardResult, manifest: Manifest
) -> tuple[float | None, list[Flag]]:
    """The analyte's E½ on the standard's scale, and the file flags that go with it."""
    std = manifest.internal_standard
    if std is None:
        raise ValueError("the manifest has no [internal_standard]")
    lo, hi = std.window_V
    if standard.E_half_V is None:
        why = "; ".join(f.message for f in standard.flags if f.severity == "error")
        return None, [
            Flag(
                "INTERNAL_STANDARD_NOT_FOUND",
                f"the internal standard's E½ could not be measured in [{lo:.3f}, {hi:.3f}] V"
                + (f" ({why})" if why else "")
                + "; check internal_standard.window_V",
                "error",
            )
        ]
    flags = []
    if standard.reversible is not True:
        flags.append(
            Flag(
                "INTERNAL_STANDARD_NOT_NERNSTIAN",
                "the internal standard failed its reversibility screen ("
                + ", ".join(f.code for f in standard.flags if f.severity != "info")
                + "); its peak midpoint is used as this file's reference",
            )
        )
    if e_half_V is None:
        return None, flags
    return e_half_V - standard.E_half_V + std.E_half_V, flags
