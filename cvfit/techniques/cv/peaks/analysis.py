"""Peak analysis of one cyclic voltammogram: Epc, Epa, ipc, ipa, Ep/2, E½ ± σ, ipa/ipc.

Method
------
*Forward peak.* The current before the wave rises is charging current plus a sloping
background: a straight line, extrapolated under the wave as the baseline of the forward
peak. It is fitted to the foot of the wave (window found by
:func:`cvfit.techniques.cv.peaks.baseline.foot_window`, from the start of the sweep to where a
Nernstian wave
carries ~5 % of its peak) together with the exponential foot of the wave, exp(−nF|E − E½|/RT)
— the leading term of the reversible current far ahead of E½ — because the scan often
starts only 150–200 mV before E½, and a window free of faradaic current would then be too
short for a stable slope. A foot shorter than 2.5 RT/nF is flagged ``SHORT_BASELINE``.

*Reverse peak.* On the reverse sweep the charging current C·dE/dt changes sign, so the
level of zero faradaic current is the forward baseline shifted by the current step at the
switching potential (twice the charging current, measured by extrapolating both sweeps
to the switch, :func:`cvfit.techniques.cv.peaks.baseline.switch_step`); the sloping background, a
function of potential, is common to both sweeps. Against that level the reverse peak (ipa)0 and the
forward current at the switch (isp)0 are read, and the reverse/forward ratio follows from
Nicholson's relation, which accounts for the still-decaying forward current under the
reverse peak. The reverse peak height is reported as ratio × forward height — that is,
against the decaying forward current as Nicholson's relation defines it. Nicholson's
relation is used rather than a t^-1/2 extrapolation of the forward current because the
latter needs an effective time origin that is not defined for a sweep, and fails when the
switch lies less than ~100 mV beyond the peak, whereas the relation was derived from the
reversible solution for every switching potential.

*Later cycles.* A cycle after the first does not start at rest: its forward sweep starts
on the still-decaying current of the sweep before it (the reverse sweep of the previous
cycle), so a line plus the exponential foot, extrapolated under the wave, tilts the
baseline (on a 2-cycle simulation ΔEp read 54.8 instead of 58.0 mV). The decay is
modelled as a Cottrell current c·(τ − τ0)^−1/2, τ the distance travelled along the
potential axis and τ0 the previous sweep's peak
(:func:`cvfit.techniques.cv.peaks.neighbours.previous_sweep_tail`); its
amplitude is fitted jointly on the forward foot and on the last part of the previous
sweep, with the background slope shared and the offsets separate (the charging current
changes sign at the turn), and it continues under both sweeps of the cycle. Nicholson's
ratio relation assumes a forward sweep that starts at rest, so on later cycles the
current ratio and the reverse peak height are None with ``CURRENT_RATIO_NOT_DETERMINED``;
E½ and ΔEp are reported. Measured (n = 1, 2, both directions, C_dl, slope, 0.5 % noise):
E½ RMS error 0.3 mV on cycles 2–3 (0.2 mV on cycle 1), ΔEp within 0.5 mV of cycle 1's.

*Two waves.* With ``window_V`` only the samples of each sweep inside the window are used
(an internal reference couple and the analyte in one file). Another wave that peaks before
the window on a sweep leaves its decaying current under it; that current has the shape of
a reversible wave over the whole record, the semi-derivative of its Nernstian fraction
(:func:`cvfit.techniques.cv.peaks.baseline.reversible_wave_shape`, E½ from its peak), and its
amplitude is fitted with the line and the exponential foot from
``neighbours.OTHER_WAVE_FIT_START_THERMAL`` RT/nF
past its peak (its decay, never its peak) to the window's foot. On the forward sweep that
baseline continues under both peaks; on the reverse sweep of the wave nearer the start
only the fitted current of the other wave is removed. A line plus foot alone, fitted inside
the window, moved E½ by 0.8–1.4 mV with a second wave 300–400 mV away (docs/methods.md).

*Positions.* A polynomial of degree 7 is fitted to the baseline-corrected current within ±1.1·|Ep −
Ep/2| of the sampled extremum (recentred once); its stationary point is the peak
potential (a parabola would be biased by the skew of the peak). The
standard error of E½ propagates the current noise (from second differences) through both
vertices and through the forward-baseline slope, which tilts both peaks.

Accuracy (simulated reversible CVs with charging current, sloping background and 0.5 %
noise): E½ within 0.5 mV in ~96 % of files (SD 0.19 mV for n = 1); forward height within
1 % of Randles–Ševčík when the scan starts ≥ 200/n mV before E½. Two systematic effects are
not corrected because they belong to the definitions: (Epa + Epc)/2 of a reversible couple
lies (n·ΔEp_N(Eλ) − 57.0 mV)/(2n) beyond E½ — ≤ 0.33 mV/n for n·|Eλ − E½| ≥ 300 mV, but
1.60/n mV at 100 mV (71.5 mV past the forward peak) — because Epa moves with the
switching potential (corrected downstream, :mod:`cvfit.techniques.cv.screen.switching`); and
Nicholson's relation, an empirical fit, reads ~0.01 high at n·|Eλ − E½| = 300 mV and ~0.03 high at
600 mV (1.00 ± 0.01 at 100–250 mV).

References
----------
Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706 (reversible peak shape, Ep/2).
Nicholson, R. S. Anal. Chem. 38 (1966) 1406 (ipa/ipc = (ipa)0/ipc + 0.485 (isp)0/ipc + 0.086).
Cottrell, F. G. Z. Phys. Chem. 42 (1903) 385 (diffusion-limited decay i ∝ t^−1/2).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, fields
from functools import partial
from typing import Literal, NamedTuple, cast

import numpy as np

from cvfit.flags import Flag
from cvfit.techniques.cv.peaks import baseline as pf
from cvfit.techniques.cv.peaks import flags as pflags
from cvfit.techniques.cv.peaks.location import LocatedPeak, locate_peak
from cvfit.techniques.cv.peaks.neighbours import (
    MIN_POINTS,
    Tail,
    inside,
    other_wave_decay,
    previous_sweep_tail,
)
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Cycle, Sweep, Voltammogram

__all__ = ["analyse_peaks", "PeakAnalysis", "PeakBaselines"]

#: Minimum peak height in noise SDs for a peak to count as found.
MIN_HEIGHT_SNR = 5.0
#: Fraction of the peak height at which the foot of the wave is taken to end.
FOOT_FRACTION = 0.05
#: Half-width of the vertex window as a fraction of |Ep - Ep/2|.
VERTEX_WINDOW_FRACTION = 1.1
#: Foot windows shorter than this many thermal voltages RT/nF give a warning.
SHORT_FOOT_THERMAL = 2.5
_MIN_POINTS = MIN_POINTS
#: Nicholson (1966) coefficients of the current-ratio relation.
_NICHOLSON_ISP = 0.485
_NICHOLSON_CONST = 0.086
_locate = partial(
    locate_peak,
    edge=_MIN_POINTS,
    min_height_snr=MIN_HEIGHT_SNR,
    window_fraction=VERTEX_WINDOW_FRACTION,
)

_OPTIONAL = (
    "Epc_V",
    "Epa_V",
    "ipc_A",
    "ipa_A",
    "Ep_half_c_V",
    "Ep_half_a_V",
    "E_half_V",
    "E_half_stderr_V",
    "delta_Ep_V",
    "current_ratio",
)


#: Most points kept of a baseline for the figures.
_BASELINE_POINTS = 40


def _thin_line(E: np.ndarray, i: np.ndarray) -> tuple[tuple[float, ...], tuple[float, ...]]:
    """At most :data:`_BASELINE_POINTS` points of a line, its ends kept."""
    if E.size > _BASELINE_POINTS:
        keep = np.linspace(0, E.size - 1, _BASELINE_POINTS).round().astype(int)
        E, i = E[keep], i[keep]
    return tuple(float(x) for x in E), tuple(float(x) for x in i)


@dataclass(frozen=True)
class PeakBaselines:
    """The baselines the peak heights were measured from, for drawing (thinned).

    Attributes
    ----------
    forward_E_V, forward_i_A : tuple of float
        The forward baseline (the line fitted to the foot with the previous sweep's decay)
        from the foot to a little past the forward peak, V and A.
    reverse_E_V, reverse_i_A : tuple of float
        The reverse sweep's zero-faradaic level (the forward baseline shifted by the
        charging step at the switch) from the switch to a little past the reverse peak;
        empty when there is no reverse peak.
    forward_peak, reverse_peak : tuple of float
        (E, i) of each peak's vertex on the record, V and A, with the level under it
        (E, i, baseline i); empty when the peak was not found.
    """

    forward_E_V: tuple[float, ...] = ()
    forward_i_A: tuple[float, ...] = ()
    reverse_E_V: tuple[float, ...] = ()
    reverse_i_A: tuple[float, ...] = ()
    forward_peak: tuple[float, ...] = ()
    reverse_peak: tuple[float, ...] = ()


@dataclass(frozen=True)
class PeakAnalysis:
    """Peak data of one cycle of one voltammogram (SI units, IUPAC sign).

    Peak currents are heights as positive magnitudes, each against its proper baseline.
    Values that could not be measured are None and a flag says why.
    """

    source: str
    cycle_number: int
    first_sweep: Literal["reduction", "oxidation"]
    switching_potential_V: float
    Epc_V: float | None
    Epa_V: float | None
    ipc_A: float | None
    ipa_A: float | None
    Ep_half_c_V: float | None
    Ep_half_a_V: float | None
    E_half_V: float | None
    E_half_stderr_V: float | None
    delta_Ep_V: float | None
    current_ratio: float | None
    noise_A: float
    flags: tuple[Flag, ...] = ()
    baselines: PeakBaselines | None = field(default=None, compare=False, repr=False)

    def __post_init__(self) -> None:
        if self.first_sweep not in ("reduction", "oxidation"):
            raise ValueError(
                f"first_sweep must be 'reduction' or 'oxidation', got {self.first_sweep!r}"
            )
        if isinstance(self.cycle_number, bool) or int(self.cycle_number) < 1:
            raise ValueError(f"cycle_number must be >= 1, got {self.cycle_number!r}")
        for name in ("switching_potential_V", "noise_A"):
            value = float(getattr(self, name))
            if not math.isfinite(value):
                raise ValueError(f"{name} must be finite, got {value}")
            object.__setattr__(self, name, value)
        if self.noise_A < 0:
            raise ValueError(f"noise_A must be >= 0, got {self.noise_A}")
        for name in _OPTIONAL:
            value = getattr(self, name)
            if value is not None:
                value = float(value)
                if not math.isfinite(value):
                    raise ValueError(f"{name} must be finite or None, got {value}")
                object.__setattr__(self, name, value)
        for name in ("ipc_A", "ipa_A", "E_half_stderr_V"):
            value = getattr(self, name)
            if value is not None and value < 0:
                raise ValueError(f"{name} must be >= 0, got {value}")
        flags = tuple(self.flags)
        if not all(isinstance(f, Flag) for f in flags):
            raise TypeError("flags must be Flag instances")
        object.__setattr__(self, "flags", flags)

    @property
    def forward_peak_V(self) -> float | None:
        """Peak potential of the forward sweep (Epc for a reduction-first scan)."""
        return self.Epc_V if self.first_sweep == "reduction" else self.Epa_V

    @property
    def forward_height_A(self) -> float | None:
        """Height of the forward peak (ipc for a reduction-first scan)."""
        return self.ipc_A if self.first_sweep == "reduction" else self.ipa_A

    @property
    def forward_half_peak_V(self) -> float | None:
        """Half-peak potential of the forward peak."""
        return self.Ep_half_c_V if self.first_sweep == "reduction" else self.Ep_half_a_V

    @property
    def reverse_peak_V(self) -> float | None:
        """Peak potential of the reverse sweep."""
        return self.Epa_V if self.first_sweep == "reduction" else self.Epc_V

    def to_dict(self) -> dict:
        """JSON-ready mapping; missing values are None, flags are dicts."""
        out = {f.name: getattr(self, f.name) for f in fields(self) if f.name != "flags"}
        out["flags"] = [f.to_dict() for f in self.flags]
        return out


def _arrays(sweep: Sweep) -> tuple[np.ndarray, np.ndarray]:
    return np.asarray(sweep.potential_V), np.asarray(sweep.current_A)


def _sub(tail: np.ndarray | None, index: np.ndarray | slice) -> np.ndarray | None:
    return None if tail is None else tail[index]


def analyse_peaks(
    voltammogram: Voltammogram,
    *,
    cycle: int | Literal["last"] = "last",
    electrons: int = 1,
    temperature_K: float = 298.15,
    window_V: tuple[float, float] | None = None,
    other_electrons: int | None = None,
) -> PeakAnalysis:
    """Measure the peaks of one cycle of a cyclic voltammogram.

    Parameters
    ----------
    voltammogram : Voltammogram
        The record (SI units, IUPAC sign); it is not modified.
    cycle : int or "last"
        1-based cycle number, or the last complete cycle.
    electrons : int
        n of the couple; sets the steepness nF/RT of the exponential foot term of the
        baseline fit and the scale of the foot-length warning.
    temperature_K : float
        Temperature, K; used with ``electrons`` as above.
    window_V : (low, high) or None
        Potential range of the wave to measure when the record holds more than one wave
        (an analyte and an internal reference couple). Both peaks, the foot baseline and
        the vertex fits use only the samples of each sweep inside the window, so the other
        wave's peaks never enter. The baseline is the same line plus exponential foot,
        fitted from the window's edge: across a window that starts on the decaying
        diffusion tail of the other wave, the line absorbs that tail's slope (module
        docstring, *Two waves*). The charging step is still measured at the true switching
        potential. When the switch lies outside the window the forward current at the
        switch belongs to the other wave, so the current ratio (Nicholson) and the reverse
        half-peak potential are not determined (``CURRENT_RATIO_NOT_DETERMINED``).

    Returns
    -------
    PeakAnalysis
        Peak potentials and heights; None with a flag for anything not found.

    Raises
    ------
    InputError
        If the requested cycle does not exist (from :meth:`Voltammogram.cycle`).

    References
    ----------
    Nicholson, R. S.; Shain, I. Anal. Chem. 36 (1964) 706.
    Nicholson, R. S. Anal. Chem. 38 (1966) 1406.
    """
    if isinstance(electrons, bool) or int(electrons) != electrons or electrons < 1:
        raise ValueError(f"electrons must be a whole number >= 1, got {electrons!r}")
    if not (math.isfinite(temperature_K) and temperature_K > 0):
        raise ValueError(f"temperature_K must be positive, got {temperature_K}")
    cyc = voltammogram.cycle(cycle)
    other_kappa = 1.0 / thermal_voltage(temperature_K, other_electrons or electrons)
    win = _window(voltammogram, cyc, window_V, other_kappa)
    rev = cyc.reverse
    arrays = [win.i_f] if rev is None else [win.i_f, np.asarray(rev.current_A)]
    out = _Result(voltammogram, cyc, pf.noise_sd(*arrays))
    if win.E_f.size < 4 * _MIN_POINTS:
        return out.finish(pflags.forward_too_short(win.E_f.size, 4 * _MIN_POINTS))
    fw = _forward_peak(voltammogram, cyc, win, out, electrons, temperature_K)
    if fw is None or rev is None:
        return out.finish()
    rv = _reverse_level(voltammogram, cyc, rev, win, fw, out.sigma, other_kappa)
    if isinstance(rv, int):
        return out.finish(pflags.reverse_too_short(rv))
    return _reverse_peak(cyc, win, fw, rv, out)


class _Window(NamedTuple):
    """The forward sweep as analysed: inside ``window_V`` (and from another wave's decay)."""

    E_f: np.ndarray
    i_f: np.ndarray
    E_f_all: np.ndarray
    i_f_all: np.ndarray
    sl_f: slice
    limits: tuple[float, float] | None  # window_V, sorted
    switch_inside: bool
    other_f: tuple[np.ndarray, int] | None  # another wave's decay shape and fit start
    other_kappa: float


def _window(
    voltammogram: Voltammogram,
    cyc: Cycle,
    window_V: tuple[float, float] | None,
    other_kappa: float,
) -> _Window:
    fwd = cyc.forward
    s = int(fwd.direction)
    E_f_all, i_f_all = _arrays(fwd)
    if window_V is None:
        return _Window(E_f_all, i_f_all, E_f_all, i_f_all, slice(None), None, True, None,
                       other_kappa)  # fmt: skip
    low, high = sorted(float(w) for w in window_V)
    sl_f = inside(E_f_all, low, high)
    other_f = None
    if (sl_f.start or 0) > 0:
        # another wave peaks before the window on the forward sweep: its current
        # continues under the window; the baseline takes its shape and is fitted from
        # its decay onwards (module docstring, *Two waves*)
        other_f = other_wave_decay(
            voltammogram, fwd, s * i_f_all, sl_f.start, s, other_kappa, forward=True
        )
        if other_f is not None:
            sl_f = slice(other_f[1], sl_f.stop)
    E_lam = cyc.switching_potential_V
    return _Window(E_f_all[sl_f], i_f_all[sl_f], E_f_all, i_f_all, sl_f, (low, high),
                   low <= E_lam <= high, other_f, other_kappa)  # fmt: skip


class _Result:
    """The values found so far, the flags raised, and the record they make."""

    def __init__(self, voltammogram: Voltammogram, cyc: Cycle, sigma: float) -> None:
        self.voltammogram, self.cyc, self.sigma = voltammogram, cyc, sigma
        self.values: dict[str, float | None] = dict.fromkeys(_OPTIONAL)
        self.flags: list[Flag] = []
        self.lines: dict[str, tuple[tuple[float, ...], tuple[float, ...]]] = {}
        self.vertices: dict[str, tuple[float, float, float]] = {}
        s = int(cyc.forward.direction)
        self.fwd_name, self.rev_name = ("anodic", "cathodic") if s > 0 else ("cathodic", "anodic")

    def finish(self, *flags: Flag) -> PeakAnalysis:
        self.flags.extend(flags)
        return PeakAnalysis(
            source=self.voltammogram.source,
            cycle_number=self.cyc.number,
            first_sweep="oxidation" if self.cyc.forward.direction > 0 else "reduction",
            switching_potential_V=self.cyc.switching_potential_V,
            noise_A=self.sigma,
            flags=tuple(self.flags),
            baselines=self._baselines(),
            **self.values,
        )

    def _baselines(self) -> PeakBaselines | None:
        if "forward" not in self.lines:
            return None
        (Ef, If), (Er, Ir) = self.lines["forward"], self.lines.get("reverse", ((), ()))
        return PeakBaselines(
            Ef, If, Er, Ir, self.vertices.get("forward", ()), self.vertices.get("reverse", ())
        )


class _Forward(NamedTuple):
    """The forward peak, its baseline and what the reverse sweep needs of them."""

    peak: LocatedPeak
    base: pf.LineFit
    tail: Tail | None
    tail_r: np.ndarray | None  # the previous sweep's (or other wave's) tail, reverse sweep
    tail_f: np.ndarray | None
    half_width_V: float
    g_base: np.ndarray  # ∂(forward vertex)/∂(baseline coefficients)
    var_noise: float  # variance of the forward vertex from the current noise
    kappa_per_V: float  # nF/RT of the couple (the exponential foot)


def _forward_peak(
    voltammogram: Voltammogram,
    cyc: Cycle,
    win: _Window,
    out: _Result,
    electrons: int,
    temperature_K: float,
) -> _Forward | None:
    """The forward peak against the extrapolated foot baseline (None: not found, flagged)."""
    fwd, rev = cyc.forward, cyc.reverse
    s = int(fwd.direction)
    rt_nf = thermal_voltage(temperature_K, electrons)
    kappa = 1.0 / thermal_voltage(temperature_K, electrons)
    tail = previous_sweep_tail(voltammogram, cyc, rt_nf_V=rt_nf)
    if tail is None and fwd.start > 0:
        out.flags.append(pflags.previous_tail_not_modelled(cyc.number))
    if win.other_f is not None:
        # the other wave's current dominates the window's foot; a previous sweep's decay,
        # which has travelled across the other wave, is left to the line
        shape = win.other_f[0]
        reverse = None if rev is None else shape[rev.start : rev.stop + 1]
        tail = Tail(shape[fwd.start : fwd.stop + 1], reverse, None)
    tail_f = None if tail is None else tail.forward[win.sl_f]
    E_f, sigma = win.E_f, out.sigma
    lo, hi, base, y_f = pf.foot_window(
        E_f, win.i_f, s, sigma, kappa_per_V=kappa,
        skip=2, min_points=_MIN_POINTS, foot_fraction=FOOT_FRACTION, tail=tail_f,
        extra=None if tail is None else tail.previous,
    )  # fmt: skip
    peak, why = _locate(E_f, y_f, sigma, out.fwd_name, half_width_V=None, against_baseline=True)
    if peak is None:
        out.flags.append(pflags.no_peak(True, why))
        if rev is not None:
            out.flags.append(pflags.reverse_needs_forward())
        return None
    foot_V = abs(E_f[hi - 1] - E_f[lo])
    if foot_V < SHORT_FOOT_THERMAL * rt_nf:
        out.flags.append(pflags.short_baseline(foot_V, SHORT_FOOT_THERMAL))
    if s > 0:
        out.values.update(Epa_V=peak.E_V, ipa_A=peak.height_A, Ep_half_a_V=peak.E_half_peak_V)
    else:
        out.values.update(Epc_V=peak.E_V, ipc_A=peak.height_A, Ep_half_c_V=peak.E_half_peak_V)
    k = int(np.argmin(np.abs(E_f - peak.E_V)))
    stop = min(E_f.size, k + max(3, (k - lo) // 4))
    drawn = slice(lo, stop)
    out.lines["forward"] = _thin_line(E_f[drawn], base(E_f[drawn], _sub(tail_f, drawn)))
    level = float(base(E_f[k : k + 1], _sub(tail_f, slice(k, k + 1)))[0])
    out.vertices["forward"] = (float(peak.E_V), level + s * peak.height_A, level)
    if rev is None:
        out.flags.append(pflags.no_reverse_sweep(cyc.number, out.rev_name))
    # _locate found the forward half-peak potential (it sets the vertex window)
    half_width = VERTEX_WINDOW_FRACTION * abs(peak.E_V - cast(float, peak.E_half_peak_V))  # found
    X_f = base.design(E_f[peak.index], _sub(tail_f, peak.index))
    # sensitivity of the forward vertex to the baseline (a, b): y = s (i - base)
    return _Forward(
        peak, base, tail, None if tail is None else tail.reverse, tail_f, half_width,
        -s * (peak.grad_y @ X_f), sigma**2 * float(peak.grad_y @ peak.grad_y), kappa,
    )  # fmt: skip


class _Reverse(NamedTuple):
    """The reverse sweep against its zero-faradaic level."""

    E_r: np.ndarray
    y_r: np.ndarray  # oriented current above the level
    tail_r: np.ndarray | None
    isp0: float  # forward current at the switch above the forward baseline
    tail_rev: np.ndarray | None  # another wave's decay removed under this peak
    var_tail: float  # variance of that decay's amplitude
    level_A: np.ndarray  # the zero-faradaic level under the sweep (for the figures)


def _reverse_level(
    voltammogram: Voltammogram,
    cyc: Cycle,
    rev: Sweep,
    win: _Window,
    fw: _Forward,
    sigma: float,
    other_kappa: float,
) -> _Reverse | int:
    """Zero-faradaic level of the reverse sweep: the forward baseline plus the charging
    step at the switch, less another wave's decay (the sweep's point count when it has
    too few points for a peak)."""
    s = int(cyc.forward.direction)
    E_lam = cyc.switching_potential_V
    E_r_all, i_r_all = _arrays(rev)
    E_r, i_r, tail_r, sl_r = E_r_all, i_r_all, fw.tail_r, slice(None)
    if win.limits is not None:
        sl_r = inside(E_r, *win.limits)
        E_r, i_r = E_r[sl_r], i_r[sl_r]
        tail_r = None if tail_r is None else tail_r[sl_r]
    pts = max(10, min(win.E_f_all.size, E_r_all.size) // 15)
    if E_r.size < 4 * _MIN_POINTS:
        return int(E_r.size)
    jump, i_switch, _ = pf.switch_step(
        win.E_f_all, win.i_f_all, E_r_all, i_r_all, E_lam, points=pts
    )
    tail_at_switch = None if fw.tail is None else fw.tail.forward[-1:]
    isp0 = s * (i_switch - float(fw.base(np.array([E_lam]), tail_at_switch)[0]))
    y_r = fw.base.residual(E_r, i_r, -s, tail_r, shift=jump)
    level = fw.base(E_r, tail_r) + jump
    tail_rev, var_tail = None, 0.0
    if win.limits is not None and not win.switch_inside and (sl_r.start or 0) > 0:
        # another wave's reverse peak comes first on the reverse sweep and its decay runs
        # under this reverse peak: its amplitude is fitted (line, foot and that decay) to
        # the reverse sweep's own foot inside the window jointly with the other wave's
        # decay before the window, and the decay alone is removed
        found = other_wave_decay(
            voltammogram, rev, -s * i_r_all, sl_r.start or 0, s, other_kappa, forward=False
        )
        if found is not None:
            shape, begin = found
            ext = slice(begin, sl_r.stop)
            shape_r = shape[rev.start : rev.stop + 1]
            *_, base_r, _ = pf.foot_window(
                E_r_all[ext], i_r_all[ext], -s, sigma, kappa_per_V=fw.kappa_per_V,
                skip=2, min_points=_MIN_POINTS, foot_fraction=FOOT_FRACTION,
                tail=shape_r[ext],
            )  # fmt: skip
            if base_r.coef.size == 3:
                tail_rev = shape_r[sl_r]
                y_r = y_r + s * float(base_r.coef[2]) * tail_rev
                var_tail = float(base_r.cov[2, 2])
    return _Reverse(E_r, y_r, tail_r, isp0, tail_rev, var_tail, level)


def _reverse_peak(cyc: Cycle, win: _Window, fw: _Forward, rv: _Reverse, out: _Result):
    """The reverse peak, Nicholson's current ratio, E½ and its standard error."""
    s = int(cyc.forward.direction)
    sigma = out.sigma
    peak_f = fw.peak
    peak_r, why = _locate(
        rv.E_r, rv.y_r, sigma, out.rev_name, half_width_V=fw.half_width_V,
        against_baseline=False,
    )  # fmt: skip
    if peak_r is None:
        return out.finish(pflags.no_peak(False, why))
    k = int(np.argmin(np.abs(rv.E_r - peak_r.E_V)))
    stop = min(rv.E_r.size, k + max(3, k // 4))
    out.lines["reverse"] = _thin_line(rv.E_r[:stop], rv.level_A[:stop])
    level = float(rv.level_A[k])
    out.vertices["reverse"] = (float(peak_r.E_V), level - s * peak_r.height_A, level)
    i_fwd = peak_f.height_A
    ratio = peak_r.height_A / i_fwd + _NICHOLSON_ISP * rv.isp0 / i_fwd + _NICHOLSON_CONST
    i_rev = ratio * i_fwd
    if not i_rev > MIN_HEIGHT_SNR * sigma:
        return out.finish(pflags.reverse_below_noise(out.rev_name, i_rev, MIN_HEIGHT_SNR, sigma))
    # half-peak potential of the reverse wave: half the Nicholson height below its top,
    # taking the decaying forward current as level across the rising part of the wave
    E_r, y_r = rv.E_r, rv.y_r
    E_half_peak_r = pf.rising_crossing(E_r, y_r, int(y_r.argmax()), peak_r.height_A - 0.5 * i_rev)
    X_r = fw.base.design(E_r[peak_r.index], _sub(rv.tail_r, peak_r.index))
    g_base_r = s * (peak_r.grad_y @ X_r)
    var_r_noise = sigma**2 * float(peak_r.grad_y @ peak_r.grad_y)
    g_base = 0.5 * (fw.g_base + g_base_r)
    var_half = 0.25 * (fw.var_noise + var_r_noise) + float(g_base @ fw.base.cov @ g_base)
    if rv.tail_rev is not None:  # the other wave's fitted decay, removed under this peak
        g_tail = s * float(peak_r.grad_y @ rv.tail_rev[peak_r.index])
        var_half += 0.25 * g_tail**2 * rv.var_tail
    at_rest = cyc.forward.start == 0
    report_ratio = at_rest  # the ratio, the reverse height and its half-peak potential
    # the switch lies outside only a window (limits given)
    if at_rest and not win.switch_inside and win.limits is not None:
        low, high = win.limits
        out.flags.append(
            pflags.ratio_switch_outside_window(cyc.switching_potential_V, low, high, out.rev_name)
        )
        report_ratio = False
    if not at_rest:
        # Nicholson's relation was derived for a forward sweep that starts at rest
        out.flags.append(pflags.ratio_not_at_rest(cyc.number, out.rev_name))
    nicholson = (ratio, i_rev, E_half_peak_r) if report_ratio else (None, None, None)
    ratio_out, i_rev_out, E_half_peak_out = nicholson
    if s > 0:
        out.values.update(Epc_V=peak_r.E_V, ipc_A=i_rev_out, Ep_half_c_V=E_half_peak_out)
        E_ox, E_red = peak_f.E_V, peak_r.E_V
    else:
        out.values.update(Epa_V=peak_r.E_V, ipa_A=i_rev_out, Ep_half_a_V=E_half_peak_out)
        E_ox, E_red = peak_r.E_V, peak_f.E_V
    out.values.update(
        E_half_V=0.5 * (E_ox + E_red),
        E_half_stderr_V=math.sqrt(max(var_half, 0.0)),
        delta_Ep_V=E_ox - E_red,
        current_ratio=ratio_out,
    )
    return out.finish()
