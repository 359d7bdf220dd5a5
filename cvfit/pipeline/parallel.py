"""Processes for work that pays to spread: how many cores, one BLAS thread, a process pool.

A pool's workers wait on a pipe that their siblings also hold open, so when the process
that started them is killed (SIGKILL, an out-of-memory kill, a closed terminal) they would
wait forever, each holding its share of memory. Every worker here watches its parent and
exits as soon as the parent is gone.

Ctrl-C is never raised inside the pool's own code: a KeyboardInterrupt that lands while
the executor holds one of its locks leaves its shutdown waiting on that lock for ever (seen
on Python 3.11). :func:`results_in_order` holds SIGINT back while it works the pool and
raises KeyboardInterrupt itself, from its own loop, after cancelling the tasks not started.
"""

from __future__ import annotations

import contextlib
import os
import threading
import time
from collections.abc import Callable, Iterable
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from typing import Any, TypeVar

from cvfit.interrupts import interrupt_held_back

__all__ = [
    "available_cpus",
    "new_process_pool",
    "one_blas_thread",
    "results_in_order",
    "PARENT_POLL_S",
]

T = TypeVar("T")

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


def results_in_order(
    call: Callable[[Any], T],
    items: Iterable[Any],
    workers: int,
    *,
    done: Callable[[], object] = lambda: None,
) -> list[T]:
    """``[call(x) for x in items]`` on a pool of *workers* processes, in the items' order.

    *done* is called in this process each time a task finishes (a progress bar). A task
    that raises cancels the tasks after it that have not started; the others finish, and
    the exception of the first failed item in order is raised (the one a serial loop
    would meet). Ctrl-C cancels every task not started, lets the running ones finish and
    raises KeyboardInterrupt.
    """
    with interrupt_held_back() as interrupted, new_process_pool(workers) as pool:
        futures: list[Future[T]] = [pool.submit(call, x) for x in items]
        try:
            order = {fut: k for k, fut in enumerate(futures)}
            pending: set[Future[T]] = set(futures)
            while pending:
                finished, pending = wait(pending, PARENT_POLL_S, FIRST_COMPLETED)
                for fut in finished:
                    if fut.cancelled():
                        continue
                    if fut.exception() is not None:
                        for later in futures[order[fut] + 1 :]:
                            later.cancel()
                    else:
                        done()
                if interrupted():
                    raise KeyboardInterrupt
            return [fut.result() for fut in futures]  # a failure comes before any cancelled
        finally:
            for fut in futures:
                fut.cancel()
