"""One exception hierarchy for cvfit.

Every error a user can cause is an :class:`InputError`. Its message is one line that
names the file (and the line or key where known) and says what to do; the command line
prints it as ``cvfit: error: FILE[:LINE]: message`` and exits with status 2.

Expected analysis failures (no reverse peak, too few points) are *not* exceptions: they
are flags on the result. :class:`FitError` is kept for the rare case where a numerical
routine cannot proceed at all.
"""

from __future__ import annotations

__all__ = ["CvfitError", "InputError", "FitError", "SimulationError"]


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
        self.message = " ".join(str(message).split())
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
        """``FILE[:LINE]: message`` on a single line."""
        where = self.source or "<input>"
        if self.line is not None:
            where = f"{where}:{self.line}"
        return f"{where}: {self.message}"

    def with_source(self, source: str) -> InputError:
        """A copy that names *source* when the original did not know its file."""
        if self.source is not None:
            return self
        return InputError(self.message, source=source, line=self.line, key=self.key)


def _rebuild_input_error(
    message: str, source: str | None, line: int | None, key: str | None
) -> InputError:
    return InputError(message, source=source, line=line, key=key)


class FitError(CvfitError, RuntimeError):
    """A numerical fit could not be carried out at all."""


class SimulationError(CvfitError, ValueError):
    """Invalid parameters for the voltammogram simulator."""
