"""share_tasks: the workers and this process share a list of tasks; results come back in
the order of the list whoever ran them, and a failure stops the work cleanly."""

from __future__ import annotations

import os
import threading
import time

import pytest

from cvfit._workers import new_process_pool, share_tasks, worker_pool
from cvfit.errors import InputError


def _who(k: int, pause_s: float) -> tuple[int, int]:
    time.sleep(pause_s)
    return k, os.getpid()


def _fails_at(k: int, bad: int) -> int:
    if k == bad:
        raise ValueError(f"task {k} failed")
    time.sleep(0.01)
    return k


def _no_feeder_left() -> bool:
    return not any(t.name == "cvfit-feed" for t in threading.enumerate())


def test_without_workers_this_process_runs_everything_in_order():
    seen = []
    got = share_tasks(
        None, [(_who, (k, 0.0)) for k in range(5)], on_done=lambda k, r: seen.append(k)
    )
    assert [k for k, _ in got] == list(range(5))
    assert {pid for _, pid in got} == {os.getpid()}
    assert sorted(seen) == list(range(5))
    assert seen[0] == 4  # this process works from the back of the list


def test_workers_and_this_process_share_the_tasks():
    with worker_pool(2) as pool:
        assert pool.workers == 1 and pool.processes == 2  # --jobs 2: this one and one worker
        done = []
        got = share_tasks(
            pool, [(_who, (k, 0.02)) for k in range(12)], on_done=lambda k, r: done.append(k)
        )
    assert [k for k, _ in got] == list(range(12))  # in the order of the list
    pids = [pid for _, pid in got]
    assert pids[0] != os.getpid()  # a worker took the first task ...
    assert pids[-1] == os.getpid()  # ... and this process the last
    assert sorted(done) == list(range(12))  # every task reported once
    assert _no_feeder_left()


@pytest.mark.parametrize("bad", [11, 0], ids=["here", "in-a-worker"])
def test_a_failing_task_stops_the_work(bad):
    with worker_pool(2) as pool:
        tasks = [(_fails_at, (k, bad)) for k in range(12)]
        with pytest.raises(ValueError, match=f"task {bad} failed"):
            share_tasks(pool, tasks)
    assert _no_feeder_left()


def test_jobs_below_one_refused():
    with pytest.raises(InputError, match="at least 1"), worker_pool(0):
        pass


def test_a_broken_pool_is_raised_here_not_printed_by_the_feeding_thread(capfd):
    with worker_pool(2) as pool:
        pool.executor.shutdown()  # submitting now fails in the feeding thread
        with pytest.raises(RuntimeError, match="shutdown"):
            share_tasks(pool, [(_who, (k, 0.01)) for k in range(6)])
    assert "Exception in thread" not in capfd.readouterr().err
    assert _no_feeder_left()


def test_pool_leaves_the_heap_out_of_garbage_collection_while_it_lives():
    """Collections write to every object they visit: with the heap shared by fork, each
    process would copy its pages. Frozen while the pool lives, collected normally after."""
    import gc

    before = gc.get_freeze_count()
    with worker_pool(2) as pool:
        assert gc.get_freeze_count() > before
        assert share_tasks(pool, [(_who, (k, 0.0)) for k in range(3)])[0][0] == 0
    assert gc.get_freeze_count() == 0


def _blas_threads() -> list[int]:
    from threadpoolctl import threadpool_info

    return [i["num_threads"] for i in threadpool_info() if i["user_api"] == "blas"]


def test_blas_runs_on_one_thread_in_workers_and_during_a_run():
    """Small least squares gain nothing from BLAS threads, and an idle BLAS thread keeps a
    core busy for a while, taking it from the run's other process."""
    import numpy as np  # noqa: F401  (loads the BLAS library threadpoolctl looks for)
    from threadpoolctl import threadpool_limits

    with threadpool_limits(limits=2, user_api="blas"):  # as on a machine with 2+ cores
        assert set(_blas_threads()) == {2}  # a BLAS library is loaded: the test means something
        with worker_pool(2) as pool:
            assert set(_blas_threads()) == {1}
            in_worker = pool.executor.submit(_blas_threads).result()
            assert set(in_worker) == {1}
        assert set(_blas_threads()) == {2}  # restored after the run
        with new_process_pool(1) as executor:  # forked from a process with 2 threads
            assert set(executor.submit(_blas_threads).result()) == {1}


def test_a_programs_own_frozen_objects_stay_frozen():
    import gc

    from cvfit._workers import frozen_heap

    assert gc.get_freeze_count() == 0
    gc.freeze()  # as a program preparing its own forks would
    try:
        theirs = gc.get_freeze_count()
        with frozen_heap():
            pass
        assert gc.get_freeze_count() >= theirs
    finally:
        gc.unfreeze()
