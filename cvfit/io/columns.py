"""Header labels: what a column holds and in which unit.

Instrument exports spell the same thing many ways: ``E/V``, ``Potential (mV)``,
``i / uA``, ``Current/nA``, ``I [A]``, ``WE(1).Potential (V)``, ``Ewe/V``, ``<I>/mA``,
``Time (s)``, ``t/s``, a bare ``µA``. :func:`parse_label` reads the quantity from the
words and the unit from a trailing ``(unit)``, ``[unit]``, ``/unit`` or last word.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Literal

from cvfit.units import CURRENT_UNITS, POTENTIAL_UNITS, normalise_unit

__all__ = ["ColumnLabel", "Role", "TIME_UNITS", "parse_label", "time_scale", "is_unit"]

Role = Literal["potential", "current", "time", "cycle", "other"]

#: Scale factors to seconds, keyed by normalised spelling.
TIME_UNITS: dict[str, float] = {
    "s": 1.0,
    "sec": 1.0,
    "secs": 1.0,
    "second": 1.0,
    "seconds": 1.0,
    "ms": 1e-3,
    "msec": 1e-3,
    "us": 1e-6,
    "min": 60.0,
    "h": 3600.0,
}
_TABLES: tuple[tuple[Role, dict[str, float]], ...] = (
    ("potential", POTENTIAL_UNITS),
    ("current", CURRENT_UNITS),
    ("time", TIME_UNITS),
)

_POTENTIAL_WORDS = {"e", "ewe", "potential", "voltage", "u", "ecell", "eapp", "ewe1"}
_CURRENT_WORDS = {"i", "current", "iwe", "im", "cur", "iwe1"}
_TIME_WORDS = {"t", "time", "elapsed"}
_CYCLE_WORDS = {
    "cycle",
    "cycles",
    "scan",
    "scans",
    "sweep",
    "segment",
    "index",
    "idx",
    "point",
    "points",
    "no",
    "nr",
    "number",
    "step",
    "loop",
    "count",
    "n",
}
# Words that make a column *not* the quantity itself (a range setting, a rate).
_NOT_DATA_WORDS = {"range", "gain", "rate", "control", "mode", "flag", "status", "ox", "red"}
# Qualifiers of a column that holds what the electrode had (first choice), what the
# instrument was told to apply (second), and other electrodes or channels (third).
_MEASURED = {"measured", "meas", "we", "working", "actual", "recorded", "sensed", "read"}
_APPLIED = {"applied", "set", "setpoint", "program", "programmed", "nominal", "imposed"}
_THIRD_CHOICE = {
    "density",
    "ref",
    "reference",
    "counter",
    "ce",
    "ece",
    "filtered",
    "analog",
    "aux",
    "auxiliary",
}

_REFERENCE_PART = re.compile(r"\bvs\.?\s*[^()\[\]]*?\s*(?=[()\[\]]|$)", re.IGNORECASE)
_BRACKETED = re.compile(r"^(?P<name>.*?)\s*(?:\((?P<p>[^()]*)\)|\[(?P<b>[^\[\]]*)\])\s*$")
_SLASHED = re.compile(r"^(?P<name>[^/]*?)\s*/\s*(?P<u>[^/]+?)\s*$")
_WORD = re.compile(r"[a-z0-9#]+")
# A unit-like last word with an SI prefix cvfit has no factor for (``kA``, ``fA``, ``GV``):
# read as a unit, so that it is refused rather than taken for the base unit.
_PREFIXED_UNIT = re.compile(r"^(?:[yzafpnuµμmcdkMGT]|da)[VA]$")


@dataclass(frozen=True)
class ColumnLabel:
    """What a header label says.

    Attributes
    ----------
    text : str
        The label as written (surrounding blanks and quotes removed).
    role : {"potential", "current", "time", "cycle", "other"}
        Quantity the label names.
    unit : str or None
        Normalised unit key (``"mv"``, ``"ua"``, ``"s"``) when the label gives a known one.
    unit_text : str or None
        The unit as written, also when it is not one cvfit knows.
    rank : int
        Lower is chosen first: a column qualified as measured (``Potential measured``,
        ``WE potential``) before a plain one (``E/V``), before one qualified as applied
        (``Potential applied``), before another electrode's or channel's (``Ece``,
        ``Analog IN``); within each, a label that names the quantity before one whose
        unit alone says it.
    qualifier : {"measured", "applied"} or None
        What the label says the column is, when it says.
    """

    text: str
    role: Role
    unit: str | None
    unit_text: str | None
    rank: int
    qualifier: str | None = None


# A unit per area (current density: "mA cm-2", "µA/cm²") is not a current unit.
_PER_AREA = re.compile(r"(/\s*(c|m)?m|(c|m)?m\s*(\^?\s*-\s*2|⁻²))", re.IGNORECASE)


def _unit_role(unit_text: str) -> tuple[Role, str] | None:
    if _PER_AREA.search(unit_text):
        return None
    first = unit_text.replace(",", " ").split()
    if not first:
        return None
    key = normalise_unit(first[0])
    for role, table in _TABLES:
        if key in table:
            return role, key
    return None


def _name_role(words: set[str], joined: str) -> Role | None:
    if words & _NOT_DATA_WORDS:
        return "other"
    roles: list[Role] = []
    if words & _POTENTIAL_WORDS or "potential" in joined or "voltage" in joined:
        roles.append("potential")
    if words & _CURRENT_WORDS or "current" in joined:
        roles.append("current")
    if words & _TIME_WORDS or "time" in joined:
        roles.append("time")
    if not roles and words & _CYCLE_WORDS:
        return "cycle"
    if len(roles) == 1:
        return roles[0]
    return "other" if roles else None


def _split_unit(core: str, bare_unit: bool) -> tuple[str, str | None]:
    """(name, unit as written) of a label without its reference-electrode note."""
    match = _BRACKETED.match(core)
    if match:
        return match["name"], match["p"] if match["p"] is not None else match["b"]
    slashed = _SLASHED.match(core)
    if slashed:
        return slashed["name"], slashed["u"]
    parts = core.replace("_", " ").split()
    if len(parts) >= 2 and (_unit_role(parts[-1]) is not None or _PREFIXED_UNIT.match(parts[-1])):
        return " ".join(parts[:-1]), parts[-1]
    if len(parts) == 1 and _unit_role(parts[0]) is not None and (len(parts[0]) > 1 or bare_unit):
        # A bare unit such as "mV" or "µA"; single letters (E, I, t) are names, unless
        # every label of the header is a unit (a header "V, µA").
        return "", parts[0]
    return core, None


def parse_label(label: str, *, bare_unit: bool = False) -> ColumnLabel:
    """Read the quantity and unit a header label names.

    The unit comes from a trailing ``(…)``/``[…]`` group, else from a ``/unit`` suffix,
    else from a last word that is a unit (``Current µA``, ``current_kA``), else from the
    whole label (a bare ``mV``; with *bare_unit*, also a one-letter ``V`` or ``A``, for a
    header whose every label is a unit). A reference-electrode note (``vs Ag/AgCl``) is
    ignored. When the name and a known unit disagree on the quantity, the column counts
    as ``other``.
    """
    text = label.strip().strip("\"'").strip()
    core = _REFERENCE_PART.sub("", text).strip()
    name, unit_text = _split_unit(core, bare_unit)
    unit_text = unit_text.strip() if unit_text is not None else None
    if unit_text == "":
        unit_text = None
    lowered = normalise_unit(name) if name else ""
    words = set(_WORD.findall(name.lower()))
    by_name = _name_role(words, lowered)
    by_unit = _unit_role(unit_text) if unit_text is not None else None
    unit = by_unit[1] if by_unit else None
    if by_unit is None:
        role: Role = by_name or "other"
    elif by_name is None or by_name == by_unit[0]:
        role = by_unit[0]
    else:
        role = "other"
    qualifier = (
        None if words & _THIRD_CHOICE else "applied" if words & _APPLIED
        else "measured" if words & _MEASURED else None
    )  # fmt: skip
    level = 3 if words & _THIRD_CHOICE else {"measured": 0, None: 1, "applied": 2}[qualifier]
    rank = 2 * level + (0 if by_name == role else 1)
    return ColumnLabel(
        text=text, role=role, unit=unit, unit_text=unit_text, rank=rank, qualifier=qualifier
    )


def is_unit(text: str) -> bool:
    """True when *text* is a unit of potential, current or time (``V``, ``µA``, ``ms``)."""
    return _unit_role(text) is not None and len(text.split()) == 1


def time_scale(unit: str) -> float:
    """Factor that converts a time in *unit* (normalised key) to seconds."""
    return TIME_UNITS[unit]
