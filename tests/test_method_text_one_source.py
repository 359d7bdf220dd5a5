"""The method sentence on the baseline is said once (cvfit/report/methods_text.py) and quoted
word for word by the README, docs/methods.md and the HTML report."""

from __future__ import annotations

from pathlib import Path

import pytest

from cvfit.report.html import render_html
from cvfit.report.methods_text import BASELINE_SENTENCE, METHOD_STEPS

ROOT = Path(__file__).resolve().parents[1]


def _flat(text: str) -> str:
    """Markdown paragraphs wrap lines; compare with every run of white space as one space."""
    return " ".join(text.split())


@pytest.mark.parametrize("doc", ["README.md", "docs/methods.md"])
def test_docs_quote_the_report_sentence(doc):
    assert BASELINE_SENTENCE in _flat((ROOT / doc).read_text(encoding="utf-8"))


def test_report_says_the_sentence_and_not_the_old_straight_baseline():
    peaks = dict((heading, text) for heading, text, _ in METHOD_STEPS)["Peaks"]
    assert peaks.startswith(BASELINE_SENTENCE)
    page = render_html({"series": {}, "fit": {}, "voltammograms": []})
    assert BASELINE_SENTENCE.replace("'", "&#x27;") in page
    assert "straight baseline" not in page
    for doc in ("README.md", "docs/methods.md"):
        assert "straight baseline" not in (ROOT / doc).read_text(encoding="utf-8")
