"""How many worker processes read and measure the files of one series by default.

Measured with ``benchmarks/bench_file_stage.py`` (the per-file stage of 20 000-point
files, serially against a pool of two workers on two cores): see :data:`PARALLEL_MIN_FILES`.
"""

from __future__ import annotations

import os

__all__ = ["PARALLEL_MIN_FILES", "available_cores", "default_file_jobs"]

#: Smallest series whose files go to a pool of workers by default: below it, starting the
#: workers costs more than they save. Measured with benchmarks/bench_file_stage.py on two
#: cores (median of 5, time with a pool of 2 / time in this process; starting and stopping
#: the pool costs ~40 ms, a file 2-3 ms at 2 001 points and ~9 ms at 20 001 points):
#: 2 001-point files: 10 files 2.4, 20 files 1.25, 50 files 0.74, 100 files 0.70;
#: 20 001-point files: 10 files 0.98, 20 files 0.78, 50 files 0.61, 100 files 0.55,
#: 200 files 0.63. From 50 files on the pool pays at both lengths; a typical 20-file
#: series runs in this process.
PARALLEL_MIN_FILES = 50


def available_cores() -> int:
    """CPU cores this process may run on (the affinity mask where the system has one)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - platforms without sched_getaffinity
        return max(1, os.cpu_count() or 1)


def default_file_jobs(n_files: int) -> int:
    """Processes for the files of an *n_files* series when ``--jobs`` is not given."""
    return min(available_cores(), n_files) if n_files >= PARALLEL_MIN_FILES else 1
