"""Shared pytest hooks, and one BLAS thread for the whole session."""

from __future__ import annotations

import os

# One BLAS thread, set before numpy loads (the user's own setting wins), as the cvfit
# command does (cvfit.cli.NUMERIC_ENVIRONMENT). With OpenBLAS's default of a thread per core,
# each long dot product of the independent convolution computation (tests/convolution_cv.py)
# woke a second thread: on a busy 2-core machine that cost 5-50x the CPU of one thread.
for _name in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS"):
    os.environ.setdefault(_name, "1")


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
