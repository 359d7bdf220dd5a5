"""The plan file (``PLAN.toml``): what is known before the titration, read and checked.

Every problem is an :class:`cvfit.errors.InputError` naming the file and the key. The keys
are listed in docs/plan.md::

    [series]   electrons, temperature_C, metal_total_M (optional), E_half_free_V (optional),
               technique (optional: cv, dpv, swv or wave)
    [expect]   log10_beta_ratio, delta_ligands (Lingane) or log10_beta_ox / log10_beta_red
               (stepwise), each optionally with ``<key>_range``; known_form (stepwise, both)
    [design]   ligand_min_M, ligand_max_M, points, E_half_stderr_V or from_results,
               proposed_ligand_M, target_stderr_log10, criterion, optimise_for
"""

from __future__ import annotations

import math
import tomllib
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from cvfit.errors import InputError
from cvfit.io.limits import MAX_MANIFEST_BYTES, read_regular_file
from cvfit.plan.limits import MAX_CONSTANTS, MAX_POINTS, within
from cvfit.plan.pilot import pilot_constants, pilot_noise, read_pilot
from cvfit.units import celsius_to_kelvin

__all__ = ["PlanInput", "load_plan", "plan_from_mapping", "CRITERIA"]

#: Design criteria: "D" minimises log det of the covariance of the chosen constants
#: (Ds-optimality), "A" the mean of their variances.
CRITERIA = ("D", "A")

_SECTIONS = {
    "series": {
        "electrons",
        "temperature_C",
        "metal_total_M",
        "E_half_free_V",
        "title",
        "technique",
    },
    "expect": {
        "log10_beta_ratio",
        "log10_beta_ratio_range",
        "delta_ligands",
        "delta_ligands_range",
        "log10_beta_ox",
        "log10_beta_ox_range",
        "log10_beta_red",
        "log10_beta_red_range",
        "known_form",
    },
    "design": {
        "ligand_min_M",
        "ligand_max_M",
        "points",
        "E_half_stderr_V",
        "from_results",
        "proposed_ligand_M",
        "target_stderr_log10",
        "criterion",
        "optimise_for",
    },
}


#: How a planned series may be recorded (``[series] technique``, as in a manifest).
PLAN_TECHNIQUES = ("cv", "dpv", "swv", "wave")


@dataclass(frozen=True)
class PlanInput:
    """A checked plan request (SI inside; concentrations in mol/L).

    Attributes
    ----------
    source : str
        The plan file, for messages.
    model : {"lingane", "stepwise"}
        Which fit the titration will be analysed with.
    electrons : int
        n of the couple.
    temperature_K : float
        Temperature, K.
    metal_total_M : float or None
        Analytical metal concentration; turns on the bound-ligand (depletion) model.
    E_half_free_V : float
        E½ of the ligand-free couple (only used by ``--simulate``; 0 V when not given).
    names : tuple of str
        The constants the fit will report, in order.
    values : tuple of float
        Their rough expected values.
    ranges : tuple of (float, float)
        Plausible range of each (equal ends when none was given).
    fitted_state : {"ox", "red"} or None
        Stepwise: whose constants are fitted.
    fixed_log10_beta : tuple of float
        Stepwise: the other form's known constants (empty: not complexed).
    ligand_min_M, ligand_max_M : float
        Total ligand concentrations the chemist can make.
    points : int
        Solutions with ligand (the ligand-free reference comes on top).
    E_half_stderr_V : float
        Per-file standard error of E½, V.
    proposed_ligand_M : tuple of float
        The chemist's own design (may be empty).
    target_stderr_log10 : float or None
        Wanted standard error of every constant of interest (log10 units; p − q too).
    criterion : {"D", "A"}
        Design criterion.
    optimise_for : tuple of str
        Constants of interest (default all).
    title : str
        Free text.
    technique : {"cv", "dpv", "swv", "wave"}
        How the series will be recorded: ``--simulate`` writes it so, at the noise that
        gives ``E_half_stderr_V`` by that technique.
    """

    source: str
    model: str
    electrons: int
    temperature_K: float
    metal_total_M: float | None
    E_half_free_V: float
    names: tuple[str, ...]
    values: tuple[float, ...]
    ranges: tuple[tuple[float, float], ...]
    fitted_state: str | None
    fixed_log10_beta: tuple[float, ...]
    ligand_min_M: float
    ligand_max_M: float
    points: int
    E_half_stderr_V: float
    proposed_ligand_M: tuple[float, ...]
    target_stderr_log10: float | None
    criterion: str
    optimise_for: tuple[str, ...]
    title: str = "titration plan"
    technique: str = "cv"

    def __post_init__(self) -> None:
        if self.model not in ("lingane", "stepwise"):
            raise ValueError(f"model must be lingane or stepwise, got {self.model!r}")
        if not (len(self.names) == len(self.values) == len(self.ranges)):
            raise ValueError("names, values and ranges must have one entry per constant")
        if not 0 < self.ligand_min_M < self.ligand_max_M:
            raise ValueError("need 0 < ligand_min_M < ligand_max_M")
        if not set(self.optimise_for) <= set(self.names):
            raise ValueError("optimise_for names constants the model does not have")

    @property
    def interest(self) -> tuple[int, ...]:
        """Indices of the constants of interest."""
        return tuple(self.names.index(n) for n in self.optimise_for)


def _err(source: str, key: str, message: str) -> InputError:
    """An InputError whose one line names the key (``section.key: message``)."""
    return InputError(f"{key}: {message}", source=source, key=key)


def _number(src: str, key: str, value: Any, *, positive: bool = False) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise _err(src, key, f"{key} must be a number, got {value!r}")
    v = float(value)
    if not math.isfinite(v) or (positive and not v > 0):
        kind = "a positive finite number" if positive else "a finite number"
        raise _err(src, key, f"{key} must be {kind}, got {value!r}")
    return v


def _numbers(src: str, key: str, value: Any, *, positive: bool = False) -> tuple[float, ...]:
    if not isinstance(value, list) or not value:
        raise _err(src, key, f"{key} must be a non-empty list of numbers, e.g. [4.0, 7.5]")
    return tuple(_number(src, key, v, positive=positive) for v in value)


def _range(src: str, key: str, value: Any, centre: float) -> tuple[float, float]:
    lo, hi = (
        _numbers(src, key, value) if isinstance(value, list) and len(value) == 2 else (None, None)
    )
    if lo is None or hi is None or not lo <= centre <= hi:
        raise _err(src, key, f"{key} must be [low, high] around the expected value {centre:g}")
    return (lo, hi)


def _expect(src: str, ex: dict[str, Any]):
    has_line = "log10_beta_ratio" in ex or "delta_ligands" in ex
    has_step = "log10_beta_ox" in ex or "log10_beta_red" in ex
    if has_line and has_step:
        raise _err(
            src,
            "expect",
            "give either log10_beta_ratio and delta_ligands (Lingane) or log10_beta_ox / "
            "log10_beta_red (stepwise), not both",
        )
    if has_line:
        for key in ("log10_beta_ratio", "delta_ligands"):
            if key not in ex:
                raise _err(src, f"expect.{key}", f"the Lingane model needs [expect] {key}")
        names: tuple[str, ...] = ("log10_beta_ratio", "delta_ligands")
        values = tuple(_number(src, f"expect.{k}", ex[k]) for k in names)
        if not values[1] > 0:
            raise _err(src, "expect.delta_ligands", "delta_ligands (p − q) must be > 0")
        ranges = tuple(
            _range(src, f"expect.{k}_range", ex[f"{k}_range"], v) if f"{k}_range" in ex else (v, v)
            for k, v in zip(names, values, strict=True)
        )
        for k in ("log10_beta_ox_range", "log10_beta_red_range", "known_form"):
            if k in ex:
                raise _err(src, f"expect.{k}", f"{k} belongs to the stepwise model")
        return "lingane", names, values, ranges, None, ()
    if not has_step:
        raise _err(
            src,
            "expect",
            "give the rough constants: log10_beta_ratio and delta_ligands (Lingane) or "
            "log10_beta_ox = [...] / log10_beta_red = [...] (stepwise)",
        )
    forms = [f for f in ("ox", "red") if f"log10_beta_{f}" in ex]
    if len(forms) == 2:
        known = ex.get("known_form")
        if known not in ("ox", "red"):
            raise _err(
                src,
                "expect.known_form",
                'both forms have constants: say which is known, known_form = "ox" or "red" '
                "(the other form's constants are the ones to determine)",
            )
        state = "red" if known == "ox" else "ox"
    else:
        if "known_form" in ex:
            raise _err(src, "expect.known_form", "known_form needs constants of both forms")
        state = forms[0]
    other = "red" if state == "ox" else "ox"
    key = f"log10_beta_{state}"
    values = _numbers(src, f"expect.{key}", ex[key])
    fixed = (
        _numbers(src, f"expect.log10_beta_{other}", ex[f"log10_beta_{other}"])
        if (f"log10_beta_{other}" in ex)
        else ()
    )
    if f"{key}_range" in ex:
        raw = ex[f"{key}_range"]
        if not isinstance(raw, list) or len(raw) != len(values):
            raise _err(
                src,
                f"expect.{key}_range",
                f"{key}_range must be one [low, high] pair per constant ({len(values)})",
            )
        ranges = tuple(
            _range(src, f"expect.{key}_range", r, v) for r, v in zip(raw, values, strict=True)
        )
    else:
        ranges = tuple((v, v) for v in values)
    if f"log10_beta_{other}_range" in ex:
        raise _err(
            src,
            f"expect.log10_beta_{other}_range",
            "a range is only used for the constants being determined",
        )
    for k in ("log10_beta_ratio_range", "delta_ligands_range"):
        if k in ex:
            raise _err(src, f"expect.{k}", f"{k} belongs to the Lingane model")
    names = tuple(f"log10_beta_{state}_{j}" for j in range(1, len(values) + 1))
    return "stepwise", names, values, ranges, state, fixed


def _check_constants(
    src: str,
    model: str,
    values: tuple[float, ...],
    ranges: tuple[tuple[float, float], ...],
    fixed: tuple[float, ...],
) -> None:
    """Every constant, each end of a range and (stepwise) their number within bounds."""
    if model == "lingane":
        limits = ("log10", "expect.delta_ligands")
        names = ("log10_beta_ratio", "delta_ligands")
        for name, limit, value, ends in zip(names, limits, values, ranges, strict=True):
            within(src, f"expect.{name}", value, limit)
            for end in ends:
                within(src, f"expect.{name}_range", end, limit)
        return
    if len(values) > MAX_CONSTANTS or len(fixed) > MAX_CONSTANTS:
        raise _err(
            src,
            "expect",
            f"a stepwise plan takes at most {MAX_CONSTANTS} constants per form (as many as "
            "[fit] max_complexes allows)",
        )
    for x in (*values, *fixed, *(end for r in ranges for end in r)):
        within(src, "expect", x, "log10")


def plan_from_mapping(doc: dict[str, Any], source: str) -> PlanInput:
    """Check a parsed plan document (see :func:`load_plan`)."""
    src = str(source)
    for section, value in doc.items():
        if section not in _SECTIONS:
            raise _err(
                src, section, f"unknown section [{section}]; use [series], [expect], [design]"
            )
        if not isinstance(value, dict):
            raise _err(src, section, f"[{section}] must be a table")
        unknown = sorted(set(value) - _SECTIONS[section])
        if unknown:
            raise _err(
                src,
                f"{section}.{unknown[0]}",
                f"unknown key {unknown[0]!r} in [{section}]; allowed: "
                f"{', '.join(sorted(_SECTIONS[section]))}",
            )
    series = doc.get("series", {})
    design = doc.get("design")
    if design is None:
        raise _err(src, "design", "the plan needs a [design] table (ligand_min_M, ...)")
    expect = dict(doc.get("expect", {}))
    pilot = read_pilot(src, design["from_results"]) if "from_results" in design else None
    if pilot is not None and not any(
        k in expect for k in ("log10_beta_ratio", "log10_beta_ox", "log10_beta_red")
    ):
        expect.update(pilot_constants(src, pilot))
    model, names, values, ranges, state, fixed = _expect(src, expect)
    _check_constants(src, model, values, ranges, fixed)

    electrons = series.get("electrons", 1)
    if isinstance(electrons, bool) or not isinstance(electrons, int) or electrons < 1:
        raise _err(src, "series.electrons", "electrons must be a whole number >= 1")
    within(src, "series.electrons", electrons)
    t_C = _number(src, "series.temperature_C", series.get("temperature_C", 25.0))
    temperature_K = celsius_to_kelvin(within(src, "series.temperature_C", t_C))
    metal = series.get("metal_total_M")
    if metal is not None:
        key = "series.metal_total_M"
        metal = within(src, key, _number(src, key, metal, positive=True))
    e_free = _number(src, "series.E_half_free_V", series.get("E_half_free_V", 0.0))
    within(src, "series.E_half_free_V", e_free)
    title = series.get("title", "titration plan")
    if not isinstance(title, str):
        raise _err(src, "series.title", "title must be a string")
    technique = series.get("technique", "cv")
    if technique not in PLAN_TECHNIQUES:
        allowed = ", ".join(PLAN_TECHNIQUES)
        raise _err(
            src, "series.technique", f"technique must be one of {allowed}, got {technique!r}"
        )

    for key in ("ligand_min_M", "ligand_max_M", "points"):
        if key not in design:
            raise _err(src, f"design.{key}", f"[design] needs {key}")
    lo = _number(src, "design.ligand_min_M", design["ligand_min_M"], positive=True)
    hi = _number(src, "design.ligand_max_M", design["ligand_max_M"], positive=True)
    within(src, "design.ligand_min_M", lo, "ligand")
    within(src, "design.ligand_max_M", hi, "ligand")
    if model == "lingane" and metal is not None and not hi > values[1] * metal:
        raise _err(
            src,
            "design.ligand_max_M",
            f"no free ligand is left at any planned point: ligand_max_M {hi:g} M is not above "
            f"(p − q) × metal_total_M = {values[1] * metal:g} M; raise ligand_max_M or lower "
            "metal_total_M",
        )
    if not hi > lo:
        raise _err(src, "design.ligand_max_M", "ligand_max_M must be above ligand_min_M")
    points = design["points"]
    k = len(names) + 1
    if isinstance(points, bool) or not isinstance(points, int) or not k <= points <= MAX_POINTS:
        raise _err(
            src,
            "design.points",
            f"points must be a whole number from {k} (one more than the {len(names)} "
            f"constants) to {MAX_POINTS}, got {points!r}",
        )
    if "E_half_stderr_V" in design:
        sigma = _number(src, "design.E_half_stderr_V", design["E_half_stderr_V"], positive=True)
        within(src, "design.E_half_stderr_V", sigma)
    elif pilot is not None:
        noise = pilot_noise(src, pilot)
        sigma = within(src, "design.from_results", noise, "design.E_half_stderr_V")
    else:
        raise _err(
            src,
            "design.E_half_stderr_V",
            "give the per-file E½ noise E_half_stderr_V (V) or from_results = a pilot "
            "results.json",
        )
    proposed: tuple[float, ...] = ()
    if "proposed_ligand_M" in design:
        proposed = _numbers(
            src, "design.proposed_ligand_M", design["proposed_ligand_M"], positive=True
        )
        if not k - 1 <= len(proposed) <= MAX_POINTS:
            raise _err(
                src,
                "design.proposed_ligand_M",
                f"the proposed design needs {k - 1} to {MAX_POINTS} concentrations, got "
                f"{len(proposed)}",
            )
        for c in proposed:
            within(src, "design.proposed_ligand_M", c, "ligand")
    target = design.get("target_stderr_log10")
    if target is not None:
        target = _number(src, "design.target_stderr_log10", target, positive=True)
        within(src, "design.target_stderr_log10", target)
    criterion = design.get("criterion", "D")
    if criterion not in CRITERIA:
        raise _err(src, "design.criterion", f"criterion must be one of {', '.join(CRITERIA)}")
    wanted = design.get("optimise_for", list(names))
    if (
        not isinstance(wanted, list)
        or not wanted
        or any(w not in names for w in wanted)
        or len(set(wanted)) != len(wanted)
    ):
        raise _err(
            src,
            "design.optimise_for",
            f"optimise_for must list some of the constants {', '.join(names)}",
        )
    return PlanInput(
        source=src,
        model=model,
        electrons=electrons,
        temperature_K=temperature_K,
        metal_total_M=metal,
        E_half_free_V=e_free,
        names=names,
        values=values,
        ranges=ranges,
        fitted_state=state,
        fixed_log10_beta=fixed,
        ligand_min_M=lo,
        ligand_max_M=hi,
        points=points,
        E_half_stderr_V=sigma,
        proposed_ligand_M=proposed,
        target_stderr_log10=target,
        criterion=criterion,
        optimise_for=tuple(w for w in names if w in wanted),
        title=title,
        technique=technique,
    )


def load_plan(path: str | Path) -> PlanInput:
    """Read and check a plan file (read as ``cvfit run`` reads a manifest: a regular file of
    at most :data:`~cvfit.io.limits.MAX_MANIFEST_BYTES`, UTF-8 with or without a BOM).

    Raises
    ------
    InputError
        Unreadable file, TOML syntax, nesting too deep, unknown section or key, or a bad
        value (the message names the file and key).
    """
    p = Path(path)
    raw = read_regular_file(
        p,
        limit=MAX_MANIFEST_BYTES,
        what="plan file",
        missing="the plan file does not exist; check the path",
        folder="this is a folder; name the plan .toml file",
    )
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        raise InputError("the plan is not UTF-8 text; save it as UTF-8", source=str(p)) from None
    try:
        return plan_from_mapping(tomllib.loads(text), str(p))
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", source=str(p)) from None
    except RecursionError:
        raise InputError(
            "the TOML is nested too deeply to read (arrays or tables inside one another "
            "hundreds of levels deep); a plan needs two levels: fix the plan",
            source=str(p),
        ) from None
