"""Command line: ``cvfit run | demo | simulate | plan``.

This package is the only place in cvfit that prints or exits. Each sub-command lives in
its own module with ``register(subparsers)`` and a handler returning the exit status.
"""

from __future__ import annotations

import argparse
import os
import sys
import traceback
from collections.abc import Sequence

from cvfit.errors import CvfitError, InputError
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


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage errors in cvfit's one-line form with status 2."""

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
    from . import demo, plan, run, simulate

    for module in (run, demo, simulate, plan):
        module.register(sub)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``cvfit`` console script; returns the exit status."""
    for name, value in NUMERIC_ENVIRONMENT.items():
        os.environ.setdefault(name, value)
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "handler", None):
        parser.print_help()
        return EXIT_INPUT
    try:
        return int(args.handler(args))
    except InputError as exc:
        sys.stderr.write(f"cvfit: error: {exc.one_line()}\n")
        return EXIT_INPUT
    except KeyboardInterrupt:
        sys.stderr.write("cvfit: interrupted\n")
        return 130
    except (CvfitError, Exception) as exc:  # noqa: BLE001 - last line of defence
        if args.debug:
            traceback.print_exc()
        first = str(exc).splitlines()[0] if str(exc) else ""
        sys.stderr.write(
            f"cvfit: internal error: {type(exc).__name__}: {first} (rerun with --debug "
            "for the traceback and report it)\n"
        )
        return EXIT_INTERNAL
