"""``cvfit simulate --series --added-mL …``: a titration by additions, the metal diluted.

Kept apart from :mod:`cvfit.cli.simulate` (which calls :func:`handle_additions` when
``--added-mL`` is given); the simulation itself is
:func:`cvfit.simulate.addition_series.simulate_addition_series`.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path

from cvfit.errors import InputError, OutputError, SimulationError

_CMD = "<command line>"

__all__ = ["add_addition_options", "wants_additions", "handle_additions"]


def add_addition_options(a: Callable[..., object]) -> None:
    """The options of a titration by additions (added to ``cvfit simulate``)."""
    a("--added-mL", metavar="LIST", help="series: a titration by additions — cumulative "
      "volume of ligand stock added before each file, mL (comma list; 0 for the "
      "ligand-free start)")  # fmt: skip
    a("--start-volume-mL", metavar="mL", default="10", help="additions: volume in the cell "
      "before any addition, mL (default 10)")  # fmt: skip
    a("--metal-M", metavar="mol/L", help="additions: the cell's initial total metal, mol/L "
      "(default: --concentration)")  # fmt: skip
    a("--ligand-stock-M", metavar="mol/L", help="additions: ligand concentration of the "
      "stock, mol/L (required with --added-mL)")  # fmt: skip


def wants_additions(args: argparse.Namespace) -> bool:
    """Whether ``--series`` asks for a titration by additions.

    Raises
    ------
    InputError
        ``--added-mL`` with options it does not go with (a single record, another kind of
        series, another technique, an internal standard), or an addition option without it.
    """
    if args.added_mL is None:
        for flag, given in (
            ("--metal-M", args.metal_M),
            ("--ligand-stock-M", args.ligand_stock_M),
        ):
            if given is not None:
                raise InputError(f"{flag} describes a titration by additions: give --series "
                                 "--added-mL LIST too", source=_CMD, key=flag)  # fmt: skip
        return False
    others = (
        ("--series", not args.series), ("--ligand-M", args.ligand_M is not None),
        ("--pH-values", args.pH_values is not None),
        ("--temperatures-C", args.temperatures_C is not None),
        ("--technique", args.technique != "cv"),
        ("--standard-e-half", args.standard_e_half is not None),
    )  # fmt: skip
    for flag, clash in others:
        if clash:
            what = "needs --series" if flag == "--series" else f"does not go with {flag}"
            raise InputError(f"--added-mL {what} (a cyclic-voltammetry titration by additions)",
                             source=_CMD, key="--added-mL")  # fmt: skip
    return True


def handle_additions(
    args: argparse.Namespace,
    E_half: float,
    settings: dict,
    noise: float,
    seed: int | None,
    out: Path,
    number: Callable[..., float],
    numbers: Callable[[str | None, str], list[float]],
    window: Callable[[argparse.Namespace, float, float], tuple[float, list[float]]],
    check_size: Callable[[list[float], float, list[float]], None],
) -> int:
    """Simulate and write the series; *check_size* refuses one too large to write."""
    from cvfit.simulate.addition_series import addition_solutions, simulate_addition_series

    adds = numbers(args.added_mL, "--added-mL")
    if not adds or min(adds) < 0:
        raise InputError("--added-mL needs one or more volumes >= 0 mL", source=_CMD,
                         key="--added-mL")  # fmt: skip
    if args.ligand_stock_M is None:
        raise InputError("--added-mL needs --ligand-stock-M (the stock's ligand, mol/L)",
                         source=_CMD, key="--ligand-stock-M")  # fmt: skip
    stock = number(args.ligand_stock_M, "--ligand-stock-M", minimum=0.0, strict=True)
    v0 = number(args.start_volume_mL, "--start-volume-mL", minimum=0.0, strict=True)
    metal = settings.pop("concentration_M")
    if args.metal_M is not None:
        metal = number(args.metal_M, "--metal-M", minimum=0.0, strict=True)
    beta_ox = numbers(args.log_beta_ox, "--log-beta-ox")
    beta_red = numbers(args.log_beta_red, "--log-beta-red")
    electrons = settings.pop("electrons")
    cell = {"start_volume_mL": v0, "metal_M": metal, "ligand_stock_M": stock}
    solutions = addition_solutions(
        adds, **cell, E_half_free_V=E_half, log10_beta_ox=beta_ox, log10_beta_red=beta_red,
        electrons=electrons, temperature_K=settings["temperature_K"],
        bulk_form=settings["initial_species"],
    )  # fmt: skip
    halves = [s.E_half_V for s in solutions]
    start, switch = window(args, min(halves), max(halves))
    check_size([s.dilution.ligand_M for s in solutions], start, switch)
    try:
        manifest = simulate_addition_series(
            out, added_mL=adds, **cell, E_half_free_V=E_half, log10_beta_ox=beta_ox,
            log10_beta_red=beta_red, electrons=electrons, title=args.title,
            noise_fraction=noise, seed=seed, overwrite=bool(args.force), start_V=start,
            switch_V=switch if len(switch) > 1 else switch[0], **settings,
        )  # fmt: skip
    except SimulationError as exc:
        raise InputError.from_simulation(exc) from None
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(out)) from None
    first, last = solutions[0].dilution, solutions[-1].dilution
    sys.stdout.write(
        f"wrote {manifest} and {len(adds)} voltammograms: {min(adds):g}–{max(adds):g} mL of "
        f"{stock:g} M ligand into {v0:g} mL, metal {first.metal_M:.4g} → {last.metal_M:.4g} M, "
        f"E½ from {min(halves):.4f} to {max(halves):.4f} V\n"
    )
    return 0
