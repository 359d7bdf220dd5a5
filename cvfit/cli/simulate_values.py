"""The values of ``cvfit simulate``'s options: limits, and the parsing of numbers and lists
with one-line errors naming the option (no numerical library imported: the help and the
checks run before any simulation)."""

from __future__ import annotations

import math

from cvfit.cli.simulate_technique import TECHNIQUE_BOUNDS
from cvfit.errors import InputError

__all__ = [
    "BOUNDS",
    "CMD",
    "DEFAULT_MARGIN_V",
    "GRID_POINTS",
    "MAX_SAMPLES",
    "MAX_SERIES_FILES",
    "MAX_SERIES_SAMPLES",
    "MIN_TITRATION_FILES",
    "bounded",
    "concentration",
    "number",
    "number_list",
    "optional_positive",
    "whole",
]

CMD = "<command line>"
# half-width of the default potential window around the E½ values, V
DEFAULT_MARGIN_V = 0.3

#: Most samples one voltammogram may have (cycles × path length / step): its CSV then stays
#: under the 64 MiB cvfit reads per data file, and it takes some 20 s to write.
MAX_SAMPLES = 1_000_000
#: Most files of a series, and most samples of all its files together (some minutes).
MAX_SERIES_FILES = 5_000
MAX_SERIES_SAMPLES = 10_000_000
#: Most points of the simulator's space grid (``cvfit.simulate.voltammogram.MAX_GRID_POINTS``,
#: repeated here so that the help loads no numerical library; a test holds them equal).
GRID_POINTS = 1_000
#: Files with ligand that ``cvfit run`` needs (``cvfit.pipeline.series.MIN_FIT_POINTS``).
MIN_TITRATION_FILES = 3

#: flag -> (lowest, highest) accepted, in the flag's unit: values a cell can have, wide
#: enough for any experiment and narrow enough that no number of the simulation overflows.
BOUNDS = {
    "--e-half": (-10.0, 10.0),
    "--start": (-10.0, 10.0),
    "--switch": (-10.0, 10.0),
    "--standard-e-half": (-10.0, 10.0),
    "--electrons": (1, 10),
    "--scan-rate": (1e-6, 1e6),
    "--step": (1e-6, 0.1),
    "--k0": (1e-12, 1e6),
    "--diffusion": (1e-12, 1.0),
    "--diffusion-red": (1e-12, 1.0),
    "--diffusion-ox-complexed": (1e-12, 1.0),
    "--diffusion-red-complexed": (1e-12, 1.0),
    "--area": (1e-8, 1e4),
    "--temperature-C": (0.0, 100.0),
    "--cdl": (0.0, 1.0),
    "--slope": (-1.0, 1.0),
    "--offset": (-1.0, 1.0),
    "--resistance": (0.0, 1e9),
    "--noise": (0.0, 10.0),
    "--ligand-M": (0.0, 20.0),
    "--log-beta-ox": (-100.0, 100.0),
    "--log-beta-red": (-100.0, 100.0),
    "--drift-step": (0.0, 0.1),
    **TECHNIQUE_BOUNDS,
}


def number(text: object, flag: str, *, minimum: float | None = None, strict: bool = False):
    try:
        x = float(str(text).strip())
    except ValueError:
        raise InputError(f"{flag} needs a number, got {text!r}", source=CMD, key=flag) from None
    if not math.isfinite(x):
        raise InputError(f"{flag} must be finite, got {text!r}", source=CMD, key=flag)
    if minimum is not None and (x < minimum or (strict and x == minimum)):
        rel = ">" if strict else ">="
        raise InputError(f"{flag} must be {rel} {minimum:g}, got {text!r}", source=CMD, key=flag)
    return bounded(x, flag)


def bounded(x: float, flag: str) -> float:
    """*x* when it lies within :data:`BOUNDS` of *flag* (a flag without bounds: any)."""
    lo, hi = BOUNDS.get(flag, (-math.inf, math.inf))
    if not lo <= x <= hi:
        raise InputError(
            f"{flag} {x:g} is outside what cvfit simulate takes ({lo:g} to {hi:g}); see "
            "'cvfit simulate --help'",
            source=CMD,
            key=flag,
        )
    return x


#: Above this a --concentration is taken for a value in mM (the unit before mol/L).
_MAX_CONCENTRATION_M = 1.0


def concentration(text: object) -> float:
    """--concentration in mol/L; a value above 1 mol/L is refused as a likely mM value."""
    c = number(text, "--concentration", minimum=0, strict=True)
    if c > _MAX_CONCENTRATION_M:
        raise InputError(
            f"--concentration is in mol/L, got {c:g} mol/L; for {c:g} mM give {c * 1e-3:g}",
            source=CMD,
            key="--concentration",
        )
    return c


def optional_positive(text: object, flag: str) -> float | None:
    return None if text is None else number(text, flag, minimum=0.0, strict=True)


def whole(text: object, flag: str) -> int:
    try:
        k = int(str(text).strip())
    except ValueError:
        raise InputError(
            f"{flag} needs a whole number, got {text!r}", source=CMD, key=flag
        ) from None
    return k


def number_list(text: str | None, flag: str) -> list[float]:
    """A comma list of numbers; an empty item (``,,11.3``) is an error, not skipped."""
    if text is None or not str(text).strip():
        return []
    parts = str(text).split(",")
    for k, part in enumerate(parts, start=1):
        if not part.strip():
            raise InputError(
                f"{flag}: item {k} of the list {text!r} is empty; give numbers separated by "
                "single commas",
                source=CMD,
                key=flag,
            )
    return [number(part, flag) for part in parts]
