"""Whether the importer uses the compiled number parser (private).

The compiled parser (:mod:`cvfit.io._numparse`) reads the numbers of a file about 2.7
times faster than ``pandas.read_csv`` — about 2.4 ms saved per MB of text — and gives
bit-identical tables, but loading it (importing numba and its cached machine code) costs
0.3-0.5 s once per process. A small series would pay more than it saves, so the parser is
used only once it is loaded:

* by :func:`load_compiled_parser_if_worth` — the pipeline calls it before a series with
  at least ``WORTH_LOADING_BYTES`` to read per process (in the parent, before it forks
  its workers, which then inherit the loaded code);
* or by itself, once this process has read ``WORTH_LOADING_BYTES`` of files without it
  (a long session of the Python API).

Which parser reads a file never changes the result, only the time.
"""

from __future__ import annotations

from types import ModuleType

__all__ = [
    "WORTH_LOADING_BYTES",
    "compiled_parser",
    "load_compiled_parser",
    "load_compiled_parser_if_worth",
    "note_bytes_read",
]

#: Bytes of text one process must read for the parser to repay its load: ~0.35 s of
#: loading against ~2.4 ms saved per MB (benchmarks/bench_import.py) is ~150 MB.
WORTH_LOADING_BYTES = 128 * 2**20

_module: ModuleType | None = None  # the parser, once loaded
_tried = False  # a load was attempted (numba missing or unable to cache: not again)
_bytes_read = 0  # read without the parser so far


def compiled_parser() -> ModuleType | None:
    """The loaded parser module, or None (then pandas reads the numbers)."""
    return _module


def load_compiled_parser() -> bool:
    """Load the compiled parser now; False when numba is missing or cannot cache."""
    global _module, _tried
    if _module is None and not _tried:
        _tried = True
        from . import _numparse  # imports numba

        if _numparse.warm_up():
            _module = _numparse
    return _module is not None


def load_compiled_parser_if_worth(total_bytes: int, *, processes: int = 1) -> bool:
    """Load the parser when each of *processes* will read ``WORTH_LOADING_BYTES`` or more
    of the *total_bytes*; returns whether it is loaded."""
    if total_bytes >= WORTH_LOADING_BYTES * max(1, int(processes)):
        return load_compiled_parser()
    return _module is not None


def note_bytes_read(n: int) -> None:
    """Count *n* bytes read without the parser; load it once they add up to the threshold."""
    global _bytes_read
    if _module is not None or _tried:
        return
    _bytes_read += int(n)
    if _bytes_read >= WORTH_LOADING_BYTES:
        load_compiled_parser()
