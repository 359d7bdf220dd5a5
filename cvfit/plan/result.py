"""The plan's result record and its JSON form (``plan.json``, schema plan.schema.json)."""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from cvfit.plan.inputs import PlanInput
from cvfit.quantity import clean_number
from cvfit.version import __version__

__all__ = ["DesignAssessment", "PlanWarning", "PlanResult", "WARNING_KINDS"]

#: Kinds of plan warning and what each means (the plan's own findings, not result flags).
WARNING_KINDS = {
    "low_ligand_excess": "more than 10 % of the ligand is bound to the metal at some point",
    "ligand_depletion": "bound ligand moves a planned E½ by more than its noise",
    "unresolved_constant": "the ligand range cannot resolve a constant; the [L] that would",
    "imprecise_constant": "a constant's predicted standard error exceeds 0.3 log10 units",
    "target_unreachable": "no number of points up to the search limit reaches the target",
    "line_bends": "the complex does not dominate at the low end, so the Lingane line bends",
    "lingane_range_restricted": "the recommended design keeps to where the Lingane line holds",
    "no_free_ligand": "the metal binds all the ligand at some points: nothing is determined",
    "second_reference": "a second ligand-free solution and how much it would narrow E½(s)",
    "short_ligand_range": "the ligand range spans less than one decade",
    "proposed_singular": "the proposed design cannot determine every constant",
}


def _finite(x: float) -> float | None:
    return clean_number(x) if x is not None and math.isfinite(x) else None


@dataclass(frozen=True)
class DesignAssessment:
    """One design and what it is predicted to give.

    Attributes
    ----------
    name : {"recommended", "proposed", "log_spaced"}
    ligand_M : tuple of float
        Total ligand of each solution, mol/L (the ligand-free reference comes on top).
    free_ligand_M : tuple of float
        Free ligand at the expected constants (equal to ``ligand_M`` without metal).
    stderr : tuple of float
        Predicted standard error of every constant at the expected values (NaN: not
        determined).
    stderr_worst : tuple of float
        The largest over the scenarios of the rough constants.
    criterion_mean, criterion_worst : float
        The plan's criterion averaged over the scenarios and at the worst one (lower is
        better; σ = 1 V).
    """

    name: str
    ligand_M: tuple[float, ...]
    free_ligand_M: tuple[float, ...]
    stderr: tuple[float, ...]
    stderr_worst: tuple[float, ...]
    criterion_mean: float
    criterion_worst: float

    def __post_init__(self) -> None:
        if self.name not in ("recommended", "proposed", "log_spaced"):
            raise ValueError(f"unknown design name {self.name!r}")
        if len(self.ligand_M) != len(self.free_ligand_M):
            raise ValueError("ligand_M and free_ligand_M must have one entry per solution")
        if len(self.stderr) != len(self.stderr_worst):
            raise ValueError("stderr and stderr_worst must have one entry per constant")

    def to_dict(self, names: tuple[str, ...]) -> dict[str, Any]:
        return {
            "ligand_M": list(self.ligand_M),
            "free_ligand_M": [_finite(x) for x in self.free_ligand_M],
            "stderr": {n: _finite(s) for n, s in zip(names, self.stderr, strict=True)},
            "stderr_worst": {n: _finite(s) for n, s in zip(names, self.stderr_worst, strict=True)},
            "criterion_mean": _finite(self.criterion_mean),
            "criterion_worst": _finite(self.criterion_worst),
        }


@dataclass(frozen=True)
class PlanWarning:
    """A finding about the plan: ``kind`` from :data:`WARNING_KINDS`, and a message."""

    kind: str
    message: str

    def __post_init__(self) -> None:
        if self.kind not in WARNING_KINDS:
            raise ValueError(f"unknown plan warning kind {self.kind!r}")

    def to_dict(self) -> dict[str, str]:
        return {"kind": self.kind, "message": self.message}


@dataclass(frozen=True)
class PlanResult:
    """Everything ``cvfit plan`` reports.

    Attributes
    ----------
    request : PlanInput
        The checked plan file.
    scenarios : tuple of tuple of float
        The guesses of the constants the criterion was averaged over.
    designs : tuple of DesignAssessment
        Recommended, log-spaced and (when given) proposed.
    points_needed : int or None
        Fewest points (recommended distribution) whose worst-scenario standard error of
        every constant of interest reaches ``target_stderr_log10``; None without a target
        or when unreachable.
    warnings : tuple of PlanWarning
    """

    request: PlanInput
    scenarios: tuple[tuple[float, ...], ...]
    designs: tuple[DesignAssessment, ...]
    points_needed: int | None
    warnings: tuple[PlanWarning, ...]

    def design(self, name: str) -> DesignAssessment | None:
        return next((d for d in self.designs if d.name == name), None)

    def to_dict(self) -> dict[str, Any]:
        """The plan.json mapping (NaN → null)."""
        r = self.request
        return {
            "cvfit_version": __version__,
            "plan_file": r.source,
            "title": r.title,
            "model": r.model,
            "series": {
                "electrons": r.electrons,
                "temperature_K": r.temperature_K,
                "metal_total_M": r.metal_total_M,
            },
            "constants": [
                {
                    "name": n,
                    "expected": v,
                    "range": list(rg),
                    "of_interest": n in r.optimise_for,
                }
                for n, v, rg in zip(r.names, r.values, r.ranges, strict=True)
            ],
            "fitted_state": r.fitted_state,
            "fixed_log10_beta": list(r.fixed_log10_beta),
            "design_space": {
                "ligand_min_M": r.ligand_min_M,
                "ligand_max_M": r.ligand_max_M,
                "points": r.points,
                "E_half_stderr_V": r.E_half_stderr_V,
                "criterion": r.criterion,
                "target_stderr_log10": r.target_stderr_log10,
            },
            "scenarios": [list(s) for s in self.scenarios],
            "designs": {d.name: d.to_dict(r.names) for d in self.designs},
            "points_needed": self.points_needed,
            "warnings": [w.to_dict() for w in self.warnings],
        }
