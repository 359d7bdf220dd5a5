"""The pH model behind the titration seam: the pKa of both forms of a couple from E½ against pH.

Each point is one solution's E½ at its pH (``[[voltammogram]] pH = …`` or a ``[[point]]``);
no ligand-free reference is needed. The relation is
:func:`cvfit.chemistry.protonation.proton_half_wave_V`,

    E½(pH) = E° + (RT/nF)·ln[Σ_j [H⁺]^j β_j,red / Σ_j [H⁺]^j β_j,ox],

with up to ``[fit] max_protons`` protonation steps per oxidation state, [H⁺] = 10^−pH taken
as an activity; the fit and the choice of the number of steps are
:mod:`cvfit.titration.proton_fit`.

References
----------
Clark, W. M. Oxidation-Reduction Potentials of Organic Systems; Williams & Wilkins:
Baltimore, 1960 (from memory).
Bard, A. J.; Faulkner, L. R. Electrochemical Methods, 2nd ed.; Wiley: New York, 2001
(from memory).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

import numpy as np

from cvfit.chemistry.protonation import LN10, proton_regions
from cvfit.flags import FitRefused, Flag
from cvfit.quantity import Quantity
from cvfit.titration.base import ModelOutcome, TitrationData, TitrationPoint
from cvfit.titration.proton_result import (
    PKa,
    ProtonFit,
    ProtonRegion,
    null_proton_dict,
    proton_constant_lines,
)
from cvfit.units import thermal_voltage

if TYPE_CHECKING:
    from cvfit.io.manifest import Manifest
    from cvfit.titration.proton_fit import ProtonCandidate, ProtonData

__all__ = ["ProtonModel", "PROTON", "MIN_PH_POINTS", "variable_range_flags"]

#: Fewest points: E° and one pKa with one degree of freedom left.
MIN_PH_POINTS = 3

METHOD_STEP: tuple[str, str, tuple[str, ...]] = (
    "Acidity constants from E½ against pH",
    "E½(pH) = E° + (RT/nF) ln[Σj [H⁺]^j βj,red / Σj [H⁺]^j βj,ox] (βj = 10^(pKa1 + … + pKaj), "
    "[H⁺] = 10^−pH as an activity, so the pKa are mixed constants) is fitted by weighted "
    "non-linear least squares (lmfit); the number of protonation steps of each form is the "
    "smallest that no larger candidate beats by an F-test at 1 %, the pKa intervals are "
    "profile-likelihood intervals, and each pH region between pKa values is labelled with "
    "its slope −m·ln(10)RT/nF (m protons per n electrons).",
    (
        "W. M. Clark, Oxidation-Reduction Potentials of Organic Systems (1960)",
        "A. J. Bard, L. R. Faulkner, Electrochemical Methods, 2nd ed. (2001)",
    ),
)


def variable_range_flags(
    values: Sequence[float], minimum: int, what: str, model: str
) -> tuple[Flag, ...]:
    """TOO_FEW_POINTS or NO_VARIABLE_RANGE (errors) for the points of a pH or temperature
    series, before fitting."""
    if len(values) < minimum:
        return (
            Flag(
                "TOO_FEW_POINTS",
                f"{len(values)} usable point(s); the {model} fit needs at least {minimum} — "
                "no constants reported",
                "error",
            ),
        )
    if max(values) - min(values) <= 0:
        return (
            Flag(
                "NO_VARIABLE_RANGE",
                f"every point has the same {what} ({values[0]:g}); nothing can be fitted "
                f"against it — measure at several values of {what}",
                "error",
            ),
        )
    return ()


def _sigmas(points: Sequence[TitrationPoint]) -> tuple[np.ndarray, bool]:
    s = np.array([np.nan if p.E_half_stderr_V is None else p.E_half_stderr_V for p in points])
    if np.all(np.isfinite(s)) and np.all(s > 0):
        return s, True
    return np.full(len(points), 1e-3), False


def _pka(data: ProtonData, fit: ProtonCandidate, form: str) -> tuple[PKa, ...]:
    from cvfit.titration.proton_fit import profile_interval

    n = fit.n_ox if form == "ox" else fit.n_red
    out = []
    for j in range(1, n + 1):
        name = f"pKa_{form}_{j}"
        k = fit.names.index(name)
        lo, hi = profile_interval(data, fit, name)
        se = math.sqrt(fit.covariance[k, k]) if fit.covariance is not None else math.nan
        q = Quantity(fit.values[k], se, (lo, hi), "profile likelihood, F(1, ν)")
        determined = math.isfinite(lo) and math.isfinite(hi) and not fit.at_bound[k - 1]
        out.append(PKa(form, j, q, determined))
    return tuple(out)


def _undetermined_flag(pkas: Sequence[PKa], pH: np.ndarray) -> tuple[Flag, ...]:
    bad = [p for p in pkas if not p.determined]
    if not bad:
        return ()
    names = ", ".join(f"pKa{p.j} ({p.form}) ≈ {p.value.value:.2f}" for p in bad)
    return (
        Flag(
            "PKA_NOT_DETERMINED",
            f"{names}: the pH range measured ({pH.min():.2f}–{pH.max():.2f}) does not reach "
            "far enough past it (its 95 % interval is open); measure up to about 1.5 pH units "
            "beyond it",
        ),
    )


class ProtonModel:
    """pKa of both forms and E° of the unprotonated couple from E½ against pH."""

    name = "proton"
    title = "pH"
    variable = "pH"
    needs_reference = False
    #: What makes a file a point of this model, in the manifest's words.
    point_rule = "a pH"
    method_steps: tuple[tuple[str, str, tuple[str, ...]], ...] = (METHOD_STEP,)
    figures: tuple[str, ...] = ("proton_half_wave", "proton_fractions")
    constants_note = "pKa on the activity scale of H⁺ (mixed constants); E° in mV."
    constant_lines = staticmethod(proton_constant_lines)

    @staticmethod
    def is_point(x: float | None) -> bool:
        """A file with a pH is a point."""
        return x is not None

    @staticmethod
    def check_points(points: Sequence[TitrationPoint]) -> tuple[Flag, ...]:
        return variable_range_flags([p.x for p in points], MIN_PH_POINTS, "pH", "pH")

    def fit(self, data: TitrationData, manifest: Manifest) -> ModelOutcome:
        """The fit of E½ against pH (module docstring); no notes on the points."""
        from cvfit.titration.proton_fit import ALPHA, ProtonData, choose, fit_candidates

        series = manifest.series
        pts = data.points
        sigma, weighted = _sigmas(pts)
        k = thermal_voltage(series.temperature_K, series.electrons)
        pd = ProtonData(
            np.array([p.x for p in pts]),
            np.array([p.E_half_V for p in pts]),
            sigma,
            k,
            series.electrons,
            series.temperature_K,
        )
        fits = fit_candidates(pd, manifest.fit.max_protons)
        if not fits:
            return ModelOutcome(FitRefused(self.check_points(())))
        chosen = choose(fits, alpha=ALPHA)
        ox, red = _pka(pd, chosen, "ox"), _pka(pd, chosen, "red")
        flags: list[Flag] = list(_undetermined_flag((*ox, *red), pd.pH))
        if not weighted:
            flags.append(
                Flag(
                    "PROTON_FIT_UNWEIGHTED",
                    "not every E½ has a standard error: equal weights, the scale from the "
                    "scatter of the points about the fit",
                    "info",
                )
            )
        cov = chosen.covariance
        se0 = math.sqrt(cov[0, 0]) if cov is not None else math.nan
        regions = tuple(
            ProtonRegion(a, b, m, -m * LN10 * k)
            for a, b, m in proton_regions(
                chosen.pKa_ox, chosen.pKa_red, (float(pd.pH.min()), float(pd.pH.max()))
            )
        )
        model = pd.model(chosen.E0, chosen.pKa_ox, chosen.pKa_red)
        candidates = tuple(
            {
                "n_ox": c.n_ox,
                "n_red": c.n_red,
                "chi_square": float(c.rss),
                "dof": c.dof,
                "pKa": [float(v) for v in c.values[1:]],
            }
            for c in fits
        )
        fit = ProtonFit(
            E0=Quantity.from_t(chosen.E0, se0, chosen.dof),
            pKa_ox=ox,
            pKa_red=red,
            regions=regions,
            candidates=candidates,
            max_protons=manifest.fit.max_protons,
            alpha=ALPHA,
            labels=tuple(p.label for p in pts),
            pH=tuple(float(x) for x in pd.pH),
            residuals_V=tuple(float(x) for x in pd.E_half_V - model),
            n_points=len(pts),
            dof=chosen.dof,
            reduced_chi_square=chosen.rss / chosen.dof if chosen.dof > 0 else math.nan,
            weighted=weighted,
            electrons=series.electrons,
            temperature_K=series.temperature_K,
            flags=tuple(flags),
        )
        return ModelOutcome(fit)

    def null_dict(self, n_points: int, flags: Sequence[Flag]) -> dict[str, Any]:
        return null_proton_dict(n_points, flags)


#: The pH model object (``[fit] model = "proton"``).
PROTON = ProtonModel()
