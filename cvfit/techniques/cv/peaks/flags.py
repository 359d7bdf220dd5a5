"""The flags of the peak analysis: their codes and texts, apart from the numerics.

Each function builds one :class:`cvfit.flags.Flag` from what
:func:`cvfit.techniques.cv.peaks.analysis.analyse_peaks` measured (codes listed in
:mod:`cvfit.flag_codes`).
"""

from __future__ import annotations

from cvfit.flags import Flag

__all__ = [
    "no_peak",
    "forward_too_short",
    "reverse_too_short",
    "reverse_needs_forward",
    "no_reverse_sweep",
    "reverse_below_noise",
    "previous_tail_not_modelled",
    "short_baseline",
    "ratio_switch_outside_window",
    "ratio_not_at_rest",
]


def _mV(x: float) -> str:
    return f"{1e3 * x:.1f} mV"


def no_peak(forward: bool, why: str) -> Flag:
    """The peak locator's own reason why a peak was not found."""
    return Flag("NO_FORWARD_PEAK" if forward else "NO_REVERSE_PEAK", why, "error")


def forward_too_short(points: int, needed: int) -> Flag:
    return Flag(
        "NO_FORWARD_PEAK",
        f"the forward sweep has only {points} points; at least {needed} "
        "are needed to fit a baseline and locate a peak",
        "error",
    )


def reverse_too_short(points: int) -> Flag:
    return Flag(
        "NO_REVERSE_PEAK",
        f"the reverse sweep has only {points} points, too few to locate a peak",
        "error",
    )


def reverse_needs_forward() -> Flag:
    return Flag(
        "NO_REVERSE_PEAK",
        "the reverse peak is not measured because the forward peak, whose "
        "baseline it needs, was not found",
        "error",
    )


def no_reverse_sweep(cycle: int, name: str) -> Flag:
    return Flag(
        "NO_REVERSE_PEAK", f"cycle {cycle} has no reverse sweep, so no {name} peak", "error"
    )


def reverse_below_noise(name: str, height_A: float, snr: float, sigma_A: float) -> Flag:
    return Flag(
        "NO_REVERSE_PEAK",
        f"the {name} peak height against the decaying forward current is "
        f"{height_A:.3g} A, less than {snr:g} times the noise SD {sigma_A:.3g} A",
        "error",
    )


def previous_tail_not_modelled(cycle: int) -> Flag:
    return Flag(
        "PREVIOUS_TAIL_NOT_MODELLED",
        f"cycle {cycle} starts on the current of the sweep before it, but that "
        "sweep has no peak past which its decay could be fitted; the forward "
        "baseline ignores the decay and the forward peak may be displaced",
        "warning",
    )


def short_baseline(foot_V: float, short_thermal: float) -> Flag:
    return Flag(
        "SHORT_BASELINE",
        f"the foot of the forward wave used for the baseline spans only {_mV(foot_V)} "
        f"(less than {short_thermal:g} RT/nF) before the current rises, so the "
        "extrapolated baseline and the peak heights may be off by several per cent; "
        "start the scan further from the wave",
        "warning",
    )


def ratio_switch_outside_window(E_switch_V: float, low: float, high: float, name: str) -> Flag:
    return Flag(
        "CURRENT_RATIO_NOT_DETERMINED",
        f"the switching potential ({E_switch_V:.3f} V) lies outside the window "
        f"[{low:.3f}, {high:.3f}] V, so the forward current at the switch belongs to "
        f"another wave: the {name} peak height and the current ratio are not "
        "reported (E½ and ΔEp are)",
        "warning",
    )


def ratio_not_at_rest(cycle: int, name: str) -> Flag:
    return Flag(
        "CURRENT_RATIO_NOT_DETERMINED",
        f"cycle {cycle} starts on the decaying current of the sweep before it, "
        "while Nicholson's ratio relation holds for a forward sweep that starts at "
        f"rest: the {name} peak height and the current ratio are not reported "
        "(E½ and ΔEp are); analyse cycle 1 for the ratio",
        "warning",
    )
