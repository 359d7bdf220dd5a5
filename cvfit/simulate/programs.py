"""Potential programs beyond the triangular sweep: pulses, square waves, steady-state waves.

The finite-difference kernel (:func:`cvfit.simulate.finite_difference.march`) takes any
sampled applied potential; this module builds the programs and runs the kernel over them.

* A **step program** is a sequence of constant potentials, each held for its duration: a
  differential-pulse staircase (:func:`dpv_program`) or a square wave on a staircase
  (:func:`swv_program`). Each held level is marched with time steps that start small and
  double (as a quiet time is, :func:`cvfit.simulate.finite_difference.hold_steps`), so the
  current that falls as 1/√t after every step is followed closely; the current is sampled
  at the end of each level. The record holds one point per staircase step: the base
  potential and the difference of two sampled currents.
* A **wave** (:func:`simulate_wave`) is a slow linear sweep at a rotating disc, in the
  Nernst diffusion-layer model: diffusion across a stagnant layer of thickness δ (the
  Levich thickness for the rotation rate) with the bulk held at its outer edge, which
  reaches a steady state; the limiting current is then nFADC/δ ∝ ω½.

No charging current (pulse currents are sampled after it has decayed) and no ohmic drop.

References
----------
Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634 (differential pulse).
Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209 (square wave).
Levich, V. G. Physicochemical Hydrodynamics; Prentice-Hall, 1962 (the rotating disc).
Britz, D.; Strutwolf, J. Digital Simulation in Electrochemistry, 4th ed.; Springer, 2016,
ch. 8 (exponentially expanding time intervals).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from cvfit.errors import SimulationError
from cvfit.simulate import finite_difference as _kernel
from cvfit.units import FARADAY, GAS_CONSTANT
from cvfit.voltammogram import Voltammogram

__all__ = [
    "StepProgram",
    "PulseSimulation",
    "dpv_program",
    "swv_program",
    "simulate_pulse",
    "simulate_wave",
    "levich_layer_cm",
    "MAX_PROGRAM_STEPS",
]

#: Most staircase steps one program may have (each costs some 100 kernel steps).
MAX_PROGRAM_STEPS = 20_000
#: Sub-segments per held level, each doubling the time step of the one before, and the
#: steps in each: 24 steps keep the end of a Cottrell transient within 0.02 % (8: 0.2 %).
_SEGMENTS = 6
_STEPS = 24
#: Kinematic viscosity of water at 25 °C, cm²/s (rotating-disc default).
WATER_VISCOSITY_CM2_S = 0.00893


@dataclass(frozen=True)
class StepProgram:
    """A piecewise-constant potential program and how its record is sampled.

    Attributes
    ----------
    technique : {"dpv", "swv"}
        The program's kind.
    levels_V, durations_s : ndarray
        The potential held in each segment, V, and for how long, s (in order).
    base_V : ndarray
        The staircase (base) potential of each record point, V.
    first, second : ndarray of int
        Segments whose end currents make each record point: current = i(first) −
        i(second) (DPV: the pulse and the base just before it; SWV: the forward and the
        reverse half-cycle).
    """

    technique: Literal["dpv", "swv"]
    levels_V: np.ndarray
    durations_s: np.ndarray
    base_V: np.ndarray
    first: np.ndarray
    second: np.ndarray

    @property
    def end_times_s(self) -> np.ndarray:
        """Time at the end of each segment, s."""
        return np.cumsum(self.durations_s)


def _staircase(start_V: float, stop_V: float, step_V: float) -> np.ndarray:
    step = abs(_number("step_V", step_V))
    if not step > 0:
        raise SimulationError(f"step_V must be non-zero, got {step_V!r}")
    span = _number("stop_V", stop_V) - _number("start_V", start_V)
    count = int(math.floor(abs(span) / step + 1e-9)) + 1
    if count > MAX_PROGRAM_STEPS:
        raise SimulationError(
            f"{count} staircase steps asked for (at most {MAX_PROGRAM_STEPS}); use a larger "
            "step or a narrower range"
        )
    if count < 10:
        raise SimulationError(
            "the range holds fewer than 10 steps; widen it or use a smaller step"
        )
    return start_V + math.copysign(step, span) * np.arange(count)


def _number(name: str, value: object, *, positive: bool = False) -> float:
    try:
        x = float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        raise SimulationError(f"{name} must be a number, got {value!r}") from None
    if not math.isfinite(x) or (positive and not x > 0):
        need = "a finite positive number" if positive else "finite"
        raise SimulationError(f"{name} must be {need}, got {value!r}")
    return x


def dpv_program(
    start_V: float,
    stop_V: float,
    *,
    step_V: float,
    pulse_amplitude_V: float,
    pulse_width_s: float,
    period_s: float,
) -> StepProgram:
    """The differential-pulse program: each period holds the base potential for
    ``period_s − pulse_width_s``, then the base plus ``pulse_amplitude_V`` for
    ``pulse_width_s``; the base then steps by ``step_V`` towards *stop_V*.

    The record's current is the current at the end of the pulse less the current just
    before it. The amplitude is signed and goes in the scan's direction (a cathodic scan
    has a negative amplitude).
    """
    base = _staircase(start_V, stop_V, step_V)
    dE = _number("pulse_amplitude_V", pulse_amplitude_V)
    width = _number("pulse_width_s", pulse_width_s, positive=True)
    period = _number("period_s", period_s, positive=True)
    if not width < period:
        raise SimulationError("pulse_width_s must be shorter than period_s")
    if dE == 0.0 or (dE > 0) != (base[-1] > base[0]):
        raise SimulationError(
            "pulse_amplitude_V must be non-zero and go in the scan's direction (negative for "
            "a scan towards negative potentials)"
        )
    levels = np.column_stack([base, base + dE]).ravel()
    durations = np.tile([period - width, width], base.size)
    k = np.arange(base.size)
    return StepProgram("dpv", levels, durations, base, 2 * k + 1, 2 * k)


def swv_program(
    start_V: float, stop_V: float, *, step_V: float, amplitude_V: float, frequency_Hz: float
) -> StepProgram:
    """The square-wave program: on each staircase step a forward half-cycle at the base
    plus ``amplitude_V`` in the scan's direction, then a reverse half-cycle at the base
    minus it, each ``1/(2·frequency_Hz)`` long. The record's current is the net current:
    forward less reverse, each sampled at the end of its half-cycle."""
    base = _staircase(start_V, stop_V, step_V)
    amp = _number("amplitude_V", amplitude_V, positive=True)
    half = 0.5 / _number("frequency_Hz", frequency_Hz, positive=True)
    sign = 1.0 if base[-1] > base[0] else -1.0
    levels = np.column_stack([base + sign * amp, base - sign * amp]).ravel()
    durations = np.full(levels.size, half)
    k = np.arange(base.size)
    return StepProgram("swv", levels, durations, base, 2 * k, 2 * k + 1)


@dataclass(frozen=True)
class _Couple:
    """The couple and electrode as the kernel takes them (mol/cm³, cm, s)."""

    grid: _kernel.Grid
    D_ox: float
    D_red: float
    bulk_ox: float
    bulk_red: float
    E_formal_V: float
    nf: float
    k0: float
    alpha: float
    nFA: float
    ops: dict[float, tuple[_kernel.SpeciesOperator, _kernel.SpeciesOperator]] = field(
        default_factory=dict
    )

    def operators(self, dt: float) -> tuple[_kernel.SpeciesOperator, _kernel.SpeciesOperator]:
        got = self.ops.get(dt)
        if got is None:
            o = _kernel.species_operator(self.grid, self.D_ox, dt)
            r = (
                o
                if self.D_red == self.D_ox
                else _kernel.species_operator(self.grid, self.D_red, dt)
            )
            got = self.ops[dt] = (o, r)
        return got


def _hold_level(
    couple: _Couple, E_V: float, duration_s: float, cO: np.ndarray, cR: np.ndarray
) -> tuple[np.ndarray, np.ndarray, float]:
    """March one held level from the profiles (cO, cR); the profiles and current at its end."""
    first = duration_s / (_STEPS * (2.0**_SEGMENTS - 1.0))
    current = 0.0
    for s in range(_SEGMENTS):
        dt = first * 2.0**s
        res = _kernel.march(
            np.full(_STEPS + 1, E_V), dt, grid=couple.grid, D_ox_cm2_s=couple.D_ox,
            D_red_cm2_s=couple.D_red, bulk_ox_mol_cm3=couple.bulk_ox,
            bulk_red_mol_cm3=couple.bulk_red, E_formal_V=couple.E_formal_V,
            nf_per_V=couple.nf, k0_cm_s=couple.k0, alpha=couple.alpha, resistance_ohm=0.0,
            double_layer_F=0.0, nFA_C_per_mol=couple.nFA, operators=couple.operators(dt),
            initial_O_mol_cm3=cO, initial_R_mol_cm3=cR,
        )  # fmt: skip
        cO, cR, current = res.final_O_mol_cm3, res.final_R_mol_cm3, float(res.faradaic_A[-1])
    return cO, cR, current


def _couple(
    *, E_half_V: float, electrons: int, k0_cm_s: float | None, alpha: float, D_ox_cm2_s: float,
    D_red_cm2_s: float | None, concentration_M: float, initial_species: str, area_cm2: float,
    temperature_K: float, length_cm: float, first_cm: float, ratio: float, planar: bool,
) -> _Couple:  # fmt: skip
    if isinstance(electrons, bool) or not isinstance(electrons, int) or electrons < 1:
        raise SimulationError(f"electrons must be a whole number >= 1, got {electrons!r}")
    DO = _number("D_ox_cm2_s", D_ox_cm2_s, positive=True)
    DR = DO if D_red_cm2_s is None else _number("D_red_cm2_s", D_red_cm2_s, positive=True)
    C = _number("concentration_M", concentration_M, positive=True) / 1000.0
    a = _number("alpha", alpha)
    if not 0.0 < a < 1.0:
        raise SimulationError(f"alpha must lie strictly between 0 and 1, got {alpha!r}")
    if initial_species not in ("ox", "red"):
        raise SimulationError(f"initial_species must be 'ox' or 'red', got {initial_species!r}")
    nf = (
        electrons
        * FARADAY
        / (GAS_CONSTANT * _number("temperature_K", temperature_K, positive=True))
    )
    # E½ of a reversible wave: E°' + (RT/2nF) ln(D_R/D_O) under semi-infinite diffusion,
    # E°' + (RT/nF) ln(D_R/D_O) across one diffusion layer of both forms
    E_formal = E_half_V - (0.5 if planar else 1.0) / nf * math.log(DR / DO)
    grid = _kernel.Grid.expanding(first_cm, ratio, length_cm)
    if grid.x_cm.size > 1000:
        raise SimulationError("the space grid would need more than 1000 points")
    k0 = 0.0 if k0_cm_s is None else _number("k0_cm_s", k0_cm_s, positive=True)
    return _Couple(
        grid, DO, DR, C if initial_species == "ox" else 0.0, 0.0 if initial_species == "ox" else C,
        E_formal, nf, k0, a, electrons * FARADAY * _number("area_cm2", area_cm2, positive=True),
    )  # fmt: skip


@dataclass(frozen=True)
class PulseSimulation:
    """A simulated pulse record and its two sampled currents.

    Attributes
    ----------
    record : Voltammogram
        Base potential and difference (DPV) or net (SWV) current, with background and noise.
    first_A, second_A : ndarray
        The two sampled currents of each point (DPV: pulse, base; SWV: forward, reverse);
        the record's background and noise are in the first, so first − second is the
        record's current.
    program : StepProgram
        The program simulated.
    """

    record: Voltammogram
    first_A: np.ndarray
    second_A: np.ndarray
    program: StepProgram


def simulate_pulse(
    program: StepProgram,
    *,
    E_half_V: float,
    electrons: int = 1,
    k0_cm_s: float | None = None,
    alpha: float = 0.5,
    D_ox_cm2_s: float = 1e-5,
    D_red_cm2_s: float | None = None,
    concentration_M: float = 1e-3,
    initial_species: Literal["ox", "red"] = "ox",
    area_cm2: float = 0.0707,
    temperature_K: float = 298.15,
    background_slope_A_per_V: float = 0.0,
    background_offset_A: float = 0.0,
    noise_fraction: float = 0.0,
    seed: int | None = None,
    source: str = "<simulated>",
) -> PulseSimulation:
    """Simulate a pulse record of a one-step couple at a planar electrode.

    Parameters
    ----------
    program : StepProgram
        From :func:`dpv_program` or :func:`swv_program`; the solution is at rest, at its
        bulk composition, when the program starts.
    E_half_V, electrons, k0_cm_s, alpha, D_ox_cm2_s, D_red_cm2_s, concentration_M,
    initial_species, area_cm2, temperature_K
        As :func:`cvfit.simulate.voltammogram.simulate_cv` (k0 None: Nernstian).
    background_slope_A_per_V, background_offset_A : float
        A sloping background ``offset + slope·E_base`` added to the record's current, A.
    noise_fraction : float
        Standard deviation of white Gaussian noise as a fraction of the largest magnitude
        of the noise-free record's current (its peak), ``default_rng(seed)``.

    References
    ----------
    Parry, E. P.; Osteryoung, R. A. Anal. Chem. 1965, 37, 1634.
    Osteryoung, J. G.; O'Dea, J. J. Electroanal. Chem. 1986, 14, 209.
    """
    total = float(np.sum(program.durations_s))
    shortest = float(np.min(program.durations_s))
    DO = _number("D_ox_cm2_s", D_ox_cm2_s, positive=True)
    DR = DO if D_red_cm2_s is None else _number("D_red_cm2_s", D_red_cm2_s, positive=True)
    first_step = shortest / (_STEPS * (2.0**_SEGMENTS - 1.0))
    couple = _couple(
        E_half_V=_number("E_half_V", E_half_V), electrons=electrons, k0_cm_s=k0_cm_s,
        alpha=alpha, D_ox_cm2_s=DO, D_red_cm2_s=DR, concentration_M=concentration_M,
        initial_species=initial_species, area_cm2=area_cm2, temperature_K=temperature_K,
        length_cm=6.0 * math.sqrt(max(DO, DR) * total),
        first_cm=0.5 * math.sqrt(min(DO, DR) * first_step), ratio=1.04, planar=True,
    )  # fmt: skip
    cO = np.full(couple.grid.x_cm.size, couple.bulk_ox)
    cR = np.full(couple.grid.x_cm.size, couple.bulk_red)
    ends = np.empty(program.levels_V.size)
    for k, (E, d) in enumerate(zip(program.levels_V, program.durations_s, strict=True)):
        cO, cR, ends[k] = _hold_level(couple, float(E), float(d), cO, cR)
    first, second = ends[program.first], ends[program.second]
    current = first - second
    times = program.end_times_s[np.maximum(program.first, program.second)]
    settings = {
        "generator": "cvfit.simulate.programs",
        "technique": program.technique,
        "E_half_V": repr(float(E_half_V)),
        "electrons": str(electrons),
        "kinetics": "nernstian" if k0_cm_s is None else "butler-volmer",
        "k0_cm_s": "none" if k0_cm_s is None else repr(float(k0_cm_s)),
        "alpha": repr(float(alpha)),
    }
    record = _finish(
        program.base_V, current, times, background_slope_A_per_V, background_offset_A,
        noise_fraction, seed, source, settings,
    )  # fmt: skip
    # the first sampled current carries the record's background and noise, so that the
    # written columns keep the record's current = first − second exactly
    return PulseSimulation(record, second + record.current_A, second, program)


def _finish(
    E: np.ndarray, current: np.ndarray, times: np.ndarray, slope: float, offset: float,
    noise_fraction: float, seed: int | None, source: str, settings: dict[str, str],
) -> Voltammogram:  # fmt: skip
    """The record with its sloping background and noise added."""
    noise = _number("noise_fraction", noise_fraction)
    if noise < 0:
        raise SimulationError(f"noise_fraction must be >= 0, got {noise_fraction!r}")
    out = (
        current
        + _number("background_offset_A", offset)
        + _number("background_slope_A_per_V", slope) * E
    )
    if noise > 0:
        sd = noise * float(np.max(np.abs(current)))
        out = out + np.random.default_rng(seed).normal(0.0, sd, out.size)
    settings.update(noise_fraction=repr(noise), seed="none" if seed is None else str(seed))
    return Voltammogram(
        potential_V=E, current_A=out, time_s=times, source=source, metadata=settings
    )


def levich_layer_cm(
    D_cm2_s: float, rotation_rate_rpm: float, viscosity_cm2_s: float = WATER_VISCOSITY_CM2_S
) -> float:
    """Thickness of the diffusion layer at a rotating disc, δ = 1.61 D⅓ ν⅙ ω^−½ (cm).

    References
    ----------
    Levich, V. G. Physicochemical Hydrodynamics; Prentice-Hall, 1962. Bard, A. J.;
    Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley, 2001, §9.3 (from memory).
    """
    omega = 2.0 * math.pi * _number("rotation_rate_rpm", rotation_rate_rpm, positive=True) / 60.0
    return 1.61 * D_cm2_s ** (1 / 3) * viscosity_cm2_s ** (1 / 6) / math.sqrt(omega)


def simulate_wave(
    *,
    E_half_V: float,
    start_V: float,
    stop_V: float,
    rotation_rate_rpm: float = 1600.0,
    scan_rate_V_s: float = 0.0005,
    step_V: float = 0.001,
    electrons: int = 1,
    k0_cm_s: float | None = None,
    alpha: float = 0.5,
    D_ox_cm2_s: float = 1e-5,
    D_red_cm2_s: float | None = None,
    concentration_M: float = 1e-3,
    initial_species: Literal["ox", "red"] = "ox",
    area_cm2: float = 0.0707,
    temperature_K: float = 298.15,
    background_slope_A_per_V: float = 0.0,
    background_offset_A: float = 0.0,
    noise_fraction: float = 0.0,
    seed: int | None = None,
    source: str = "<simulated>",
) -> Voltammogram:
    """A slow linear sweep at a rotating disc: a sigmoidal steady-state wave.

    Both forms diffuse across the Levich layer of the form in solution (:func:`levich_layer_cm`;
    the bulk is held at its outer edge), so a reversible wave is
    E = E½ + (RT/nF) ln((i_l − i)/i) with E½ = E°' + (RT/nF) ln(D_R/D_O) and i_l =
    nFADC/δ. The sweep is slow enough to stay at steady state when δ²/D is much shorter
    than the time the potential takes to cross the wave. Noise: *noise_fraction* of the
    limiting current.

    References
    ----------
    Heyrovský, J.; Ilkovič, D. Collect. Czech. Chem. Commun. 1935, 7, 198.
    Levich, V. G. Physicochemical Hydrodynamics; Prentice-Hall, 1962.
    """
    v = _number("scan_rate_V_s", scan_rate_V_s, positive=True)
    step = _number("step_V", step_V, positive=True)
    E0, E1 = _number("start_V", start_V), _number("stop_V", stop_V)
    count = int(math.floor(abs(E1 - E0) / step + 1e-9)) + 1
    if not 10 <= count <= 1_000_000:
        raise SimulationError(f"the sweep would have {count} points (10 to 1 000 000)")
    DO = _number("D_ox_cm2_s", D_ox_cm2_s, positive=True)
    D_bulk = DO if initial_species == "ox" or D_red_cm2_s is None else float(D_red_cm2_s)
    delta = levich_layer_cm(D_bulk, rotation_rate_rpm)
    couple = _couple(
        E_half_V=_number("E_half_V", E_half_V), electrons=electrons, k0_cm_s=k0_cm_s,
        alpha=alpha, D_ox_cm2_s=DO, D_red_cm2_s=D_red_cm2_s, concentration_M=concentration_M,
        initial_species=initial_species, area_cm2=area_cm2, temperature_K=temperature_K,
        length_cm=delta, first_cm=delta / 400.0, ratio=1.02, planar=False,
    )  # fmt: skip
    E = E0 + math.copysign(step, E1 - E0) * np.arange(count)
    dt = step / v
    res = _kernel.march(
        E, dt, grid=couple.grid, D_ox_cm2_s=couple.D_ox, D_red_cm2_s=couple.D_red,
        bulk_ox_mol_cm3=couple.bulk_ox, bulk_red_mol_cm3=couple.bulk_red,
        E_formal_V=couple.E_formal_V, nf_per_V=couple.nf, k0_cm_s=couple.k0,
        alpha=couple.alpha, resistance_ohm=0.0, double_layer_F=0.0, nFA_C_per_mol=couple.nFA,
    )  # fmt: skip
    current = np.array(res.faradaic_A)
    current[0] = current[1]  # the march starts at rest; a held start is at steady state
    settings = {
        "generator": "cvfit.simulate.programs",
        "technique": "wave",
        "E_half_V": repr(float(E_half_V)),
        "electrons": str(electrons),
        "rotation_rate_rpm": repr(float(rotation_rate_rpm)),
        "diffusion_layer_cm": repr(delta),
        "kinetics": "nernstian" if k0_cm_s is None else "butler-volmer",
        "k0_cm_s": "none" if k0_cm_s is None else repr(float(k0_cm_s)),
    }
    record = _finish(
        E, current, np.arange(count) * dt, background_slope_A_per_V, background_offset_A,
        noise_fraction, seed, source, settings,
    )  # fmt: skip
    return record
