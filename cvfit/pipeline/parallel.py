"""Processes for work that pays to spread: how many cores, one BLAS thread, a process pool.

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
from concurrent.futures import ProcessPoolExecutor

__all__ = ["available_cpus", "new_process_pool", "one_blas_thread", "PARENT_POLL_S"]

#: How often a worker checks that the process that started it is still there, s.
PARENT_POLL_S = 0.2


def available_cpus() -> int:
    """CPU cores this process may run on (the affinity mask where the OS has one)."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # pragma: no cover - platforms without sched_getaffinity
        return max(1, os.cpu_count() or 1)


def one_blas_thread() -> contextlib.AbstractContextManager:
    """Context: the BLAS libraries (OpenBLAS, MKL, ...) run on one thread in the block.

    Our linear algebra is small (least squares on a few hundred rows), which threads only
    slow down; and BLAS threads keep a core busy, taking it from the other processes of a
    run. The ``cvfit`` command also keeps them from starting
    (:data:`cvfit.cli.NUMERIC_ENVIRONMENT`).
    """
    from threadpoolctl import threadpool_limits

    return threadpool_limits(limits=1, user_api="blas")


def _worker_start(parent_pid: int) -> None:
    """Worker initializer: one BLAS thread (:func:`one_blas_thread`), and a daemon thread
    that ends this worker once its parent has gone."""
    one_blas_thread()  # for the worker's life: it is ours

    def watch() -> None:
        while os.getppid() == parent_pid:
            time.sleep(PARENT_POLL_S)
        os._exit(1)  # orphaned: nobody waits for this worker's results

    threading.Thread(target=watch, name="cvfit-parent-watch", daemon=True).start()


def new_process_pool(workers: int) -> ProcessPoolExecutor:
    """A process pool of *workers* processes that exit when this process dies."""
    return ProcessPoolExecutor(
        max_workers=workers, initializer=_worker_start, initargs=(os.getpid(),)
    )
