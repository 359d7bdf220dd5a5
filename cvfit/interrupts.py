"""Ctrl-C held back while a few steps must happen together.

A terminal's Ctrl-C raises KeyboardInterrupt between any two bytecodes of the main thread;
where a step must not be cut in two — a process pool's bookkeeping, creating and locking
an output folder's lock file, removing it — :func:`interrupt_held_back` turns SIGINT into a
flag for the block and raises KeyboardInterrupt after it, so the interruption is never lost
and never lands inside.
"""

from __future__ import annotations

import contextlib
import signal
import threading
from collections.abc import Callable, Iterator

__all__ = ["interrupt_held_back"]


@contextlib.contextmanager
def interrupt_held_back() -> Iterator[Callable[[], bool]]:
    """Within the block SIGINT only sets a flag, which the yielded function reads; a block
    that ends normally with the flag up raises KeyboardInterrupt.

    Outside the main thread, or where SIGINT is ignored, nothing changes (the flag stays
    down). Worker processes forked in the block inherit the handler: it sets a flag nobody
    reads, so a terminal's Ctrl-C, which reaches every process, leaves them to finish or be
    cancelled by the parent.
    """
    if threading.current_thread() is not threading.main_thread():
        yield lambda: False
        return
    previous = signal.getsignal(signal.SIGINT)
    if previous in (signal.SIG_IGN, None):
        yield lambda: False
        return
    hit = threading.Event()
    signal.signal(signal.SIGINT, lambda signum, frame: hit.set())
    try:
        yield hit.is_set
    finally:
        signal.signal(signal.SIGINT, previous)
    if hit.is_set():  # a Ctrl-C after the block's last look at the flag is not lost
        raise KeyboardInterrupt
