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
import os
import sys
from pathlib import Path

from cvfit.cli.simulate_additions import add_addition_options, handle_additions, wants_additions
from cvfit.cli.simulate_technique import (
    TECHNIQUE_EPILOG,
    add_technique_options,
    handle_technique,
)
from cvfit.cli.simulate_values import CMD as _CMD
from cvfit.cli.simulate_values import DEFAULT_MARGIN_V as _DEFAULT_MARGIN_V
from cvfit.cli.simulate_values import (
    GRID_POINTS,
    MAX_SAMPLES,
    MAX_SERIES_FILES,
    MAX_SERIES_SAMPLES,
    MIN_TITRATION_FILES,
)
from cvfit.cli.simulate_values import bounded as _bounded
from cvfit.cli.simulate_values import concentration as _concentration
from cvfit.cli.simulate_values import number as _number
from cvfit.cli.simulate_values import number_list as _list
from cvfit.cli.simulate_values import optional_positive as _optional_positive
from cvfit.cli.simulate_values import whole as _whole
from cvfit.cli.simulate_variables import (
    add_variable_options,
    handle_variable_series,
    wants_variable_series,
)
from cvfit.errors import InputError, OutputError, SimulationError

SIMULATE_EPILOG = (
    f"""\
limits (checked before anything is computed):
  a voltammogram has at most {MAX_SAMPLES:,} samples (cycles x path length / --step), so
  that cvfit run can read its CSV; a series has at most {MAX_SERIES_FILES:,} files and
  {MAX_SERIES_SAMPLES:,} samples in all, and none or at least {MIN_TITRATION_FILES} files
  with ligand (what cvfit run takes); the space grid has at most
  {GRID_POINTS:,} points (diffusion coefficients 1e-12 to 1 cm2/s keep it under 500);
  numbers: potentials within +-10 V, --scan-rate 1e-6 to 1e6 V/s, --step 1e-6 to 0.1 V,
  --temperature-C 0 to 100, --electrons 1 to 10, --ligand-M 0 to 20 mol/L, log10 beta
  within +-100, --noise at most 10, --resistance at most 1e9 ohm, --cdl at most 1 F.
"""
    + TECHNIQUE_EPILOG
)


def _kelvin(celsius: float) -> float:
    from cvfit.units import celsius_to_kelvin

    return celsius_to_kelvin(celsius)


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "simulate",
        help="write a synthetic cyclic voltammogram (or a titration series) as CSV",
        description="Digital simulation of a cyclic voltammogram of a one-step couple; "
        "writes time_s,potential_V,current_A (anodic current positive).",
        epilog=SIMULATE_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    a = p.add_argument
    a(
        "--e-half",
        metavar="V",
        required=True,
        help="required: reversible half-wave potential, V (series: of the uncomplexed couple)",
    )
    a("--electrons", metavar="N", default="1", help="electrons n (default 1)")
    a("--scan-rate", metavar="V/s", help="scan rate, V/s (default 0.1; wave: 0.0005)")
    a("--start", metavar="V", help="start potential, V (default E½ + 0.3 V; red: E½ − 0.3 V)")
    a(
        "--switch",
        metavar="V",
        action="append",
        help="switching potential, V; repeat or give a comma list for several vertices "
        "(write --switch=-0.3,0.4 when the list starts with a minus sign)",
    )
    a("--step", metavar="V", help="potential step between samples, V (default 0.001; "
      "dpv, swv: 0.005; wave: 0.002)")  # fmt: skip
    a("--k0", metavar="cm/s", help="standard rate constant, cm/s (omitted: Nernstian)")
    a("--alpha", default="0.5", help="transfer coefficient (default 0.5)")
    a(
        "--diffusion",
        metavar="cm2/s",
        default="1e-5",
        help="D of the oxidised form, cm²/s (default 1e-5)",
    )
    a("--diffusion-red", metavar="cm2/s", help="D of the reduced form (default: --diffusion)")
    a(
        "--concentration",
        metavar="mol/L",
        default="1e-3",
        help="bulk concentration, mol/L as in manifests (default 1e-3, i.e. 1 mM)",
    )
    a(
        "--initial",
        choices=("ox", "red"),
        default="ox",
        help="form present at the start (default ox)",
    )
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
    a("--resistance", metavar="ohm", default="0", help="uncompensated resistance, Ω (default 0)")
    a(
        "--noise",
        metavar="FRACTION",
        default="0",
        help="noise SD / Randles–Ševčík peak current (default 0)",
    )
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
        help="series: overall log10 β_j of the reduced form, j = 1, 2, … (comma list; "
        "default: not complexed)",
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
    add_addition_options(a)
    add_technique_options(a)
    a(
        "--title",
        default="simulated titration",
        help="series: title for the manifest (default 'simulated titration')",
    )
    a(
        "--out",
        metavar="FILE|DIR",
        required=True,
        help="required: output CSV file (series: output folder)",
    )
    a("--force", action="store_true", help="replace existing output files")
    # options whose help starts with "series" describe a series: refused without --series
    only = {x.dest: x.default for x in p._actions if (x.help or "").startswith("series")}
    p.set_defaults(handler=handle, series_only=only)


def _check_series_only(args: argparse.Namespace) -> None:
    """A series option without --series would be silently ignored: refuse it."""
    given = [d for d, default in args.series_only.items() if getattr(args, d) != default]
    if given and not args.series:
        flag = "--" + given[0].replace("_", "-")
        raise InputError(
            f"{flag} describes a titration series: add --series, or leave {flag} out",
            source=_CMD,
            key=flag,
        )


def _settings(args: argparse.Namespace) -> dict:
    electrons = _whole(args.electrons, "--electrons")
    if electrons < 1:
        raise InputError("--electrons must be >= 1", source=_CMD, key="--electrons")
    _bounded(electrons, "--electrons")
    cycles = _whole(args.cycles, "--cycles")
    if cycles < 1:
        raise InputError("--cycles must be >= 1", source=_CMD, key="--cycles")
    alpha = _number(args.alpha, "--alpha", minimum=0.0, strict=True)
    if alpha >= 1.0:
        raise InputError("--alpha must lie between 0 and 1", source=_CMD, key="--alpha")
    return {
        "electrons": electrons,
        "scan_rate_V_s": _number(
            "0.1" if args.scan_rate is None else args.scan_rate,
            "--scan-rate",
            minimum=0.0,
            strict=True,
        ),
        "step_V": _number(
            "0.001" if args.step is None else args.step, "--step", minimum=0.0, strict=True
        ),  # fmt: skip
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


def _check_samples(start: float, switch: list[float], cycles: int, step: float) -> int:
    """Samples of one voltammogram of this sweep; refused above :data:`MAX_SAMPLES` (before
    anything is built: ``--cycles 10**12`` would otherwise build its path first)."""
    path = [start, *switch, start]
    per_cycle = sum(abs(b - a) for a, b in zip(path, path[1:], strict=False))
    n = cycles * per_cycle / step + 1
    if n > MAX_SAMPLES:
        raise InputError(
            f"this voltammogram would have {n:.3g} samples ({cycles} cycle(s) of {per_cycle:g} V "
            f"in steps of {step:g} V), more than the {MAX_SAMPLES:,} cvfit simulate writes; give "
            "fewer --cycles or a larger --step",
            source=_CMD,
            key="--cycles",
        )
    return int(n)


def _check_series_size(ligands: list[float], samples: int) -> None:
    """A series that ``cvfit run`` accepts, of a size that takes minutes at most."""
    with_ligand = sum(x > 0 for x in ligands)
    if 0 < with_ligand < MIN_TITRATION_FILES:  # none: a run without ligand, which cvfit takes
        raise InputError(
            f"--ligand-M lists {with_ligand} concentration(s) above 0; cvfit run fits constants "
            f"from at least {MIN_TITRATION_FILES} solutions with ligand (and a ligand-free one, "
            "0, as the reference): add concentrations",
            source=_CMD,
            key="--ligand-M",
        )
    if len(ligands) > MAX_SERIES_FILES or len(ligands) * samples > MAX_SERIES_SAMPLES:
        raise InputError(
            f"a series of {len(ligands)} files of {samples:,} samples is more than cvfit "
            f"simulate writes ({MAX_SERIES_FILES:,} files, {MAX_SERIES_SAMPLES:,} samples in "
            "all); give fewer concentrations or a larger --step",
            source=_CMD,
            key="--ligand-M",
        )


def _variable_series_size(window: dict, files: int, cycles: int, step: float) -> None:
    """A pH or temperature series of a size cvfit simulate writes (as a titration's)."""
    switch = window["switch_V"]
    switches = list(switch) if isinstance(switch, list) else [switch]
    samples = _check_samples(window["start_V"], switches, cycles, step)
    if files > MAX_SERIES_FILES or files * samples > MAX_SERIES_SAMPLES:
        raise InputError(
            f"a series of {files} files of {samples:,} samples is more than cvfit simulate "
            f"writes ({MAX_SERIES_FILES:,} files, {MAX_SERIES_SAMPLES:,} samples in all)",
            source=_CMD,
            key="--series",
        )


def _check_writable(folder: Path) -> None:
    """Refuse a folder that no file can be written into, before the simulation runs."""
    import tempfile

    try:
        fd, tmp = tempfile.mkstemp(prefix=".cvfit-check-", dir=folder)
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(folder)) from None
    os.close(fd)
    os.unlink(tmp)


def _check_out_file(out: Path, force: bool) -> None:
    """Refuse an --out file that exists (without --force), is not a regular file, or whose
    folder is missing or not writable, before anything is simulated."""
    if out.exists() and not force:
        raise InputError(f"{out} exists; use --force to replace it", source=_CMD, key="--out")
    if out.is_dir():
        raise InputError(f"--out {out} is a folder; give a file name", source=_CMD, key="--out")
    if out.exists() and not out.is_file():
        raise InputError(
            f"--out {out} is not a regular file; give a file name", source=_CMD, key="--out"
        )
    if out.parent and not out.parent.is_dir():
        raise InputError(f"folder {out.parent} does not exist", source=_CMD, key="--out")
    _check_writable(out.parent)


def _out_path(args: argparse.Namespace) -> Path:
    if not args.out:
        what = "a folder" if args.series else "a CSV file name"
        raise InputError(f"--out is required: give {what}", source=_CMD, key="--out")
    return Path(args.out)


def handle(args: argparse.Namespace) -> int:
    """Run ``cvfit simulate``; returns the exit status."""
    if args.e_half is None:
        raise InputError("--e-half is required (V)", source=_CMD, key="--e-half")
    _check_series_only(args)
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
    wants_additions(args)  # refuses addition options that clash with the others
    if args.technique != "cv":
        return handle_technique(
            args, E_half, settings, noise, seed, out, _number, _list, _check_series_size,
            max_samples=MAX_SAMPLES, check_out_file=_check_out_file,
        )  # fmt: skip
    try:
        if args.series:
            return _handle_series(args, E_half, settings, noise, seed, out)
        start, switch = _window(args, E_half, E_half)
        _check_samples(start, switch, settings["cycles"], settings["step_V"])
        _check_out_file(out, bool(args.force))
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
    try:
        write_voltammogram_csv(vg, out)
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(out)) from None
    kinetics = "Nernstian" if settings["k0_cm_s"] is None else f"k0 = {settings['k0_cm_s']:g} cm/s"
    sys.stdout.write(
        f"wrote {out}: {vg.n_points} points, E½ = {E_half:.4f} V, n = {settings['electrons']}, "
        f"{settings['scan_rate_V_s']:g} V/s, "
        f"{kinetics}\n"
    )
    return 0


def _handle_series(args, E_half, settings, noise, seed, out: Path) -> int:
    import numpy as np

    from cvfit.chemistry.complexation import complexed_half_wave_V
    from cvfit.simulate.titration_series import simulate_series

    if wants_variable_series(args):  # a pH or a temperature series

        def size(window: dict, files: int) -> None:
            _variable_series_size(window, files, settings["cycles"], settings["step_V"])

        return handle_variable_series(
            args, E_half, settings, noise, seed, out, _number, _list, size
        )
    if wants_additions(args):  # a titration by additions, the metal diluted

        def sized(ligands: list[float], start: float, switch: list[float]) -> None:
            cycles, step = settings["cycles"], settings["step_V"]
            _check_series_size(ligands, _check_samples(start, switch, cycles, step))

        return handle_additions(
            args, E_half, settings, noise, seed, out, _number, _list, _window, sized
        )
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
    for flag, given in (
        ("--diffusion-ox-complexed", args.diffusion_ox_complexed),
        ("--diffusion-red-complexed", args.diffusion_red_complexed),
    ):
        _optional_positive(given, flag)  # checked before anything is computed
    halves = np.atleast_1d(  # one E½ per ligand level (an array already)
        complexed_half_wave_V(
            E_half,
            ligand_M=ligands,
            log10_beta_ox=beta_ox,
            log10_beta_red=beta_red,
            electrons=settings["electrons"],
            temperature_K=settings["temperature_K"],
        )
    )
    E_lo, E_hi = float(min(halves)), float(max(halves))
    if args.standard_e_half is not None:  # the default sweep covers the standard's wave too
        standard = _number(args.standard_e_half, "--standard-e-half")
        E_lo, E_hi = min(E_lo, standard), max(E_hi, standard)
    start, switch = _window(args, E_lo, E_hi)
    samples = _check_samples(start, switch, settings["cycles"], settings["step_V"])
    _check_series_size(ligands, samples)
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
        raise InputError.from_simulation(exc) from None
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(out)) from None
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
        raise InputError.from_simulation(exc) from None
    except OSError as exc:
        raise OutputError.from_os_error(exc, str(out)) from None
    sys.stdout.write(
        f"wrote {series.manifest} and {len(ligands)} voltammograms with an internal standard "
        f"at {standard:.4f} V; reference drift from {1e3 * min(series.drift_V):+.2f} to "
        f"{1e3 * max(series.drift_V):+.2f} mV\n"
    )
    return 0
