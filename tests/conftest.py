"""Shared pytest hooks."""

from __future__ import annotations


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
