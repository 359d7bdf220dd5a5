"""The plan's constants and designs in words for tables, pages and figures.

plan.json keeps the code names (``delta_ligands``, ``log_spaced``): they are its keys. What
a person reads — the terminal table, plan.html, the figure's ticks — says the same thing in
the notation of the results (``p − q``, ``log10 β2 (ox)``, ``log-spaced``).
"""

from __future__ import annotations

import re

__all__ = ["constant_words", "design_words"]

_FIXED = {
    "log10_beta_ratio": "log10(β_ox/β_red)",
    "delta_ligands": "p − q",
    "dE_half_dT_V_K": "dE½/dT (V/K)",
    "reaction_entropy_J_mol_K": "ΔS°rc (J mol⁻¹ K⁻¹)",
}
_NUMBERED = re.compile(r"^(log10_beta|pKa)_(ox|red)_(\d+)$")


def constant_words(name: str) -> str:
    """A constant's code name in the results' notation (an unknown name as it is)."""
    if name in _FIXED:
        return _FIXED[name]
    m = _NUMBERED.match(name)
    if m is None:
        return name
    kind, state, j = m.groups()
    return f"{'log10 β' if kind == 'log10_beta' else 'pKa'}{j} ({state})"


def design_words(name: str) -> str:
    """A design's code name in words (``log_spaced`` → ``log-spaced``)."""
    return name.replace("_", "-")
