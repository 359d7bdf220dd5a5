"""Run the ``cvfit`` command in a subprocess with a timeout, and check a clean refusal
(test helper)."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

__all__ = ["TIMEOUT_S", "assert_clean_error", "run_cli"]

#: Longest a command may take, s: the hostile cases that hung ran until killed at 60 s.
TIMEOUT_S = 60


def run_cli(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    """``python -m cvfit ARGS`` in *cwd*, output captured, no standard input."""
    return subprocess.run(
        [sys.executable, "-m", "cvfit", *args],
        cwd=cwd,
        capture_output=True,
        text=True,
        timeout=TIMEOUT_S,
        stdin=subprocess.DEVNULL,
    )


def assert_clean_error(proc: subprocess.CompletedProcess, *needles: str) -> str:
    """Exit 2 and exactly one line on stderr, naming what it should; returns that line."""
    assert proc.returncode == 2, (proc.returncode, proc.stderr)
    lines = proc.stderr.splitlines()
    assert len(lines) == 1, proc.stderr
    assert lines[0].startswith("cvfit: error: "), lines[0]
    assert "Traceback" not in proc.stderr
    for needle in needles:
        assert needle in lines[0], (needle, lines[0])
    return lines[0]
