"""Shared pytest hooks."""

from __future__ import annotations

import pytest


@pytest.fixture(scope="session", autouse=True)
def compiled_parser_loaded():
    """Load the compiled number parser once, as a run does before a large series, so the
    suite reads files through the importer's main path (tests that need the pandas path
    switch numba off themselves; tests of when it is loaded use a fresh state)."""
    from cvfit.io._parser_choice import load_compiled_parser

    load_compiled_parser()


def pytest_terminal_summary(terminalreporter, exitstatus, config):
    """Print how many examples each fuzz test tried (shown with or without -s)."""
    from fuzzcount import ACCEPTED, EXAMPLES

    if not EXAMPLES:
        return
    terminalreporter.section("fuzz examples tried")
    for name, count in sorted(EXAMPLES.items()):
        terminalreporter.write_line(
            f"{name}: {count} tried, {ACCEPTED[name]} accepted, "
            f"{count - ACCEPTED[name]} refused with InputError"
        )
    terminalreporter.write_line(f"total: {sum(EXAMPLES.values())}")
