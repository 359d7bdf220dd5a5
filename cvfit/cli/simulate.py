"""``cvfit simulate``: write a synthetic voltammogram, or a whole titration series.

One voltammogram::

    cvfit simulate --e-half 0.10 --start 0.45 --switch -0.25 --out cv.csv

A titration series with its manifest (``--e-half`` is then the uncomplexed couple's E½)::

    cvfit simulate --series --out DIR --e-half 0.10 --ligand-M 0,1e-3,1e-2 \
        --log-beta-ox 4.0,7.5 --log-beta-red 2.0

Existing files are never replaced unless ``--force`` is given.
"""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path

from cvfit.cli.simulate_variables import (
    add_variable_options,
    handle_variable_series,
    wants_variable_series,
)
from cvfit.errors import InputError, SimulationError

_CMD = "<command line>"
# half-width of the default potential window around the E½ values, V
_DEFAULT_MARGIN_V = 0.3


def _kelvin(celsius: float) -> float:
    from cvfit.units import celsius_to_kelvin

    return celsius_to_kelvin(celsius)


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "simulate",
        help="write a synthetic cyclic voltammogram (or a titration series) as CSV",
        description="Digital simulation of a cyclic voltammogram of a one-step couple; "
        "writes time_s,potential_V,current_A (anodic current positive).",
    )
    a = p.add_argument
    a(
        "--e-half",
        metavar="V",
        required=True,
        help="required: reversible half-wave potential, V (series: of the uncomplexed couple)",
    )
    a("--electrons", metavar="N", default="1", help="electrons n (default 1)")
    a("--scan-rate", metavar="V/s", default="0.1", help="scan rate, V/s (default 0.1)")
    a("--start", metavar="V", help="start potential, V (default E½ + 0.3 V; red: E½ − 0.3 V)")
    a(
        "--switch",
        metavar="V",
        action="append",
        help="switching potential, V; repeat or give a comma list for several vertices "
        "(write --switch=-0.3,0.4 when the list starts with a minus sign)",
    )
    a("--step", metavar="V", default="0.001", help="potential step between samples, V")
    a("--k0", metavar="cm/s", help="standard rate constant, cm/s (omitted: Nernstian)")
    a("--alpha", default="0.5", help="transfer coefficient (default 0.5)")
    a("--diffusion", metavar="cm2/s", default="1e-5", help="D of the oxidised form, cm²/s")
    a("--diffusion-red", metavar="cm2/s", help="D of the reduced form (default: --diffusion)")
    a(
        "--concentration",
        metavar="mol/L",
        default="1e-3",
        help="bulk concentration, mol/L as in manifests (default 1e-3, i.e. 1 mM)",
    )
    a("--initial", choices=("ox", "red"), default="ox", help="form present at the start")
    a("--area", metavar="cm2", default="0.0707", help="electrode area, cm² (default 0.0707)")
    a("--cycles", default="1", help="number of cycles (default 1)")
    a("--temperature-C", metavar="C", default="25", help="temperature, °C (default 25)")
    a(
        "--cdl",
        metavar="F",
        default="0",
        help="double-layer capacitance of the whole electrode, F — total, not per cm² "
        "(e.g. 20 µF/cm² × 0.0707 cm² = 1.4e-6; default 0)",
    )
    a("--slope", metavar="A/V", default="0", help="background slope, A/V (default 0)")
    a("--offset", metavar="A", default="0", help="background offset, A (default 0)")
    a("--resistance", metavar="ohm", default="0", help="uncompensated resistance, Ω")
    a("--noise", metavar="FRACTION", default="0", help="noise SD / Randles–Ševčík peak current")
    a("--seed", help="noise seed (whole number)")
    a("--series", action="store_true", help="write a titration series and its manifest")
    a("--ligand-M", metavar="LIST", help="series: ligand concentrations, mol/L, comma list")
    a(
        "--log-beta-ox",
        metavar="LIST",
        default="",
        help="series: overall log10 β_j of the oxidised form, j = 1, 2, … (comma list; "
        "β_j = [MLj]/([M][L]^j), not stepwise K_j; default: not complexed)",
    )
    a(
        "--log-beta-red",
        metavar="LIST",
        default="",
        help="series: overall log10 β_j of the reduced form, j = 1, 2, … (comma list)",
    )
    a("--diffusion-ox-complexed", metavar="cm2/s", help="series: D of the ox. complexes")
    a("--diffusion-red-complexed", metavar="cm2/s", help="series: D of the red. complexes")
    a(
        "--standard-e-half",
        metavar="V",
        help="series: add an internal reference couple with this E½ (V, electrode scale) to "
        "every file; the manifest then quotes potentials against it ([internal_standard])",
    )
    a(
        "--drift-step",
        metavar="V",
        default="0",
        help="series with --standard-e-half: SD of the reference electrode's random-walk drift "
        "from one solution to the next, V (default 0)",
    )
    add_variable_options(a)
    a("--title", default="simulated titration", help="series: title for the manifest")
    a("--out", metavar="FILE|DIR", help="output CSV file (series: output folder)")
    a("--force", action="store_true", help="replace existing output files")
    p.set_defaults(handler=handle)


def _number(text: object, flag: str, *, minimum: float | None = None, strict: bool = False):
    try:
        x = float(str(text).strip())
    except ValueError:
        raise InputError(f"{flag} needs a number, got {text!r}", source=_CMD, key=flag) from None
    if not math.isfinite(x):
        raise InputError(f"{flag} must be finite, got {text!r}", source=_CMD, key=flag)
    if minimum is not None and (x < minimum or (strict and x == minimum)):
        rel = ">" if strict else ">="
        raise InputError(f"{flag} must be {rel} {minimum:g}, got {text!r}", source=_CMD, key=flag)
    return x


#: Above this a --concentration is taken for a value in mM (the unit before mol/L).
_MAX_CONCENTRATION_M = 1.0


def _concentration(text: object) -> float:
    """--concentration in mol/L; a value above 1 mol/L is refused as a likely mM value."""
    c = _number(text, "--concentration", minimum=0, strict=True)
    if c > _MAX_CONCENTRATION_M:
        raise InputError(
            f"--concentration is in mol/L, got {c:g} mol/L; for {c:g} mM give {c * 1e-3:g}",
            source=_CMD,
            key="--concentration",
        )
    return c


def _optional_positive(text: object, flag: str) -> float | None:
    return None if text is None else _number(text, flag, minimum=0.0, strict=True)


def _whole(text: object, flag: str) -> int:
    try:
        k = int(str(text).strip())
    except ValueError:
        raise InputError(
            f"{flag} needs a whole number, got {text!r}", source=_CMD, key=flag
        ) from None
    return k


def _list(text: str | None, flag: str) -> list[float]:
    if text is None or not str(text).strip():
        return []
    return [_number(part, flag) for part in str(text).split(",") if part.strip()]


def _settings(args: argparse.Namespace) -> dict:
    electrons = _whole(args.electrons, "--electrons")
    if electrons < 1:
        raise InputError("--electrons must be >= 1", source=_CMD, key="--electrons")
    cycles = _whole(args.cycles, "--cycles")
    if cycles < 1:
        raise InputError("--cycles must be >= 1", source=_CMD, key="--cycles")
    alpha = _number(args.alpha, "--alpha", minimum=0.0, strict=True)
    if alpha >= 1.0:
        raise InputError("--alpha must lie between 0 and 1", source=_CMD, key="--alpha")
    return {
        "electrons": electrons,
        "scan_rate_V_s": _number(args.scan_rate, "--scan-rate", minimum=0.0, strict=True),
        "step_V": _number(args.step, "--step", minimum=0.0, strict=True),
        "k0_cm_s": None if args.k0 is None else _number(args.k0, "--k0", minimum=0, strict=True),
        "alpha": alpha,
        "D_ox_cm2_s": _number(args.diffusion, "--diffusion", minimum=0.0, strict=True),
        "D_red_cm2_s": None
        if args.diffusion_red is None
        else _number(args.diffusion_red, "--diffusion-red", minimum=0.0, strict=True),
        "concentration_M": _concentration(args.concentration),
        "initial_species": args.initial,
        "area_cm2": _number(args.area, "--area", minimum=0.0, strict=True),
        "cycles": cycles,
        "temperature_K": _kelvin(
            _number(args.temperature_C, "--temperature-C", minimum=-273.15, strict=True)
        ),
        "double_layer_F": _number(args.cdl, "--cdl", minimum=0.0),
        "background_slope_A_per_V": _number(args.slope, "--slope"),
        "background_offset_A": _number(args.offset, "--offset"),
        "resistance_ohm": _number(args.resistance, "--resistance", minimum=0.0),
    }


def _window(args: argparse.Namespace, E_lo: float, E_hi: float) -> tuple[float, list[float]]:
    red_first = args.initial == "red"
    if args.start is None:
        start = E_lo - _DEFAULT_MARGIN_V if red_first else E_hi + _DEFAULT_MARGIN_V
    else:
        start = _number(args.start, "--start")
    if args.switch is None:
        switch = [E_hi + _DEFAULT_MARGIN_V if red_first else E_lo - _DEFAULT_MARGIN_V]
    else:
        switch = [v for item in args.switch for v in _list(item, "--switch")]
        if not switch:
            raise InputError("--switch needs at least one potential", source=_CMD, key="--switch")
    return start, switch


def _out_path(args: argparse.Namespace) -> Path:
    if not args.out:
        what = "a folder" if args.series else "a CSV file name"
        raise InputError(f"--out is required: give {what}", source=_CMD, key="--out")
    return Path(args.out)


def handle(args: argparse.Namespace) -> int:
    """Run ``cvfit simulate``; returns the exit status."""
    if args.e_half is None:
        raise InputError("--e-half is required (V)", source=_CMD, key="--e-half")
    E_half = _number(args.e_half, "--e-half")
    settings = _settings(args)
    noise = _number(args.noise, "--noise", minimum=0.0)
    seed = None if args.seed is None else _whole(args.seed, "--seed")
    if seed is not None and seed < 0:
        raise InputError("--seed must be >= 0", source=_CMD, key="--seed")
    # the simulator (and numba, ~0.15 s) is imported only when a simulation is asked for
    from cvfit.simulate.titration_series import write_voltammogram_csv
    from cvfit.simulate.voltammogram import simulate_cv

    out = _out_path(args)
    try:
        if args.series:
            return _handle_series(args, E_half, settings, noise, seed, out)
        start, switch = _window(args, E_half, E_half)
        if out.exists() and not args.force:
            raise InputError(f"{out} exists; use --force to replace it", source=_CMD, key="--out")
        if out.is_dir():
            raise InputError(
                f"--out {out} is a folder; give a file name", source=_CMD, key="--out"
            )
        vg = simulate_cv(
            E_half_V=E_half,
            start_V=start,
            switch_V=switch if len(switch) > 1 else switch[0],
            noise_fraction=noise,
            seed=seed,
            source=str(out),
            **settings,
        )
    except SimulationError as exc:
        raise InputError(str(exc), source=_CMD) from None
    if out.parent and not out.parent.exists():
        raise InputError(f"folder {out.parent} does not exist", source=_CMD, key="--out")
    write_voltammogram_csv(vg, out)
    kinetics = "Nernstian" if settings["k0_cm_s"] is None else f"k0 = {settings['k0_cm_s']:g} cm/s"
    sys.stdout.write(
        f"wrote {out}: {vg.n_points} points, E½ = {E_half:.4f} V, n = {settings['electrons']}, "
        f"{settings['scan_rate_V_s']:g} V/s, "
        f"{kinetics}\n"
    )
    return 0


def _handle_series(args, E_half, settings, noise, seed, out: Path) -> int:
    from cvfit.chemistry.complexation import complexed_half_wave_V
    from cvfit.simulate.titration_series import simulate_series

    if wants_variable_series(args):  # a pH or a temperature series
        return handle_variable_series(args, E_half, settings, noise, seed, out, _number, _list)
    if args.ligand_M is None:
        raise InputError("--series needs --ligand-M LIST", source=_CMD, key="--ligand-M")
    ligands = _list(args.ligand_M, "--ligand-M")
    if not ligands or min(ligands) < 0:
        raise InputError(
            "--ligand-M needs one or more concentrations >= 0 mol/L", source=_CMD, key="--ligand-M"
        )
    beta_ox = _list(args.log_beta_ox, "--log-beta-ox")
    beta_red = _list(args.log_beta_red, "--log-beta-red")
    if out.exists() and not out.is_dir():
        raise InputError(f"--out {out} exists and is not a folder", source=_CMD, key="--out")
    halves = complexed_half_wave_V(
        E_half,
        ligand_M=ligands,
        log10_beta_ox=beta_ox,
        log10_beta_red=beta_red,
        electrons=settings["electrons"],
        temperature_K=settings["temperature_K"],
    )
    E_lo, E_hi = float(min(halves)), float(max(halves))
    if args.standard_e_half is not None:  # the default sweep covers the standard's wave too
        standard = _number(args.standard_e_half, "--standard-e-half")
        E_lo, E_hi = min(E_lo, standard), max(E_hi, standard)
    start, switch = _window(args, E_lo, E_hi)
    electrons = settings.pop("electrons")
    if args.standard_e_half is not None:
        return _handle_standard_series(
            args, E_half, settings, electrons, noise, seed, out, ligands, (start, switch)
        )
    try:
        manifest = simulate_series(
            out,
            ligand_M=ligands,
            E_half_free_V=E_half,
            log10_beta_ox=beta_ox,
            log10_beta_red=beta_red,
            electrons=electrons,
            title=args.title,
            noise_fraction=noise,
            seed=seed,
            overwrite=bool(args.force),
            D_ox_complexed_cm2_s=_optional_positive(
                args.diffusion_ox_complexed, "--diffusion-ox-complexed"
            ),
            D_red_complexed_cm2_s=_optional_positive(
                args.diffusion_red_complexed, "--diffusion-red-complexed"
            ),
            start_V=start,
            switch_V=switch if len(switch) > 1 else switch[0],
            **settings,
        )
    except SimulationError as exc:
        raise _refused(exc) from None
    sys.stdout.write(
        f"wrote {manifest} and {len(ligands)} voltammograms: E½ from {min(halves):.4f} to "
        f"{max(halves):.4f} V over ligand {min(ligands):g}–{max(ligands):g} M\n"
    )
    return 0


def _handle_standard_series(
    args, E_half, settings, electrons, noise, seed, out: Path, ligands, window
) -> int:
    """``--series --standard-e-half``: the titration with an internal reference couple."""
    from cvfit.simulate.internal_standard import simulate_internal_standard_series

    standard = _number(args.standard_e_half, "--standard-e-half")
    drift = _number(args.drift_step, "--drift-step", minimum=0.0)
    for flag, given in (
        ("--diffusion-ox-complexed", args.diffusion_ox_complexed),
        ("--diffusion-red-complexed", args.diffusion_red_complexed),
    ):
        if given is not None:
            raise InputError(
                f"{flag} is not available with --standard-e-half (complexes diffuse like the "
                "free couple there)",
                source=_CMD,
                key=flag,
            )
    start, switch = window
    lo, hi = min([start, *switch]), max([start, *switch])
    if not lo + 0.1 < standard < hi - 0.1:
        raise InputError(
            f"--standard-e-half {standard:g} V must lie at least 0.1 V inside the sweep "
            f"({lo:g} to {hi:g} V); widen it with --start/--switch",
            source=_CMD,
            key="--standard-e-half",
        )
    try:
        series = simulate_internal_standard_series(
            ligand_M=ligands,
            E_half_free_V=E_half,
            log10_beta_ox=_list(args.log_beta_ox, "--log-beta-ox"),
            log10_beta_red=_list(args.log_beta_red, "--log-beta-red"),
            standard_E_half_V=standard,
            drift_step_V=drift,
            electrons=electrons,
            noise_fraction=noise,
            seed=seed,
            out_dir=out,
            title=args.title,
            overwrite=bool(args.force),
            start_V=start,
            switch_V=switch if len(switch) > 1 else switch[0],
            **settings,
        )
    except SimulationError as exc:
        raise _refused(exc) from None
    sys.stdout.write(
        f"wrote {series.manifest} and {len(ligands)} voltammograms with an internal standard "
        f"at {standard:.4f} V; reference drift from {1e3 * min(series.drift_V):+.2f} to "
        f"{1e3 * max(series.drift_V):+.2f} mV\n"
    )
    return 0


def _refused(exc: SimulationError) -> InputError:
    """The simulator's refusal of a series as a command-line error (with the way out when
    the files exist)."""
    hint = "; use --force to replace" if "exists" in str(exc) else ""
    return InputError(f"{exc}{hint}", source=_CMD)
