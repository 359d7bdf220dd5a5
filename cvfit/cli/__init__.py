"""Command line: ``cvfit run | demo | simulate | plan | guide``.

This package is the only place in cvfit that prints or exits. Each sub-command lives in
its own module with ``register(subparsers)`` and a handler returning the exit status.
"""

from __future__ import annotations

import argparse
import errno
import os
import signal
import sys
import traceback
from collections.abc import Callable, Sequence

from cvfit.cli.streams import guarded_streams, interrupt_in_this_process
from cvfit.errors import CvfitError, InputError, OutputError, printable
from cvfit.version import __version__

#: Environment :func:`main` sets for the numerical libraries, which it imports after (the
#: user's own settings win; ``import cvfit.cli`` imports none of them). The command line's
#: linear algebra is small least squares, which BLAS threads only slow down; and a BLAS
#: library that has started threads keeps burning a core in every worker process of a
#: run, even when limited later (two processes on two cores analysed a 200-file series in
#: ~0.32 s with the threads, ~0.25 s without).
NUMERIC_ENVIRONMENT = {
    "OPENBLAS_NUM_THREADS": "1",
    "MKL_NUM_THREADS": "1",
    "BLIS_NUM_THREADS": "1",
}

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_INPUT = 2
#: Exit status after Ctrl-C (128 + SIGINT, as shells report it).
EXIT_INTERRUPTED = 130


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors in cvfit's one-line form with status 2."""

    #: Set on a sub-command's parser: more text after its epilog, made only when the help
    #: is shown (the manifest's key list imports the io layer and its libraries).
    epilog_more: Callable[[], str] | None = None

    def format_help(self) -> str:
        if self.epilog_more is not None:
            self.epilog = (self.epilog or "") + "\n" + self.epilog_more()
            self.epilog_more = None
        return super().format_help()

    def error(self, message: str) -> None:  # type: ignore[override]
        sys.stderr.write(f"cvfit: error: <command line>: {message}; see 'cvfit --help'\n")
        raise SystemExit(EXIT_INPUT)


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="cvfit",
        description="Stability constants with confidence intervals from CV titrations.",
    )
    parser.add_argument("--version", action="version", version=f"cvfit {__version__}")
    parser.add_argument(
        "--debug", action="store_true", help="show the traceback of an internal error"
    )
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    from cvfit.cli import demo, guide, plan, run, simulate

    for module in (run, demo, simulate, plan, guide):
        module.register(sub)
    return parser


#: System errors of writing that are the environment's, not cvfit's: reported as an
#: :class:`OutputError` (one line, exit 2) wherever they escape a command.
ENVIRONMENT_ERRNOS = frozenset(
    getattr(errno, name)
    for name in ("ENOSPC", "EDQUOT", "EFBIG", "EROFS", "EACCES", "EPERM", "ENOTDIR", "EEXIST")
    if hasattr(errno, name)
)


def ignore_file_size_signal() -> None:
    """Let a write past the file-size limit (``ulimit -f``) fail with EFBIG instead of
    killing the process with SIGXFSZ, so the limit is reported like a full disk. Worker
    processes inherit the setting."""
    if hasattr(signal, "SIGXFSZ"):
        signal.signal(signal.SIGXFSZ, signal.SIG_IGN)


#: Printed for ``cvfit`` without a command: the short usage and where the help is.
NO_COMMAND = (
    "cvfit: error: <command line>: no command given; usage: cvfit [--version] [--debug] "
    "{run,demo,simulate,plan,guide} ...; see 'cvfit --help', or 'cvfit COMMAND --help'\n"
)


def console_main() -> int:
    """Entry point of the ``cvfit`` console script and ``python -m cvfit``: :func:`main`
    on ``sys.argv``, then a late Ctrl-C (during the interpreter's exit) is ignored, so
    the exit status is the command's."""
    return main(ignore_late_interrupt=True)


def main(argv: Sequence[str] | None = None, *, ignore_late_interrupt: bool = False) -> int:
    """Run one ``cvfit`` command line (*argv*, default ``sys.argv[1:]``); returns the
    exit status. In-process callers keep their own Ctrl-C handling afterwards."""
    for name, value in NUMERIC_ENVIRONMENT.items():
        os.environ.setdefault(name, value)
    ignore_file_size_signal()
    with guarded_streams(), interrupt_in_this_process(ignore_after=ignore_late_interrupt):
        try:
            parser = build_parser()
            args = parser.parse_args(argv)
        except KeyboardInterrupt:
            sys.stderr.write("cvfit: interrupted\n")
            return EXIT_INTERRUPTED
        if not getattr(args, "handler", None):
            sys.stderr.write(NO_COMMAND)
            return EXIT_INPUT
        return _run(args)


def _run(args: argparse.Namespace) -> int:
    try:
        return int(args.handler(args))
    except (InputError, OutputError) as exc:
        sys.stderr.write(f"cvfit: error: {exc.one_line()}\n")
        return EXIT_INPUT
    except KeyboardInterrupt:
        sys.stderr.write("cvfit: interrupted\n")
        return EXIT_INTERRUPTED
    except OSError as exc:
        path_error = InputError.from_path_error(exc)
        if path_error is not None:
            sys.stderr.write(f"cvfit: error: {path_error.one_line()}\n")
            return EXIT_INPUT
        if exc.errno not in ENVIRONMENT_ERRNOS:
            return _internal(exc, debug=args.debug)
        sys.stderr.write(f"cvfit: error: {OutputError.from_os_error(exc).one_line()}\n")
        return EXIT_INPUT
    except (CvfitError, Exception) as exc:  # noqa: BLE001 - last line of defence
        return _internal(exc, debug=args.debug)


def _internal(exc: BaseException, *, debug: bool) -> int:
    if debug:
        traceback.print_exc()
    first = str(exc).splitlines()[0] if str(exc) else ""
    sys.stderr.write(
        f"cvfit: internal error: {type(exc).__name__}: {printable(first, limit=500)} (rerun "
        "with --debug for the traceback and report it)\n"
    )
    return EXIT_INTERNAL
