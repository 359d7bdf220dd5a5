"""The terminal summary's per-file table stays aligned whatever the width of an E½ cell."""

from __future__ import annotations

from dataclasses import replace

from seriesfactory import write_small_series

from cvfit.formatting import format_pm
from cvfit.io import load_manifest
from cvfit.pipeline.series import analyse_series
from cvfit.report import format_summary


def _table(text: str) -> list[str]:
    lines = text.splitlines()
    start = next(k for k, ln in enumerate(lines) if ln.startswith("file "))
    end = lines.index("", start)
    return [lines[start], *lines[start + 2 : end]]  # header and rows, not the rule


def test_rows_line_up_with_the_header_also_for_a_wide_cell(tmp_path):
    result = analyse_series(load_manifest(write_small_series(tmp_path, 4, seed=310)))
    # one E½ without its standard error prints "… (uncertainty unknown)": 25+ characters
    files = list(result.files)
    hw = files[2].half_wave
    files[2] = replace(files[2], half_wave=replace(hw, stderr_V=None, own_stderr_V=None))
    text = format_summary(replace(result, files=tuple(files)))
    header, *rows = _table(text)
    assert any("(uncertainty unknown)" in row for row in rows)
    assert {len(row) for row in rows} == {len(header)}
    column_end = header.index("E½/mV") + len("E½/mV")
    for row, f in zip(rows, files, strict=True):
        cell = format_pm(f.E_half_V, f.E_half_total_stderr_V, scale=1e3)
        assert row[column_end - len(cell) : column_end] == cell, row  # ends under "E½/mV"


def test_ligand_concentrations_keep_the_digits_the_manifest_gave(tmp_path):
    """Issue 27 item 7: [L] was rounded to 3 significant figures (0.01255 showed as 0.0126)."""
    result = analyse_series(load_manifest(write_small_series(tmp_path, 4, seed=311)))
    given = (0.0, 0.01255, 0.0012345, 2.5e-05)
    files = tuple(replace(f, ligand_M=x) for f, x in zip(result.files, given, strict=True))
    header, *rows = _table(format_summary(replace(result, files=files)))
    assert [row.split()[1] for row in rows] == ["0", "0.01255", "0.0012345", "2.5e-05"]
    assert {len(row) for row in rows} == {len(header)}
