"""The process pool's results: order, the first failure in order, Ctrl-C held back."""

from __future__ import annotations

import os
import signal
import threading
import time
from functools import partial
from pathlib import Path

import pytest

from cvfit.pipeline.parallel import results_in_order


def _square_or_fail(x: int) -> int:
    # item 3 fails late, item 7 early: a serial loop meets item 3's error first
    if x == 3:
        time.sleep(0.3)
        raise ValueError("item 3")
    if x == 7:
        raise ValueError("item 7")
    return x * x


def _slow(folder: str, x: int) -> int:
    time.sleep(0.2)
    Path(folder, str(x)).touch()
    return x


def test_results_come_in_the_items_order_and_each_is_counted():
    ticks = []
    assert results_in_order(abs, [-3, 1, -2, 5], 2, done=lambda: ticks.append(1)) == [3, 1, 2, 5]
    assert len(ticks) == 4


def test_the_error_raised_is_the_first_failed_item_in_order():
    with pytest.raises(ValueError, match="item 3"):
        results_in_order(_square_or_fail, range(10), 2)


@pytest.mark.skipif(threading.current_thread() is not threading.main_thread(), reason="signals")
def test_ctrl_c_cancels_the_rest_and_raises_keyboard_interrupt_from_the_loop(tmp_path):
    # 40 tasks of 0.2 s on 2 workers; Ctrl-C soon after they start. Python's own handler
    # (a test runner's worker process may have set another one)
    saved = signal.signal(signal.SIGINT, signal.default_int_handler)
    try:
        timer = threading.Timer(0.5, os.kill, (os.getpid(), signal.SIGINT))
        timer.start()
        with pytest.raises(KeyboardInterrupt):
            results_in_order(partial(_slow, str(tmp_path)), range(40), 2)
        assert len(list(tmp_path.iterdir())) < 40  # the tasks not started never ran
        assert signal.getsignal(signal.SIGINT) is signal.default_int_handler  # put back
    finally:
        signal.signal(signal.SIGINT, saved)
