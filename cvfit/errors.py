"""One exception hierarchy for cvfit.

Every error a user can cause is an :class:`InputError`. Its message is one line that
names the file (and the line or key where known) and says what to do; the command line
prints it as ``cvfit: error: FILE[:LINE]: message`` and exits with status 2. An output that
cannot be written for a reason of the environment (permission denied, a full disk, a
file-size limit) is an :class:`OutputError`, printed and exited with the same way.

Names come from users and file systems and may hold a newline or a terminal escape
sequence: :func:`printable` escapes them, and both error classes pass every name and
message through it, so an error is always one harmless line.

Expected analysis failures (no reverse peak, too few points) are *not* exceptions: they
are flags on the result. :class:`FitError` is kept for the rare case where a numerical
routine cannot proceed at all.
"""

from __future__ import annotations

import unicodedata

__all__ = ["CvfitError", "InputError", "OutputError", "FitError", "SimulationError", "printable"]

#: Longest message an error keeps, characters: a value quoted from a hostile file (a 1 MB
#: title) is cut there, so an error stays one readable line.
MAX_MESSAGE_CHARS = 2000
#: Longest file name an error built from a system error quotes, characters.
MAX_SOURCE_CHARS = 300
# Format characters that reorder or hide text on a terminal (bidirectional controls).
_BIDI = frozenset("\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069")
_NAMED = {"\n": "\\n", "\r": "\\r", "\t": "\\t"}


def _escape(ch: str) -> str:
    if ch in _NAMED:
        return _NAMED[ch]
    code = ord(ch)
    if 0xDC80 <= code <= 0xDCFF:  # an undecodable byte of a file name (surrogateescape)
        return f"\\x{code - 0xDC00:02x}"
    if code <= 0xFF:
        return f"\\x{code:02x}"
    return f"\\u{code:04x}"


def printable(name: object, *, limit: int | None = None) -> str:
    """*name* as text safe to print on one terminal line.

    Control characters (C0, DEL, C1), line and paragraph separators, bidirectional
    controls and lone surrogates (undecodable bytes of a file name) are written as Python
    escapes (``\\n``, ``\\x1b``, ``\\u2028``); everything else is kept as it is.

    Parameters
    ----------
    name : object
        A file name, key, title or message (``str()`` is taken).
    limit : int, optional
        Keep at most this many characters of the result, ending in "…" when cut.

    Returns
    -------
    str
        One line with no character a terminal would act on.
    """
    text = str(name)
    if not text.isprintable():  # fast path: most names have nothing to escape
        text = "".join(
            _escape(ch)
            if ch in _BIDI or unicodedata.category(ch) in ("Cc", "Cs", "Zl", "Zp")
            else ch
            for ch in text
        )
    if limit is not None and len(text) > limit:
        text = text[: max(0, limit - 1)] + "…"
    return text


class CvfitError(Exception):
    """Base class of every error raised on purpose by cvfit."""


class InputError(CvfitError, ValueError):
    """Bad input from the user: a file, a manifest key, a command-line value.

    Parameters
    ----------
    message : str
        What is wrong and what to do, in one line.
    source : str, optional
        The file (or ``"<command line>"``) the problem is in.
    line : int, optional
        1-based line number as an editor numbers it.
    key : str, optional
        Manifest key or column name involved.
    """

    def __init__(
        self,
        message: str,
        *,
        source: str | None = None,
        line: int | None = None,
        key: str | None = None,
    ) -> None:
        self.message = printable(" ".join(str(message).split()), limit=MAX_MESSAGE_CHARS)
        self.source = None if source is None else str(source)
        self.line = line
        self.key = key
        super().__init__(self.one_line())

    def __reduce__(self) -> tuple:
        """Pickle by the constructor's arguments (the keywords do not survive the default,
        which passes ``args`` only): an error raised in a worker process reaches the
        caller whole."""
        return (_rebuild_input_error, (self.message, self.source, self.line, self.key))

    def one_line(self) -> str:
        """``FILE[:LINE]: message`` on a single line (names escaped by :func:`printable`)."""
        where = "<input>" if self.source is None else printable(self.source)
        if self.line is not None:
            where = f"{where}:{self.line}"
        return f"{where}: {self.message}"

    @classmethod
    def from_simulation(cls, exc: Exception, *, key: str | None = None) -> InputError:
        """The simulator's refusal (a :class:`SimulationError`) as a command-line error,
        with the way out when the files it would write exist (``--force``)."""
        hint = "; use --force to replace" if "exists" in str(exc) else ""
        return cls(f"{exc}{hint}", source="<command line>", key=key)

    @classmethod
    def from_path_error(cls, exc: OSError) -> InputError | None:
        """The :class:`InputError` for a system error of a path given by the user — a name
        too long for the file system, a symbolic link loop — or None for any other error.

        Such a path fails wherever it is used (looked at, opened, resolved); the error names
        the path (shortened to :data:`MAX_SOURCE_CHARS`) and what to do.
        """
        import errno

        if exc.errno == errno.ENAMETOOLONG:
            what = (
                "the name of this file or folder, or its whole path, is too long for the file "
                "system (File name too long); give it a shorter name or move it up"
            )
        elif exc.errno == errno.ELOOP:
            what = (
                "a symbolic link loop (the link points, through others, back to itself); point "
                "the link at a file or folder"
            )
        else:
            return None
        source = printable(exc.filename if exc.filename is not None else "<input>")
        return cls(what, source=printable(source, limit=MAX_SOURCE_CHARS))

    def with_source(self, source: str) -> InputError:
        """A copy that names *source* when the original did not know its file."""
        if self.source is not None:
            return self
        return InputError(self.message, source=source, line=self.line, key=self.key)


def _rebuild_input_error(
    message: str, source: str | None, line: int | None, key: str | None
) -> InputError:
    return InputError(message, source=source, line=line, key=key)


class OutputError(CvfitError):
    """An output could not be written for a reason of the environment.

    Permission denied, a full disk, a file-size limit, a read-only file system: the user's
    to fix, so the command line prints one line and exits 2 as for bad input. The output
    set is then left as it was before the run.

    Parameters
    ----------
    path : str
        The file or folder that could not be written.
    reason : str
        Why, in words (the system's error text), and what to do.
    errno : int, optional
        The system error number, when one is known.
    """

    def __init__(self, path: str, reason: str, *, errno: int | None = None) -> None:
        self.path = str(path)
        self.reason = printable(" ".join(str(reason).split()), limit=MAX_MESSAGE_CHARS)
        super().__init__(self.one_line())
        self.errno = errno

    def __reduce__(self) -> tuple:
        """Pickle by the constructor's arguments (a worker's error reaches the caller whole)."""
        return (_rebuild_output_error, (self.path, self.reason, self.errno))

    def one_line(self) -> str:
        """``PATH: cannot write (reason)`` on a single line."""
        return f"{printable(self.path)}: {self.reason}"

    @classmethod
    def from_os_error(cls, exc: OSError, path: str | None = None) -> OutputError:
        """An :class:`OutputError` for *exc*, naming *path* (else the file *exc* names)."""
        where = path if path is not None else (exc.filename or "<output>")
        why = exc.strerror or str(exc) or type(exc).__name__
        return cls(
            str(where), f"cannot write the outputs ({why}); {_hint(exc.errno)}", errno=exc.errno
        )


def _hint(errno_: int | None) -> str:
    import errno

    hints: dict[int | None, str] = {
        errno.ENOSPC: "free some disk space or choose another --out folder",
        errno.EDQUOT: "free some space within your quota or choose another --out folder",
        errno.EFBIG: "raise the file-size limit (ulimit -f) or choose another --out folder",
        errno.EROFS: "choose an --out folder on a writable file system",
        errno.EACCES: "check the folder's permissions or choose another --out folder",
        errno.EPERM: "check the folder's permissions or choose another --out folder",
        errno.ENOTDIR: "a part of the path is a file, not a folder: choose another --out folder",
    }
    return hints.get(errno_, "check the --out folder or choose another one")


def _rebuild_output_error(path: str, reason: str, errno: int | None) -> OutputError:
    return OutputError(path, reason, errno=errno)


class FitError(CvfitError, RuntimeError):
    """A numerical fit could not be carried out at all."""


class SimulationError(CvfitError, ValueError):
    """Invalid parameters for the voltammogram simulator."""
