"""What an export's file name says: its place in a natural order, and the concentration,
added volume, addition number or scan rate it carries (for ``cvfit init``).

Parsing is deliberately strict: a number is read only where it starts a word of the name
(after ``_``, ``-``, a blank, a bracket or the start) and is followed by a unit cvfit
knows, written with its case (``mM`` is millimolar, ``mm`` a length and never read). A
name that could mean two things (two concentrations, ``2_5mM`` which may be 2.5 mM or
5 mM, "blank" beside a non-zero concentration) gives nothing and says why: a wrong
concentration read silently would be worse than a placeholder the user fills in.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

__all__ = ["NameValues", "natural_key", "natural_sorted", "parse_name"]

#: A run of digits, with a decimal part (a number in a name, for the natural order).
_NUMBER_RUN = re.compile(r"(\d+(?:\.\d+)?)")
#: A number as a file name spells it: 5, 0.25, 0p5 (p for the decimal point, which some
#: file systems and habits avoid).
_NUMBER = r"(?P<number>\d+(?:[.p]\d+)?)"
#: Where a number may start: not inside a word or another number.
_START = r"(?<![A-Za-z0-9.,])"
_END = r"(?![A-Za-z0-9])"
_CONCENTRATION = re.compile(_START + _NUMBER + r"[ _]?(?P<unit>mM|uM|µM|μM|nM|M)" + _END)
_VOLUME = re.compile(_START + _NUMBER + r"[ _]?(?P<unit>mL|ml|uL|ul|µL|µl|μL|μl)" + _END)
_SCAN_RATE = re.compile(
    _START + _NUMBER + r"[ _]?(?P<unit>mV|V)[ _-]?(?:p|per)?[ _-]?s" + _END
)  # fmt: skip
_ADDITION = re.compile(r"(?<![A-Za-z])add(?:ition)?[ _-]?(?P<index>\d+)" + _END, re.IGNORECASE)
_LIGAND_FREE = re.compile(
    r"(?<![A-Za-z])(?:blank|free|noL|no[ _-]?ligand)(?![A-Za-z])", re.IGNORECASE
)
#: A number just before the match, joined by ``_``, ``-`` or ``,`` (``2_5mM``): perhaps a
#: decimal point written another way, so the value is ambiguous.
_JOINED_NUMBER = re.compile(r"(?:^|[^A-Za-z0-9.,])\d+[_,-]$")
#: What a number is divided by to give mol/L or mL (a division keeps 0.3 mM at 0.0003).
_PER_MOLAR = {"M": 1.0, "mM": 1e3, "uM": 1e6, "µM": 1e6, "μM": 1e6, "nM": 1e9}
_PER_MILLILITRE = {"mL": 1.0, "ml": 1.0}  # any other volume unit is micro


@dataclass(frozen=True)
class NameValues:
    """What one file name carries.

    Attributes
    ----------
    ligand_M : float or None
        Total ligand concentration, mol/L (0 for a ligand-free name).
    added_mL : float or None
        Volume of ligand stock added, mL (µL converted).
    addition : int or None
        Number of the addition (``add_3``): the volume is left to fill in.
    scan_rate_V_s : float or None
        Scan rate, V/s.
    said : tuple of str
        What was read, in words (``"5mM → ligand_M = 0.005"``), for the manifest's comments.
    doubts : tuple of str
        What was seen but not used, and why.
    """

    ligand_M: float | None = None
    added_mL: float | None = None
    addition: int | None = None
    scan_rate_V_s: float | None = None
    said: tuple[str, ...] = ()
    doubts: tuple[str, ...] = ()


def natural_key(name: str) -> tuple[tuple[int, float | str], ...]:
    """Sort key of *name* with its numbers compared as numbers ("L2" before "L10",
    "0.25mM" before "0.5mM") and letters without regard to case."""
    parts = _NUMBER_RUN.split(name)
    return tuple(
        (0, float(p)) if k % 2 else (1, p.casefold()) for k, p in enumerate(parts) if p
    )  # fmt: skip


def natural_sorted(names: list[str]) -> list[str]:
    """File *names* in natural order of their stems, then of the whole name (ties broken
    by the plain text, so the order is total): "x.csv" before "x0.csv"."""
    return sorted(names, key=lambda n: (natural_key(n.rpartition(".")[0] or n),
                                        natural_key(n), n))  # fmt: skip


def _number(text: str) -> float:
    return float(text.replace("p", "."))


def _found(pattern: re.Pattern[str], stem: str) -> tuple[list[re.Match[str]], list[str]]:
    """Matches of *pattern* in *stem* that stand alone, and doubts about the others."""
    good: list[re.Match[str]] = []
    doubts: list[str] = []
    for m in pattern.finditer(stem):
        joined = _JOINED_NUMBER.search(stem[: m.start()])
        if joined is None:
            good.append(m)
            continue
        text = re.sub(r"^\D+", "", stem[joined.start() : m.end()])
        doubts.append(f"{text!r} may be a decimal number written with _, - or ,: not read")
    return good, doubts


def parse_name(stem: str) -> NameValues:
    """What the file name *stem* (without its extension) says.

    Concentrations: ``5mM``, ``250uM``/``250µM``, ``0.1M``, ``5 mM``, ``0p5mM`` →
    ``ligand_M``; volumes ``0.25uL``/``25 µL``/``0.5mL`` → ``added_mL``; ``add_3`` or
    ``addition3`` → an addition number; ``blank``, ``free``, ``noL``, ``no_ligand`` (any
    case) → ``ligand_M = 0``; scan rates ``100mVs``, ``50 mV_s``, ``0.1Vs``, ``100mVps``.
    Nothing is read from a name that says two different things.
    """
    said: list[str] = []
    concentrations, doubts = _found(_CONCENTRATION, stem)
    volumes, more = _found(_VOLUME, stem)
    rates, rate_doubts = _found(_SCAN_RATE, stem)
    doubts += more + rate_doubts
    ligand = added = rate = None
    values = {m.group(): _number(m["number"]) / _PER_MOLAR[m["unit"]] for m in concentrations}
    volume_texts = [m.group() for m in volumes]
    free = _LIGAND_FREE.search(stem)
    if len(set(values.values())) > 1 or len(volumes) > 1 or (values and volumes):
        doubts.append(
            f"several amounts ({', '.join([*values, *volume_texts])}): which is the ligand's?"
        )
    elif free is not None and (volumes or any(values.values())):
        doubts.append(f"{free.group()!r} beside {[*values, *volume_texts][0]}: not read")
    elif values:
        text, ligand = next(iter(values.items()))
        said.append(f"{text} → ligand_M = {ligand:g}")
    elif free is not None:
        ligand = 0.0
        said.append(f"{free.group()} → ligand_M = 0")
    elif volumes:
        m = volumes[0]
        added = _number(m["number"]) / _PER_MILLILITRE.get(m["unit"], 1e3)
        said.append(f"{m.group()} → added_mL = {added:g}")
    additions = list(_ADDITION.finditer(stem))
    addition = int(additions[0]["index"]) if len(additions) == 1 else None
    if addition is not None and (ligand is not None or added is not None):
        addition = None  # the name already gives the value
    elif addition is not None:
        said.append(f"{additions[0].group()} → addition {addition}")
    if len(rates) == 1:
        m = rates[0]
        rate = _number(m["number"]) / (1e3 if m["unit"] == "mV" else 1.0)
        said.append(f"{m.group()} → scan_rate_V_s = {rate:g}")
    elif rates:
        doubts.append(f"several scan rates ({', '.join(m.group() for m in rates)}): not read")
    return NameValues(ligand, added, addition, rate, tuple(said), tuple(doubts))
