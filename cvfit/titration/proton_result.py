"""Result record of the pH model: the pKa of both forms, E° and the slope of each region.

Every pKa is on the activity scale of H⁺: [H⁺] = 10^−pH as the pH meter reads it, so the
constants are mixed constants (H⁺ as an activity, the other species as concentrations).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from cvfit.flags import Flag
from cvfit.formatting import format_pm
from cvfit.quantity import Quantity, clean_number

__all__ = [
    "PKa",
    "ProtonRegion",
    "ProtonFit",
    "null_proton_dict",
    "proton_constant_lines",
    "HYDROGEN_ION_SCALE",
]

#: What [H⁺] is in the relation, as results.json states it.
HYDROGEN_ION_SCALE = (
    "activity: [H+] = 10^-pH as measured with a pH meter; the pKa are mixed constants "
    "(H+ as an activity, the other species as concentrations)"
)


def _ci(lo: float, hi: float, digits: int = 2) -> str:
    def side(x: float) -> str:
        return f"{x:.{digits}f}" if math.isfinite(x) else "open"

    return f"[{side(lo)}, {side(hi)}]"


@dataclass(frozen=True)
class PKa:
    """One pKa: H_jX ⇌ H_{j−1}X + H⁺ of the form X, j counted from the unprotonated form.

    ``determined`` is False when its profile interval is open on a side (the pH range
    measured does not reach past it).
    """

    form: str
    j: int
    value: Quantity
    determined: bool

    def to_dict(self) -> dict[str, Any]:
        return {"j": self.j, **self.value.to_dict(), "determined": self.determined}


@dataclass(frozen=True)
class ProtonRegion:
    """A pH range between successive pKa values and the protons m = m_red − m_ox that travel
    with the n electrons there: E½ falls by m·ln(10)·RT/nF per pH unit."""

    pH_low: float
    pH_high: float
    protons: int
    slope_V_per_pH: float

    def to_dict(self) -> dict[str, Any]:
        return {
            "pH_low": clean_number(self.pH_low),
            "pH_high": clean_number(self.pH_high),
            "protons": self.protons,
            "slope_V_per_pH": clean_number(self.slope_V_per_pH),
        }


@dataclass(frozen=True, kw_only=True)
class ProtonFit:
    """The pH model's fit (:mod:`cvfit.titration.proton_model`)."""

    E0: Quantity
    pKa_ox: tuple[PKa, ...]
    pKa_red: tuple[PKa, ...]
    regions: tuple[ProtonRegion, ...]
    candidates: tuple[dict[str, Any], ...]
    max_protons: int
    alpha: float
    labels: tuple[str, ...]
    pH: tuple[float, ...]
    residuals_V: tuple[float, ...]
    n_points: int
    dof: int
    reduced_chi_square: float
    weighted: bool
    electrons: int
    temperature_K: float
    flags: tuple[Flag, ...] = ()

    @property
    def pKa_ox_values(self) -> list[float]:
        return [p.value.value for p in self.pKa_ox]

    @property
    def pKa_red_values(self) -> list[float]:
        return [p.value.value for p in self.pKa_red]

    def to_dict(self) -> dict[str, Any]:
        return {
            "model": "proton",
            "E0_V": self.E0.to_dict(),
            "pKa_ox": [p.to_dict() for p in self.pKa_ox],
            "pKa_red": [p.to_dict() for p in self.pKa_red],
            "regions": [r.to_dict() for r in self.regions],
            "hydrogen_ion": HYDROGEN_ION_SCALE,
            "selection": {
                "criterion": "extra-sum-of-squares F-test",
                "alpha": self.alpha,
                "max_protons": self.max_protons,
                "candidates": list(self.candidates),
            },
            "points": [
                {"label": lb, "pH": clean_number(x), "residual_V": clean_number(r)}
                for lb, x, r in zip(self.labels, self.pH, self.residuals_V, strict=True)
            ],
            "n_points": self.n_points,
            "dof": self.dof,
            "reduced_chi_square": clean_number(self.reduced_chi_square),
            "weighted": self.weighted,
            "flags": [f.to_dict() for f in self.flags],
        }

    def summary_lines(self) -> list[str]:
        """The fit in a few lines: the steps chosen, each pKa, E°, the regions' slopes."""
        lines = [
            f"pH fit on {self.n_points} points: {len(self.pKa_ox)} protonation step(s) of the "
            f"oxidised form, {len(self.pKa_red)} of the reduced form, chosen by an F-test at "
            f"{self.alpha:g} ({self.dof} degrees of freedom):"
        ]
        for p in (*self.pKa_ox, *self.pKa_red):
            mark = "" if p.determined else "   NOT DETERMINED by this pH range"
            lines.append(f"  pKa{p.j} ({p.form:<3})  {_text(p.to_dict())}{mark}")
        E0 = format_pm(self.E0.value, self.E0.stderr, scale=1e3, unit="mV")
        lines.append(f"  E° of the unprotonated couple  {E0}")
        for r in self.regions:
            lines.append(
                f"  pH {r.pH_low:5.2f}–{r.pH_high:5.2f}: {r.protons:+d} H⁺ per {self.electrons} "
                f"e⁻, slope {1e3 * r.slope_V_per_pH:+.1f} mV/pH"
            )
        lines.append("  ([H⁺] = 10^−pH, an activity: the pKa are mixed constants)")
        return lines


def null_proton_dict(n_points: int, flags: Sequence[Flag]) -> dict[str, Any]:
    """The ``fit`` record of a pH series that could not be fitted (flags say why)."""
    return {
        "model": "proton",
        "E0_V": {"value": None, "stderr": None, "ci95": [None, None]},
        "pKa_ox": [],
        "pKa_red": [],
        "regions": [],
        "hydrogen_ion": HYDROGEN_ION_SCALE,
        "selection": {
            "criterion": "extra-sum-of-squares F-test",
            "alpha": None,
            "max_protons": None,
            "candidates": [],
        },
        "points": [],
        "n_points": int(n_points),
        "dof": None,
        "reduced_chi_square": None,
        "weighted": False,
        "flags": [f.to_dict() for f in flags],
    }


def _text(q: Mapping[str, Any]) -> str:
    """``"3.9958 ± 0.0016, 95 % CI [3.9923, 3.9993]"`` (the interval in the value's digits)."""
    shown = format_pm(q.get("value"), q.get("stderr"))
    head = shown.split(" ± ")[0].split(" ")[0]
    digits = len(head.split(".")[1]) if "." in head else 0
    lo, hi = (q.get("ci95") or [None, None])[:2]
    lo = math.nan if lo is None else lo
    hi = math.nan if hi is None else hi
    return f"{shown}, 95 % CI {_ci(lo, hi, digits)}"


def proton_constant_lines(fit: Mapping[str, Any]) -> list[str]:
    """The headline constants of a pH fit mapping: every pKa of both forms (empty when
    the fit gave none)."""
    lines = []
    for key, form in (("pKa_ox", "oxidised"), ("pKa_red", "reduced")):
        for q in fit.get(key) or []:
            if q.get("value") is None:
                continue
            text = f"pKa{q.get('j')} ({form} form) = {_text(q)}"
            if q.get("determined") is False:
                text += " (not determined by this pH range)"
            lines.append(text)
    if not lines and (fit.get("E0_V") or {}).get("value") is not None:
        lines.append("no protonation step of either form over this pH range")
    return lines
