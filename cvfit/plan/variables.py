"""Planning a pH series or a temperature series: which pH values resolve the pKa, and how
precisely a set of temperatures gives dE½/dT and the reaction entropy.

The predicted covariance is the Fisher information of the model the series will be fitted
with, at the expected constants and a per-file E½ standard error σ: for a pH series the
Jacobian of :class:`cvfit.titration.proton_fit.ProtonData` (E° and every pKa), for a
temperature series the straight line of :mod:`cvfit.titration.temperature_model`
(SE(dE½/dT) = σ/√Σ(T − T̄)², SE(ΔS°) = nF·SE(dE½/dT)). The recommended pH values are
spread evenly from 2 pH units below the lowest expected pKa to 2 above the highest (within
the range that can be made), so that every step shows its bend and the number of steps can
be chosen from the data; beside them the evenly spaced values over the whole range and the
Ds-optimal ones — point exchange on a 0.05-pH grid (distinct values at least ``min_step``
apart) minimising log det of the covariance of the pKa, the most precise if the model is
right but crowded onto the plateaus, where a wrong number of steps cannot show. The
temperature plan spreads the points evenly, which keeps a test of linearity (half the
points at each end would give the smallest SE but could not show a bend).

A plan file (``cvfit plan PLAN.toml``, docs/plan.md) with ``[expect] pKa_ox``/``pKa_red``
plans a pH series; with ``[design] temperature_min_C`` a temperature series.

References
----------
Atkinson, A. C.; Donev, A. N. Optimum Experimental Designs; Oxford University Press,
1992 (D- and Ds-optimality, exchange algorithms; from memory).
"""

from __future__ import annotations

import math
import tomllib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from cvfit.errors import InputError
from cvfit.plan.limits import MAX_POINTS
from cvfit.titration.proton_fit import PKA_MARGIN, ProtonData
from cvfit.units import FARADAY, celsius_to_kelvin, thermal_voltage

__all__ = [
    "VariablePlan",
    "plan_pH_series",
    "plan_temperature_series",
    "is_variable_plan",
    "variable_plan_from_mapping",
    "load_variable_plan",
    "simulate_variable_plan",
]

_GRID_STEP = 0.05
#: The recommended pH values reach this far beyond the lowest and the highest pKa.
_BRACKET = 2.0


@dataclass(frozen=True)
class VariablePlan:
    """A plan of a pH or temperature series: designs with their predicted standard errors.

    ``designs`` maps a design's name (``"recommended"``, ``"evenly spaced"``, ``"proposed"``,
    ``"ends"``) to its values (pH, or temperature in °C) and the predicted standard errors
    (by constant name: ``pKa_ox_1`` …, ``dE_half_dT_V_K``, ``reaction_entropy_J_mol_K``).
    """

    kind: str  # "pH" or "temperature"
    title: str
    electrons: int
    temperature_K: float
    E_half_stderr_V: float
    expect: Mapping[str, Any]
    designs: Mapping[str, dict[str, Any]]
    warnings: tuple[str, ...] = field(default=())

    def to_dict(self) -> dict[str, Any]:
        from cvfit.version import __version__

        return {
            "cvfit_version": __version__,
            "kind": self.kind,
            "title": self.title,
            "electrons": self.electrons,
            "temperature_K": self.temperature_K,
            "E_half_stderr_V": self.E_half_stderr_V,
            "expect": dict(self.expect),
            "designs": {k: dict(v) for k, v in self.designs.items()},
            "warnings": list(self.warnings),
        }

    def table(self) -> str:
        """The plan as text for the terminal."""
        unit = "pH" if self.kind == "pH" else "°C"
        lines = [
            f"{self.title}: {self.kind} series, per-file E½ SE {1e3 * self.E_half_stderr_V:g} mV"
        ]
        for name, d in self.designs.items():
            vals = ", ".join(f"{v:.2f}" if self.kind == "pH" else f"{v:.1f}" for v in d["values"])
            lines.append(f"  {name} ({unit}): {vals}")
            for k, se in d["stderr"].items():
                shown = "n/d" if se is None else f"{se:.3g}"
                lines.append(f"      SE {k}: {shown}")
        lines += [f"  warning: {w}" for w in self.warnings]
        return "\n".join(lines)


def _pka_stderr(
    pH: Sequence[float], ox: Sequence[float], red: Sequence[float], sigma: float, n: int, T: float
) -> tuple[dict[str, float | None], float]:
    """Predicted SE of every pKa and log det of their covariance (σ = *sigma*)."""
    x = np.asarray(pH, dtype=float)
    data = ProtonData(x, np.zeros_like(x), np.full(x.size, sigma), thermal_voltage(T, n), n, T)
    J = data.jacobian(0.0, np.asarray(ox, float), np.asarray(red, float))
    names = [f"pKa_ox_{j}" for j in range(1, len(ox) + 1)]
    names += [f"pKa_red_{j}" for j in range(1, len(red) + 1)]
    M = J.T @ J
    if x.size <= M.shape[0] or np.linalg.cond(M) > 1e14:
        return dict.fromkeys(names), math.inf
    cov = np.linalg.inv(M)[1:, 1:]
    sign, logdet = np.linalg.slogdet(cov)
    se: dict[str, float | None] = {k: float(math.sqrt(cov[i, i])) for i, k in enumerate(names)}
    return se, float(logdet) if sign > 0 else math.inf


def _exchange(
    start: list[float], grid: np.ndarray, crit, *, min_step: float, sweeps: int = 20
) -> list[float]:
    """Point exchange: move each point to the grid value that lowers *crit* most, keeping
    the values at least *min_step* apart, until no move helps."""
    design = sorted(start)
    best = crit(design)
    for _ in range(sweeps):
        improved = False
        for k in range(len(design)):
            others = design[:k] + design[k + 1 :]
            chosen = None
            for g in grid:
                if any(abs(g - o) < min_step - 1e-9 for o in others):
                    continue
                trial = sorted([*others, float(g)])
                c = crit(trial)
                if c < best - 1e-9:
                    best, chosen = c, trial
            if chosen is not None:
                design, improved = chosen, True
        if not improved:
            break
    return design


def plan_pH_series(
    *,
    pKa_ox: Sequence[float],
    pKa_red: Sequence[float],
    pH_min: float,
    pH_max: float,
    points: int,
    E_half_stderr_V: float,
    electrons: int = 1,
    temperature_K: float = 298.15,
    proposed_pH: Sequence[float] = (),
    min_step: float = 0.25,
    title: str = "pH series plan",
) -> VariablePlan:
    """The pH values that resolve the expected pKa best, beside evenly spaced and proposed
    ones (module docstring)."""
    ox, red = [float(p) for p in pKa_ox], [float(p) for p in pKa_red]
    if not ox and not red:
        raise ValueError("give the expected pKa of at least one form")
    n, T, s = electrons, temperature_K, E_half_stderr_V

    def crit(design: Sequence[float]) -> float:
        return _pka_stderr(design, ox, red, s, n, T)[1]

    even = list(np.linspace(pH_min, pH_max, points))
    pkas = [*ox, *red]
    lo, hi = max(pH_min, min(pkas) - _BRACKET), min(pH_max, max(pkas) + _BRACKET)
    bracket = list(np.linspace(lo, hi, points)) if hi > lo else even
    grid = np.arange(pH_min, pH_max + 1e-9, _GRID_STEP)
    best = _exchange(even, grid, crit, min_step=min_step)
    designs = {"recommended": bracket, "evenly spaced": even, "Ds-optimal": best}
    if proposed_pH:
        designs["proposed"] = sorted(float(v) for v in proposed_pH)
    rounded = {name: [round(float(v), 3) for v in d] for name, d in designs.items()}
    out = {
        name: {"values": d, "stderr": _pka_stderr(d, ox, red, s, n, T)[0]}
        for name, d in rounded.items()
    }
    warnings = []
    for form, values in (("oxidised", ox), ("reduced", red)):
        for j, p in enumerate(values, start=1):
            if not pH_min + 1.0 <= p <= pH_max - 1.0:
                warnings.append(
                    f"pKa{j} of the {form} form ({p:g}) lies within 1 pH unit of the edge of "
                    f"{pH_min:g}–{pH_max:g} (or beyond it): its interval may stay open; the "
                    f"fit looks for pKa up to {PKA_MARGIN:g} units beyond the measured range"
                )
    expect = {"pKa_ox": ox, "pKa_red": red}
    return VariablePlan("pH", title, n, T, s, expect, out, tuple(warnings))


def _line_stderr(temperatures_C: Sequence[float], sigma: float, n: int) -> dict[str, float | None]:
    T = np.array([celsius_to_kelvin(t) for t in temperatures_C])
    sxx = float(np.sum((T - T.mean()) ** 2))
    if T.size < 3 or sxx <= 0:
        return {"dE_half_dT_V_K": None, "reaction_entropy_J_mol_K": None}
    slope = sigma / math.sqrt(sxx)
    return {"dE_half_dT_V_K": slope, "reaction_entropy_J_mol_K": n * FARADAY * slope}


def plan_temperature_series(
    *,
    temperature_min_C: float,
    temperature_max_C: float,
    points: int,
    E_half_stderr_V: float,
    electrons: int = 1,
    proposed_C: Sequence[float] = (),
    title: str = "temperature series plan",
) -> VariablePlan:
    """Evenly spaced temperatures (recommended) beside half at each end and a proposed set."""
    even = list(np.linspace(temperature_min_C, temperature_max_C, points))
    ends = [temperature_min_C] * (points // 2) + [temperature_max_C] * (points - points // 2)
    designs = {"recommended": even, "ends": ends}
    if proposed_C:
        designs["proposed"] = sorted(float(v) for v in proposed_C)
    rounded = {name: [round(float(v), 2) for v in d] for name, d in designs.items()}
    out = {
        name: {"values": d, "stderr": _line_stderr(d, E_half_stderr_V, electrons)}
        for name, d in rounded.items()
    }
    warnings = ["the ends design gives the smallest SE but cannot show a bend (ΔCp ≠ 0)"]
    T_mid = celsius_to_kelvin(0.5 * (temperature_min_C + temperature_max_C))
    expect = {"reaction_entropy_J_mol_K": None}
    return VariablePlan(
        "temperature", title, electrons, T_mid, E_half_stderr_V, expect, out, tuple(warnings)
    )


def is_variable_plan(data: Mapping[str, Any]) -> bool:
    """Whether a plan file's mapping plans a pH or temperature series (not a titration)."""
    expect, design = data.get("expect") or {}, data.get("design") or {}
    return "pKa_ox" in expect or "pKa_red" in expect or "temperature_min_C" in design


def _get(src: str, table: Mapping[str, Any], section: str, key: str, *, default=None):
    value = table.get(key, default)
    if value is None:
        raise InputError(f"{section}.{key}: required; add it to [{section}]", source=src,
                         key=f"{section}.{key}")  # fmt: skip
    if isinstance(value, list):
        if not all(isinstance(v, int | float) and not isinstance(v, bool) for v in value):
            raise InputError(f"{section}.{key} must be a list of numbers, got {value!r}",
                             source=src, key=f"{section}.{key}")  # fmt: skip
        return [float(v) for v in value]
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise InputError(f"{section}.{key} must be a number, got {value!r}", source=src,
                         key=f"{section}.{key}")  # fmt: skip
    return value


#: The keys a pH or temperature plan reads (a typo must not be ignored silently).
_KEYS = {
    "series": {"electrons", "temperature_C", "title"},
    "expect": {"pKa_ox", "pKa_red"},
    "design": {"points", "E_half_stderr_V", "pH_min", "pH_max", "proposed_pH",
               "temperature_min_C", "temperature_max_C", "proposed_C"},
}  # fmt: skip


def _check_keys(src: str, data: Mapping[str, Any]) -> None:
    for section, table in data.items():
        if section not in _KEYS or not isinstance(table, Mapping):
            raise InputError(f"[{section}] is not a table of a pH or temperature plan; use "
                             "[series], [expect], [design]", source=src, key=section)  # fmt: skip
        unknown = sorted(set(table) - _KEYS[section])
        if unknown:
            raise InputError(
                f"unknown key {unknown[0]!r} in [{section}] of a pH or temperature plan; "
                f"allowed: {', '.join(sorted(_KEYS[section]))}",
                source=src, key=f"{section}.{unknown[0]}",
            )  # fmt: skip


def variable_plan_from_mapping(src: str, data: Mapping[str, Any]) -> VariablePlan:
    """A pH or temperature plan from a plan file's mapping (keys in docs/plan.md).

    Raises
    ------
    InputError
        A missing or malformed key (named), or values out of range.
    """
    _check_keys(src, data)
    series, expect, design = (data.get(k) or {} for k in ("series", "expect", "design"))
    n = int(_get(src, series, "series", "electrons", default=1))
    T = celsius_to_kelvin(float(_get(src, series, "series", "temperature_C", default=25.0)))
    title = str(series.get("title", "series plan"))
    points = int(_get(src, design, "design", "points"))
    sigma = float(_get(src, design, "design", "E_half_stderr_V"))
    if not 4 <= points <= MAX_POINTS or not 1e-7 <= sigma <= 1.0 or not 1 <= n <= 10:
        raise InputError(
            f"design.points must be 4–{MAX_POINTS}, E_half_stderr_V 1e-7–1 V and electrons "
            "1–10", source=src, key="design.points",
        )  # fmt: skip
    if "temperature_min_C" in design:
        lo = float(_get(src, design, "design", "temperature_min_C"))
        hi = float(_get(src, design, "design", "temperature_max_C"))
        if not 0 <= lo < hi <= 100:
            raise InputError("design.temperature_min_C < temperature_max_C within 0–100 °C",
                             source=src, key="design.temperature_min_C")  # fmt: skip
        proposed = _get(src, design, "design", "proposed_C", default=[])
        return plan_temperature_series(
            temperature_min_C=lo, temperature_max_C=hi, points=points, E_half_stderr_V=sigma,
            electrons=n, proposed_C=proposed, title=title,
        )  # fmt: skip
    lo = float(_get(src, design, "design", "pH_min"))
    hi = float(_get(src, design, "design", "pH_max"))
    if not 0 <= lo < hi <= 14:
        raise InputError("design.pH_min < pH_max within 0–14", source=src, key="design.pH_min")
    pkas = {k: _get(src, expect, "expect", k, default=[]) for k in ("pKa_ox", "pKa_red")}
    if any(not -10.0 <= p <= 30.0 for v in pkas.values() for p in v) or not any(pkas.values()):
        raise InputError("expect.pKa_ox / pKa_red: lists of pKa within −10 to 30, one at least",
                         source=src, key="expect.pKa_ox")  # fmt: skip
    return plan_pH_series(
        pKa_ox=pkas["pKa_ox"],
        pKa_red=pkas["pKa_red"],
        pH_min=lo, pH_max=hi, points=points, E_half_stderr_V=sigma, electrons=n,
        temperature_K=T, proposed_pH=_get(src, design, "design", "proposed_pH", default=[]),
        title=title,
    )  # fmt: skip


def load_variable_plan(path: str | Path) -> VariablePlan | None:
    """The plan of a pH or temperature series in the plan file *path*, or None when the
    file plans a ligand titration (read by :func:`cvfit.plan.load_plan` then).

    Raises
    ------
    InputError
        The file cannot be read or is not TOML; a key of a pH or temperature plan is bad.
    """
    from cvfit.io.limits import MAX_MANIFEST_BYTES, read_regular_file

    src = str(path)
    raw = read_regular_file(
        Path(path),
        limit=MAX_MANIFEST_BYTES,
        what="plan file",
        missing="the plan file does not exist; check the path",
        folder="this is a folder; name the plan .toml file",
    )
    try:
        data = tomllib.loads(raw.decode("utf-8-sig"))
    except UnicodeDecodeError:
        raise InputError("the plan is not UTF-8 text; save it as UTF-8", source=src) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", source=src) from None
    except RecursionError:
        raise InputError(
            "the TOML is nested too deeply to read; fix the plan", source=src
        ) from None
    if not is_variable_plan(data):
        return None
    return variable_plan_from_mapping(src, data)


def simulate_variable_plan(
    plan: VariablePlan, out_dir: str | Path, *, E_half_V: float = 0.0, overwrite: bool = False
) -> Path:
    """Write the recommended design of *plan* as simulated voltammograms and a manifest, at
    the noise that gives the plan's per-file E½ error (the ligand plan's calibration,
    :func:`cvfit.plan.simulate_plan.noise_fraction_for`)."""
    from cvfit.plan.simulate_plan import noise_fraction_for
    from cvfit.simulate.variable_series import simulate_pH_series, simulate_temperature_series

    values = plan.designs["recommended"]["values"]
    noise = noise_fraction_for(plan.E_half_stderr_V, plan.electrons)
    if plan.kind == "pH":
        from cvfit.chemistry.protonation import proton_half_wave_V

        ox, red = plan.expect["pKa_ox"], plan.expect["pKa_red"]
        halves = proton_half_wave_V(E_half_V, values, pKa_ox=ox, pKa_red=red)
        return simulate_pH_series(
            out_dir, pH=values, E0_V=E_half_V, pKa_ox=ox, pKa_red=red,
            electrons=plan.electrons, title=plan.title, noise_fraction=noise, seed=1,
            overwrite=overwrite, temperature_K=plan.temperature_K,
            start_V=float(max(halves)) + 0.35, switch_V=float(min(halves)) - 0.35,
        )  # fmt: skip
    return simulate_temperature_series(
        out_dir, temperature_C=values, E_half_V=E_half_V, entropy_J_mol_K=0.0,
        electrons=plan.electrons, title=plan.title, noise_fraction=noise, seed=1,
        overwrite=overwrite, start_V=E_half_V + 0.4, switch_V=E_half_V - 0.4,
    )  # fmt: skip
