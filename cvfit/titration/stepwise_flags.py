"""The flags of the stepwise fit: their codes and texts, apart from the numerics.

Each function builds one :class:`cvfit.flags.Flag` from the numbers that
:func:`cvfit.titration.stepwise.fit_stepwise` measured (codes listed in
:mod:`cvfit.flag_codes`).
"""

from __future__ import annotations

from collections.abc import Sequence

from cvfit.chemistry.speciation import BOUND_LIGAND_SHARE_MAX
from cvfit.flags import FitRefused, Flag

__all__ = [
    "too_few_points",
    "free_ligand_not_converged",
    "diffusion_term_shared_ratio",
    "bound_ligand_method",
    "low_ligand_excess",
    "ligand_depletion_corrected",
    "unweighted",
    "activity_temperature_out_of_range",
]


def too_few_points(n: int, needed: int) -> FitRefused:
    return FitRefused(
        (
            Flag(
                "TOO_FEW_POINTS",
                f"{n} titration point(s); the stepwise fit needs at least {needed} — no "
                "constants reported",
                "error",
            ),
        )
    )


def free_ligand_not_converged(rounds: int, change: float) -> Flag:
    return Flag(
        "FREE_LIGAND_NOT_CONVERGED",
        f"free ligand and constants did not settle in {rounds} rounds "
        f"(last change {change:.2g} in ln[L])",
    )


def diffusion_term_shared_ratio(r: float) -> Flag:
    return Flag(
        "DIFFUSION_TERM_SHARED_RATIO",
        "both forms complexed: the diffusion term ½ ln[(D_O,s·D_R,c)/(D_R,s·D_O,c)] "
        "needs the reduced form's D ratio, which reduction peak currents do not "
        f"measure; its complexes were taken to diffuse at the same fraction "
        f"(r = {r:.3g}, from the currents) of the free ion's D as the "
        "oxidised form's",
        "info",
    )


def bound_ligand_method(self_consistent: bool, bound_ligand_number: float | None) -> str:
    """How the free ligand was obtained, for the two flags below."""
    if self_consistent:
        return "free ligand from the mass balance with the fitted constants"
    return f"free ligand with {bound_ligand_number:g} bound ligands per metal"


def low_ligand_excess(labels: Sequence[str], largest_share: float, how: str) -> Flag:
    return Flag(
        "LOW_LIGAND_EXCESS",
        f"more than {100 * BOUND_LIGAND_SHARE_MAX:g} % of the ligand is bound to "
        f"the metal in {len(labels)} point(s) ({', '.join(labels)}; up to "
        f"{100 * largest_share:.1f} %); {how} was used (the correction is "
        "exact only if the constants are; common practice: >= 10-fold excess "
        "per bound ligand)",
    )


def ligand_depletion_corrected(labels: Sequence[str], largest_shift_V: float, how: str) -> Flag:
    return Flag(
        "LIGAND_DEPLETION_CORRECTED",
        f"the bound-ligand correction moves {len(labels)} point(s) "
        f"({', '.join(labels)}) by more than their E½ noise (up to "
        f"{1e3 * largest_shift_V:.2f} mV); {how} was used",
    )


def unweighted() -> Flag:
    return Flag(
        "UNWEIGHTED_STEPWISE",
        "no per-file E½ errors: equal weights, scale from the residual scatter",
        "info",
    )


def activity_temperature_out_of_range(celsius: float) -> Flag:
    return Flag(
        "ACTIVITY_TEMPERATURE_OUT_OF_RANGE",
        f"{celsius:.1f} °C lies outside 0–100 °C, where the "
        "permittivity of water (and so the Davies A) is known; no thermodynamic "
        "constants are reported",
    )
