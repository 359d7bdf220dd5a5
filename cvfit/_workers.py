"""Worker processes of a run (private): how many cores, and a pool that dies with its parent.

A pool's workers wait on a pipe that their siblings also hold open, so when the process
that started them is killed (SIGKILL, an out-of-memory kill, a closed terminal) they would
wait forever, each holding its share of memory. Every worker here watches its parent and
exits as soon as the parent is gone.
"""

from __future__ import annotations

import contextlib
import os
import threading
import time
from collections.abc import Iterator
from concurrent.futures import Executor, ProcessPoolExecutor
from dataclasses import dataclass

from .errors import InputError

__all__ = ["available_cpus", "new_process_pool", "worker_pool", "WorkerPool", "PARENT_POLL_S"]

#: How often a worker checks that the process that started it is still there, s.
PARENT_POLL_S = 0.2


def available_cpus() -> int:
    """CPU cores this process may run on (the affinity mask where the OS has one)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - platforms without sched_getaffinity
        return max(1, os.cpu_count() or 1)


def _exit_with_parent(parent_pid: int) -> None:
    """Worker initializer: a daemon thread ends this worker once its parent has gone."""

    def watch() -> None:
        while os.getppid() == parent_pid:
            time.sleep(PARENT_POLL_S)
        os._exit(1)  # orphaned: nobody waits for this worker's results

    threading.Thread(target=watch, name="cvfit-parent-watch", daemon=True).start()


def new_process_pool(workers: int) -> ProcessPoolExecutor:
    """A process pool of *workers* processes that exit when this process dies."""
    return ProcessPoolExecutor(
        max_workers=workers, initializer=_exit_with_parent, initargs=(os.getpid(),)
    )


@dataclass(frozen=True)
class WorkerPool:
    """Worker processes shared by the stages of one run, and how many there are."""

    executor: Executor
    workers: int


@contextlib.contextmanager
def worker_pool(jobs: int) -> Iterator[WorkerPool | None]:
    """A process pool of *jobs* workers to share between the stages of one run (None for 1).

    The workers start (fork, where the platform does) at the first task, so a caller that
    imports what the workers need beforehand (the figure modules) spares every worker that
    import.
    """
    if isinstance(jobs, bool) or int(jobs) < 1:
        raise InputError(f"--jobs must be at least 1, got {jobs}", source="<command line>")
    if jobs == 1:
        yield None
        return
    executor = new_process_pool(int(jobs))
    try:
        yield WorkerPool(executor, int(jobs))
    finally:
        executor.shutdown(cancel_futures=True)
