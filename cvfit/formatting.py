"""Number formatting for people: value ± uncertainty with matching digits."""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from cvfit.quantity import Quantity

__all__ = ["additions_text", "format_pm", "format_q", "format_value", "pm_parts"]


def _digits_for(stderr: float) -> int:
    """Decimals that show two significant digits of *stderr*."""
    if not (math.isfinite(stderr) and stderr > 0):
        return 3
    return max(0, 1 - int(math.floor(math.log10(stderr))))


def pm_parts(value: float, stderr: float, *, scale: float = 1.0) -> tuple[str, str]:
    """*value* and *stderr* (both finite) scaled and rounded alike: the uncertainty to two
    significant digits, the value to the same decimal place (``("5.412", "0.018")``).

    References
    ----------
    JCGM 100:2008 (GUM), Evaluation of measurement data — Guide to the expression of
    uncertainty in measurement, 7.2.6 (at most two significant digits; from memory).
    """
    d = _digits_for(stderr * scale)
    return f"{value * scale:.{d}f}", f"{stderr * scale:.{d}f}"


def format_pm(
    value: float | None, stderr: float | None, *, scale: float = 1.0, unit: str = ""
) -> str:
    """``"5.412 ± 0.018 unit"``; ``"n/d"`` when the value is missing."""
    if value is None or not math.isfinite(value):
        return "n/d"
    v = value * scale
    tail = f" {unit}" if unit else ""
    if stderr is None or not math.isfinite(stderr):
        return f"{v:.4g}{tail} (uncertainty unknown)"
    shown, err = pm_parts(value, stderr, scale=scale)
    return f"{shown} ± {err}{tail}"


def format_value(
    value: float | None, *, scale: float = 1.0, digits: int = 1, unit: str = ""
) -> str:
    """Fixed-decimal value with unit; ``"n/d"`` when missing."""
    if value is None or not math.isfinite(value):
        return "n/d"
    tail = f" {unit}" if unit else ""
    return f"{value * scale:.{digits}f}{tail}"


def format_q(q: Quantity, *, scale: float = 1.0, unit: str = "", digits: int | None = None) -> str:
    """value ± stderr with the 95 % interval, digits matching the standard error."""
    text = format_pm(q.value, q.stderr, scale=scale, unit=unit)
    lo, hi = q.ci95
    if text == "n/d":
        return text
    if digits is None:
        digits = max(0, len(text.split(" ± ")[0].split(".")[-1])) if "." in text else 0
    return f"{text}   95 % CI [{lo * scale:.{digits}f}, {hi * scale:.{digits}f}]"


def additions_text(table: Mapping[str, float]) -> str:
    """The ``[titration]`` table of a titration by additions in words: ``"10 mL of
    0.001 mol/L metal, ligand stock 0.1 mol/L added"`` (starting ligand and stock metal
    named only when not 0)."""
    cell = f"{table['start_volume_mL']:.4g} mL of {table['metal_M']:.4g} mol/L metal"
    if table.get("ligand_M"):
        cell += f" and {table['ligand_M']:.4g} mol/L ligand"
    stock = f"ligand stock {table['ligand_stock_M']:.4g} mol/L"
    if table.get("metal_stock_M"):
        stock += f" (with {table['metal_stock_M']:.4g} mol/L metal)"
    return f"{cell}; {stock} added"
