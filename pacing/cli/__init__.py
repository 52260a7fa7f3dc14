"""Command line: ``python -m pacing COMMAND …`` (also installed as ``pacing``).

Each command lives in its own module with ``add_parser(subparsers)``; the module's ``run(args)``
returns the exit code. Bad input gives one line on stderr and exit code 2, never a traceback;
warnings are printed as one line each.

Only the command asked for is imported: `main` builds that command's parser in full and the
others as their one-line entries of ``pacing --help`` (COMMANDS), so ``pacing plan …`` never
imports the field test, the comparison or the store.
"""

from __future__ import annotations

import argparse
import os
import sys
import warnings
from collections.abc import Collection
from typing import NoReturn, TextIO

from pacing import __version__
from pacing.errors import InputError, first_line

COMMANDS = {
    "course": "summarise a GPX course: distance, ascent, high and low points, segments",
    "plan": "predict finish time and segment targets for a power or pace plan",
    "compare": "compare setups (positions, equipment) on a course",
    "fieldtest": "measure CdA and Crr from test rides with a power meter",
    "review": "review a race: the plan against the ride, where time went, CdA on the day",
    "team": "plan a team time trial or team pursuit: order, turns and power of each rider",
    "library": "list, show, export or import the stored athletes, setups, courses and plans",
}
"""Each command (the module pacing.cli.<command>) and its line in ``pacing --help``."""

COMMAND_MODULES = tuple(COMMANDS)
"""The commands, in the order ``pacing --help`` lists them."""


class OneLineParser(argparse.ArgumentParser):
    """An ArgumentParser whose usage errors are one line (and exit code 2)."""

    def error(self, message: str) -> NoReturn:
        """Print "pacing: error: MESSAGE (see pacing --help)" and exit with code 2.

        Parameters
        ----------
        message : str
            argparse's description of the usage error [-].
        """
        self.exit(2, f"{self.prog}: error: {message} (see {self.prog} --help)\n")


def build_parser(commands: Collection[str] = COMMAND_MODULES) -> argparse.ArgumentParser:
    """The parser of ``pacing``: --version and one subcommand per module of COMMAND_MODULES.

    Parameters
    ----------
    commands : collection of str, optional
        The commands to build in full, their modules imported (default: all); the others get
        only their entry in ``pacing --help`` [-].

    Returns
    -------
    argparse.ArgumentParser
        A OneLineParser; each subcommand built in full sets ``run`` to its module's run
        function [-].
    """
    import importlib

    parser = OneLineParser(
        prog="pacing",
        description="Race-pacing planner for cycling and running.",
    )
    parser.add_argument("--version", action="version", version=f"pacing {__version__}")
    subparsers = parser.add_subparsers(dest="command", required=True, metavar="COMMAND",
                                       parser_class=OneLineParser)
    for name in COMMAND_MODULES:
        if name not in commands:
            subparsers.add_parser(name, help=COMMANDS[name])
            continue
        try:
            module = importlib.import_module(f"pacing.cli.{name}")
        except ModuleNotFoundError as error:
            if error.name == f"pacing.cli.{name}":
                continue  # command not built yet
            raise
        module.add_parser(subparsers)
    return parser


def command_asked(argv: list[str]) -> str | None:
    """The command the arguments name, as argparse will read them; None when there is none.

    ``pacing`` itself takes only flags without values (-h, --version), so the command is the
    first argument that is not a flag, or the one after "--".

    Parameters
    ----------
    argv : list of str
        The arguments after the program's name [-].

    Returns
    -------
    str or None
        A key of COMMANDS, or None (no command, or one argparse will refuse) [-].
    """
    for index, argument in enumerate(argv):
        if argument == "--":
            following = argv[index + 1:index + 2]
            return following[0] if following and following[0] in COMMANDS else None
        if not argument.startswith("-"):
            return argument if argument in COMMANDS else None
    return None


def _one_line_warning(message: Warning | str, category: type[Warning], filename: str,
                      lineno: int, file: TextIO | None = None, line: str | None = None) -> None:
    """warnings.showwarning that prints "pacing: warning: …", the message's first line."""
    print(f"pacing: warning: {str(message).splitlines()[0]}", file=sys.stderr)


def main(argv: list[str] | None = None) -> int:
    """Run the command line.

    Bad input (InputError, ValueError, OSError) gives one line on stderr and exit code 2;
    warnings are printed as one line each; a reader that goes away (`| head`) ends it
    quietly.

    Parameters
    ----------
    argv : list of str or None, optional
        The arguments after the program's name; None for sys.argv [-].

    Returns
    -------
    int
        Exit code: 0 done, 2 bad input, 1 broken pipe, 130 interrupted [-].
    """
    arguments = sys.argv[1:] if argv is None else argv
    command = command_asked(arguments)
    parser = build_parser(() if command is None else (command,))
    args = parser.parse_args(arguments)
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
            message = _in_command_line_words(error, args)
            print(f"pacing {args.command}: error: {message}", file=sys.stderr)
            return 2
        except KeyboardInterrupt:
            return 130


def _in_command_line_words(error: BaseException, args: argparse.Namespace) -> str:
    """The refusal's one line, with the flag that answers it where the command has one: a
    course file without heights names --flat."""
    from pacing.io.gpx import NoHeightsError  # on a refusal only: no gpxpy at start-up

    message = first_line(error)
    if isinstance(error, NoHeightsError) and hasattr(args, "flat"):
        return f"{message}; add --flat to do so"
    return message


def _quiet_broken_pipe() -> int:
    """The reader of our output went away (e.g. `| head`): stop without a message."""
    devnull = os.open(os.devnull, os.O_WRONLY)
    os.dup2(devnull, sys.stdout.fileno())
    return 1


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
