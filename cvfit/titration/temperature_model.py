"""The temperature model behind the titration seam: dE½/dT, the reaction entropy and enthalpy.

Each point is one solution's E½ at its own temperature (``[[voltammogram]] temperature_C``,
every file analysed at its own T), the ligand fixed or absent. The line
E½ = a + b·(T − T̄) is fitted by weighted least squares; b = dE½/dT with its Student-t
interval (the scale from the residuals). A quadratic term significant by an F-test at 1 %
is flagged: the slope is then an average over the range.

What the slope means depends on the cell (``[series] reference_at``):

* ``"constant_temperature"`` — a non-isothermal cell, the reference electrode held at a
  fixed temperature: b = dE°′/dT = ΔS°rc/nF gives the reaction entropy of the couple,
  ΔS°rc = S°red − S°ox (Yee et al. 1979; the thermal liquid-junction potential across the
  salt bridge is taken as negligible, as they argue);
* ``"same_temperature"`` — an isothermal cell, the reference at the cell's temperature:
  nF·b is the entropy of the whole cell reaction, the couple's less the reference
  half-reaction's.

ΔH = −nF·(E − T·dE/dT), constant for a straight line (ΔCp = 0), on the potential scale of
the reference electrode (for the non-isothermal cell Yee et al.'s ΔH°rc, relative to the
reference). E½ stands for E°′: the diffusion term (RT/2nF)·ln(D_R/D_O) is taken as
temperature-independent and small (for D_R/D_O = 1.2 it adds 7.9 µV/K, 0.8 J mol⁻¹ K⁻¹).

References
----------
Yee, E. L.; Cave, R. J.; Guyer, K. L.; Tyma, P. D.; Weaver, M. J. J. Am. Chem. Soc. 1979,
101, 1131 (from memory).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from cvfit.flags import Flag
from cvfit.formatting import format_pm
from cvfit.quantity import Quantity, clean_number, f_upper_tail
from cvfit.titration.base import ModelOutcome, TitrationData, TitrationPoint
from cvfit.titration.proton_model import variable_range_flags
from cvfit.units import FARADAY, ZERO_CELSIUS_K

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest

__all__ = ["TemperatureModel", "TEMPERATURE", "TemperatureFit", "REFERENCE_AT"]

#: Fewest temperatures: a line with one degree of freedom.
MIN_TEMPERATURE_POINTS = 3
#: ``[series] reference_at``: where the reference electrode is held.
REFERENCE_AT = ("constant_temperature", "same_temperature")
#: What nF·dE/dT is the entropy of, by the cell arrangement.
_ENTROPY_OF = {
    "constant_temperature": "couple (reaction entropy ΔS°rc, non-isothermal cell)",
    "same_temperature": "cell reaction (isothermal cell: the couple less the reference)",
}
#: The entropy's name in the headline, by the cell arrangement.
_ENTROPY_NAME = {
    "constant_temperature": "ΔS°rc (the couple; non-isothermal cell)",
    "same_temperature": "ΔS° of the cell reaction (isothermal cell)",
}
_NULL_Q: dict[str, Any] = {"value": None, "stderr": None, "ci95": [None, None]}


@dataclass(frozen=True, kw_only=True)
class TemperatureFit:
    """The temperature model's fit (module docstring)."""

    slope: Quantity  # dE½/dT, V/K
    E_half_mean: Quantity  # E½ at the mean temperature, V
    mean_temperature_K: float
    reference_at: str | None
    entropy: Quantity | None  # J mol⁻¹ K⁻¹
    enthalpy: Quantity | None  # J mol⁻¹
    curvature_p_value: float | None
    labels: tuple[str, ...]
    temperature_K: tuple[float, ...]
    residuals_V: tuple[float, ...]
    n_points: int
    dof: int
    weighted: bool
    electrons: int
    flags: tuple[Flag, ...] = ()

    def to_dict(self) -> dict[str, Any]:
        return {
            "model": "temperature",
            "dE_half_dT_V_K": self.slope.to_dict(),
            "E_half_at_mean_V": self.E_half_mean.to_dict(),
            "mean_temperature_K": clean_number(self.mean_temperature_K),
            "reference_at": self.reference_at,
            "entropy_of": _ENTROPY_OF.get(self.reference_at or ""),
            "reaction_entropy_J_mol_K": None if self.entropy is None else self.entropy.to_dict(),
            "reaction_enthalpy_J_mol": None if self.enthalpy is None else self.enthalpy.to_dict(),
            "curvature_p_value": clean_number(self.curvature_p_value),
            "points": [
                {"label": lb, "temperature_K": clean_number(t), "residual_V": clean_number(r)}
                for lb, t, r in zip(self.labels, self.temperature_K, self.residuals_V, strict=True)
            ],
            "n_points": self.n_points,
            "dof": self.dof,
            "weighted": self.weighted,
            "flags": [f.to_dict() for f in self.flags],
        }

    def summary_lines(self) -> list[str]:
        s = self.slope
        lines = [
            f"Temperature fit on {self.n_points} points "
            f"({self.temperature_K[0] - ZERO_CELSIUS_K:.1f}–"
            f"{self.temperature_K[-1] - ZERO_CELSIUS_K:.1f} °C, {self.dof} degrees of freedom):",
            f"  dE½/dT  {format_pm(s.value, s.stderr, scale=1e3, unit='mV/K')}   95 % CI "
            f"[{1e3 * s.ci95[0]:.4f}, {1e3 * s.ci95[1]:.4f}]",
        ]
        if self.entropy is not None and self.enthalpy is not None:
            what = _ENTROPY_OF[self.reference_at or ""]
            e, h = self.entropy, self.enthalpy
            lines.append(f"  ΔS° of the {what}: {format_pm(e.value, e.stderr, unit='J/(mol K)')}")
            lines.append(f"  ΔH° {format_pm(h.value, h.stderr, scale=1e-3, unit='kJ/mol')}")
        return lines


def _line(T: np.ndarray, E: np.ndarray, w: np.ndarray, degree: int):
    """Weighted polynomial in (T − T̄): coefficients, RSS, covariance scaled by RSS/ν."""
    X = np.vander(T - T.mean(), degree + 1, increasing=True)
    sw = np.sqrt(w)
    coef, *_ = np.linalg.lstsq(X * sw[:, None], E * sw, rcond=None)
    r = (E - X @ coef) * sw
    rss, dof = float(r @ r), T.size - degree - 1
    cov = np.linalg.inv((X * w[:, None]).T @ X) * (rss / dof if dof > 0 else math.nan)
    return coef, rss, cov, E - X @ coef


def constant_lines(fit: dict[str, Any]) -> list[str]:
    """The headline of a temperature fit mapping: dE½/dT and, with the cell stated, ΔS°."""
    q = fit.get("dE_half_dT_V_K") or _NULL_Q
    if q.get("value") is None:
        return []
    lines = [f"dE½/dT = {format_pm(q['value'], q.get('stderr'), scale=1e3, unit='mV/K')}"]
    s = fit.get("reaction_entropy_J_mol_K")
    if s and s.get("value") is not None:
        name = _ENTROPY_NAME.get(fit.get("reference_at") or "", "ΔS°")
        lines.append(f"{name} = {format_pm(s['value'], s.get('stderr'), unit='J mol⁻¹ K⁻¹')}")
    return lines


class TemperatureModel:
    """dE½/dT and, by the cell arrangement, the reaction entropy and enthalpy."""

    name = "temperature"
    title = "temperature"
    variable = "temperature_K"
    needs_reference = False
    point_rule = "a temperature_C of its own"
    method_steps: tuple[tuple[str, str, tuple[str, ...]], ...] = (
        (
            "Reaction entropy from E½ against temperature",
            "Every file is analysed at its own temperature; E½ = a + b(T − T̄) is fitted by "
            "weighted least squares and, with the reference electrode held at a constant "
            "temperature (a non-isothermal cell), ΔS°rc = nF·dE°′/dT and ΔH°rc = "
            "−nF(E°′ − T·dE°′/dT), E½ taken for E°′.",
            ("E. L. Yee, R. J. Cave, K. L. Guyer, P. D. Tyma, M. J. Weaver, "
             "J. Am. Chem. Soc. 101 (1979) 1131",),
        ),
    )  # fmt: skip
    figures: tuple[str, ...] = ("temperature_half_wave",)
    constants_note = "dE½/dT in V/K; ΔS° in J mol⁻¹ K⁻¹, ΔH° in J mol⁻¹."
    constant_lines = staticmethod(constant_lines)

    @staticmethod
    def is_point(x: float | None) -> bool:
        """A file with a temperature of its own is a point."""
        return x is not None

    @staticmethod
    def check_points(points: Sequence[TitrationPoint]) -> tuple[Flag, ...]:
        return variable_range_flags(
            [p.x for p in points], MIN_TEMPERATURE_POINTS, "temperature", "temperature"
        )

    def fit(self, data: TitrationData, manifest: Manifest) -> ModelOutcome:
        pts = sorted(data.points, key=lambda p: p.x)
        T = np.array([p.x for p in pts])
        E = np.array([p.E_half_V for p in pts])
        s = np.array([np.nan if p.E_half_stderr_V is None else p.E_half_stderr_V for p in pts])
        weighted = bool(np.all(np.isfinite(s)) and np.all(s > 0))
        w = 1.0 / s**2 if weighted else np.ones_like(T)
        coef, rss, cov, resid = _line(T, E, w, 1)
        dof = T.size - 2
        slope = Quantity.from_t(coef[1], math.sqrt(cov[1, 1]), dof)
        mean = Quantity.from_t(coef[0], math.sqrt(cov[0, 0]), dof)
        flags, p_curve = [], None
        if dof >= 2:
            _, rss2, _, _ = _line(T, E, w, 2)
            F = (rss - rss2) / (rss2 / (dof - 1)) if rss2 > 0 else math.inf
            p_curve = float(f_upper_tail(F, 1, dof - 1))
            if p_curve < 0.01:
                flags.append(
                    Flag(
                        "TEMPERATURE_LINE_CURVED",
                        f"E½ bends with temperature (quadratic term, F-test p = {p_curve:.2g}): "
                        "dE½/dT is an average over the range and ΔCp is not zero",
                    )
                )
        where = manifest.reference_at
        entropy = enthalpy = None
        nF = manifest.series.electrons * FARADAY
        Tm = float(T.mean())
        if where is None:
            flags.append(
                Flag(
                    "TEMPERATURE_CELL_UNSTATED",
                    "[series] reference_at is not given: dE½/dT is reported, the reaction "
                    'entropy is not — say "constant_temperature" (non-isothermal cell) or '
                    '"same_temperature" (isothermal cell)',
                    "info",
                )
            )
        else:
            entropy = Quantity.from_t(nF * slope.value, nF * slope.stderr, dof)
            h = -nF * (coef[0] - Tm * coef[1])
            h_se = nF * math.sqrt(cov[0, 0] + Tm**2 * cov[1, 1])
            enthalpy = Quantity.from_t(h, h_se, dof)
        fit = TemperatureFit(
            slope=slope,
            E_half_mean=mean,
            mean_temperature_K=Tm,
            reference_at=where,
            entropy=entropy,
            enthalpy=enthalpy,
            curvature_p_value=p_curve,
            labels=tuple(p.label for p in pts),
            temperature_K=tuple(float(t) for t in T),
            residuals_V=tuple(float(r) for r in resid),
            n_points=len(pts),
            dof=dof,
            weighted=weighted,
            electrons=manifest.series.electrons,
            flags=tuple(flags),
        )
        return ModelOutcome(fit)

    def null_dict(self, n_points: int, flags: Sequence[Flag]) -> dict[str, Any]:
        return {
            "model": "temperature",
            "dE_half_dT_V_K": dict(_NULL_Q),
            "E_half_at_mean_V": dict(_NULL_Q),
            "mean_temperature_K": None,
            "reference_at": None,
            "entropy_of": None,
            "reaction_entropy_J_mol_K": None,
            "reaction_enthalpy_J_mol": None,
            "curvature_p_value": None,
            "points": [],
            "n_points": int(n_points),
            "dof": None,
            "weighted": False,
            "flags": [f.to_dict() for f in flags],
        }


#: The temperature model object (``[fit] model = "temperature"``).
TEMPERATURE = TemperatureModel()
