"""How many worker processes read and measure the files of one series by default.

Measured with ``benchmarks/bench_file_stage.py`` (the per-file stage of 20 000-point
files, serially against a pool of two workers on two cores): see :data:`PARALLEL_MIN_FILES`.
"""

from __future__ import annotations

import os

__all__ = ["PARALLEL_MIN_FILES", "default_file_jobs"]

#: Smallest series whose files go to a pool of workers by default: below it, starting the
#: workers costs more than they save (benchmarks/bench_file_stage.py).
PARALLEL_MIN_FILES = 10**9


def _cpus() -> int:
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - platforms without sched_getaffinity
        return max(1, os.cpu_count() or 1)


def default_file_jobs(n_files: int) -> int:
    """Processes for the files of an *n_files* series when ``--jobs`` is not given."""
    return min(_cpus(), n_files) if n_files >= PARALLEL_MIN_FILES else 1
