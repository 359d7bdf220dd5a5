"""The command's terminal: streams that cannot fail it, and Ctrl-C handled in one place.

- A terminal whose encoding lacks a character cvfit prints (β, ½, ± on a cp1252 or ASCII
  console) gets an ASCII spelling of it ("beta", "1/2", "+/-") instead of an error.
- Output to a reader that has gone (``cvfit run ... | head -c0``) is dropped; a closed
  stdout or stderr is replaced by the null device. Neither changes the exit status.
- Ctrl-C (SIGINT, which a terminal sends to every process of the command) interrupts only
  the command's own process; the worker processes it forks ignore it and are ended by it.
"""

from __future__ import annotations

import codecs
import contextlib
import os
import signal
import sys
import threading
from collections.abc import Iterator
from typing import Any

__all__ = ["ASCII_SPELLINGS", "guarded_streams", "interrupt_in_this_process"]

#: ASCII spellings of the characters cvfit prints, for a terminal that cannot show them.
ASCII_SPELLINGS = {
    "β": "beta", "α": "alpha", "σ": "sigma", "θ": "theta", "Δ": "d", "Ω": "ohm",
    "½": "1/2", "±": "+/-", "µ": "u", "μ": "u", "°": " deg", "²": "^2", "³": "^3",
    "⁻": "^-", "¹": "^1", "×": "x", "·": "*", "−": "-", "–": "-", "—": "-", "…": "...",
    "→": "->", "←": "<-", "≤": "<=", "≥": ">=", "≈": "~", "≠": "!=", "√": "sqrt",
    "Š": "S", "š": "s", "č": "c", "é": "e", "ö": "o", "ü": "u", "‰": " per mille",
}  # fmt: skip
_ERRORS = "cvfit-ascii"
#: Delay before a Ctrl-C that Python had to drop is delivered again, s.
_REDELIVER_S = 0.05


def _spell(exc: UnicodeError) -> tuple[str, int]:
    if not isinstance(exc, UnicodeEncodeError):
        raise exc
    text = exc.object[exc.start : exc.end]
    return "".join(ASCII_SPELLINGS.get(ch, "?") for ch in text), exc.end


codecs.register_error(_ERRORS, _spell)


class _Dropping:
    """A text stream whose reader may go away: what is written after that is dropped."""

    def __init__(self, stream: Any) -> None:
        self._stream = stream

    def _gone(self) -> None:
        # the rest goes to the null device, so the final flush at exit cannot fail either
        with contextlib.suppress(OSError, ValueError, AttributeError):
            null = os.open(os.devnull, os.O_WRONLY)
            try:
                os.dup2(null, self._stream.fileno())
            finally:
                os.close(null)

    def write(self, text: str) -> int:
        try:
            return self._stream.write(text)
        except BrokenPipeError:
            self._gone()
            return len(text)

    def flush(self) -> None:
        try:
            self._stream.flush()
        except BrokenPipeError:
            self._gone()

    def __getattr__(self, name: str) -> Any:
        return getattr(self._stream, name)


def _guarded(stream: Any) -> Any:
    if stream is None:  # the descriptor was closed when the command started
        return open(os.devnull, "w", encoding="utf-8")  # noqa: SIM115 - lives as long as the run
    if getattr(stream, "errors", None) == "strict" and hasattr(stream, "reconfigure"):
        with contextlib.suppress(ValueError, OSError):
            stream.reconfigure(errors=_ERRORS)
    return _Dropping(stream)


@contextlib.contextmanager
def guarded_streams() -> Iterator[None]:
    """Within the block, ``sys.stdout`` and ``sys.stderr`` never raise for an encoding or a
    reader that has gone; the streams are put back after it."""
    saved = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = _guarded(sys.stdout), _guarded(sys.stderr)
    try:
        yield
    finally:
        for stream in (sys.stdout, sys.stderr):
            with contextlib.suppress(OSError, ValueError):
                stream.flush()
        sys.stdout, sys.stderr = saved


@contextlib.contextmanager
def interrupt_in_this_process(*, ignore_after: bool = False) -> Iterator[None]:
    """Within the block, SIGINT raises KeyboardInterrupt in this process only.

    Worker processes forked meanwhile inherit the handler, which does nothing in them: a
    terminal's Ctrl-C reaches every process of the command, and a worker interrupted in the
    middle of its task would print its own traceback. The parent stops the pool, and the
    workers end with it. Where SIGINT was ignored (a command started in the background), it
    stays ignored.

    A KeyboardInterrupt raised where Python cannot pass it on (a callback run at a fork, a
    finaliser) would be printed as "Exception ignored" and the run would go on: it is
    delivered again instead, so Ctrl-C always ends the command with one line.

    With *ignore_after* (the ``cvfit`` command's own process), SIGINT is ignored from the
    end of the block on: the command's work and its message are done, and Python resets a
    handler to the default at shutdown, so a Ctrl-C during the interpreter's exit would
    otherwise kill the process silently (exit -2) instead of letting it report its status.
    """
    main_thread = threading.current_thread() is threading.main_thread()
    if not main_thread or signal.getsignal(signal.SIGINT) is not signal.default_int_handler:
        yield
        return
    parent = os.getpid()
    previous_hook = sys.unraisablehook

    closing = False

    def handler(signum: int, frame: object) -> None:
        if os.getpid() == parent and not closing:
            raise KeyboardInterrupt

    def unraisable(info: Any) -> None:
        if issubclass(info.exc_type, KeyboardInterrupt) and os.getpid() == parent:
            # again a moment later, once the main thread is out of the callback
            again = threading.Timer(_REDELIVER_S, os.kill, (parent, signal.SIGINT))
            again.daemon = True
            again.start()
        else:
            previous_hook(info)

    signal.signal(signal.SIGINT, handler)
    sys.unraisablehook = unraisable
    try:
        yield
    finally:
        closing = True
        after = signal.SIG_IGN if ignore_after else signal.default_int_handler
        signal.signal(signal.SIGINT, after)
        sys.unraisablehook = previous_hook
