"""Write output files so a killed run never leaves a torn file, nor a mix of two sets.

Each file is written to a temporary name and renamed into place (:func:`atomic_path`); a
whole output set is written into a hidden folder beside the output folder and swapped in
for it at once (:func:`output_set`), with the record that makes the folder cvfit's own
(:mod:`cvfit.report.ownership`), while this process holds the folder's lock
(:func:`folder_lock`): a second run into the same folder waits for the first.
"""

from __future__ import annotations

import contextlib
import errno
import os
import re
import secrets
import shutil
import stat
import sys
import tempfile
import time
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import IO

from cvfit.errors import OutputError
from cvfit.interrupts import interrupt_held_back
from cvfit.report.ownership import (
    EarlierSet,
    check_output_folder,
    resolved_output_folder,
    write_marker,
)

__all__ = [
    "LOCK_WAIT_S",
    "folder_lock",
    "atomic_write_text",
    "atomic_path",
    "atomic_write_with",
    "output_set",
    "set_leftovers",
    "clean_set_leftovers",
    "exchange_paths",
]


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


# --- output sets: the whole folder swapped in at once ------------------------------------

#: Marks the hidden entries a run keeps beside its output folder: ``.NAME.cvfit-new-RANDOM``
#: (a set being written) and ``.NAME.cvfit-old-RANDOM`` (an earlier set being replaced),
#: RANDOM being 8 random characters; and ``.NAME.cvfit-lock``, the folder's lock.
SET_MARK = ".cvfit-"
_KINDS = ("new", "old")
#: Longest a run waits for another run writing the same folder, s (writing the set of a
#: 2 000-file series takes well under a minute).
LOCK_WAIT_S = 120.0
_LOCK_POLL_S = 0.05


def _lock_path(target: Path) -> Path:
    return target.parent / f".{target.name}{SET_MARK}lock"


def _try_lock(path: Path) -> int | None:
    """An open descriptor of the lock file *path*, locked by this process; None when another
    process holds it."""
    import fcntl

    flags = os.O_RDWR | os.O_CREAT | getattr(os, "O_CLOEXEC", 0) | getattr(os, "O_NOFOLLOW", 0)
    fd = os.open(path, flags, 0o644)
    try:
        fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
    except BlockingIOError:
        os.close(fd)
        return None
    try:
        same = os.stat(path, follow_symlinks=False).st_ino == os.fstat(fd).st_ino
    except FileNotFoundError:  # removed by the run that held it, just before
        same = False
    if not same:
        os.close(fd)
        return None
    st = os.fstat(fd)
    if not stat.S_ISREG(st.st_mode) or st.st_size:  # cvfit's lock files stay empty
        os.close(fd)
        raise OutputError(
            str(path),
            "this file is named like cvfit's lock of the output folder but is not one (it is "
            "not empty); cvfit leaves it alone: move it away or choose another --out folder",
        )
    return fd


@contextlib.contextmanager
def folder_lock(target: str | Path, *, wait_s: float | None = None) -> Iterator[None]:
    """Hold the lock of the output folder *target* in the block.

    The lock is ``flock`` on the hidden file ``.NAME.cvfit-lock`` beside *target*: the
    system releases it when its process ends, however it ends, so a run killed while writing
    never blocks the next one. The file is removed when the block ends. Where ``fcntl`` is
    missing (not POSIX) there is no lock.

    Raises
    ------
    OutputError
        Another process held the lock for *wait_s* seconds (default :data:`LOCK_WAIT_S`).
    """
    try:
        import fcntl  # noqa: F401
    except ImportError:  # pragma: no cover - not POSIX
        yield
        return
    target = Path(target)
    path = _lock_path(target)
    wait = LOCK_WAIT_S if wait_s is None else wait_s
    deadline = time.monotonic() + wait
    while True:
        fd = _lock_held_back(path)
        if fd is not None:
            break
        if time.monotonic() >= deadline:
            raise OutputError(
                str(target),
                f"another cvfit run is writing this folder (waited {wait:g} s); run again "
                "when it has finished, or choose another --out folder",
            )
        time.sleep(_LOCK_POLL_S)
    try:
        yield
    finally:
        _unlock(path, fd)


def _lock_held_back(path: Path) -> int | None:
    """:func:`_try_lock` that a Ctrl-C cannot cut in two: one coming while the lock file is
    created and locked is raised after it, once the lock is removed again."""
    fd = None
    try:
        with interrupt_held_back():
            fd = _try_lock(path)
    except KeyboardInterrupt:
        if fd is not None:
            _unlock(path, fd)
        raise
    return fd


def _unlock(path: Path, fd: int) -> None:
    """Remove the lock file, then release it (a waiter then sees a new file); a Ctrl-C
    meanwhile is raised after both."""
    with interrupt_held_back():
        with contextlib.suppress(OSError):
            os.unlink(path)
        os.close(fd)


def _leftover_pattern(target: Path) -> re.Pattern[str]:
    return re.compile(rf"\.{re.escape(target.name)}\.cvfit-(new|old)-[0-9a-f]{{8}}")


def set_leftovers(target: str | Path) -> list[Path]:
    """Hidden folders that interrupted runs into *target* left beside it."""
    target = Path(target)
    pattern = _leftover_pattern(target)
    try:
        names = os.listdir(target.parent)
    except FileNotFoundError:
        return []
    return sorted(target.parent / n for n in names if pattern.fullmatch(n))


def _remove_tree(path: Path) -> None:
    if path.is_symlink() or not path.is_dir():
        path.unlink(missing_ok=True)
    else:
        shutil.rmtree(path)


def clean_set_leftovers(target: str | Path) -> None:
    """Remove what interrupted runs into *target* left beside it.

    A set moved aside (``-old-``) while the folder was swapped the slow way (two renames,
    where the system cannot exchange two folders in one step) is put back first when the
    folder itself is missing: it is the complete earlier set.
    """
    target = Path(target)
    found = set_leftovers(target)
    if not target.exists():
        old = [p for p in found if p.name.split(SET_MARK)[-1].startswith("old-")]
        if old:
            keep = max(old, key=lambda p: p.stat().st_mtime)
            os.rename(keep, target)
            found.remove(keep)
    for p in found:
        _remove_tree(p)


def _renameat2() -> Callable[..., int] | None:
    if not sys.platform.startswith("linux"):
        return None
    try:
        import ctypes

        fn = getattr(ctypes.CDLL(None, use_errno=True), "renameat2", None)
    except (OSError, AttributeError):  # pragma: no cover - no C library to ask
        return None
    if fn is not None:
        fn.argtypes = (ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint)
        fn.restype = ctypes.c_int
    return fn


_AT_FDCWD = -100
_RENAME_EXCHANGE = 2


def exchange_paths(a: Path, b: Path) -> bool:
    """Swap the folders *a* and *b* in one atomic step; False when the system cannot.

    Linux ``renameat2(..., RENAME_EXCHANGE)``: at every instant each name holds one of
    the two folders, whole.
    """
    fn = _renameat2()
    if fn is None:
        return False
    import ctypes

    if fn(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b), _RENAME_EXCHANGE) == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.EOPNOTSUPP, errno.ENOTSUP):
        return False  # an old kernel, or a file system that cannot exchange
    raise OSError(err, os.strerror(err), str(b))


def _fsync_path(path: Path, *, directory: bool = False) -> None:
    flags = os.O_RDONLY | (getattr(os, "O_DIRECTORY", 0) if directory else 0)
    try:
        fd = os.open(path, flags)
    except OSError:  # pragma: no cover - platforms that cannot open a folder
        if directory:
            return
        raise
    try:
        os.fsync(fd)
    except OSError:  # pragma: no cover - file systems without fsync on folders
        if not directory:
            raise
    finally:
        os.close(fd)


def _new_stage(target: Path) -> Path:
    while True:
        stage = target.parent / f".{target.name}{SET_MARK}new-{secrets.token_hex(4)}"
        try:
            os.mkdir(stage)  # the mode a plain mkdir gives (umask applies)
        except FileExistsError:  # pragma: no cover - 1 in 4 billion
            continue
        return stage


def _swap_in(stage: Path, target: Path) -> None:
    """Put the folder *stage* in the place of *target*; the earlier set is removed."""
    if not target.exists():
        os.rename(stage, target)
    elif exchange_paths(stage, target):
        _remove_tree(stage)  # now the earlier set
    else:
        old = target.parent / f".{target.name}{SET_MARK}old-{secrets.token_hex(4)}"
        os.rename(target, old)  # a kill here leaves the folder missing: the next run
        os.rename(stage, target)  # puts the earlier set back (clean_set_leftovers)
        _remove_tree(old)
    _fsync_path(target.parent, directory=True)


@contextlib.contextmanager
def output_set(
    target: str | Path, *, earlier: EarlierSet | None = None, wait_s: float | None = None
) -> Iterator[Path]:
    """Yield an empty hidden folder beside *target*; on success it becomes *target*.

    Write the whole output set into the folder yielded. When the block ends without an
    error, the set's record (:func:`cvfit.report.ownership.write_marker`) is added, every
    file is flushed to disk and the folder is swapped in for *target* in one step (the
    earlier set is removed), so after a kill at any moment *target* holds the complete
    earlier set or the complete new one, never a mix. When the block fails, the folder is
    removed and *target* is left as it was.

    All of it happens under the folder's lock (:func:`folder_lock`): leftovers of earlier
    interrupted runs into *target* are removed (no live run can own them then,
    :func:`clean_set_leftovers`), and *target* is checked to be cvfit's to replace
    (:func:`cvfit.report.ownership.check_output_folder`).

    Parameters
    ----------
    target : path-like
        The output folder. A symbolic link to a folder is followed (the link stays).
    earlier : EarlierSet, optional
        What an earlier cvfit version wrote into such a folder without a record (None: a
        folder without a record is replaced only when empty).
    wait_s : float, optional
        Longest wait for another run writing *target* (default :data:`LOCK_WAIT_S`).

    Raises
    ------
    InputError
        *target* is not cvfit's to replace.
    OutputError
        Another run held the folder for *wait_s* seconds.
    OSError
        When the folder cannot be created or written; the caller reports it.
    """
    target = resolved_output_folder(target)
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
    except FileExistsError:  # a part of the path is a file
        raise NotADirectoryError(errno.ENOTDIR, os.strerror(errno.ENOTDIR), str(target)) from None
    with folder_lock(target, wait_s=wait_s):
        clean_set_leftovers(target)
        check_output_folder(target, earlier=earlier)
        with _staged(target) as stage:
            yield stage


@contextlib.contextmanager
def _staged(target: Path) -> Iterator[Path]:
    stage = _new_stage(target)
    try:
        yield stage
        write_marker(stage)
        for entry in os.scandir(stage):
            if entry.is_file(follow_symlinks=False):
                _fsync_path(Path(entry.path))
        _fsync_path(stage, directory=True)
        _swap_in(stage, target)
    except BaseException:
        shutil.rmtree(stage, ignore_errors=True)
        raise
