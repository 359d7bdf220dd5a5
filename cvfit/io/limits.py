"""Limits on what is read: regular files only, at most a stated size, no endless line.

A data file or a manifest is read only when it is a regular file (a FIFO would block the
run forever, ``/dev/zero`` would fill the memory) and no larger than its limit; the limit is
stated in the error. A data file whose longest line exceeds :data:`MAX_LINE_BYTES` is
refused before it is parsed: a table with one endless row is not a text export, and
parsing it takes minutes.
"""

from __future__ import annotations

import errno
import os
import stat
from typing import AnyStr

import numpy as np

from cvfit.errors import InputError
from cvfit.io.text import split_lines

__all__ = [
    "MAX_DATA_FILE_BYTES",
    "MAX_MANIFEST_BYTES",
    "MAX_LINE_BYTES",
    "read_regular_file",
    "check_line_lengths",
    "format_bytes",
]

#: Largest data file read, bytes (64 MiB: about a million rows of three columns).
MAX_DATA_FILE_BYTES = 64 * 2**20
#: Largest manifest read, bytes (1 MiB: some ten thousand [[voltammogram]] tables).
MAX_MANIFEST_BYTES = 2**20
#: Longest line of a data file, bytes (64 KiB: some three thousand columns).
MAX_LINE_BYTES = 64 * 2**10

_KINDS = (
    (stat.S_ISFIFO, "a named pipe (FIFO)"),
    (stat.S_ISCHR, "a character device"),
    (stat.S_ISBLK, "a block device"),
    (stat.S_ISSOCK, "a socket"),
    (stat.S_ISDIR, "a folder"),
)


def format_bytes(n: int) -> str:
    """``64 MiB``, ``1 MiB``, ``64 KiB`` or ``N bytes``."""
    for unit, size in (("GiB", 2**30), ("MiB", 2**20), ("KiB", 2**10)):
        if n >= size:
            value = n / size
            return f"{value:.0f} {unit}" if value == int(value) else f"{value:.1f} {unit}"
    return f"{n} bytes"


def _kind(mode: int) -> str:
    return next((name for test, name in _KINDS if test(mode)), "not a regular file")


def _not_regular(mode: int, what: str, source: str) -> InputError:
    return InputError(
        f"this is {_kind(mode)}, not a regular file; cvfit reads a {what} only from a "
        "regular file: copy the content into a file and name that",
        source=source,
    )


def _too_large(size: str, limit: int, what: str, source: str) -> InputError:
    return InputError(
        f"the file holds {size}, more than the {format_bytes(limit)} cvfit reads per {what}; "
        f"check that this is the {what}, or split it",
        source=source,
    )


def _stat_error(exc: OSError, what: str, missing: str, source: str) -> InputError:
    if exc.errno == errno.ENOENT:
        return InputError(missing, source=source)
    if exc.errno == errno.ELOOP:
        return InputError(
            "a symbolic link loop (the link points, through others, back to itself); point "
            f"the link at the {what}",
            source=source,
        )
    if exc.errno == errno.ENOTDIR:
        return InputError(
            f"a part of this path is a file, not a folder; check the path of the {what}",
            source=source,
        )
    return InputError(
        f"cannot read the {what} ({exc.strerror or exc}); check the path and its permissions",
        source=source,
    )


def read_regular_file(
    path: str | os.PathLike[str],
    *,
    limit: int,
    what: str,
    missing: str,
    folder: str,
    source: str | None = None,
) -> bytes:
    """The bytes of a regular file of at most *limit* bytes.

    The file is checked with ``stat`` before it is opened, and again on the open file (it
    is opened non-blocking, so a FIFO swapped in between cannot block), and at most
    ``limit + 1`` bytes are read, so a file that grows meanwhile is refused too.

    Parameters
    ----------
    path : path-like
        The file.
    limit : int
        Most bytes accepted.
    what : str
        What the file is, for messages ("data file", "manifest").
    missing, folder : str
        The messages for a missing path and for a folder.
    source : str, optional
        The name in messages (default: *path* as given).

    Returns
    -------
    bytes

    Raises
    ------
    InputError
        Missing file, a folder, a FIFO, device or socket, a symbolic link loop, a file
        that cannot be read, or one larger than *limit*.
    """
    source = str(path) if source is None else source
    try:
        st = os.stat(path)
    except OSError as exc:
        raise _stat_error(exc, what, missing, source) from None
    except ValueError:  # an embedded NUL byte
        raise InputError(f"{missing} (the name holds a NUL byte)", source=source) from None
    if stat.S_ISDIR(st.st_mode):
        raise InputError(folder, source=source)
    if not stat.S_ISREG(st.st_mode):
        raise _not_regular(st.st_mode, what, source)
    if st.st_size > limit:
        raise _too_large(format_bytes(st.st_size), limit, what, source)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_CLOEXEC", 0)
    flags |= getattr(os, "O_BINARY", 0)
    try:
        fd = os.open(path, flags)
    except OSError as exc:
        raise _stat_error(exc, what, missing, source) from None
    try:
        st = os.fstat(fd)
        if not stat.S_ISREG(st.st_mode):  # replaced between the two looks
            raise _not_regular(st.st_mode, what, source)
        with os.fdopen(fd, "rb", closefd=False) as fh:
            # the size stat gave, and one byte more to see growth: a read of limit + 1
            # bytes would allocate the whole limit (64 MiB) for every file
            data = fh.read(min(st.st_size, limit) + 1)
            if len(data) > st.st_size:  # grown since: read on, up to the limit
                data += fh.read(limit + 1 - len(data))
    except OSError as exc:
        raise InputError(
            f"cannot read the {what} ({exc.strerror or exc}); check its permissions",
            source=source,
        ) from None
    finally:
        os.close(fd)
    if len(data) > limit:
        raise _too_large(f"more than {format_bytes(limit)}", limit, what, source)
    return data


def _long_line_error(line: int, length: int, source: str) -> InputError:
    return InputError(
        f"this line is {length} bytes long, longer than the {format_bytes(MAX_LINE_BYTES)} "
        "cvfit accepts in one line of a data file; this is not a line-by-line text export: "
        "export the data as CSV or plain text with one row per line",
        source=source,
        line=line,
    )


def _longest_between(positions: np.ndarray, end: int) -> tuple[int, int]:
    """Index and length of the longest run between the breaks at *positions*."""
    starts = np.concatenate(([0], positions + 1))
    stops = np.concatenate((positions, [end]))
    lengths = stops - starts
    k = int(np.argmax(lengths))
    return k, int(lengths[k])


def _may_hold_a_long_line(content: bytes | str) -> bool:
    """False when no line of *content* can be longer than :data:`MAX_LINE_BYTES`.

    A run of more than ``2 B`` characters without a line break holds a whole block
    ``[k B, (k + 1) B)`` with ``B = MAX_LINE_BYTES // 2``; so if every such block holds a
    ``\n`` or ``\r``, no line is too long. A search per block (32 for a 1 MB export,
    each ending at the first line break) instead of finding every line break.
    """
    block = MAX_LINE_BYTES // 2
    if isinstance(content, str):
        return _block_without_break(content, "\n", "\r", block)
    return _block_without_break(content, b"\n", b"\r", block)


def _block_without_break(content: AnyStr, newline: AnyStr, cr: AnyStr, block: int) -> bool:
    """True when some block ``[k B, (k + 1) B)`` of *content* holds no line break."""
    for k in range(0, len(content) - block + 1, block):
        if content.find(newline, k, k + block) < 0 and content.find(cr, k, k + block) < 0:
            return True
    return False


def check_line_lengths(content: bytes | str, *, source: str) -> None:
    """Refuse data whose longest line is longer than :data:`MAX_LINE_BYTES`.

    Bytes are measured in bytes (a vectorised search for the line breaks, well under a
    millisecond for a typical export); text in characters (a line of text is at least
    as many bytes as characters).

    Raises
    ------
    InputError
        Naming the line (as an editor numbers it) and the limit.
    """
    if len(content) <= MAX_LINE_BYTES or not _may_hold_a_long_line(content):
        return
    if isinstance(content, str):
        _check_text_lines(content, source)
        return
    raw = np.frombuffer(content, dtype=np.uint8)
    breaks = np.flatnonzero(raw == 10)
    k, length = _longest_between(breaks, raw.size)
    if length <= MAX_LINE_BYTES:
        return
    # old Mac exports end lines with a lone CR: count those as breaks too
    breaks = np.flatnonzero((raw == 10) | (raw == 13))
    k, length = _longest_between(breaks, raw.size)
    if length > MAX_LINE_BYTES:
        # the line number as an editor counts it: CRLF is one break
        before = bytes(content[: int(breaks[k - 1]) + 1]) if k else b""
        line = before.count(b"\n") + before.count(b"\r") - before.count(b"\r\n") + 1
        raise _long_line_error(line, length, source)


def _check_text_lines(text: str, source: str) -> None:
    for number, line in enumerate(split_lines(text), start=1):
        if len(line) > MAX_LINE_BYTES:
            raise _long_line_error(number, len(line), source)
