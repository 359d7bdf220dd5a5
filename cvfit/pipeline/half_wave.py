"""The one decision of the E½ a file contributes to a series.

:func:`decide_half_wave` is the only place where a file's E½ is made: from the estimate
its technique offers under its current verdicts (:meth:`Measurement.half_wave_estimate
<cvfit.techniques.base.Measurement.half_wave_estimate>` — a Nernstian reading, a kinetic
model's, an approximate one with its extra error, or none), the internal standard measured
in the same record, the manifest's rule on files that fail the screen and the file's own
``exclude`` (the user's reason to leave it out, which overrides every verdict). The pipeline
calls it when a file is first measured and again whenever a verdict changes (after the
series-level study); nothing else writes an E½. Its result says whether the E½ may enter
a fit — as a titration point or as the reference E½(s) — and why not.

With an internal standard the analyte's E½ is quoted as
``E½,analyte − E½,standard + E_half_V`` (``E_half_V`` the value assigned to the standard,
0 by default), so a drift of the reference electrode between solutions, which moves both
waves alike, cancels; the standard's standard error adds in quadrature. The standard's
correction holds whatever the analyte's verdict: a file's E½ is on one scale or none.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from cvfit.flags import Flag
from cvfit.io.manifest_standard import InternalStandard
from cvfit.techniques.base import EstimateKind, Measurement, StandardMeasurement

__all__ = ["HalfWaveDecision", "decide_half_wave"]


@dataclass(frozen=True)
class HalfWaveDecision:
    """The E½ one file contributes, and whether a fit may take it.

    Attributes
    ----------
    E_half_V : float or None
        E½ as the fits see it, V: on the electrode's scale, or against the internal
        standard (plus its assigned value) when the series has one.
    stderr_V : float or None
        Its standard error, V: the technique's, with the standard's added in quadrature.
    own_stderr_V : float or None
        The technique's standard error alone, V.
    source : str
        How the technique read it (results.json ``E_half_source``).
    kind : EstimateKind
        How far the technique trusts it.
    correction_V : float
        The technique's correction of its raw reading, V (CV: the switching correction).
    accepted : bool
        Whether a fit may take it (as a titration point or as the reference E½(s)).
    why : str
        Why not, when it is not accepted.
    flags : tuple of Flag
        What the decision adds to the file's flags.
    """

    E_half_V: float | None
    stderr_V: float | None
    own_stderr_V: float | None
    source: str
    kind: EstimateKind
    correction_V: float
    accepted: bool
    why: str = ""
    flags: tuple[Flag, ...] = ()


def _on_standard_scale(
    E_half_V: float | None,
    own_stderr_V: float | None,
    standard: StandardMeasurement | None,
    settings: InternalStandard,
) -> tuple[float | None, float | None, list[Flag]]:
    """E½ against the internal standard, its total standard error and the flags."""
    lo, hi = settings.window_V
    if standard is None or standard.E_half_V is None:
        found = standard.flags if standard is not None else ()
        why = "; ".join(f.message for f in found if f.severity == "error")
        flag = Flag(
            "INTERNAL_STANDARD_NOT_FOUND",
            f"the internal standard's E½ could not be measured in [{lo:.3f}, {hi:.3f}] V"
            + (f" ({why})" if why else "")
            + "; check internal_standard.window_V",
            "error",
        )
        return None, None, [flag]
    flags = []
    if standard.reversible is not True:
        codes = ", ".join(f.code for f in standard.flags if f.severity != "info")
        flags.append(
            Flag(
                "INTERNAL_STANDARD_NOT_NERNSTIAN",
                f"the internal standard failed its reversibility screen ({codes}); its peak "
                "midpoint is used as this file's reference",
            )
        )
    if E_half_V is None:
        return None, None, flags
    total = None
    if own_stderr_V is not None and standard.E_half_stderr_V is not None:
        total = math.hypot(own_stderr_V, standard.E_half_stderr_V)
    return E_half_V - standard.E_half_V + settings.E_half_V, total, flags


def _by_user(reason: str) -> Flag:
    return Flag(
        "EXCLUDED_BY_USER",
        f"left out of the fits by the manifest: {reason} (remove exclude to use it)",
        "info",
    )


def decide_half_wave(
    measurement: Measurement,
    *,
    internal_standard: InternalStandard | None,
    exclude_non_nernstian: bool,
    excluded_by_user: str | None = None,
) -> HalfWaveDecision:
    """The E½ *measurement* contributes, and whether a fit may take it (module docstring).

    Parameters
    ----------
    measurement : Measurement
        What the file's technique found, with its current verdicts.
    internal_standard : InternalStandard or None
        The manifest's ``[internal_standard]``; the standard measured in the file is
        ``measurement.standard``.
    exclude_non_nernstian : bool
        ``[fit] exclude_non_nernstian``: whether an E½ the technique calls unusable stays
        out of the fits (True) or enters them all the same (False, a series flag says so).
    """
    est = measurement.half_wave_estimate()
    E, own = est.E_half_V, est.stderr_V
    flags: list[Flag] = []
    total = own
    if internal_standard is not None:
        E, total, flags = _on_standard_scale(E, own, measurement.standard, internal_standard)
    if E is None:
        why = est.why or "no E½ could be measured"
        if internal_standard is not None and est.E_half_V is not None:
            why = "the internal standard's E½ is missing"
        if excluded_by_user is not None:
            flags.append(_by_user(excluded_by_user))
        return HalfWaveDecision(
            None, None, None, est.source, est.kind, 0.0, False, why, tuple(flags)
        )
    accepted = est.kind != "unusable" or not exclude_non_nernstian
    why = "" if accepted else est.why
    if est.kind == "approximate":
        flags.append(Flag("E_HALF_APPROXIMATE", f"E½ is approximate: {est.why}"))
    if excluded_by_user is not None:
        flags.append(_by_user(excluded_by_user))
        kept = (E, total, own, est.source, est.kind, est.correction_V)
        return HalfWaveDecision(*kept, False, excluded_by_user, tuple(flags))
    if not accepted:
        flags.append(
            Flag(
                "EXCLUDED_NON_NERNSTIAN",
                f"left out of the fits because {est.why} (set exclude_non_nernstian = false "
                "in [fit] to include it)",
                "info",
            )
        )
    return HalfWaveDecision(
        E, total, own, est.source, est.kind, est.correction_V, accepted, why, tuple(flags)
    )
