"""Real instrument exports read as exported (the shapes of tests/dialects.py and their
faults): leading empty cells, padding rows, measured and applied potentials, a header of
units in UTF-16, a stated scan rate, twin column names, unknown unit prefixes, a text
column, mV under a label without a unit and a one-sample potential glitch."""

from __future__ import annotations

import numpy as np
import pytest
from dialects import PADDING_ROWS, triangle_wave, write_dialect
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from cvfit.errors import InputError
from cvfit.io import ImportOptions, parse_voltammogram_text, read_voltammogram
from cvfit.io.notes import import_flags, imported_columns
from cvfit.voltammogram import turning_points

RTOL = 1e-10


def _close(a, b):
    a, b = np.asarray(a), np.asarray(b)
    np.testing.assert_allclose(a, b, rtol=0, atol=RTOL * float(np.max(np.abs(b))))


def _codes(v) -> list[str]:
    return [f.code for f in import_flags(v.metadata)]


@pytest.fixture(scope="module")
def wave():
    return triangle_wave(cycles=2, points_per_sweep=80)


# --- 1. a first data row with the run settings; later rows begin with empty cells ------


def test_leading_empty_cells_keep_their_column(tmp_path, wave):
    E, i, t = wave
    p = write_dialect(tmp_path / "s.txt", potential_V=E, current_A=i, time_s=t,
                      dialect="tab_leading_settings")  # fmt: skip
    assert p.read_text().splitlines()[2].startswith("\t\t\t")
    v = read_voltammogram(p)
    _close(v.potential_V, E)
    _close(v.current_A, i)
    _close(v.time_s, t)
    md = v.metadata
    assert md["Technique"] == "Cyclic voltammetry" and md["Sweep rate (mV/s)"] == "100"
    # the settings column "Initial E (V)" names a potential but is filled in one row only
    assert md["import.potential_column"] == "Potential (V)"
    assert "line 2" in md["import.settings_row"]
    assert "import.scan_rate_disagreement" not in md


@pytest.mark.parametrize(
    ("cell", "words"),
    [("1.2.3", ["'1.2.3' is not a number", "column 7 ('Current (A)')"]),
     ("", ["column 7 ('Current (A)')", "empty"])],
)  # fmt: skip
def test_a_bad_cell_after_leading_empty_cells_is_named_in_its_column(tmp_path, wave, cell, words):
    E, i, t = wave
    p = write_dialect(tmp_path / "s.txt", potential_V=E, current_A=i, time_s=t,
                      dialect="tab_leading_settings")  # fmt: skip
    lines = p.read_text().splitlines()
    cells = lines[40].split("\t")
    assert cells[:3] == ["", "", ""]
    cells[6] = cell
    lines[40] = "\t".join(cells)
    p.write_text("\n".join(lines) + "\n")
    with pytest.raises(InputError) as err:
        read_voltammogram(p)
    assert err.value.line == 41
    for w in words:
        assert w in err.value.message


# --- 2. padding rows -------------------------------------------------------------------


def test_counter_only_rows_after_the_data_are_padding(tmp_path, wave):
    E, i, t = wave
    p = write_dialect(tmp_path / "p.txt", potential_V=E, current_A=i, time_s=t,
                      dialect="counter_padding")  # fmt: skip
    v = read_voltammogram(p)
    assert v.n_points == E.size
    _close(v.current_A, i)
    note = v.metadata["import.padding_rows"]
    first = E.size + 2
    assert f"{PADDING_ROWS} row(s)" in note and f"lines {first}–{first + PADDING_ROWS - 1}" in note
    flags = import_flags(v.metadata)
    assert [(f.code, f.severity) for f in flags] == [("PADDING_ROWS_SKIPPED", "info")]


def _csv(E, i, pad_at: dict[int, int]) -> str:
    """E, I with a scan counter; *pad_at* maps a row index to padding rows before it."""
    rows = ["Scan,E/V,I/A"]
    for k, (e, c) in enumerate(zip(E.tolist(), i.tolist(), strict=True)):
        rows += ["1,,"] * pad_at.get(k, 0)
        rows.append(f"1,{e!r},{c!r}")
    return "\n".join(rows) + "\n"


def test_padding_between_the_data_is_skipped_and_one_empty_cell_is_an_error(wave):
    E, i, _ = wave
    v = parse_voltammogram_text(_csv(E, i, {100: 50, 120: 7}), source="p.csv")
    _close(v.potential_V, E)
    assert "57 row(s)" in v.metadata["import.padding_rows"]
    assert "not all in one block" in v.metadata["import.padding_rows"]
    text = _csv(E, i, {}).splitlines()
    text[30] = "1,," + text[30].split(",")[2]  # the potential empty, the current there
    with pytest.raises(InputError) as err:
        parse_voltammogram_text("\n".join(text), source="p.csv")
    assert err.value.line == 31 and "'E/V'" in err.value.message
    assert "\n" not in str(err.value)


_PAD_SETTINGS = settings(max_examples=60, deadline=None, derandomize=True,
                         suppress_health_check=[HealthCheck.too_slow])  # fmt: skip


@_PAD_SETTINGS
@given(
    st.dictionaries(st.integers(1, 159), st.integers(1, 40), max_size=4),
    st.integers(0, 300),
)
def test_padding_anywhere_after_the_first_row_is_skipped(pads, tail):
    E, i, _ = triangle_wave(points_per_sweep=80)
    text = _csv(E, i, pads) + "1,,\n" * tail
    v = parse_voltammogram_text(text, source="p.csv")
    _close(v.potential_V, E)
    _close(v.current_A, i)
    total = sum(pads.values()) + tail
    note = v.metadata.get("import.padding_rows")
    assert (note is None) if total == 0 else note.startswith(f"{total} row(s)")


@_PAD_SETTINGS
@given(st.integers(1, 5), st.lists(st.sampled_from(["CV", "0.1", "", "x y", "7"]), min_size=5,
                                   max_size=5))  # fmt: skip
def test_leading_settings_cells_of_any_kind_keep_the_columns(n, cells):
    E, i, t = triangle_wave(points_per_sweep=40)
    head = "\t".join([f"Setting {k}" for k in range(n)] + ["t/s", "E/V", "I/A"])
    rows = [f"{a!r}\t{b!r}\t{c!r}" for a, b, c in zip(t.tolist(), E.tolist(), i.tolist(),
                                                          strict=True)]  # fmt: skip
    first = "\t".join(cells[:n]) + "\t" + rows[0]
    text = "\n".join([head, first] + ["\t" * n + r for r in rows[1:]])
    v = parse_voltammogram_text(text, source="s.txt")
    _close(v.potential_V, E)
    _close(v.time_s, t)
    filled = {f"Setting {k}": c for k, c in enumerate(cells[:n]) if c}
    assert all(v.metadata[k] == c for k, c in filled.items())


# --- 3. measured and applied potentials ------------------------------------------------


@pytest.mark.parametrize(
    ("measured", "applied"),
    [("E measured (V)", "E applied (V)"), ("WE potential (V)", "Potential set (V)"),
     ("Working electrode potential (mV)", "Program potential (mV)")],
)  # fmt: skip
def test_measured_potential_is_read_before_the_applied(measured, applied):
    E, i, _ = triangle_wave(points_per_sweep=40)
    scale = 1e3 if "(mV)" in measured else 1.0
    rows = [f"{(e - 0.002) * scale!r};{c!r};{e * scale!r}"
            for e, c in zip(E.tolist(), i.tolist(), strict=True)]  # fmt: skip
    text = f"{applied};I/A;{measured}\n" + "\n".join(rows)
    v = parse_voltammogram_text(text, source="m.csv")
    _close(v.potential_V, E)
    cols = imported_columns(v.metadata)
    assert cols == {
        "potential_column": measured,
        "potential_unit": "mV" if scale > 1 else "V",
        "potential_kind": "measured",
        "current_column": "I/A",
        "current_unit": "A",
    }
    over = parse_voltammogram_text(text, source="m.csv",
                                   options=ImportOptions(potential_column=applied))  # fmt: skip
    _close(over.potential_V, E - 0.002)
    assert imported_columns(over.metadata)["potential_kind"] == "applied"


# --- 4. UTF-16 with a byte-order mark, metadata, a header of units --------------------


def test_utf16_header_of_units_and_a_last_line_of_only_a_mark(tmp_path, wave):
    E, i, t = wave
    p = write_dialect(tmp_path / "u.txt", potential_V=E, current_A=i, time_s=t,
                      dialect="utf16_units_header")  # fmt: skip
    raw = p.read_bytes()
    assert raw.startswith(b"\xff\xfe") and raw.endswith(b"\r\x00\n\x00\xff\xfe")
    for options in (None, ImportOptions(potential_column="V")):
        v = read_voltammogram(p, options)
        _close(v.potential_V, E)
        _close(v.current_A, i)
        _close(v.time_s, t)
        assert imported_columns(v.metadata) == {
            "potential_column": "V", "potential_unit": "V", "current_column": "µA",
            "current_unit": "µA", "time_column": "s", "time_unit": "s",
        }  # fmt: skip
    assert v.metadata["Notes"] == "stirred between scans, argon purged"
    # blanks instead of the mark on the last line: the same
    p.write_bytes(raw[:-2] + "  \t".encode("utf-16-le"))
    _close(read_voltammogram(p).potential_V, E)
    # the columns swapped by mistake: one message that holds together
    with pytest.raises(InputError) as err:
        read_voltammogram(p, ImportOptions(potential_column="µA", current_column="V"))
    msg = err.value.message
    assert "'µA'" in msg and "not a potential unit" in msg and "potential_column" in msg
    assert "(one of" not in msg


# --- 5. a scan rate stated in the metadata --------------------------------------------


@pytest.mark.parametrize(
    ("stated", "given", "timed", "note"),
    [(0.05, None, True, "disagreement"), (0.104, None, True, None),
     (0.05, 0.1, False, "disagreement"), (0.1, 0.2, True, "disagreement"),
     (0.05, None, False, "source")],
)  # fmt: skip
def test_stated_scan_rate_is_compared_and_the_manifest_or_time_wins(
    tmp_path, stated, given, timed, note
):
    E, i, t = triangle_wave(points_per_sweep=60)  # 0.1 V/s
    p = write_dialect(tmp_path / "r.csv", potential_V=E, current_A=i, time_s=t if timed else None,
                      dialect="stated_scan_rate", stated_scan_rate_V_s=stated)  # fmt: skip
    v = read_voltammogram(p, scan_rate_V_s=given)
    md = v.metadata
    if note == "disagreement":
        text = md["import.scan_rate_disagreement"]
        used = given if given is not None else 0.1
        assert f"{1e3 * stated:.4g} mV/s" in text and f"{1e3 * used:.4g} mV/s" in text
        assert v.effective_scan_rate_V_s() == pytest.approx(used, rel=1e-6)
        assert _codes(v) == ["SCAN_RATE_METADATA_DISAGREES"]
    elif note == "source":
        assert v.scan_rate_V_s == pytest.approx(stated) and _codes(v) == ["SCAN_RATE_FROM_FILE"]
    else:
        assert _codes(v) == [] and v.effective_scan_rate_V_s() == pytest.approx(0.1)


# --- 6. messages that point the right way ----------------------------------------------


def test_twin_column_names_do_not_make_the_time_the_potential(wave):
    E, i, t = wave
    columns = zip(t.tolist(), E.tolist(), i.tolist(), strict=True)
    rows = "\n".join(f"{a!r},{b!r},{c!r}" for a, b, c in columns)
    v = parse_voltammogram_text("E,E,I\n" + rows, source="d.csv")
    _close(v.potential_V, E)
    assert v.cycle("last").complete
    note = v.metadata["import.duplicate_columns"]
    assert "columns 1, 2 are all named 'E'" in note and "column 2 was read" in note
    assert _codes(v) == ["DUPLICATE_COLUMN_NAMES"]
    with pytest.raises(InputError, match="names 2 columns"):
        parse_voltammogram_text("E,E,I\n" + rows, source="d.csv",
                                options=ImportOptions(potential_column="E"))  # fmt: skip


def test_a_text_column_in_every_row_is_named():
    E, i, _ = triangle_wave(points_per_sweep=30)
    rows = "\n".join(f"{e!r};OK;{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    with pytest.raises(InputError) as err:
        parse_voltammogram_text("E/V;Status;I/A\n" + rows, source="t.csv")
    msg = err.value.message
    assert "column 2 ('Status')" in msg and "'OK'" in msg and "no rows of numbers" not in msg
    assert err.value.line == 2


@pytest.mark.parametrize("label", ["current_kA", "I/kA", "Current (fA)"])
def test_an_unknown_unit_prefix_is_refused(label):
    E, i, _ = triangle_wave(points_per_sweep=30)
    rows = "\n".join(f"{e!r},{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    with pytest.raises(InputError) as err:
        parse_voltammogram_text(f"E/V,{label}\n" + rows, source="k.csv")
    msg = err.value.message
    assert label in msg and "is not one cvfit reads for a current" in msg and "\n" not in msg


def test_mV_under_a_label_without_unit_suggests_the_unit():
    E, i, _ = triangle_wave(points_per_sweep=30)
    rows = "\n".join(f"{1e3 * e!r},{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    v = parse_voltammogram_text("E,I\n" + rows, source="mv.csv")
    assert 'potential_unit = "mV"' in v.metadata["import.potential_unit_doubt"]
    assert _codes(v) == ["POTENTIAL_UNIT_DOUBTFUL"]
    # with the unit on the label nothing is said
    labelled = parse_voltammogram_text("E/mV,I\n" + rows, source="mv.csv")
    assert _codes(labelled) == []


@pytest.mark.parametrize("offset", [-4, 0, 3])
@pytest.mark.parametrize("sign", [1, -1])
def test_a_one_sample_glitch_near_the_switch_is_named_and_does_not_split_a_sweep(offset, sign):
    E, i, _ = triangle_wave(points_per_sweep=300)  # 2 mV steps, window 0.6 V
    turn = 299 + offset
    glitched = E.copy()
    glitched[turn] += sign * 0.020
    rows = "\n".join(f"{e!r},{c!r}" for e, c in zip(glitched.tolist(), i.tolist(), strict=True))
    v = parse_voltammogram_text("E/V,I/A\n" + rows, source="g.csv")
    note = v.metadata["import.potential_glitches"]
    # the jump is measured from the neighbours' mean: at the switching sample itself that
    # lies one 2 mV step inside the true value
    jump = float(note.split(f"line {turn + 2} (")[1].split(" mV)")[0])
    assert abs(jump - sign * 20) <= 2.0 + 1e-9
    assert _codes(v) == ["POTENTIAL_GLITCH"]
    cycles = v.cycles()
    assert len(cycles) == 1 and cycles[0].complete
    assert abs(turning_points(v.potential_V)[1] - 299) <= 1
    # an unglitched record of the same shape has no such note
    clean = "\n".join(f"{e!r},{c!r}" for e, c in zip(E.tolist(), i.tolist(), strict=True))
    assert (
        "import.potential_glitches"
        not in parse_voltammogram_text("E/V,I/A\n" + clean, source="c.csv").metadata
    )
