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

__all__ = [
    "DIALECTS",
    "DIALECT_IMPORT",
    "PADDING_ROWS",
    "write_dialect",
    "dialect_options",
    "triangle_wave",
]


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
        # the electrode's potential lags the programme by the ohmic drop: here 1.5 mV
        applied = E - 0.0015
        return (
            (["Time (s)"] if has_t else [])
            + ["Potential applied (V)", "Current (mA)", "Potential measured (V)"],
            ([t] if has_t else []) + [applied, i * 1e3, E],
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
    if name == "stated_scan_rate":
        pre = ["Run: titration point", "Scan rate: {stated_mV_s} mV/s", "Electrode: disc", ""]
        return (
            (["Time (s)"] if has_t else []) + ["E (V)", "I (µA)"],
            ([t] if has_t else []) + [E, i * 1e6],
            ",",
            ".",
            pre,
        )
    raise ValueError(f"unknown dialect {name!r}")


def _scan_rate_V_s(E: np.ndarray, t: np.ndarray | None) -> float:
    """The scan rate of the arrays (0.1 V/s, the default of triangle_wave, without time)."""
    if t is None or t[-1] <= t[0]:
        return 0.1
    return float(np.sum(np.abs(np.diff(E))) / (t[-1] - t[0]))


def _leading_settings(E, i, t, rate_V_s: float) -> list[str]:
    """Tab-separated: the first data row also carries the run settings in three leading
    cells that every later row leaves empty (so those rows begin with three tabs)."""
    has_t = t is not None
    labels = ["Technique", "Sweep rate (mV/s)", "Initial E (V)", "Scan"]
    labels += (["Time (s)"] if has_t else []) + ["Potential (V)", "Current (A)"]
    scans = _cycle_numbers(E)
    data = [scans.astype(float)] + ([t] if has_t else []) + [E, i]
    rows = _rows(data, "\t", ".")
    settings = ["Cyclic voltammetry", f"{1e3 * rate_V_s:.6g}", f"{float(E[0]):.12g}"]
    lines = ["\t".join(labels), "\t".join(settings) + "\t" + rows[0]]
    return lines + ["\t\t\t" + row for row in rows[1:]]


#: Rows of padding after the data of the "counter_padding" dialect.
PADDING_ROWS = 3000


def _counter_padding(E, i, t) -> list[str]:
    """Tab-separated data followed by thousands of rows in which only the scan counter
    is filled (the potential, current and time cells empty)."""
    has_t = t is not None
    labels = ["Scan"] + (["Time (s)"] if has_t else []) + ["E/V", "I/A"]
    scans = _cycle_numbers(E)
    rows = _rows([scans.astype(float)] + ([t] if has_t else []) + [E, i], "\t", ".")
    empty = "\t" * (len(labels) - 1)
    return ["\t".join(labels), *rows] + [f"{scans[-1]}{empty}"] * PADDING_ROWS


def _units_header(E, i, t) -> list[str]:
    """Metadata lines, then a header of units only, then the data (comma-separated)."""
    has_t = t is not None
    pre = [
        "Ligand titration, solution 3",
        "Date and time: 2026-01-15 10:42:07",
        "Notes: stirred between scans, argon purged",
        "Technique: cyclic voltammetry",
    ]
    header = (["s"] if has_t else []) + ["V", "µA"]
    return pre + [",".join(header), *_rows(([t] if has_t else []) + [E, i * 1e6], ",", ".")]


def _special_lines(dialect: str, E, i, t, stated_V_s: float | None) -> list[str] | None:
    rate = stated_V_s if stated_V_s is not None else _scan_rate_V_s(E, t)
    if dialect == "tab_leading_settings":
        return _leading_settings(E, i, t, rate)
    if dialect == "counter_padding":
        return _counter_padding(E, i, t)
    if dialect == "utf16_units_header":
        return _units_header(E, i, t)
    return None


#: Encoding and line ending of each dialect (default UTF-8, LF).
_ENCODING: dict[str, tuple[str, str]] = {
    "utf16": ("utf-16", "\r\n"),
    "utf16_units_header": ("utf-16-le", "\r\n"),
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
    "tab_leading_settings",
    "counter_padding",
    "utf16_units_header",
    "stated_scan_rate",
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
    stated_scan_rate_V_s: float | None = None,
) -> Path:
    """Write arrays (V, A, s, anodic current positive) as a *dialect* export; returns path.

    *stated_scan_rate_V_s*: the scan rate the file's metadata states, for the dialects
    that state one ("tab_leading_settings", "stated_scan_rate"); default, the arrays'
    own (0.1 V/s without a time).
    """
    E = np.asarray(potential_V, dtype=float)
    i = np.asarray(current_A, dtype=float)
    t = None if time_s is None else np.asarray(time_s, dtype=float)
    lines = _special_lines(dialect, E, i, t, stated_scan_rate_V_s)
    if lines is None:
        labels, columns, delimiter, decimal, preamble = _spec(dialect, E, i, t)
        width = 16 if delimiter == " " else 0
        stated = stated_scan_rate_V_s if stated_scan_rate_V_s is not None else _scan_rate_V_s(E, t)
        lines = [ln.replace("{stated_mV_s}", f"{1e3 * stated:.6g}") for ln in preamble]
        if labels is not None:
            prefix = "# " if labels[0] == "#" else ""
            names = labels[1:] if prefix else labels
            lines.append(prefix + delimiter.join(lab.rjust(width) for lab in names))
        lines.extend(_rows(columns, delimiter, decimal, width))
    encoding, newline = _ENCODING.get(dialect, ("utf-8", "\n"))
    body = (newline.join(lines) + newline).encode(encoding)
    if dialect == "utf16_units_header":
        # a byte-order mark first, and a last line holding nothing but another one
        body = b"\xff\xfe" + body + "\ufeff".encode(encoding)
    p = Path(path)
    p.write_bytes(body)
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
