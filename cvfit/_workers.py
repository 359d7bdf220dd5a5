"""Worker processes of a run (private): how many cores, and a pool that dies with its parent.

A pool's workers wait on a pipe that their siblings also hold open, so when the process
that started them is killed (SIGKILL, an out-of-memory kill, a closed terminal) they would
wait forever, each holding its share of memory. Every worker here watches its parent and
exits as soon as the parent is gone.

A run with ``--jobs N`` uses N processes: this one and N - 1 workers. This process works
too (:func:`share_tasks`): it would otherwise wait idle, and a freshly forked worker runs its
first tasks slowly while it copies the pages it writes to (tens of ms each).
"""

from __future__ import annotations

import contextlib
import gc
import os
import threading
import time
from collections import deque
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import FIRST_COMPLETED, Executor, Future, ProcessPoolExecutor, wait
from dataclasses import dataclass
from typing import Any

from .errors import InputError

__all__ = [
    "available_cpus",
    "new_process_pool",
    "worker_pool",
    "share_tasks",
    "frozen_heap",
    "one_blas_thread",
    "WorkerPool",
    "PARENT_POLL_S",
]

#: How often a worker checks that the process that started it is still there, s.
PARENT_POLL_S = 0.2
#: Longest wait, s, for the workers' first tasks to be handed out before this process
#: starts on its own share (see :func:`share_tasks`).
HAND_OUT_WAIT_S = 0.05


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
    run. Limiting them once loaded recovers part of that; the ``cvfit`` command also keeps
    them from starting (:data:`cvfit.cli.NUMERIC_ENVIRONMENT`). Two processes on two cores
    analysed a 200-file series in ~0.34 s with OpenBLAS's threads, ~0.32 s limited here and
    ~0.27 s when they never started.
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


@dataclass(frozen=True)
class WorkerPool:
    """Worker processes shared by the stages of one run, and how many there are.

    The process holding the pool works beside them: ``processes = workers + 1``.
    """

    executor: Executor
    workers: int

    @property
    def processes(self) -> int:
        """Processes that share the work: the workers and this one."""
        return self.workers + 1


@contextlib.contextmanager
def worker_pool(jobs: int) -> Iterator[WorkerPool | None]:
    """Workers for a run of *jobs* processes, this one included (None for 1).

    The pool has ``jobs - 1`` workers. They start (fork, where the platform does) at the
    first task, so a caller that imports what the workers need beforehand (the figure
    modules) spares every worker that import.
    """
    if isinstance(jobs, bool) or int(jobs) < 1:
        raise InputError(f"--jobs must be at least 1, got {jobs}", source="<command line>")
    if jobs == 1:
        yield None
        return
    with frozen_heap(), one_blas_thread():
        executor = new_process_pool(int(jobs) - 1)
        try:
            yield WorkerPool(executor, int(jobs) - 1)
        finally:
            executor.shutdown(cancel_futures=True)


@contextlib.contextmanager
def frozen_heap() -> Iterator[None]:
    """Leave every object alive now out of garbage collection until the block ends.

    Open it before forking workers: a collection writes to every object it visits, so
    after a fork each process would copy the pages of the whole heap it shares with the
    other (a full collection while unpickling took a fresh worker 0.1-0.25 s). A program
    that had frozen objects itself keeps them frozen: ``gc.unfreeze`` cannot tell theirs
    from ours, so the block then ends without it.
    """
    ours = gc.get_freeze_count() == 0
    gc.freeze()
    try:
        yield
    finally:
        if ours:
            gc.unfreeze()


Task = tuple[Callable[..., Any], tuple]


def share_tasks(
    pool: WorkerPool | None,
    tasks: Sequence[Task],
    *,
    on_done: Callable[[int, Any], object] | None = None,
) -> list[Any]:
    """Run ``fn(*args)`` for every task; the results in the order of *tasks*.

    The workers take tasks from the front, one each at a time (a thread of this process
    hands them out as they finish), and this process runs tasks from the back, so the
    costly ones should come first. Tasks sent to workers must pickle. *on_done* is called
    in this process with (index, result) as tasks finish. The first exception (in the
    order this process meets them) propagates once the running tasks are done; tasks not
    yet started are dropped.
    """
    results: list[Any] = [None] * len(tasks)
    pending = deque(range(len(tasks)))
    lock = threading.Lock()
    sent: dict[Future, int] = {}  # every task handed to a worker
    reported: set[Future] = set()

    def take(front: bool) -> int | None:
        with lock:
            if not pending:
                return None
            return pending.popleft() if front else pending.pop()

    feed_errors: list[BaseException] = []

    def feed() -> None:
        running: set[Future] = set()
        try:
            while True:
                while len(running) < pool.workers and (k := take(front=True)) is not None:
                    fn, args = tasks[k]
                    future = pool.executor.submit(fn, *args)
                    with lock:
                        sent[future] = k
                    running.add(future)
                if not running:
                    return
                _, running = wait(running, return_when=FIRST_COMPLETED)
        except BaseException as exc:  # a broken pool: stop, and let this process raise it
            feed_errors.append(exc)
            with lock:
                pending.clear()
            wait(running)

    def report_done() -> None:
        with lock:
            done = [(f, k) for f, k in sent.items() if f.done() and f not in reported]
        for future, k in done:
            reported.add(future)
            results[k] = future.result()
            if on_done is not None:
                on_done(k, results[k])

    feeder = None
    if pool is not None and pool.workers > 0 and len(tasks) > 1:
        feeder = threading.Thread(target=feed, name="cvfit-feed", daemon=True)
        feeder.start()
        # Hand the first tasks out before working here: the hand-over takes three threads
        # of this process in turn, each needing Python's lock, which this process's own
        # work can keep for tens of ms at a time (matplotlib keeps it while it renders).
        first = min(pool.workers, len(tasks) - 1)
        deadline = time.monotonic() + HAND_OUT_WAIT_S
        while time.monotonic() < deadline and not feed_errors:
            with lock:
                out = list(sent)
            if len(out) >= first and all(f.running() or f.done() for f in out):
                # running: in the pool's queue; a moment more lets the queue's thread
                # write them to the workers' pipe
                time.sleep(0.002)
                break
            time.sleep(0.0005)
    try:
        while (k := take(front=False)) is not None:
            fn, args = tasks[k]
            results[k] = fn(*args)
            if on_done is not None:
                on_done(k, results[k])
            report_done()
    finally:
        if feeder is not None:
            with lock:
                pending.clear()  # after an exception: start nothing more
            feeder.join()
    if feed_errors:
        raise feed_errors[0]
    report_done()
    return results
