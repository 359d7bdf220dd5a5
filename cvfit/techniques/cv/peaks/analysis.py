"""Peak analysis of one cyclic voltammogram: Epc, Epa, ipc, ipa, Ep/2, E½ ± σ, ipa/ipc.

Method
------
*Forward peak.* The current before the wave rises is charging current plus a sloping
background: a straight line, extrapolated under the wave as the baseline of the forward
peak. It is fitted to the foot of the wave (window found by
:func:`cvfit.techniques.cv.peaks.baseline.foot_window`, from the start of the sweep to where a
Nernstian wave
carries ~5 % of its peak) together with the exponential foot of the wave, exp(nF|E − E½|/RT)
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
potential axis and τ0 the previous sweep's peak (:func:`previous_sweep_tail`); its
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
amplitude
is fitted with the line and the exponential foot from ``OTHER_WAVE_FIT_START_THERMAL`` RT/nF
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
lies (n·ΔEp_N(Eλ) − 57.0 mV)/(2n) beyond E½ — ≤ 0.4 mV/n for n·|Eλ − E½| ≥ 300 mV, but
1.75/n mV at 100 mV (71.5 mV past the forward peak) — because Epa moves with the
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
from dataclasses import dataclass, fields
from functools import partial
from typing import Literal, NamedTuple

import numpy as np

from cvfit.flags import Flag
from cvfit.techniques.cv.peaks import baseline as pf
from cvfit.techniques.cv.peaks.location import locate_peak
from cvfit.units import thermal_voltage
from cvfit.voltammogram import Cycle, Sweep, Voltammogram

__all__ = ["analyse_peaks", "PeakAnalysis"]

#: Minimum peak height in noise SDs for a peak to count as found.
MIN_HEIGHT_SNR = 5.0
#: Fraction of the peak height at which the foot of the wave is taken to end.
FOOT_FRACTION = 0.05
#: Half-width of the vertex window as a fraction of |Ep - Ep/2|.
VERTEX_WINDOW_FRACTION = 1.1
#: Foot windows shorter than this many thermal voltages RT/nF give a warning.
SHORT_FOOT_THERMAL = 2.5
#: Origin of the previous sweep's diffusion tail, RT/nF before its peak.
TAIL_ORIGIN_THERMAL = 0.0
#: The previous sweep's tail is fitted from this many RT/nF past its peak.
TAIL_FIT_START_THERMAL = 3.0
#: The other wave's decay enters the joint baseline fit from this many RT/nF past its peak.
OTHER_WAVE_FIT_START_THERMAL = 2.0
#: Ep − E½ of a reversible peak in RT/nF (Nicholson & Shain 1964), for another wave's E½.
_PEAK_OFFSET_THERMAL = 1.109
#: Fewest points of a foot window; a peak lies at least this many points from the ends.
_MIN_POINTS = 8
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


def _mV(x: float) -> str:
    return f"{1e3 * x:.1f} mV"


def _arrays(sweep: Sweep) -> tuple[np.ndarray, np.ndarray]:
    return np.asarray(sweep.potential_V), np.asarray(sweep.current_A)


def _sub(tail: np.ndarray | None, index: np.ndarray | slice) -> np.ndarray | None:
    return None if tail is None else tail[index]


class _Tail(NamedTuple):
    forward: np.ndarray  # (τ − τ0)^−1/2 on the forward sweep
    reverse: np.ndarray | None  # and on the reverse sweep
    previous: tuple[np.ndarray, np.ndarray, np.ndarray]  # (E, i, tail) of the sweep before


def _inside(E: np.ndarray, low: float, high: float) -> slice:
    """The run of samples of one sweep from its first to its last point inside [low, high]."""
    idx = np.flatnonzero((E >= low) & (E <= high))
    if idx.size == 0:
        return slice(0, 0)
    return slice(int(idx[0]), int(idx[-1]) + 1)


def _other_peak(oriented: np.ndarray, before: int) -> int | None:
    """Index of another wave's peak on a sweep, among the samples before index *before*.

    *oriented* is the sweep's current in its own direction; the peak is its largest value
    at least ``_MIN_POINTS`` from the sweep's start and from *before*, and the current must
    fall from it into the window. None when there is no such peak.
    """
    stop = before - _MIN_POINTS
    if stop <= _MIN_POINTS:
        return None
    k = _MIN_POINTS + int(oriented[_MIN_POINTS:stop].argmax())
    if oriented[k] <= oriented[before - 1]:
        return None
    return k


def _other_wave_decay(
    voltammogram: Voltammogram,
    sweep: Sweep,
    oriented: np.ndarray,
    before: int,
    direction: int,
    other_kappa_per_V: float,
    forward: bool,
) -> tuple[np.ndarray, int] | None:
    """Current shape of another wave that peaks on *sweep* before index *before*.

    The shape is that of a reversible wave over the whole record
    (:func:`cvfit.techniques.cv.peaks.baseline.reversible_wave_shape`), placed at the E½ of the
    other wave from that peak, 1.109 RT/nF beyond E½ in the sweep's direction (Nicholson & Shain
    1964; *forward* says whether *sweep* is the forward sweep, whose direction is
    *direction*, or the reverse one). Returns the shape over the whole record and the index
    on *sweep* ``OTHER_WAVE_FIT_START_THERMAL`` RT/nF past that peak, from which the
    baseline with this shape is fitted (the other wave's own decay, away from its peak);
    None without such a peak or with fewer than ten points between there and *before*.
    """
    k = _other_peak(oriented, before)
    if k is None:
        return None
    E_all = np.asarray(voltammogram.potential_V)
    E_sweep = E_all[sweep.start : sweep.stop + 1]
    rt_nf = 1.0 / other_kappa_per_V
    past = np.abs(E_sweep[:before] - E_sweep[k])
    beyond = np.flatnonzero(past[k:] >= OTHER_WAVE_FIT_START_THERMAL * rt_nf)
    stop = sweep.start + before - 3
    if beyond.size == 0 or stop - (sweep.start + k + int(beyond[0])) < 10:
        return None
    sweep_direction = direction if forward else -direction
    E_half = float(E_sweep[k]) - sweep_direction * _PEAK_OFFSET_THERMAL * rt_nf
    shape = pf.reversible_wave_shape(E_all, E_half, other_kappa_per_V, direction)
    return shape, k + int(beyond[0])


def previous_sweep_tail(
    voltammogram: Voltammogram, cycle: Cycle, *, rt_nf_V: float
) -> _Tail | None:
    """Decaying current of the sweep before ``cycle``, continued under both its sweeps.

    A cycle after the first does not start at rest: the current of the sweep before it
    is still decaying when the forward sweep starts. Beyond its peak the current of a
    reversible sweep is diffusion-limited and decays like a Cottrell current, c·(τ −
    τ0)^−1/2 (Cottrell 1903), from an origin τ0 taken at that sweep's peak
    (``TAIL_ORIGIN_THERMAL`` = 0 RT/nF before it: on simulated reversible cycles this
    origin biased E½ and ΔEp least, ≤ 0.1 and ≤ 0.15 mV, against 0.3 mV with the origin
    at E½, 1.109 RT/nF before the peak). τ is the distance travelled along
    the potential axis (V), proportional to time at a constant scan rate, so no time
    column or scan rate is needed. Returned are the tail on the forward and reverse
    sweeps of the cycle and the last part of the sweep before (from
    ``TAIL_FIT_START_THERMAL`` RT/nF past its peak to a few points before its end), which
    the forward foot fit shares: the short foot alone separates the tail from the line
    poorly.

    Returns None for a cycle that starts at rest (no sweep before it) or when the sweep
    before it has no peak to decay from.
    """
    fwd, rev = cycle.forward, cycle.reverse
    if fwd.start == 0:
        return None
    before = [sw for sw in voltammogram.sweeps() if sw.stop == fwd.start]
    if not before:
        return None
    prev = before[0]
    stop = fwd.stop if rev is None else rev.stop
    found = pf.decay_tail(
        np.asarray(voltammogram.potential_V),
        np.asarray(voltammogram.current_A),
        (prev.start, prev.stop, prev.direction),
        (fwd.start, stop),
        origin_V=TAIL_ORIGIN_THERMAL * rt_nf_V,
        fit_start_V=TAIL_FIT_START_THERMAL * rt_nf_V,
    )
    if found is None:
        return None
    tail, previous = found
    n_f = fwd.stop - fwd.start + 1
    return _Tail(tail[:n_f], None if rev is None else tail[n_f - 1 :], previous)


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
    fwd, rev = cyc.forward, cyc.reverse
    s = int(fwd.direction)  # +1: forward sweep is an oxidation (anodic peak up)
    first: Literal["reduction", "oxidation"] = "oxidation" if s > 0 else "reduction"
    E_f, i_f = _arrays(fwd)
    E_lam = cyc.switching_potential_V
    E_f_all, i_f_all = E_f, i_f
    sl_f = sl_r = slice(None)
    switch_inside = True
    other_kappa = 1.0 / thermal_voltage(temperature_K, other_electrons or electrons)
    other_f = None
    if window_V is not None:
        low, high = sorted(float(w) for w in window_V)
        sl_f = _inside(E_f, low, high)
        switch_inside = low <= E_lam <= high
        if (sl_f.start or 0) > 0:
            # another wave peaks before the window on the forward sweep: its current
            # continues under the window; the baseline takes its shape and is fitted from
            # its decay onwards (module docstring, *Two waves*)
            other_f = _other_wave_decay(
                voltammogram, fwd, s * i_f, sl_f.start, s, other_kappa, forward=True
            )
            if other_f is not None:
                sl_f = slice(other_f[1], sl_f.stop)
        E_f, i_f = E_f[sl_f], i_f[sl_f]
    flags: list[Flag] = []
    result = dict.fromkeys(_OPTIONAL)
    fwd_name, rev_name = ("anodic", "cathodic") if s > 0 else ("cathodic", "anodic")

    arrays = [i_f] if rev is None else [i_f, np.asarray(rev.current_A)]
    sigma = pf.noise_sd(*arrays)

    def finish() -> PeakAnalysis:
        return PeakAnalysis(
            source=voltammogram.source,
            cycle_number=cyc.number,
            first_sweep=first,
            switching_potential_V=E_lam,
            noise_A=sigma,
            flags=tuple(flags),
            **result,
        )

    min_points = _MIN_POINTS
    if E_f.size < 4 * min_points:
        flags.append(
            Flag(
                "NO_FORWARD_PEAK",
                f"the forward sweep has only {E_f.size} points; at least {4 * min_points} "
                "are needed to fit a baseline and locate a peak",
                "error",
            )
        )
        return finish()

    # forward peak against the extrapolated foot baseline
    kappa = 1.0 / thermal_voltage(temperature_K, electrons)
    rt_nf = thermal_voltage(temperature_K, electrons)
    tail = previous_sweep_tail(voltammogram, cyc, rt_nf_V=rt_nf)
    if tail is None and fwd.start > 0:
        flags.append(
            Flag(
                "PREVIOUS_TAIL_NOT_MODELLED",
                f"cycle {cyc.number} starts on the current of the sweep before it, but that "
                "sweep has no peak past which its decay could be fitted; the forward "
                "baseline ignores the decay and the forward peak may be displaced",
                "warning",
            )
        )
    if other_f is not None:
        # the other wave's current dominates the window's foot; a previous sweep's decay,
        # which has travelled across the other wave, is left to the line
        shape = other_f[0]
        reverse = None if rev is None else shape[rev.start : rev.stop + 1]
        tail = _Tail(shape[fwd.start : fwd.stop + 1], reverse, None)
    tail_f = None if tail is None else tail.forward[sl_f]
    tail_r = None if tail is None else tail.reverse
    lo, hi, base, y_f = pf.foot_window(
        E_f,
        i_f,
        s,
        sigma,
        kappa_per_V=kappa,
        skip=2,
        min_points=min_points,
        foot_fraction=FOOT_FRACTION,
        tail=tail_f,
        extra=None if tail is None else tail.previous,
    )
    peak_f, why = _locate(E_f, y_f, sigma, fwd_name, half_width_V=None, against_baseline=True)
    if peak_f is None:
        flags.append(Flag("NO_FORWARD_PEAK", why, "error"))
        if rev is not None:
            flags.append(
                Flag(
                    "NO_REVERSE_PEAK",
                    "the reverse peak is not measured because the forward peak, whose "
                    "baseline it needs, was not found",
                    "error",
                )
            )
        return finish()
    foot_V = abs(E_f[hi - 1] - E_f[lo])
    if foot_V < SHORT_FOOT_THERMAL * thermal_voltage(temperature_K, electrons):
        flags.append(
            Flag(
                "SHORT_BASELINE",
                f"the foot of the forward wave used for the baseline spans only {_mV(foot_V)} "
                f"(less than {SHORT_FOOT_THERMAL:g} RT/nF) before the current rises, so the "
                "extrapolated baseline and the peak heights may be off by several per cent; "
                "start the scan further from the wave",
                "warning",
            )
        )
    # _locate found the forward half-peak potential (it sets the vertex window)
    half_width = VERTEX_WINDOW_FRACTION * abs(peak_f.E_V - peak_f.E_half_peak_V)
    X_f = base.design(E_f[peak_f.index], _sub(tail_f, peak_f.index))
    # sensitivity of the forward vertex to the baseline (a, b): y = s (i - base)
    g_base_f = -s * (peak_f.grad_y @ X_f)
    var_f_noise = sigma**2 * float(peak_f.grad_y @ peak_f.grad_y)

    if s > 0:
        result.update(Epa_V=peak_f.E_V, ipa_A=peak_f.height_A, Ep_half_a_V=peak_f.E_half_peak_V)
    else:
        result.update(Epc_V=peak_f.E_V, ipc_A=peak_f.height_A, Ep_half_c_V=peak_f.E_half_peak_V)

    if rev is None:
        flags.append(
            Flag(
                "NO_REVERSE_PEAK",
                f"cycle {cyc.number} has no reverse sweep, so no {rev_name} peak",
                "error",
            )
        )
        return finish()

    E_r_all, i_r_all = _arrays(rev)
    E_r, i_r = E_r_all, i_r_all
    if window_V is not None:
        sl_r = _inside(E_r, low, high)
        E_r, i_r = E_r[sl_r], i_r[sl_r]
        tail_r = None if tail_r is None else tail_r[sl_r]
    pts = max(10, min(E_f_all.size, E_r_all.size) // 15)
    if E_r.size < 4 * min_points:
        flags.append(
            Flag(
                "NO_REVERSE_PEAK",
                f"the reverse sweep has only {E_r.size} points, too few to locate a peak",
                "error",
            )
        )
        return finish()
    jump, i_switch, _ = pf.switch_step(E_f_all, i_f_all, E_r_all, i_r_all, E_lam, points=pts)
    tail_at_switch = None if tail is None else tail.forward[-1:]
    isp0 = s * (i_switch - float(base(np.array([E_lam]), tail_at_switch)[0]))
    # zero-faradaic level of the reverse sweep: forward baseline + charging step
    y_r = base.residual(E_r, i_r, -s, tail_r, shift=jump)
    tail_rev, var_tail = None, 0.0
    if window_V is not None and not switch_inside and (sl_r.start or 0) > 0:
        # another wave's reverse peak comes first on the reverse sweep and its decay runs
        # under this reverse peak: its amplitude is fitted (line, foot and that decay) to
        # the reverse sweep's own foot inside the window jointly with the other wave's
        # decay before the window, and the decay alone is removed
        found = _other_wave_decay(
            voltammogram, rev, -s * i_r_all, sl_r.start or 0, s, other_kappa, forward=False
        )
        if found is not None:
            shape, begin = found
            ext = slice(begin, sl_r.stop)
            shape_r = shape[rev.start : rev.stop + 1]
            *_, base_r, _ = pf.foot_window(
                E_r_all[ext],
                i_r_all[ext],
                -s,
                sigma,
                kappa_per_V=kappa,
                skip=2,
                min_points=min_points,
                foot_fraction=FOOT_FRACTION,
                tail=shape_r[ext],
            )
            if base_r.coef.size == 3:
                tail_rev = shape_r[sl_r]
                y_r = y_r + s * float(base_r.coef[2]) * tail_rev
                var_tail = float(base_r.cov[2, 2])
    peak_r, why = _locate(
        E_r, y_r, sigma, rev_name, half_width_V=half_width, against_baseline=False
    )
    if peak_r is None:
        flags.append(Flag("NO_REVERSE_PEAK", why, "error"))
        return finish()
    i_fwd = peak_f.height_A
    ratio = peak_r.height_A / i_fwd + _NICHOLSON_ISP * isp0 / i_fwd + _NICHOLSON_CONST
    i_rev = ratio * i_fwd
    if not i_rev > MIN_HEIGHT_SNR * sigma:
        flags.append(
            Flag(
                "NO_REVERSE_PEAK",
                f"the {rev_name} peak height against the decaying forward current is "
                f"{i_rev:.3g} A, less than {MIN_HEIGHT_SNR:g} times the noise SD {sigma:.3g} A",
                "error",
            )
        )
        return finish()
    # half-peak potential of the reverse wave: half the Nicholson height below its top,
    # taking the decaying forward current as level across the rising part of the wave
    E_half_peak_r = pf.rising_crossing(E_r, y_r, int(y_r.argmax()), peak_r.height_A - 0.5 * i_rev)
    X_r = base.design(E_r[peak_r.index], _sub(tail_r, peak_r.index))
    g_base_r = s * (peak_r.grad_y @ X_r)
    var_r_noise = sigma**2 * float(peak_r.grad_y @ peak_r.grad_y)
    g_base = 0.5 * (g_base_f + g_base_r)
    var_half = 0.25 * (var_f_noise + var_r_noise) + float(g_base @ base.cov @ g_base)
    if tail_rev is not None:  # the other wave's fitted decay, removed under this peak
        g_tail = s * float(peak_r.grad_y @ tail_rev[peak_r.index])
        var_half += 0.25 * g_tail**2 * var_tail

    at_rest = fwd.start == 0
    if at_rest and not switch_inside:
        flags.append(
            Flag(
                "CURRENT_RATIO_NOT_DETERMINED",
                f"the switching potential ({E_lam:.3f} V) lies outside the window "
                f"[{low:.3f}, {high:.3f}] V, so the forward current at the switch belongs to "
                f"another wave: the {rev_name} peak height and the current ratio are not "
                "reported (E½ and ΔEp are)",
                "warning",
            )
        )
        ratio = i_rev = E_half_peak_r = None
    if not at_rest:
        # Nicholson's relation was derived for a forward sweep that starts at rest
        flags.append(
            Flag(
                "CURRENT_RATIO_NOT_DETERMINED",
                f"cycle {cyc.number} starts on the decaying current of the sweep before it, "
                "while Nicholson's ratio relation holds for a forward sweep that starts at "
                f"rest: the {rev_name} peak height and the current ratio are not reported "
                "(E½ and ΔEp are); analyse cycle 1 for the ratio",
                "warning",
            )
        )
        ratio = i_rev = E_half_peak_r = None
    if s > 0:
        result.update(Epc_V=peak_r.E_V, ipc_A=i_rev, Ep_half_c_V=E_half_peak_r)
        E_ox, E_red = peak_f.E_V, peak_r.E_V
    else:
        result.update(Epa_V=peak_r.E_V, ipa_A=i_rev, Ep_half_a_V=E_half_peak_r)
        E_ox, E_red = peak_r.E_V, peak_f.E_V
    result.update(
        E_half_V=0.5 * (E_ox + E_red),
        E_half_stderr_V=math.sqrt(max(var_half, 0.0)),
        delta_Ep_V=E_ox - E_red,
        current_ratio=ratio,
    )
    return finish()
