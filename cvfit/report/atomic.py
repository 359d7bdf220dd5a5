"""Write output files so a killed run never leaves a torn file."""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import IO

__all__ = ["atomic_write_text", "atomic_path"]


@contextlib.contextmanager
def atomic_path(path: str | Path, suffix: str = "") -> Iterator[Path]:
    """Yield a temporary path beside *path*; rename it into place on success."""
    target = Path(path)
    fd, tmp = tempfile.mkstemp(
        prefix=f".{target.name}.", suffix=suffix or target.suffix, dir=target.parent
    )
    os.close(fd)
    tmp_path = Path(tmp)
    # mkstemp makes the file private (0600); give the result the mode a plain open() would.
    mask = os.umask(0)
    os.umask(mask)
    os.chmod(tmp_path, 0o666 & ~mask)
    try:
        yield tmp_path
        os.replace(tmp_path, target)
    finally:
        if tmp_path.exists():
            tmp_path.unlink()


def atomic_write_text(path: str | Path, text: str, *, encoding: str = "utf-8") -> None:
    """Write *text* to *path* via a temporary file and an atomic rename."""
    with atomic_path(path) as tmp:
        with open(tmp, "w", encoding=encoding, newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())


def atomic_write_with(path: str | Path, writer: Callable[[IO[str]], None]) -> None:
    """Call ``writer(fh)`` on a temporary text file, then rename it to *path*."""
    with atomic_path(path) as tmp:
        with open(tmp, "w", encoding="utf-8", newline="") as fh:
            writer(fh)
            fh.flush()
            os.fsync(fh.fileno())
