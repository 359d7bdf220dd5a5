"""Text cells of the CSV cvfit writes never run as spreadsheet formulas; numbers stay numbers.

Common practice (OWASP, "CSV Injection"): a cell that begins with =, +, - or @ (or a tab or
carriage return) is read as a formula by spreadsheets; a leading apostrophe makes it text.
The same through the command: tests/test_reliability_campaign.py, a data file "=1+2.csv".
"""

from __future__ import annotations

import pytest

from cvfit.report.file_table import _cell, text_cell


@pytest.mark.parametrize("text", ["=1+2.csv", "+A1", "-2+3", "@SUM(A1)", "\tx", "\r=1"])
def test_a_cell_a_spreadsheet_would_run_gets_an_apostrophe(text):
    assert text_cell(text) == "'" + text


@pytest.mark.parametrize("text", ["f1.csv", "a=b.csv", "NO_REVERSE_PEAK CLASS_REVERSIBLE", ""])
def test_other_text_is_kept(text):
    assert text_cell(text) == text


def test_numbers_stay_numbers():
    assert _cell(-0.25) == "-0.25" and _cell(-3) == "-3" and _cell(1e-300) == "1e-300"
    assert _cell("-0.25") == "'-0.25"  # text that looks like a number is still text
