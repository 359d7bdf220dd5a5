"""Shared pytest hooks, and one BLAS thread for the whole session."""

from __future__ import annotations

import functools
import importlib
import os
import pkgutil

import pytest

# One BLAS thread, set before numpy loads (the user's own setting wins), as the cvfit
# command does (cvfit.cli.NUMERIC_ENVIRONMENT). With OpenBLAS's default of a thread per core,
# each long dot product of the independent convolution computation (tests/convolution_cv.py)
# woke a second thread: on a busy 2-core machine that cost 5-50x the CPU of one thread.
for _name in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS", "BLIS_NUM_THREADS"):
    os.environ.setdefault(_name, "1")


@pytest.fixture(autouse=True)
def _every_cvfit_module_before_hypothesis(request):
    """Import every cvfit module before a Hypothesis test runs.

    Hypothesis draws some examples from the constants of the project's modules that are
    loaded at the time (hypothesis.internal.conjecture.providers), so without this the
    examples of a derandomised test changed with the tests that ran before it in the same
    process (116 against 121 accepted of 400 in one fuzz test, whole suite against the
    file alone), and with pytest-xdist with the worker it landed on.
    """
    if getattr(request.function, "is_hypothesis_test", False):
        import_every_cvfit_module()


@functools.cache
def import_every_cvfit_module() -> None:
    import cvfit

    for module in pkgutil.walk_packages(cvfit.__path__, "cvfit."):
        if not module.name.endswith("__main__"):  # that one runs the command line
            importlib.import_module(module.name)


def pytest_sessionfinish(session, exitstatus):
    """In a pytest-xdist worker: hand this worker's fuzz counts to the controller."""
    from fuzzcount import ACCEPTED, EXAMPLES

    output = getattr(session.config, "workeroutput", None)
    if output is not None:
        output["fuzz_examples"] = dict(EXAMPLES)
        output["fuzz_accepted"] = dict(ACCEPTED)


@pytest.hookimpl(optionalhook=True)
def pytest_testnodedown(node, error):
    """In the pytest-xdist controller: add up the counts each worker handed over."""
    from fuzzcount import ACCEPTED, EXAMPLES

    output = getattr(node, "workeroutput", {})
    EXAMPLES.update(output.get("fuzz_examples", {}))
    ACCEPTED.update(output.get("fuzz_accepted", {}))


def pytest_terminal_summary(terminalreporter, exitstatus, config):
    """Print how many examples each fuzz test tried (shown with or without -s, and with
    pytest-xdist: the workers' counts added up)."""
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
