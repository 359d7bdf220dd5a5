"""Timing helper shared by the benchmark scripts (run as ``python benchmarks/NAME.py``)."""

from __future__ import annotations

import time
from collections.abc import Callable


def best_of(func: Callable[[], object], repeats: int) -> float:
    """Shortest wall time of *repeats* calls of *func*, s."""
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        func()
        times.append(time.perf_counter() - t0)
    return min(times)
