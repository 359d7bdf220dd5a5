"""The Voltammogram record and its segmentation into sweeps and cycles.

Inside cvfit a voltammogram is always in SI units with the IUPAC sign convention
(anodic current positive). The importer converts; nothing downstream asks which
convention a file used.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from types import MappingProxyType
from typing import Literal

import numpy as np

from cvfit.errors import InputError

__all__ = ["Voltammogram", "Sweep", "Cycle", "turning_points", "potential_spikes"]

#: Fewest points a record may have and still be a voltammogram.
MIN_POINTS = 10


def _frozen_array(values: object, name: str, source: str) -> np.ndarray:
    if (
        type(values) is np.ndarray
        and values.dtype == np.float64
        and values.base is None
        and not values.flags.writeable
    ):
        # already a read-only array that is no view of anything (the importer's, or another
        # record's): sharing it cannot let a later write reach the record
        arr = values
    else:
        arr = np.array(values, dtype=float, copy=True)
    if arr.ndim != 1:
        raise InputError(f"{name} must be one-dimensional, got shape {arr.shape}", source=source)
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True)
class Voltammogram:
    """One recorded (or simulated) cyclic voltammogram.

    Attributes
    ----------
    potential_V : ndarray
        Applied potential, V, in recording order.
    current_A : ndarray
        Current, A, IUPAC sign (anodic positive).
    time_s : ndarray or None
        Time, s, if the file had a time column.
    scan_rate_V_s : float or None
        Scan rate, V/s, if known (manifest, simulator or derived from ``time_s``).
    source : str
        File name or a description, used in messages.
    metadata : mapping
        ``key: value`` lines found above the header, or simulator settings.
    """

    potential_V: np.ndarray
    current_A: np.ndarray
    time_s: np.ndarray | None = None
    scan_rate_V_s: float | None = None
    source: str = "<memory>"
    metadata: Mapping[str, str] = field(default_factory=dict)

    def __post_init__(self) -> None:
        src = self.source
        E = _frozen_array(self.potential_V, "potential", src)
        i = _frozen_array(self.current_A, "current", src)
        if E.size != i.size:
            raise InputError(
                f"potential and current have different lengths ({E.size} vs {i.size})",
                source=src,
            )
        if E.size < MIN_POINTS:
            raise InputError(
                f"only {E.size} data points; a voltammogram needs at least {MIN_POINTS}",
                source=src,
            )
        if not (np.all(np.isfinite(E)) and np.all(np.isfinite(i))):
            raise InputError("potential or current contains NaN or infinity", source=src)
        if float(np.ptp(E)) <= 0.0:
            raise InputError(
                "the potential is flat (does not change); check the potential column",
                source=src,
            )
        object.__setattr__(self, "potential_V", E)
        object.__setattr__(self, "current_A", i)
        if self.time_s is not None:
            t = _frozen_array(self.time_s, "time", src)
            if t.size != E.size:
                raise InputError("time column length differs from potential", source=src)
            if not np.all(np.isfinite(t)):
                raise InputError("time column contains NaN or infinity", source=src)
            if np.any(t[1:] < t[:-1]):  # a step back (no array of differences)
                raise InputError("time column decreases; check the time column", source=src)
            object.__setattr__(self, "time_s", t)
        if self.scan_rate_V_s is not None:
            v = float(self.scan_rate_V_s)
            if not (math.isfinite(v) and v > 0):
                raise InputError(f"scan rate must be positive, got {v} V/s", source=src)
            object.__setattr__(self, "scan_rate_V_s", v)
        object.__setattr__(self, "metadata", MappingProxyType(dict(self.metadata)))

    @property
    def n_points(self) -> int:
        """Number of recorded points."""
        return int(self.potential_V.size)

    @cached_property
    def _turns(self) -> tuple[int, ...]:
        # computed once per record (the arrays are read-only, so it cannot go stale);
        # cached_property writes the instance dict, which a frozen dataclass allows
        return tuple(turning_points(self.potential_V))

    def sweeps(self) -> tuple[Sweep, ...]:
        """The record split at its switching potentials into monotonic sweeps."""
        turns = self._turns
        out = []
        for k in range(len(turns) - 1):
            a, b = turns[k], turns[k + 1]
            d = 1 if self.potential_V[b] > self.potential_V[a] else -1
            out.append(Sweep(self, a, b, d))
        return tuple(out)

    def cycles(self) -> tuple[Cycle, ...]:
        """Pairs (forward sweep, reverse sweep) in recording order, numbered from 1."""
        sw = self.sweeps()
        window = float(np.ptp(self.potential_V))
        out = []
        for k in range(0, len(sw), 2):
            fwd = sw[k]
            rev = sw[k + 1] if k + 1 < len(sw) else None
            complete = (
                rev is not None and fwd.span_V >= 0.5 * window and rev.span_V >= 0.5 * window
            )
            out.append(Cycle(k // 2 + 1, fwd, rev, complete))
        return tuple(out)

    def cycle(self, which: int | Literal["last"] = "last") -> Cycle:
        """Select a cycle: 1-based number, or ``"last"`` for the last complete one.

        Raises
        ------
        InputError
            If the cycle does not exist or no complete cycle is present.
        """
        cyc = self.cycles()
        if which == "last":
            complete = [c for c in cyc if c.complete]
            if not complete:
                raise InputError(
                    "no complete cycle (forward and reverse sweep) found; the record must "
                    "contain a switching potential",
                    source=self.source,
                    key="cycle",
                )
            return complete[-1]
        if isinstance(which, bool) or not isinstance(which, int) or which < 1:
            raise InputError(
                f"cycle must be a whole number >= 1 or 'last', got {which!r}",
                source=self.source,
                key="cycle",
            )
        if which > len(cyc):
            raise InputError(
                f"cycle {which} asked for but the file holds {len(cyc)} cycle(s)",
                source=self.source,
                key="cycle",
            )
        return cyc[which - 1]

    def derived_scan_rate_V_s(self) -> float | None:
        """Scan rate from the time column: total |ΔE| over total Δt, or None."""
        if self.time_s is None:
            return None
        dt = float(self.time_s[-1] - self.time_s[0])
        if dt <= 0:
            return None
        return float(np.sum(np.abs(np.diff(self.potential_V)))) / dt

    def effective_scan_rate_V_s(self) -> float | None:
        """The given scan rate, else the one derived from the time column."""
        if self.scan_rate_V_s is not None:
            return self.scan_rate_V_s
        return self.derived_scan_rate_V_s()


@dataclass(frozen=True)
class Sweep:
    """A monotonic part of a voltammogram between two turning points (inclusive)."""

    parent: Voltammogram = field(repr=False)
    start: int
    stop: int
    direction: int  # +1 towards positive potentials (anodic), -1 towards negative

    @property
    def potential_V(self) -> np.ndarray:
        return self.parent.potential_V[self.start : self.stop + 1]

    @property
    def current_A(self) -> np.ndarray:
        return self.parent.current_A[self.start : self.stop + 1]

    @property
    def span_V(self) -> float:
        return float(abs(self.parent.potential_V[self.stop] - self.parent.potential_V[self.start]))


@dataclass(frozen=True)
class Cycle:
    """A forward sweep and the reverse sweep that follows it."""

    number: int
    forward: Sweep
    reverse: Sweep | None
    complete: bool

    @property
    def switching_potential_V(self) -> float:
        """Potential where the forward sweep turns."""
        return float(self.forward.parent.potential_V[self.forward.stop])


def potential_spikes(potential_V: np.ndarray) -> np.ndarray:
    """Indices of one-sample glitches: a sample that jumps away and straight back.

    A sample counts when both steps around it, of opposite sign, are larger than a
    quarter of the turning tolerance (0.5 % of the potential window) and than four times
    the mean step of the record, and its neighbours agree with each other within half
    that step. A real switching point is a step of the usual size; a plateau of repeated
    staircase values keeps the mean step large enough.
    """
    E = np.asarray(potential_V, dtype=float)
    if E.size < 3:
        return np.zeros(0, dtype=int)
    # absurd values (1e308) overflow to infinity, which makes no glitch: no warning
    with np.errstate(over="ignore", invalid="ignore"):
        steps = np.diff(E)
        size = np.abs(steps)
        limit = max(0.005 * float(np.ptp(E)), 4.0 * float(size.mean()))
        if not float(size.max()) > limit:  # the common case: no step large enough
            return np.zeros(0, dtype=int)
        big = np.flatnonzero(size[:-1] > limit)  # the step into sample k + 1 is large
        into, out = steps[big], steps[big + 1]
        smaller = np.minimum(np.abs(into), np.abs(out))
        back = (np.sign(into) != np.sign(out)) & (smaller > limit)
        back &= np.abs(into + out) < 0.5 * smaller
    return big[back] + 1


def _despiked(E: np.ndarray) -> np.ndarray:
    """*E* with each one-sample glitch set to its neighbours' mean (a copy), for finding
    the turns only; the record keeps its samples."""
    spikes = potential_spikes(E)
    if spikes.size == 0:
        return E
    out = E.copy()
    out[spikes] = 0.5 * (E[spikes - 1] + E[spikes + 1])
    return out


def turning_points(potential_V: np.ndarray, tolerance_V: float | None = None) -> list[int]:
    """Indices of the start, the switching points and the end of a potential record.

    A turn is declared where the potential retreats from its running extreme by more than
    ``tolerance_V`` (default: 2 % of the potential window), so noise and staircase steps
    do not split a sweep; a one-sample glitch (:func:`potential_spikes`) does not either.
    Cost is O(points) per turn, in vectorised NumPy.
    """
    E = _despiked(np.asarray(potential_V, dtype=float))
    n = E.size
    if n < 2:
        return [0, max(n - 1, 0)]
    window = float(np.ptp(E))
    tol = 0.02 * window if tolerance_V is None else float(tolerance_V)
    turns = [0]
    start = 0
    away = np.nonzero(np.abs(E - E[0]) > tol)[0]
    if away.size == 0:
        return [0, n - 1]
    direction = 1 if E[away[0]] > E[0] else -1
    while start < n - 1:
        seg = direction * E[start:]
        running = np.maximum.accumulate(seg)
        retreat = np.nonzero(seg < running - tol)[0]
        if retreat.size == 0:
            break
        j = int(retreat[0])
        turn = start + int(np.argmax(seg[: j + 1]))
        if turn <= start:
            break
        turns.append(turn)
        start = turn
        direction = -direction
    if turns[-1] != n - 1:
        turns.append(n - 1)
    return turns
