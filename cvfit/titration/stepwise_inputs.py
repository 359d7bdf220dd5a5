"""The inputs of the stepwise fit: titration points, solution conditions, and the arrays
:func:`cvfit.titration.stepwise.fit_stepwise` works on."""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np

from cvfit.chemistry.speciation import ligand_fraction_unprotonated

__all__ = [
    "StepwisePoint",
    "SolutionConditions",
    "Observations",
    "observations",
    "alpha_L",
    "sigmas",
]


@dataclass(frozen=True)
class StepwisePoint:
    """One titration point for the stepwise fit.

    Attributes
    ----------
    label : str
        Where the point came from (file name).
    ligand_M : float
        Analytical (total) ligand concentration, mol/L (> 0).
    E_half_V : float
        Half-wave potential, V.
    E_half_stderr_V : float or None
        Its standard error, V (None: unknown, the median of the others is used).
    ln_current_ratio : float or None
        ln(Is/Ic), the DeFord–Hume correction from the peak currents (None: not applied).
    pH : float or None
        pH of this solution (None: the series-wide value).
    bulk_form : {"ox", "red"}
        Form the metal is in the bulk solution (the one the first sweep consumes: "red"
        for an oxidation first); its constants enter the free-ligand mass balance.
    metal_M : float or None
        This solution's own total metal concentration, mol/L (a titration by additions);
        None: ``SolutionConditions.metal_total_M``.
    """

    label: str
    ligand_M: float
    E_half_V: float
    E_half_stderr_V: float | None = None
    ln_current_ratio: float | None = None
    pH: float | None = None
    bulk_form: str = "ox"
    metal_M: float | None = None

    def __post_init__(self) -> None:
        if self.bulk_form not in ("ox", "red"):
            raise ValueError(f"{self.label}: bulk_form must be 'ox' or 'red'")
        if self.metal_M is not None and not float(self.metal_M) > 0:
            raise ValueError(f"{self.label}: metal_M must be > 0")
        for name in ("ligand_M", "E_half_V"):
            v = float(getattr(self, name))
            if not math.isfinite(v):
                raise ValueError(f"{self.label}: {name} must be finite, got {v!r}")
            object.__setattr__(self, name, v)
        if self.ligand_M <= 0:
            raise ValueError(f"{self.label}: ligand_M must be > 0 for the stepwise fit")
        for name in ("E_half_stderr_V", "ln_current_ratio", "pH"):
            v = getattr(self, name)
            if v is not None:
                v = float(v)
                object.__setattr__(self, name, v if math.isfinite(v) else None)
        s = self.E_half_stderr_V
        if s is not None and s <= 0:
            object.__setattr__(self, "E_half_stderr_V", None)


@dataclass(frozen=True, kw_only=True)
class SolutionConditions:
    """Solution chemistry of the series (all optional).

    Attributes
    ----------
    metal_total_M : float or None
        Analytical metal concentration, mol/L: turns on the free-ligand mass balance.
    bound_ligand_number : float or None
        Ligands bound per metal, given by the user: [L] = α_L (L_T − n M_T) instead of
        the self-consistent mass balance.
    ligand_pKa : tuple of float
        Acid dissociation pKa values of the ligand's conjugate acids.
    pH : float or None
        Series-wide pH (points may carry their own).
    ionic_strength_M : float or None
        Ionic strength, mol/L (recorded; with the charges, Davies corrections).
    metal_charge, ligand_charge : int or None
        Charge numbers of the free oxidised metal ion and of the free ligand.
    """

    metal_total_M: float | None = None
    bound_ligand_number: float | None = None
    ligand_pKa: tuple[float, ...] = ()
    pH: float | None = None
    ionic_strength_M: float | None = None
    metal_charge: int | None = None
    ligand_charge: int | None = None
    extra: dict = field(default_factory=dict, compare=False, repr=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "ligand_pKa", tuple(float(p) for p in self.ligand_pKa))
        if self.metal_total_M is not None and not self.metal_total_M > 0:
            raise ValueError("metal_total_M must be > 0")
        if self.bound_ligand_number is not None and self.metal_total_M is None:
            raise ValueError("bound_ligand_number needs metal_total_M")
        if self.ionic_strength_M is not None and not self.ionic_strength_M >= 0:
            raise ValueError("ionic_strength_M must be >= 0")


def alpha_L(points: Sequence[StepwisePoint], cond: SolutionConditions) -> np.ndarray:
    """Unprotonated fraction of the free ligand at each point (1 without pKa values)."""
    if not cond.ligand_pKa:
        return np.ones(len(points))
    pHs = []
    for p in points:
        pH = p.pH if p.pH is not None else cond.pH
        if pH is None:
            raise ValueError(f"{p.label}: ligand pKa values are given but no pH for this point")
        pHs.append(pH)
    return ligand_fraction_unprotonated(np.array(pHs), cond.ligand_pKa)


def sigmas(
    points: Sequence[StepwisePoint], reference_stderr_V: float | None
) -> tuple[np.ndarray, float, bool]:
    """Per-point σ (unknown ones: the median of the known, else 1 mV), the reference σ
    and whether any σ was given."""
    s = np.array([np.nan if p.E_half_stderr_V is None else p.E_half_stderr_V for p in points])
    known = s[np.isfinite(s)]
    fill = float(np.median(known)) if known.size else 1e-3
    s = np.where(np.isfinite(s), s, fill)
    ref = reference_stderr_V if reference_stderr_V and reference_stderr_V > 0 else fill
    return s, float(ref), bool(known.size)


@dataclass(frozen=True)
class Observations:
    """The points as arrays: total ligand, E½, ln(Is/Ic), errors, α_L, bulk form, and
    each solution's total metal (None when no point has one: no mass balance)."""

    ligand_total_M: np.ndarray
    E_half_V: np.ndarray
    ln_current_ratio: np.ndarray
    has_ratio: bool
    sigma_V: np.ndarray
    reference_sigma_V: float
    weighted: bool
    alpha_L: np.ndarray
    bulk_red: np.ndarray
    metal_total_M: np.ndarray | None = None


def metal_totals(pts: Sequence[StepwisePoint], cond: SolutionConditions) -> np.ndarray | None:
    """Each point's total metal, mol/L: its own, else the series value (0 for a point with
    neither in a series where others have one); None when no point has any."""
    metals = [p.metal_M if p.metal_M is not None else cond.metal_total_M for p in pts]
    if all(m is None for m in metals):
        return None
    return np.array([0.0 if m is None else float(m) for m in metals])


def observations(
    pts: Sequence[StepwisePoint], cond: SolutionConditions, reference_stderr_V: float | None
) -> Observations:
    sig, ref_sig, weighted = sigmas(pts, reference_stderr_V)
    return Observations(
        ligand_total_M=np.array([p.ligand_M for p in pts]),
        E_half_V=np.array([p.E_half_V for p in pts]),
        ln_current_ratio=np.array(
            [0.0 if p.ln_current_ratio is None else p.ln_current_ratio for p in pts]
        ),
        has_ratio=any(p.ln_current_ratio is not None for p in pts),
        sigma_V=sig,
        reference_sigma_V=ref_sig,
        weighted=weighted,
        alpha_L=alpha_L(pts, cond),
        bulk_red=np.array([p.bulk_form == "red" for p in pts]),
        metal_total_M=metal_totals(pts, cond),
    )
