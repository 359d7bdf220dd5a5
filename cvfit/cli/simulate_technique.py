"""``cvfit simulate --technique dpv|swv|wave``: a pulse record or a steady-state wave, or a
titration series recorded by that technique.

One differential-pulse record from 0.2 V down to −0.5 V::

    cvfit simulate --technique dpv --e-half -0.15 --start 0.2 --stop -0.5 --out a.csv

A square-wave titration series with its manifest (``--e-half`` of the uncomplexed couple)::

    cvfit simulate --technique swv --series --out DIR --e-half -0.1 \
        --ligand-M 0,0.01,0.02,0.05,0.1 --log-beta-ox 5

The scan runs from ``--start`` to ``--stop`` (default: 0.3 V beyond every E½, from the
side where the bulk form does not react); the options of the cyclic sweep that a pulse
program or a wave has not (``--switch``, ``--cycles``, ``--cdl``, ``--resistance``, an
internal standard, pH and temperature series) are refused.
"""

from __future__ import annotations

import argparse
import math
import sys
from collections.abc import Callable
from pathlib import Path

from cvfit.errors import InputError, OutputError, SimulationError

_CMD = "<command line>"

TECHNIQUES = ("cv", "dpv", "swv", "wave")
#: Most staircase steps of one pulse record (``cvfit.simulate.programs.MAX_PROGRAM_STEPS``,
#: repeated so that the help loads no numerical library; a test holds them equal) and of
#: a whole pulse series (each step costs some 3 ms: the series stays under ~10 minutes).
MAX_PULSE_STEPS = 20_000
MAX_PULSE_SERIES_STEPS = 200_000
#: Fewest points of a record (the simulator's own floor).
MIN_POINTS = 10
#: Defaults of each technique's program (``cvfit.simulate.program_series.PROGRAM_DEFAULTS``,
#: repeated for the help; a test holds them equal).
DEFAULTS: dict[str, dict[str, float]] = {
    "dpv": {"step_V": 0.005, "pulse_amplitude_V": 0.05, "pulse_width_s": 0.05, "period_s": 0.5},
    "swv": {"step_V": 0.005, "amplitude_V": 0.025, "frequency_Hz": 25.0},
    "wave": {"step_V": 0.002, "scan_rate_V_s": 0.0005, "rotation_rate_rpm": 1600.0},
}
#: flag -> (program key, technique(s) that take it)
_PROGRAM_FLAGS = {
    "--amplitude": ("amplitude", ("dpv", "swv")),
    "--pulse-width": ("pulse_width_s", ("dpv",)),
    "--period": ("period_s", ("dpv",)),
    "--frequency": ("frequency_Hz", ("swv",)),
    "--rotation-rate": ("rotation_rate_rpm", ("wave",)),
    "--scan-rate": ("scan_rate_V_s", ("wave",)),
}
#: flag -> (lowest, highest) of the technique options, in the flag's unit (part of
#: ``cvfit simulate``'s bounds, which the *number* reader given to :func:`handle_technique`
#: applies).
TECHNIQUE_BOUNDS = {
    "--stop": (-10.0, 10.0),
    "--amplitude": (1e-4, 0.5),
    "--pulse-width": (1e-4, 10.0),
    "--period": (1e-3, 100.0),
    "--frequency": (0.1, 1e4),
    "--rotation-rate": (1.0, 1e5),
}
#: cyclic-sweep options (attribute, flag, value when not given) refused with a technique.
_CV_ONLY = (
    ("switch", "--switch", None),
    ("cycles", "--cycles", "1"),
    ("cdl", "--cdl", "0"),
    ("resistance", "--resistance", "0"),
    ("standard_e_half", "--standard-e-half", None),
    ("drift_step", "--drift-step", "0"),
    ("pH_values", "--pH-values", None),
    ("temperatures_C", "--temperatures-C", None),
    ("diffusion_ox_complexed", "--diffusion-ox-complexed", None),
    ("diffusion_red_complexed", "--diffusion-red-complexed", None),
)
#: Default reach of the scan beyond every E½, V.
_MARGIN_V = 0.3

TECHNIQUE_EPILOG = f"""\
pulse and wave techniques (--technique dpv|swv|wave): the scan runs from --start to --stop;
  a pulse record has {MIN_POINTS} to {MAX_PULSE_STEPS:,} staircase steps of --step, a pulse
  series at most {MAX_PULSE_SERIES_STEPS:,} in all; a wave at most the samples of a cyclic
  voltammogram; --amplitude 1e-4 to 0.5 V (DPV: the pulse goes in the scan's direction),
  --pulse-width 1e-4 to 10 s and shorter than --period (1e-3 to 100 s), --frequency 0.1 to
  1e4 Hz, --rotation-rate 1 to 1e5 rpm.
"""


def add_technique_options(a: Callable[..., object]) -> None:
    """The options of a pulse record or a wave (added to ``cvfit simulate``)."""
    a("--technique", choices=TECHNIQUES, default="cv", help="cv (default), dpv (differential "
      "pulse), swv (square wave) or wave (steady state at a rotating disc)")  # fmt: skip
    a("--stop", metavar="V", help="dpv/swv/wave: where the scan ends, V (default 0.3 V beyond "
      "the E½ values)")  # fmt: skip
    d, s, w = DEFAULTS["dpv"], DEFAULTS["swv"], DEFAULTS["wave"]
    a("--amplitude", metavar="V", help=f"dpv: pulse amplitude (default {d['pulse_amplitude_V']:g}"
      f"); swv: square-wave amplitude (default {s['amplitude_V']:g}), V, > 0")  # fmt: skip
    a("--pulse-width", metavar="s", help=f"dpv: pulse width, s (default {d['pulse_width_s']:g})")
    a("--period", metavar="s", help=f"dpv: pulse period, s (default {d['period_s']:g})")
    a("--frequency", metavar="Hz", help=f"swv: frequency, Hz (default {s['frequency_Hz']:g})")
    a("--rotation-rate", metavar="rpm", help="wave: disc rotation rate, rpm (default "
      f"{w['rotation_rate_rpm']:g})")  # fmt: skip


def handle_technique(
    args: argparse.Namespace,
    E_half: float,
    settings: dict,
    noise: float,
    seed: int | None,
    out: Path,
    number: Callable[..., float],
    numbers: Callable[[str | None, str], list[float]],
    check_series: Callable[[list[float], int], None],
    *,
    max_samples: int,
    check_out_file: Callable[[Path, bool], None],
) -> int:
    """Write the pulse record, wave or series asked for; returns the exit status.

    *settings* are ``cvfit simulate``'s couple settings; *number*, *numbers* read a number
    and a comma list with their bounds; *check_series* refuses a series ``cvfit run``
    cannot fit or too large to write (given the files and the samples of each);
    *max_samples* is the most samples of a wave, *check_out_file* refuses an output file
    that exists (unless forced) or cannot be written.
    """
    technique = args.technique
    _refuse_foreign(args, technique)
    program = _program(args, technique, number)
    couple = {k: v for k, v in settings.items() if k not in _SWEEP_KEYS}
    if args.series:
        if args.ligand_M is None:
            raise InputError("--series needs --ligand-M LIST", source=_CMD, key="--ligand-M")
        ligands = numbers(args.ligand_M, "--ligand-M")
        if not ligands or min(ligands) < 0:
            raise InputError("--ligand-M needs one or more concentrations >= 0 mol/L",
                             source=_CMD, key="--ligand-M")  # fmt: skip
        beta_ox = numbers(args.log_beta_ox, "--log-beta-ox")
        beta_red = numbers(args.log_beta_red, "--log-beta-red")
        halves = _halves(E_half, ligands, beta_ox, beta_red, couple)
    else:
        halves = [E_half]
    window = _scan(args, min(halves), max(halves), number)
    points = _points(technique, window, program["step_V"], max_samples)
    if args.series:
        check_series(ligands, points)
        if technique != "wave" and points * len(ligands) > MAX_PULSE_SERIES_STEPS:
            raise InputError(
                f"a {technique} series of {len(ligands)} files of {points:,} staircase steps is "
                f"more than cvfit simulate writes ({MAX_PULSE_SERIES_STEPS:,} steps in all); "
                "give fewer concentrations or a larger --step",
                source=_CMD,
                key="--ligand-M",
            )
        if out.exists() and not out.is_dir():
            raise InputError(f"--out {out} exists and is not a folder", source=_CMD, key="--out")
        return _write_series(args, technique, E_half, ligands, beta_ox, beta_red, window,
                             program, couple, noise, seed, out)  # fmt: skip
    check_out_file(out, bool(args.force))
    return _write_one(technique, E_half, window, program, couple, noise, seed, out)


#: Keys of ``cvfit simulate``'s settings that belong to the cyclic sweep.
_SWEEP_KEYS = ("scan_rate_V_s", "step_V", "cycles", "double_layer_F", "resistance_ohm")


def _refuse_foreign(args: argparse.Namespace, technique: str) -> None:
    """One-line errors for options the technique has not."""
    for attr, flag, unset in _CV_ONLY:
        if getattr(args, attr, unset) != unset:
            raise InputError(
                f"{flag} belongs to a cyclic voltammogram; --technique {technique} does not "
                "take it",
                source=_CMD,
                key=flag,
            )
    for flag, (_, takers) in _PROGRAM_FLAGS.items():
        if getattr(args, _attr(flag)) is not None and technique not in takers:
            raise InputError(
                f"{flag} is for --technique {' or '.join(takers)}, not {technique}",
                source=_CMD,
                key=flag,
            )


def _attr(flag: str) -> str:
    return flag[2:].replace("-", "_")


def _program(args: argparse.Namespace, technique: str, number: Callable[..., float]) -> dict:
    """The technique's program: the defaults overridden by the options given."""
    prog = dict(DEFAULTS[technique])
    if args.step is not None:
        prog["step_V"] = number(args.step, "--step", minimum=0.0, strict=True)
    for flag, (key, takers) in _PROGRAM_FLAGS.items():
        given = getattr(args, _attr(flag))
        if given is None or technique not in takers:
            continue
        x = number(given, flag, minimum=0.0, strict=True)
        if key == "amplitude":
            key = "pulse_amplitude_V" if technique == "dpv" else "amplitude_V"
        prog[key] = x
    if technique == "dpv" and not prog["pulse_width_s"] < prog["period_s"]:
        raise InputError(
            f"--pulse-width {prog['pulse_width_s']:g} s must be shorter than --period "
            f"{prog['period_s']:g} s",
            source=_CMD,
            key="--pulse-width",
        )
    return prog


def _halves(E_half: float, ligands, beta_ox, beta_red, couple: dict) -> list[float]:
    import numpy as np

    from cvfit.chemistry.complexation import complexed_half_wave_V

    got = complexed_half_wave_V(
        E_half, ligand_M=ligands, log10_beta_ox=beta_ox, log10_beta_red=beta_red,
        electrons=couple["electrons"], temperature_K=couple["temperature_K"],
    )  # fmt: skip
    return [float(x) for x in np.atleast_1d(got)]


def _scan(args: argparse.Namespace, lo: float, hi: float, number) -> tuple[float, float]:
    """(start, stop): as given, else :data:`_MARGIN_V` beyond every E½, from the side where
    the bulk form does not react."""
    red_first = args.initial == "red"
    if args.start is not None:
        start = number(args.start, "--start")
    else:
        start = lo - _MARGIN_V if red_first else hi + _MARGIN_V
    if args.stop is not None:
        stop = number(args.stop, "--stop")
    else:
        stop = hi + _MARGIN_V if red_first else lo - _MARGIN_V
    return start, stop


def _points(technique: str, window: tuple[float, float], step: float, max_samples: int) -> int:
    """Points (staircase steps) of one record; refused outside the simulator's limits."""
    n = int(math.floor(abs(window[1] - window[0]) / step + 1e-9)) + 1
    most = max_samples if technique == "wave" else MAX_PULSE_STEPS
    if not MIN_POINTS <= n <= most:
        what = "samples" if technique == "wave" else "staircase steps"
        raise InputError(
            f"this {technique} record would have {n:,} {what} ({window[0]:g} to "
            f"{window[1]:g} V in steps of {step:g} V); cvfit simulate takes {MIN_POINTS} to "
            f"{most:,}: change --start/--stop or --step",
            source=_CMD,
            key="--step",
        )
    return n


def _write_one(technique, E_half, window, program, couple, noise, seed, out) -> int:
    from cvfit.simulate.program_series import (
        COMPONENT_NAMES,
        simulate_technique_record,
        write_record_csv,
    )
    from cvfit.simulate.programs import PulseSimulation

    if technique == "dpv":  # signed: the pulse goes in the scan's direction
        program["pulse_amplitude_V"] = math.copysign(
            program["pulse_amplitude_V"], window[1] - window[0]
        )
    try:
        extra = {"noise_fraction": noise, "seed": seed, "source": str(out)}
        rec = simulate_technique_record(
            technique, E_half, window, program, {**couple, **extra}, None
        )
    except SimulationError as exc:
        raise InputError(str(exc), source=_CMD) from None
    try:
        if isinstance(rec, PulseSimulation):
            comps = (rec.first_A, rec.second_A)
            write_record_csv(rec.record, out, comps, COMPONENT_NAMES[technique])
            n = rec.record.n_points
        else:
            write_record_csv(rec, out)
            n = rec.n_points
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(out)) from None
    settings = ", ".join(f"{k} = {v:g}" for k, v in program.items())
    sys.stdout.write(f"wrote {out}: {technique}, {n} points, E½ = {E_half:.4f} V; {settings}\n")
    return 0


def _write_series(args, technique, E_half, ligands, beta_ox, beta_red, window, program, couple,
                  noise, seed, out) -> int:  # fmt: skip
    from cvfit.simulate.program_series import simulate_technique_series

    couple = dict(couple)
    electrons = couple.pop("electrons")
    try:
        manifest = simulate_technique_series(
            out, technique=technique, ligand_M=ligands, E_half_free_V=E_half,
            log10_beta_ox=beta_ox, log10_beta_red=beta_red, window_V=window,
            electrons=electrons, title=args.title, program=program, noise_fraction=noise,
            seed=seed, overwrite=bool(args.force), **couple,
        )  # fmt: skip
    except SimulationError as exc:
        raise InputError.from_simulation(exc) from None
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(out)) from None
    sys.stdout.write(
        f"wrote {manifest} and {len(ligands)} {technique} records over ligand "
        f"{min(ligands):g}–{max(ligands):g} M\n"
    )
    return 0
