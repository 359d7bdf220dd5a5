"""Concentrations of a titration by additions: a stock poured into a cell, both diluted.

A cell holds V0 of a solution with total metal c_M0 and total ligand c_L0; a stock with
ligand c_Ls (and metal c_Ms, 0 for a pure ligand stock) is added in portions. After a
cumulative volume V_add, volumes being additive (dilute solutions), the amounts of each
component are conserved:

    V = V0 + V_add
    c_L = (c_L0·V0 + c_Ls·V_add) / V
    c_M = (c_M0·V0 + c_Ms·V_add) / V

With a ligand-only stock the metal falls by V0/V; a stock that holds the cell's metal
concentration (c_Ms = c_M0) keeps it constant.

References
----------
Harris, D. C. Quantitative Chemical Analysis, 8th ed.; Freeman: New York, 2010, ch. 1
(dilution, c·V conserved) and ch. 7 (titration curves with the dilution term); from
memory.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["Dilution", "diluted"]


@dataclass(frozen=True)
class Dilution:
    """The solution in the cell after an addition.

    Attributes
    ----------
    volume_mL : float
        V = V0 + V_add, mL.
    ligand_M, metal_M : float
        Total ligand and total metal concentration, mol/L.
    """

    volume_mL: float
    ligand_M: float
    metal_M: float


def _non_negative(name: str, value: float) -> float:
    v = float(value)
    if not math.isfinite(v) or v < 0:
        raise ValueError(f"{name} must be a finite number >= 0, got {value!r}")
    return v


def diluted(
    *,
    start_volume_mL: float,
    added_mL: float,
    metal_M: float,
    ligand_stock_M: float,
    ligand_M: float = 0.0,
    metal_stock_M: float = 0.0,
) -> Dilution:
    """Total ligand and metal in the cell after *added_mL* of stock (module docstring).

    Parameters
    ----------
    start_volume_mL : float
        V0, the cell's volume before any addition, mL (> 0).
    added_mL : float
        Cumulative volume of stock added, mL (>= 0).
    metal_M, ligand_M : float
        The cell's initial total metal and ligand concentrations, mol/L.
    ligand_stock_M, metal_stock_M : float
        Ligand and metal concentrations of the stock, mol/L.

    Returns
    -------
    Dilution

    Raises
    ------
    ValueError
        A negative or non-finite value, or V0 = 0.

    References
    ----------
    Harris, D. C. Quantitative Chemical Analysis, 8th ed.; Freeman: New York, 2010, ch. 1
    (from memory).
    """
    v0 = _non_negative("start_volume_mL", start_volume_mL)
    if v0 == 0:
        raise ValueError("start_volume_mL must be > 0")
    add = _non_negative("added_mL", added_mL)
    cm0 = _non_negative("metal_M", metal_M)
    cl0 = _non_negative("ligand_M", ligand_M)
    cls_ = _non_negative("ligand_stock_M", ligand_stock_M)
    cms = _non_negative("metal_stock_M", metal_stock_M)
    volume = v0 + add
    return Dilution(
        volume_mL=volume,
        ligand_M=(cl0 * v0 + cls_ * add) / volume,
        metal_M=(cm0 * v0 + cms * add) / volume,
    )
