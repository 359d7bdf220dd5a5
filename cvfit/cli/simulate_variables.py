"""``cvfit simulate --series`` of a pH series or a temperature series.

A pH series (``--e-half`` is then E° of the unprotonated couple)::

    cvfit simulate --series --out DIR --e-half 0.10 --pH-values 2,3,4,5,6,7,8,9,10 \
        --pKa-ox 4.0 --pKa-red 7.5

A temperature series (``--e-half`` is E½ at ``--temperature-C``)::

    cvfit simulate --series --out DIR --e-half 0.10 --temperatures-C 15,20,25,30,35,40,45 \
        --entropy 80
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path

from cvfit.errors import InputError, SimulationError

_CMD = "<command line>"

__all__ = ["add_variable_options", "wants_variable_series", "handle_variable_series"]


def add_variable_options(a: Callable[..., object]) -> None:
    """The options of a pH or temperature series (added to ``cvfit simulate``)."""
    a("--pH-values", metavar="LIST", help="series: a pH series at these pH values (comma list)")
    a(
        "--pKa-ox",
        metavar="LIST",
        default="",
        help="pH series: pKa_1, pKa_2 … of the oxidised "
        "form, j counted from the unprotonated form (comma list; default: not protonated)",
    )
    a("--pKa-red", metavar="LIST", default="", help="pH series: pKa_1, pKa_2 … of the reduced "
      "form (comma list; default: not protonated)")  # fmt: skip
    a("--temperatures-C", metavar="LIST", help="series: a temperature series, one file per "
      "temperature in °C (comma list); --e-half is E½ at --temperature-C")  # fmt: skip
    a("--entropy", metavar="J/(mol K)", default="0", help="temperature series: reaction "
      "entropy ΔS°rc = nF dE½/dT (default 0)")  # fmt: skip


def wants_variable_series(args: argparse.Namespace) -> bool:
    """Whether ``--series`` asks for a pH or a temperature series."""
    return args.pH_values is not None or args.temperatures_C is not None


def handle_variable_series(
    args: argparse.Namespace,
    E_half: float,
    settings: dict,
    noise: float,
    seed: int | None,
    out: Path,
    number: Callable[..., float],
    numbers: Callable[[str | None, str], list[float]],
    check_size: Callable[[dict, int], None],
) -> int:
    """Write the pH or temperature series asked for; returns the exit status.

    *number* and *numbers* read a number and a comma list of the command line (with their
    bounds), *check_size* refuses a series too large to write before anything is computed
    (``cvfit simulate``'s limits).
    """
    from cvfit.simulate.variable_series import simulate_pH_series, simulate_temperature_series
    from cvfit.units import FARADAY, ZERO_CELSIUS_K

    if args.pH_values is not None and args.temperatures_C is not None:
        raise InputError("give --pH-values or --temperatures-C, not both", source=_CMD,
                         key="--pH-values")  # fmt: skip
    if args.ligand_M is not None:
        raise InputError("a pH or temperature series has no --ligand-M list", source=_CMD,
                         key="--ligand-M")  # fmt: skip
    if out.exists() and not out.is_dir():
        raise InputError(f"--out {out} exists and is not a folder", source=_CMD, key="--out")
    settings = dict(settings)
    electrons = settings.pop("electrons")
    try:
        if args.pH_values is not None:
            values = numbers(args.pH_values, "--pH-values")
            ox, red = numbers(args.pKa_ox, "--pKa-ox"), numbers(args.pKa_red, "--pKa-red")
            _within(values, "--pH-values", 0.0, 14.0)
            _within([*ox, *red], "--pKa-ox/--pKa-red", *PKA_RANGE)
            halves = _proton_halves(E_half, values, ox, red)
            window = _window(args, min(halves), max(halves), number)
            check_size(window, len(values))
            manifest = simulate_pH_series(
                out, pH=values, E0_V=E_half, pKa_ox=ox, pKa_red=red, electrons=electrons,
                title=args.title, noise_fraction=noise, seed=seed, overwrite=bool(args.force),
                **window, **settings,
            )  # fmt: skip
            what = f"pH {min(values):g}–{max(values):g}, pKa ox {ox}, pKa red {red}"
        else:
            values = numbers(args.temperatures_C, "--temperatures-C")
            at_C = settings.pop("temperature_K") - ZERO_CELSIUS_K
            entropy = number(args.entropy, "--entropy")
            _within(values, "--temperatures-C", 0.0, 100.0)
            _within([entropy], "--entropy", *ENTROPY_RANGE)
            span = abs(entropy) / (electrons * FARADAY) * max(abs(t - at_C) for t in values)
            window = _window(args, E_half - span, E_half + span, number)
            check_size(window, len(values))
            manifest = simulate_temperature_series(
                out, temperature_C=values, E_half_V=E_half, entropy_J_mol_K=entropy,
                at_C=at_C, electrons=electrons, title=args.title, noise_fraction=noise,
                seed=seed, overwrite=bool(args.force), **window, **settings,
            )  # fmt: skip
            what = f"{min(values):g}–{max(values):g} °C, ΔS°rc = {entropy:g} J/(mol K)"
    except SimulationError as exc:
        raise InputError.from_simulation(exc) from None
    sys.stdout.write(f"wrote {manifest} and {len(values)} voltammograms: {what}\n")
    return 0


def _proton_halves(E0: float, pH: list[float], ox: list[float], red: list[float]) -> list[float]:
    from cvfit.chemistry.protonation import proton_half_wave_V

    return [float(e) for e in proton_half_wave_V(E0, pH, pKa_ox=ox, pKa_red=red)]


#: pKa and reaction entropies (J mol⁻¹ K⁻¹) accepted: wider than any known couple, narrow
#: enough that nothing of the simulation overflows.
PKA_RANGE = (-10.0, 30.0)
ENTROPY_RANGE = (-1000.0, 1000.0)


def _within(values: list[float], flag: str, lo: float, hi: float) -> None:
    if not values or any(not lo <= v <= hi for v in values):
        raise InputError(
            f"{flag} must give numbers within {lo:g} to {hi:g}, got {values}", source=_CMD,
            key=flag,
        )  # fmt: skip


#: The default sweep reaches this far beyond every E½ of the series, V.
_MARGIN_V = 0.35


def _window(args: argparse.Namespace, lo: float, hi: float, number) -> dict:
    """start_V and switch_V: as given, else :data:`_MARGIN_V` beyond every E½ of the series."""
    red_first = args.initial == "red"
    if args.start is not None:
        start = number(args.start, "--start")
    else:
        start = lo - _MARGIN_V if red_first else hi + _MARGIN_V
    if args.switch:
        switch = [number(v, "--switch") for item in args.switch for v in str(item).split(",")]
    else:
        switch = [hi + _MARGIN_V if red_first else lo - _MARGIN_V]
    return {"start_V": start, "switch_V": switch if len(switch) > 1 else switch[0]}
