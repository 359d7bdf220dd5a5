"""Which folders are cvfit's to replace: the record each output set carries of its files.

A command that writes a set of files as one folder (``cvfit run``, ``cvfit plan``, the
inputs of ``cvfit demo``) replaces that folder whole (:func:`cvfit.report.atomic.output_set`),
so it must never replace a folder holding anything cvfit did not write. Every set is
therefore written with a record of its own, :data:`MARKER_NAME`: a small JSON file listing
each file of the set with its SHA-256. An existing folder is cvfit's to replace when

- it is empty; or
- it holds the record, and beside it only files the record lists, each still a regular
  file with the content it was written with; or
- it has no record (a folder written by a cvfit version before the record), holds only
  regular files with names that command writes, and its principal file shows it is
  cvfit's (:class:`EarlierSet`: a ``results.json`` or ``plan.json`` carrying
  ``cvfit_version``; the demo's inputs byte for byte the demo's).

Anything else — another file (also a hidden one, or one named like an output), a folder, a
symbolic link, a file changed since cvfit wrote it, a record that cvfit cannot read — and
the folder is refused with one line and left as it is.
"""

from __future__ import annotations

import errno
import hashlib
import json
import os
import stat
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from cvfit.errors import InputError, OutputError

__all__ = [
    "EarlierSet",
    "cvfit_json",
    "MARKER_NAME",
    "write_marker",
    "foreign_reason",
    "resolved_output_folder",
    "check_output_folder",
]

#: The record of an output set, written into the set's folder with it.
MARKER_NAME = ".cvfit-set.json"
#: The ``format`` entry of the record.
MARKER_FORMAT = "cvfit output set, version 1"
#: Largest record read, bytes (a set of a few dozen files takes some 2 KiB).
MAX_MARKER_BYTES = 2**20

_CHUNK = 2**20
#: Largest principal JSON file of an earlier set read to recognise it, bytes.
MAX_PROOF_BYTES = 64 * 2**20


@dataclass(frozen=True)
class EarlierSet:
    """What a folder written by a cvfit version before the record may hold.

    Attributes
    ----------
    names : frozenset of str
        The file names the command wrote.
    is_cvfits : callable
        ``is_cvfits(folder)``: whether the folder's files show they are cvfit's (a user's
        own ``plan.json`` alone in a folder has the right name, not the right content).
    """

    names: frozenset[str]
    is_cvfits: Callable[[Path], bool]


def cvfit_json(name: str) -> Callable[[Path], bool]:
    """A test for :attr:`EarlierSet.is_cvfits`: the folder's *name* is a JSON record that
    cvfit wrote (a mapping with the string ``cvfit_version``, as results.json and plan.json
    have always begun)."""

    def is_cvfits(folder: Path) -> bool:
        data = _small_json(folder / name, MAX_PROOF_BYTES)
        return isinstance(data, dict) and isinstance(data.get("cvfit_version"), str)

    return is_cvfits


def _sha256(path: str | os.PathLike[str]) -> str:
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        while block := fh.read(_CHUNK):
            h.update(block)
    return h.hexdigest()


def write_marker(folder: str | os.PathLike[str]) -> Path:
    """Write the record of the set in *folder* (every regular file there, with its hash).

    Called once the set is complete, in its hidden staging folder, so the record is part of
    the set that is swapped in.
    """
    folder = Path(folder)
    files: dict[str, str] = {}
    for entry in sorted(os.scandir(folder), key=lambda e: e.name):
        if entry.name == MARKER_NAME:
            continue
        if not entry.is_file(follow_symlinks=False):
            raise ValueError(f"an output set holds only files, not {entry.name!r}")
        files[entry.name] = _sha256(entry.path)
    path = folder / MARKER_NAME
    record = {"format": MARKER_FORMAT, "files": files}
    with open(path, "w", encoding="utf-8", newline="\n") as fh:
        fh.write(json.dumps(record, indent=1) + "\n")
    return path


def _small_json(path: Path, limit: int) -> object:
    """The JSON document in the regular file *path* of at most *limit* bytes; None when
    there is none (a link, a folder, too large, unreadable, not JSON)."""
    try:
        st = os.lstat(path)
        if not stat.S_ISREG(st.st_mode) or st.st_size > limit:
            return None
        return json.loads(path.read_bytes().decode("utf-8"))
    except (OSError, UnicodeDecodeError, ValueError, RecursionError):
        return None


def _read_marker(path: Path) -> dict[str, str] | None:
    """The files a record lists, name → SHA-256; None when it is not a record of ours."""
    data = _small_json(path, MAX_MARKER_BYTES)
    if not isinstance(data, dict) or data.get("format") != MARKER_FORMAT:
        return None
    files = data.get("files")
    if not isinstance(files, dict):
        return None
    if not all(isinstance(k, str) and isinstance(v, str) for k, v in files.items()):
        return None
    return files


def _kind(path: Path) -> str:
    mode = os.lstat(path).st_mode
    if stat.S_ISLNK(mode):
        return "a symbolic link"
    if stat.S_ISDIR(mode):
        return "a folder"
    return "a file" if stat.S_ISREG(mode) else "a special file"


def foreign_reason(folder: Path, earlier: EarlierSet | None = None) -> str | None:
    """Why the existing folder *folder* is not cvfit's to replace; None when it is.

    *earlier*: what the command wrote before sets carried their record (None: a folder
    without a record is cvfit's only when empty).
    """
    names = sorted(os.listdir(folder))
    record = None
    if MARKER_NAME in names:
        record = _read_marker(folder / MARKER_NAME)
        if record is None:
            return f"holds {MARKER_NAME!r}, which is not a record cvfit wrote"
        names.remove(MARKER_NAME)
    if record is not None:
        allowed = set(record)
    else:
        allowed = set(earlier.names) if earlier is not None else set()
    foreign = [n for n in names if n not in allowed]
    if foreign:
        more = f" and {len(foreign) - 1} more" if len(foreign) > 1 else ""
        return f"holds {foreign[0]!r}{more}, which cvfit did not write"
    for name in names:
        kind = _kind(folder / name)
        if kind != "a file":
            return f"holds {name!r}, {kind}, where cvfit writes a file"
        if record is not None and _sha256(folder / name) != record[name]:
            return f"holds {name!r}, which was changed after cvfit wrote it"
    if names and record is None and not (earlier is not None and earlier.is_cvfits(folder)):
        return (
            f"holds {names[0]!r} without the record cvfit writes with its sets "
            f"({MARKER_NAME}), and it is not recognisably cvfit's"
        )
    return None


def resolved_output_folder(out: str | os.PathLike[str]) -> Path:
    """*out* with symbolic links followed (itself when nothing is there yet).

    Raises
    ------
    InputError
        *out* is a symbolic link loop, a link to nothing, or cannot be resolved.
    """
    out = Path(out)
    if not os.path.lexists(out):
        return out
    try:
        return out.resolve(strict=True)
    except RuntimeError:  # Python < 3.13 reports a link loop so
        loop = True
    except OSError as exc:
        if exc.errno not in (errno.ELOOP, errno.ENOENT):
            raise InputError(
                f"the output folder cannot be resolved ({exc.strerror or exc}); name another "
                "--out folder",
                source=str(out),
                key="--out",
            ) from None
        loop = exc.errno == errno.ELOOP
    what = (
        "a symbolic link loop (the link points, through others, back to itself)"
        if loop
        else "a symbolic link to something that does not exist"
    )
    raise InputError(
        f"the output folder is {what}; point the link at a folder or name another --out folder",
        source=str(out),
        key="--out",
    )


def check_output_folder(out: str | os.PathLike[str], *, earlier: EarlierSet | None) -> None:
    """Refuse an output folder that replacing it whole would take from the user.

    Parameters
    ----------
    out : path-like
        The output folder (it may not exist yet; a symbolic link to a folder is followed).
    earlier : EarlierSet or None
        What the command wrote before sets carried their record.

    Raises
    ------
    InputError
        *out* is a file, a link loop or dangling link, holds anything not cvfit's to
        replace (see :func:`foreign_reason`), or is (or holds) the current folder.
    OutputError
        *out* exists but may not be written.
    """
    out = Path(out)
    if not os.path.lexists(out):
        return
    real = resolved_output_folder(out)
    if not real.is_dir():
        raise InputError(
            "the output folder exists and is not a folder; name another --out folder",
            source=str(out),
            key="--out",
        )
    try:
        cwd = Path.cwd().resolve()
    except OSError:  # the current folder was removed: it cannot be the output folder
        cwd = None
    if cwd is not None and (real == cwd or real in cwd.parents):
        raise InputError(
            "the output folder is the current folder (or holds it); cvfit replaces its "
            "output folder whole, so name a folder of its own, e.g. --out results",
            source=str(out),
            key="--out",
        )
    reason = foreign_reason(real, earlier)
    if reason is not None:
        raise InputError(
            f"the output folder {reason}; cvfit replaces its output folder whole and never "
            "removes what is not its own: name a folder of its own with --out (new, empty, or "
            "one cvfit wrote), or move that entry out",
            source=str(out),
            key="--out",
        )
    if not os.access(real, os.W_OK | os.X_OK):
        raise OutputError(
            str(out),
            "cannot write the outputs (Permission denied); check the folder's permissions or "
            "choose another --out folder",
            errno=errno.EACCES,
        )
