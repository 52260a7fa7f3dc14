"""Command line: ``python -m pacing COMMAND …`` (also installed as ``pacing``).

Each command lives in its own module with ``add_parser(subparsers)``; the module's ``run(args)``
returns the exit code. Bad input gives one line on stderr and exit code 2, never a traceback.
"""

from __future__ import annotations

import argparse
import sys

from pacing import __version__
from pacing.errors import InputError

COMMAND_MODULES = ("course", "plan", "compare", "fieldtest", "library")


def build_parser() -> argparse.ArgumentParser:
    import importlib

    parser = argparse.ArgumentParser(
        prog="pacing",
        description="Race-pacing planner for cycling and running.",
    )
    parser.add_argument("--version", action="version", version=f"pacing {__version__}")
    subparsers = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    for name in COMMAND_MODULES:
        try:
            module = importlib.import_module(f"pacing.cli.{name}")
        except ModuleNotFoundError as error:
            if error.name == f"pacing.cli.{name}":
                continue  # command not built yet
            raise
        module.add_parser(subparsers)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return int(args.run(args) or 0)
    except (InputError, ValueError, OSError) as error:
        message = str(error).splitlines()[0] if str(error) else type(error).__name__
        print(f"pacing {args.command}: error: {message}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
