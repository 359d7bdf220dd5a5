"""Write voltammogram arrays the way different instruments export them (test helper).

``write_dialect(path, potential_V=..., current_A=..., time_s=..., dialect="tab_mV_uA")``
writes one file; ``DIALECTS`` lists every dialect so tests can loop over them, and
``DIALECT_IMPORT[dialect]`` gives the ``[import]`` keys a manifest needs for it (only the
polarographic file needs one: its sign cannot be detected from the data).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from pathlib import Path

import numpy as np

from cvfit.io import ImportOptions
from cvfit.voltammogram import turning_points

__all__ = ["DIALECTS", "DIALECT_IMPORT", "write_dialect", "dialect_options", "triangle_wave"]


def _fmt(values: np.ndarray, decimal: str) -> list[str]:
    out = [f"{float(v):.12g}" for v in values]
    return [s.replace(".", ",") for s in out] if decimal == "," else out


def _rows(columns: Sequence[np.ndarray], delimiter: str, decimal: str, width: int = 0):
    cells = [_fmt(c, decimal) for c in columns]
    if width:
        return [delimiter.join(c.rjust(width) for c in row) for row in zip(*cells, strict=True)]
    return [delimiter.join(row) for row in zip(*cells, strict=True)]


def _cycle_numbers(E: np.ndarray) -> np.ndarray:
    turns = turning_points(E)
    out = np.ones(E.size, dtype=int)
    for k in range(1, len(turns) - 1):
        out[turns[k] + 1 :] = (k // 2) + 1
    return out


def _spec(name: str, E, i, t):
    """(header labels, columns, delimiter, decimal, preamble lines) for a dialect."""
    has_t = t is not None
    if name == "plain_csv":
        return (
            (["Time (s)"] if has_t else []) + ["Potential (V)", "Current (A)"],
            ([t] if has_t else []) + [E, i],
            ",",
            ".",
            [],
        )
    if name == "semicolon_decimal_comma":
        pre = ["Technique: cyclic voltammetry", "Electrode: glassy carbon", ""]
        return (
            (["t/s"] if has_t else []) + ["E/V", "I/A"],
            ([t] if has_t else []) + [E, i],
            ";",
            ",",
            pre,
        )
    if name == "tab_mV_uA":
        return (
            (["Time (ms)"] if has_t else []) + ["Potential (mV)", "Current (µA)"],
            ([t * 1e3] if has_t else []) + [E * 1e3, i * 1e6],
            "\t",
            ".",
            [],
        )
    if name == "whitespace_nA":
        return (
            (["t/s"] if has_t else []) + ["E/V", "i/nA"],
            ([t] if has_t else []) + [E, i * 1e9],
            " ",
            ".",
            ["# exported data", ""],
        )
    if name == "metadata_header":
        pre = [
            "Cyclic voltammetry export",
            "Date: 2026-01-15 10:42:07",
            "Scan rate = 0.1 V/s",
            "Operator: test",
            "",
            "Free text note with no separator",
            "",
        ]
        return (
            (["Time (s)"] if has_t else []) + ["WE(1).Potential (V)", "WE(1).Current (A)"],
            ([t] if has_t else []) + [E, i],
            ",",
            ".",
            pre,
        )
    if name == "polarographic_sign":
        return (
            (["t [s]"] if has_t else []) + ["E [V]", "I [A]"],
            ([t] if has_t else []) + [E, -i],
            ";",
            ".",
            [],
        )
    if name == "utf16":
        return (
            (["time/s"] if has_t else []) + ["Ewe/V", "<I>/mA"],
            ([t] if has_t else []) + [E, i * 1e3],
            "\t",
            ".",
            [],
        )
    if name == "utf8_bom_crlf":
        return (
            (["t / s"] if has_t else []) + ["E / V", "i / uA"],
            ([t] if has_t else []) + [E, i * 1e6],
            ",",
            ".",
            [],
        )
    if name == "latin1_micro":
        return (
            (["Time/s"] if has_t else []) + ["Potential/mV", "Current/µA"],
            ([t] if has_t else []) + [E * 1e3, i * 1e6],
            ";",
            ",",
            ["Sample: test solution"],
        )
    if name == "no_header":
        return None, ([t] if has_t else []) + [E, i], ",", ".", []
    if name == "no_header_decimal_comma":
        return None, ([t] if has_t else []) + [E, i], " ", ",", []
    if name == "multi_cycle_with_cycle_column":
        cyc = _cycle_numbers(E).astype(float)
        return (
            ["Cycle"] + (["Time (s)"] if has_t else []) + ["Potential (V)", "Current (A)"],
            [cyc] + ([t] if has_t else []) + [E, i],
            ",",
            ".",
            [],
        )
    if name == "applied_and_measured":
        measured = E + 0.0015
        return (
            (["Time (s)"] if has_t else [])
            + ["Potential measured (V)", "Current (mA)", "Potential applied (V)"],
            ([t] if has_t else []) + [measured, i * 1e3, E],
            ";",
            ".",
            [],
        )
    if name == "current_first":
        return (
            ["I [mA]", "E [V]"] + (["T [s]"] if has_t else []),
            [i * 1e3, E] + ([t] if has_t else []),
            ",",
            ".",
            [],
        )
    if name == "hash_comment_header":
        return (
            ["#"] + (["t/s"] if has_t else []) + ["E/mV", "I/uA"],
            ([t] if has_t else []) + [E * 1e3, i * 1e6],
            " ",
            ".",
            ["# Created by a script"],
        )
    raise ValueError(f"unknown dialect {name!r}")


#: Encoding and line ending of each dialect (default UTF-8, LF).
_ENCODING: dict[str, tuple[str, str]] = {
    "utf16": ("utf-16", "\r\n"),
    "utf8_bom_crlf": ("utf-8-sig", "\r\n"),
    "latin1_micro": ("latin-1", "\r\n"),
}

DIALECTS: tuple[str, ...] = (
    "plain_csv",
    "semicolon_decimal_comma",
    "tab_mV_uA",
    "whitespace_nA",
    "metadata_header",
    "polarographic_sign",
    "utf16",
    "utf8_bom_crlf",
    "latin1_micro",
    "no_header",
    "no_header_decimal_comma",
    "multi_cycle_with_cycle_column",
    "applied_and_measured",
    "current_first",
    "hash_comment_header",
)

#: ``[import]`` keys a manifest must give for the dialect (everything else is detected).
DIALECT_IMPORT: dict[str, dict[str, str]] = {d: {} for d in DIALECTS}
DIALECT_IMPORT["polarographic_sign"] = {"anodic_current": "negative"}


def dialect_options(dialect: str) -> ImportOptions:
    """ImportOptions a reader needs for *dialect*."""
    return ImportOptions(**DIALECT_IMPORT[dialect])


def write_dialect(
    path: str | Path,
    *,
    potential_V: Sequence[float] | np.ndarray,
    current_A: Sequence[float] | np.ndarray,
    time_s: Sequence[float] | np.ndarray | None = None,
    dialect: str,
) -> Path:
    """Write arrays (V, A, s, anodic current positive) as a *dialect* export; returns path."""
    E = np.asarray(potential_V, dtype=float)
    i = np.asarray(current_A, dtype=float)
    t = None if time_s is None else np.asarray(time_s, dtype=float)
    labels, columns, delimiter, decimal, preamble = _spec(dialect, E, i, t)
    width = 16 if delimiter == " " else 0
    lines = list(preamble)
    if labels is not None:
        prefix = "# " if labels[0] == "#" else ""
        names = labels[1:] if prefix else labels
        lines.append(prefix + delimiter.join(lab.rjust(width) for lab in names))
    lines.extend(_rows(columns, delimiter, decimal, width))
    encoding, newline = _ENCODING.get(dialect, ("utf-8", "\n"))
    p = Path(path)
    p.write_bytes((newline.join(lines) + newline).encode(encoding))
    return p


def triangle_wave(
    *,
    E_start_V: float = 0.45,
    E_switch_V: float = -0.15,
    cycles: int = 1,
    points_per_sweep: int = 200,
    scan_rate_V_s: float = 0.1,
    current: Callable[[np.ndarray], np.ndarray] | None = None,
    seed: int = 0,
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A cathodic-first triangular potential programme with a smooth test current.

    Returns ``(potential_V, current_A, time_s)``. The current is not a physical model, just
    a signed, non-trivial signal for import round trips.
    """
    down = np.linspace(E_start_V, E_switch_V, points_per_sweep)
    one = np.concatenate([down, down[::-1][1:]])
    E = np.concatenate([one] + [one[1:]] * (cycles - 1))
    dE = abs(E_start_V - E_switch_V) / (points_per_sweep - 1)
    t = np.arange(E.size) * dE / scan_rate_V_s
    rng = np.random.default_rng(seed)
    if current is None:
        i = 2e-6 * np.tanh((E - 0.15) / 0.05) * np.sign(np.gradient(E)) + 1e-7 * rng.normal(
            size=E.size
        )
    else:
        i = current(E)
    return E, i, t
