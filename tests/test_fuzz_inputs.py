"""Fuzz of the importer and the manifest loader: bad input only ever gives our InputError.

Extends tests/test_io_properties.py (random bytes and text, corrupted dialect files) with
wrong encodings, NaN/inf and huge cells, duplicated headers, and the manifest loader. Any
exception other than InputError, a multi-line message, or a warning (pytest runs with
filterwarnings=error) is a bug. The number of examples tried is printed in the terminal
summary (tests/conftest.py).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from fuzzcount import tried
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from cvfit import Voltammogram
from cvfit.errors import InputError
from cvfit.io import Manifest, load_manifest, parse_voltammogram_bytes

SETTINGS = settings(
    max_examples=400,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
)

ENCODINGS = ("utf-8", "utf-8-sig", "utf-16", "utf-16-le", "utf-16-be", "latin-1", "cp1252")

# one cycle of a symmetric triangle sweep with a Gaussian-ish wave on it (values only)
_E = np.concatenate([np.linspace(0.3, -0.3, 40), np.linspace(-0.3, 0.3, 40)[1:]])
_I_UA = 5.0 * np.exp(-(((_E - 0.0) / 0.05) ** 2)) * np.where(np.arange(_E.size) < 40, -1, 1)
_I_UA = _I_UA + 0.3 * _E

HOSTILE_CELLS = (
    "nan",
    "NaN",
    "-nan",
    "inf",
    "-inf",
    "Infinity",
    "1e309",
    "-1e400",
    "1e308",
    "-1.7e308",
    "9" * 400,
    "1.#INF",
    "",
    " ",
    "0x1A",
    "1_000",
    "−0.1",
    "1e-400",
    "--1",
    "1..2",
    "E",
    "µ",
    "\u00a0",
)


def _text(header: str, rows: list[list[str]], delimiter: str = ",") -> str:
    return header + "\n" + "\n".join(delimiter.join(r) for r in rows) + "\n"


def _rows() -> list[list[str]]:
    return [[f"{e:.6g}", f"{i:.6g}"] for e, i in zip(_E, _I_UA, strict=True)]


def _accept_or_refuse(data: bytes, name: str) -> Voltammogram | None:
    try:
        v = parse_voltammogram_bytes(data, source="fuzz.csv")
    except InputError as exc:
        assert str(exc) and "\n" not in str(exc) and str(exc).startswith("fuzz.csv")
        tried(name, False)
        return None
    tried(name, True)
    assert isinstance(v, Voltammogram)
    assert np.all(np.isfinite(v.potential_V)) and np.all(np.isfinite(v.current_A))
    return v


@SETTINGS
@given(
    encoding=st.sampled_from(ENCODINGS),
    cut=st.one_of(st.none(), st.floats(0, 1)),
    header=st.sampled_from(["Potential/V,Current/µA", "E / V,i / µA", "E/V,I/uA"]),
)
def test_encodings_and_truncation(encoding, cut, header):
    data = _text(header, _rows()).encode(encoding)
    if cut is not None:
        data = data[: int(cut * len(data))]
    v = _accept_or_refuse(data, "importer: encodings, truncation")
    if cut is None:
        # a whole file in any of these encodings is read, µA converted to A
        assert v is not None, encoding
        np.testing.assert_allclose(v.current_A, _I_UA * 1e-6, rtol=1e-5, atol=1e-12)
        np.testing.assert_allclose(v.potential_V, _E, atol=1e-6)


@SETTINGS
@given(
    edits=st.lists(
        st.tuples(st.integers(0, _E.size - 1), st.integers(0, 1), st.sampled_from(HOSTILE_CELLS)),
        min_size=1,
        max_size=8,
    ),
    header=st.sampled_from(["E/V,I/A", "E/mV,I/nA", "E/V,I/µA"]),
)
def test_nan_inf_and_huge_cells(edits, header):
    rows = _rows()
    for r, c, cell in edits:
        rows[r][c] = cell
    _accept_or_refuse(_text(header, rows).encode("utf-8"), "importer: NaN/inf/huge cells")


@SETTINGS
@given(
    scale=st.sampled_from([1e300, -1e300, 1e-300, 1e200, 1e250]),
    header=st.sampled_from(["E/V,I/A", "E/mV,I/nA", "E/V,I/µA", "t/s,E/V,I/A"]),
)
def test_huge_and_tiny_numbers_throughout(scale, header):
    rows = [[f"{e * scale:.6g}", f"{i * scale:.6g}"] for e, i in zip(_E, _I_UA, strict=True)]
    if header.startswith("t/s"):
        rows = [[f"{k * 0.01 * scale:.6g}", *r] for k, r in enumerate(rows)]
    _accept_or_refuse(_text(header, rows).encode("utf-8"), "importer: huge/tiny numbers")


_LABELS = ("E/V", "I/A", "E/V", "I/µA", "Potential (V)", "Current (A)", "t/s", "E/mV", "I/A")


@SETTINGS
@given(
    labels=st.lists(st.sampled_from(_LABELS), min_size=1, max_size=5),
    columns=st.integers(1, 5),
    delimiter=st.sampled_from([",", ";", "\t"]),
)
def test_duplicated_and_mismatched_headers(labels, columns, delimiter):
    base = [_E, _I_UA, _E * 2, _I_UA * 3, np.arange(_E.size) * 0.01]
    rows = [[f"{base[c][k]:.6g}" for c in range(columns)] for k in range(_E.size)]
    text = _text(delimiter.join(labels), rows, delimiter)
    _accept_or_refuse(text.encode("utf-8"), "importer: duplicated headers")


# ---------------------------------------------------------------- manifest loader

_GOOD_MANIFEST = """\
[series]
title = "fuzz µ series"
electrons = 1
temperature_C = 25.0
metal_total_M = 1.0e-4

[import]
current_unit = "uA"

[fit]
exclude_non_nernstian = true

[[voltammogram]]
file = "m0.csv"
ligand_M = 0.0

[[voltammogram]]
file = "m1.csv"
ligand_M = 0.01
scan_rate_V_s = 0.1
"""

_VALUE_KEYS = (
    "electrons",
    "temperature_C",
    "metal_total_M",
    "ligand_M",
    "scan_rate_V_s",
    "current_unit",
    "exclude_non_nernstian",
    "title",
    "file",
)
_HOSTILE_VALUES = (
    "nan",
    "inf",
    "-inf",
    "+inf",
    "1e400",
    "-1e400",
    "1e308",
    "0",
    "-1",
    "100000000000000000000000000000000",
    "1979-05-27",
    "07:32:00",
    '""',
    '"x"',
    "[]",
    "[1, 2]",
    "{}",
    "{a = 1}",
    "true",
    "false",
    "-0.0",
    "0.5",
    "2",
    '"../m0.csv"',
    '"m0.csv"',
    '"/nonexistent/x.csv"',
    '"µ"',
    "'\\u0000'",
)


@pytest.fixture(scope="module")
def manifest_dir(tmp_path_factory):
    folder = tmp_path_factory.mktemp("fuzz_manifest")
    for name in ("m0.csv", "m1.csv"):
        (folder / name).write_text("E/V,I/A\n0,0\n", encoding="utf-8")
    return folder


def _load(folder, data: bytes, name: str) -> Manifest | None:
    path = folder / "fuzz.toml"
    path.write_bytes(data)
    try:
        m = load_manifest(path)
    except InputError as exc:
        assert str(exc) and "\n" not in str(exc) and "fuzz.toml" in str(exc)
        tried(name, False)
        return None
    tried(name, True)
    assert isinstance(m, Manifest)
    s = m.series
    assert isinstance(s.electrons, int) and s.electrons >= 1
    assert math.isfinite(s.temperature_K) and s.temperature_K > 0
    assert s.metal_total_M is None or (math.isfinite(s.metal_total_M) and s.metal_total_M >= 0)
    for e in m.voltammograms:
        assert math.isfinite(e.ligand_M) and e.ligand_M >= 0
        assert e.scan_rate_V_s is None or (math.isfinite(e.scan_rate_V_s) and e.scan_rate_V_s > 0)
        assert e.file.is_file()
    return m


def test_good_manifest_loads_in_every_encoding(manifest_dir):
    for encoding in ("utf-8", "utf-8-sig"):
        assert _load(manifest_dir, _GOOD_MANIFEST.encode(encoding), "manifest: good") is not None
    for encoding in ("utf-16", "latin-1"):  # not UTF-8: refused with a one-line message
        assert _load(manifest_dir, _GOOD_MANIFEST.encode(encoding), "manifest: good") is None


@SETTINGS
@given(data=st.binary(max_size=2000))
def test_manifest_random_bytes(manifest_dir, data):
    _load(manifest_dir, data, "manifest: random bytes")


@SETTINGS
@given(
    encoding=st.sampled_from(ENCODINGS),
    cut=st.floats(0, 1),
    edits=st.lists(
        st.tuples(
            st.floats(0, 1),
            st.integers(0, 2),
            st.text(alphabet="[]=\"'.,#\n 0123456789abcxyz_-µ\\", max_size=5),
        ),
        max_size=4,
    ),
)
def test_manifest_truncated_and_edited(manifest_dir, encoding, cut, edits):
    text = _GOOD_MANIFEST
    for where, kind, blob in edits:
        at = int(where * len(text))
        if kind == 0:
            text = text[:at] + blob + text[at:]
        elif kind == 1:
            text = text[:at] + text[at + max(1, len(blob)) :]
        else:
            text = text[:at] + blob + text[at + len(blob) :]
    data = text.encode(encoding, errors="replace")
    _load(
        manifest_dir,
        data[: max(1, int(cut * len(data)))] if cut < 1 else data,
        "manifest: truncated/edited/encoded",
    )


@SETTINGS
@given(
    changes=st.lists(
        st.tuples(st.sampled_from(_VALUE_KEYS), st.sampled_from(_HOSTILE_VALUES)),
        min_size=1,
        max_size=3,
    ),
    duplicate=st.sampled_from([None, "key", "table"]),
)
def test_manifest_hostile_values_and_duplicates(manifest_dir, changes, duplicate):
    lines = _GOOD_MANIFEST.splitlines()
    for key, value in changes:
        for k, line in enumerate(lines):
            if line.split(" = ")[0] == key:
                lines[k] = f"{key} = {value}"
                break
    if duplicate == "key":
        lines.insert(3, "electrons = 2")
    elif duplicate == "table":
        lines.insert(0, '[fit]\nmodel = "lingane"')
    _load(
        manifest_dir,
        ("\n".join(lines) + "\n").encode("utf-8"),
        "manifest: hostile values, duplicates",
    )
