"""Command line: ``python -m pacing COMMAND …`` (also installed as ``pacing``).

Each command lives in its own module with ``add_parser(subparsers)``; the module's ``run(args)``
returns the exit code. Bad input gives one line on stderr and exit code 2, never a traceback;
warnings are printed as one line each.
"""

from __future__ import annotations

import argparse
import os
import sys
import warnings

from pacing import __version__
from pacing.errors import InputError

COMMAND_MODULES = ("course", "plan", "compare", "fieldtest", "library")


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose usage errors are one line (and exit code 2)."""

    def error(self, message: str):  # noqa: D102 (argparse API)
        self.exit(2, f"{self.prog}: error: {message} (see {self.prog} --help)\n")


def build_parser() -> argparse.ArgumentParser:
    import importlib

    parser = OneLineParser(
        prog="pacing",
        description="Race-pacing planner for cycling and running.",
    )
    parser.add_argument("--version", action="version", version=f"pacing {__version__}")
    subparsers = parser.add_subparsers(dest="command", required=True, metavar="COMMAND",
                                       parser_class=OneLineParser)
    for name in COMMAND_MODULES:
        try:
            module = importlib.import_module(f"pacing.cli.{name}")
        except ModuleNotFoundError as error:
            if error.name == f"pacing.cli.{name}":
                continue  # command not built yet
            raise
        module.add_parser(subparsers)
    return parser


def _one_line_warning(message, category, filename, lineno, file=None, line=None) -> None:
    print(f"pacing: warning: {str(message).splitlines()[0]}", file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    with warnings.catch_warnings():
        warnings.simplefilter("default")
        warnings.showwarning = _one_line_warning
        try:
            from pacing.cli.common import check_shared_flags

            check_shared_flags(args)
            return int(args.run(args) or 0)
        except (InputError, ValueError, OSError) as error:
            if isinstance(error, BrokenPipeError):
                return _quiet_broken_pipe()
            message = str(error).splitlines()[0] if str(error) else type(error).__name__
            print(f"pacing {args.command}: error: {message}", file=sys.stderr)
            return 2
        except KeyboardInterrupt:
            return 130


def _quiet_broken_pipe() -> int:
    """The reader of our output went away (e.g. `| head`): stop without a message."""
    devnull = os.open(os.devnull, os.O_WRONLY)
    os.dup2(devnull, sys.stdout.fileno())
    return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
