"""Every export dialect round-trips to the same arrays (V, A, s, IUPAC sign)."""

from __future__ import annotations

import numpy as np
import pytest
from dialects import DIALECTS, dialect_options, triangle_wave, write_dialect

from cvfit.io import ImportOptions, parse_voltammogram_text, read_voltammogram

# Files are written with 12 significant digits, and mV/µA/nA/ms scaling adds one rounding.
RTOL = 1e-10


def _close(a, b):
    a, b = np.asarray(a), np.asarray(b)
    scale = float(np.max(np.abs(b)))
    np.testing.assert_allclose(a, b, rtol=0, atol=RTOL * scale)


@pytest.mark.parametrize("with_time", [True, False], ids=["time", "no_time"])
@pytest.mark.parametrize("dialect", DIALECTS)
def test_dialect_round_trip(tmp_path, dialect, with_time):
    E, i, t = triangle_wave(cycles=1, points_per_sweep=120)
    path = write_dialect(
        tmp_path / f"{dialect}.csv",
        potential_V=E,
        current_A=i,
        time_s=t if with_time else None,
        dialect=dialect,
    )
    before = path.read_bytes()
    vg = read_voltammogram(path, dialect_options(dialect))
    _close(vg.potential_V, E)
    _close(vg.current_A, i)
    if with_time:
        assert vg.time_s is not None
        _close(vg.time_s, t)
        assert vg.derived_scan_rate_V_s() == pytest.approx(0.1, rel=1e-6)
    elif dialect not in ("multi_cycle_with_cycle_column",):
        assert vg.time_s is None
    assert path.read_bytes() == before  # input files are never written
    assert vg.cycle("last").complete


@pytest.mark.parametrize("dialect", DIALECTS)
def test_three_cycle_file_imports_whole(tmp_path, dialect):
    E, i, t = triangle_wave(cycles=3, points_per_sweep=80)
    path = write_dialect(
        tmp_path / "c3.txt", potential_V=E, current_A=i, time_s=t, dialect=dialect
    )
    vg = read_voltammogram(path, dialect_options(dialect))
    assert vg.n_points == E.size
    cycles = vg.cycles()
    assert len(cycles) == 3 and all(c.complete for c in cycles)
    assert vg.cycle("last").number == 3
    _close(vg.cycle(2).forward.potential_V, E[158:238])


def test_cycle_column_is_not_data(tmp_path):
    E, i, t = triangle_wave(cycles=3, points_per_sweep=50)
    path = write_dialect(
        tmp_path / "c.csv", potential_V=E, current_A=i, dialect="multi_cycle_with_cycle_column"
    )
    vg = read_voltammogram(path)
    assert vg.metadata["import.potential_column"] == "Potential (V)"
    assert vg.metadata["import.cycle_columns"] == "Cycle"
    _close(vg.current_A, i)


def test_polarographic_sign_is_flipped_only_when_asked(tmp_path):
    E, i, _ = triangle_wave()
    path = write_dialect(
        tmp_path / "p.csv", potential_V=E, current_A=i, dialect="polarographic_sign"
    )
    _close(read_voltammogram(path).current_A, -i)
    _close(read_voltammogram(path, ImportOptions(anodic_current="negative")).current_A, i)
    _close(read_voltammogram(path, ImportOptions(anodic_current="positive")).current_A, -i)


def test_metadata_lines_are_kept(tmp_path):
    E, i, t = triangle_wave()
    path = write_dialect(
        tmp_path / "m.csv", potential_V=E, current_A=i, time_s=t, dialect="metadata_header"
    )
    md = read_voltammogram(path).metadata
    assert md["Date"] == "2026-01-15 10:42:07"
    assert md["Scan rate"] == "0.1 V/s"
    assert md["Operator"] == "test"
    assert md["import.time_column"] == "Time (s)"


def test_measured_potential_preferred_over_applied(tmp_path):
    E, i, _ = triangle_wave()
    path = write_dialect(
        tmp_path / "a.csv", potential_V=E, current_A=i, dialect="applied_and_measured"
    )
    vg = read_voltammogram(path)
    assert vg.metadata["import.potential_column"] == "Potential measured (V)"
    assert vg.metadata["import.potential_kind"] == "measured"
    assert "Potential applied (V)" in vg.metadata["import.other_potential_columns"]
    _close(vg.potential_V, E)
    applied = read_voltammogram(path, ImportOptions(potential_column="potential APPLIED (V)"))
    assert applied.metadata["import.potential_kind"] == "applied"
    _close(applied.potential_V, E - 0.0015)


def test_no_header_assumption_is_recorded(tmp_path):
    E, i, t = triangle_wave()
    path = write_dialect(
        tmp_path / "n.csv", potential_V=E, current_A=i, time_s=t, dialect="no_header"
    )
    note = read_voltammogram(path).metadata["import.assumed_columns"]
    assert "time (s) = column 1" in note and "potential (V) = column 2" in note
    # The first column is not monotonic → potential, current, and the rest is ignored.
    text = "\n".join(f"{e!r},{c!r},{c * 2!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    vg = parse_voltammogram_text(text, source="x")
    _close(vg.current_A, i)
    assert vg.time_s is None


def test_no_header_index_column_is_skipped():
    E, i, _ = triangle_wave(points_per_sweep=30)
    text = "\n".join(
        f"{k}\t{e!r}\t{c!r}" for k, (e, c) in enumerate(zip(E.tolist(), i.tolist(), strict=True))
    )
    vg = parse_voltammogram_text(text, source="x")
    _close(vg.potential_V, E)
    assert "counter/cycle column(s) 1 skipped" in vg.metadata["import.assumed_columns"]


@pytest.mark.parametrize(("unit", "factor"), [("V", 1.0), ("mV", 1e3)])
@pytest.mark.parametrize(
    ("cunit", "cfactor"), [("A", 1.0), ("mA", 1e3), ("uA", 1e6), ("µA", 1e6), ("nA", 1e9)]
)
def test_unit_options_override_and_default(unit, factor, cunit, cfactor):
    E, i, _ = triangle_wave(points_per_sweep=40)
    body = "\n".join(
        f"{e * factor!r};{c * cfactor!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True)
    )
    vg = parse_voltammogram_text(
        "E;I\n" + body, source="u", options=ImportOptions(potential_unit=unit, current_unit=cunit)
    )
    _close(vg.potential_V, E)
    _close(vg.current_A, i)
    if unit == "V" and cunit == "A":  # no unit anywhere: SI assumed and said so
        plain = parse_voltammogram_text("E;I\n" + body, source="u")
        assert plain.metadata["import.potential_unit"] == "V (assumed)"
        _close(plain.current_A, i)


def test_explicit_columns_by_name_and_index():
    E, i, t = triangle_wave(points_per_sweep=40)
    rows = "\n".join(
        f"{a!r},{b!r},{c!r},{d!r}"
        for a, b, c, d in zip(
            t.tolist(), i.tolist(), (E * 1e3).tolist(), (2 * E).tolist(), strict=True
        )
    )
    text = "col A,col B,col C,col D\n" + rows
    opts = ImportOptions(
        potential_column="col c", current_column=1, time_column="COL A", potential_unit="mV"
    )
    vg = parse_voltammogram_text(text, source="x", options=opts)
    _close(vg.potential_V, E)
    _close(vg.current_A, i)
    _close(vg.time_s, t)


def test_explicit_delimiter_and_decimal():
    E, i, _ = triangle_wave(points_per_sweep=40)
    body = "\n".join(
        f"{e!r}\t{c!r}".replace(".", ",") for e, c in zip(E.tolist(), i.tolist(), strict=True)
    )
    vg = parse_voltammogram_text(
        "E/V\tI/A\n" + body, source="x", options=ImportOptions(delimiter="tab", decimal=",")
    )
    _close(vg.potential_V, E)


def test_scan_rate_argument_and_repeated_header_rows():
    E, i, _ = triangle_wave(cycles=2, points_per_sweep=40)
    rows = [f"{e!r},{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True)]
    text = "E/V,I/A\n" + "\n".join(rows[:79]) + "\n\nE/V,I/A\n" + "\n".join(rows[79:])
    vg = parse_voltammogram_text(text, source="x", scan_rate_V_s=0.05)
    assert vg.scan_rate_V_s == 0.05
    _close(vg.potential_V, E)


def test_time_in_milliseconds_and_decreasing_auto_time_is_dropped():
    E, i, t = triangle_wave(points_per_sweep=40)
    rows = "\n".join(
        f"{a!r};{b!r};{c!r}"
        for a, b, c in zip((t * 1e3).tolist(), E.tolist(), i.tolist(), strict=True)
    )
    vg = parse_voltammogram_text("t/ms;E/V;I/A\n" + rows, source="x")
    _close(vg.time_s, t)
    reset = np.concatenate([t[:40], t[40:] - t[40]])
    rows = "\n".join(
        f"{a!r};{b!r};{c!r}"
        for a, b, c in zip(reset.tolist(), E.tolist(), i.tolist(), strict=True)
    )
    vg = parse_voltammogram_text("t/s;E/V;I/A\n" + rows, source="x")
    assert vg.time_s is None and "import.time_ignored" in vg.metadata


def test_large_file_parses(tmp_path):
    E, i, t = triangle_wave(cycles=50, points_per_sweep=200)  # ~20 000 rows
    assert E.size > 19_000
    path = write_dialect(
        tmp_path / "big.csv",
        potential_V=E,
        current_A=i,
        time_s=t,
        dialect="semicolon_decimal_comma",
    )
    vg = read_voltammogram(path)
    assert vg.n_points == E.size
    _close(vg.current_A, i)


def test_unrecognised_header_falls_back_to_position():
    E, i, _ = triangle_wave(points_per_sweep=40)
    rows = "\n".join(f"{e!r};{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    vg = parse_voltammogram_text("ch1;ch2\n" + rows, source="x")
    _close(vg.potential_V, E)
    assert vg.metadata["import.assumed_columns"].startswith("header labels not recognised")


def test_working_electrode_preferred_over_counter_and_aux():
    E, i, _ = triangle_wave(points_per_sweep=40)
    rows = "\n".join(
        f"{e + 0.3!r}\t{e!r}\t{c * 1e3!r}\t{2 * e!r}"
        for e, c in zip(E.tolist(), i.tolist(), strict=True)
    )
    vg = parse_voltammogram_text("Ece/V\tEwe/V\t<I>/mA\tAnalog IN 1/V\n" + rows, source="x")
    assert vg.metadata["import.potential_column"] == "Ewe/V"
    _close(vg.potential_V, E)


@pytest.mark.parametrize(("units", "fe", "fi"), [("µA,mV", 1e3, 1e6), ("A,V", 1.0, 1.0)])
def test_units_row_below_names(units, fe, fi):
    E, i, _ = triangle_wave(points_per_sweep=40)
    rows = "\n".join(f"{c * fi!r},{e * fe!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    vg = parse_voltammogram_text(f"Current,Potential\n{units}\n{rows}", source="x")
    assert vg.metadata["import.potential_column"] == f"Potential ({units.split(',')[1]})"
    _close(vg.potential_V, E)
    _close(vg.current_A, i)


def test_typographic_minus():
    E, i, _ = triangle_wave(points_per_sweep=40)
    rows = "\n".join(f"{e!r};{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    vg = parse_voltammogram_text("E/V;I/A\n" + rows.replace("-", "\u2212"), source="x")
    _close(vg.current_A, i)
