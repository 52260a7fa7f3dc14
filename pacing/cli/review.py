"""``pacing review``: placeholder until the command is built (it refuses with one line)."""

from __future__ import annotations

import argparse

from pacing.cli import COMMANDS
from pacing.errors import InputError


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``review`` command."""
    parser = subparsers.add_parser("review", help=COMMANDS["review"])
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Refuse: the command is not built yet."""
    raise InputError("pacing review is not available yet")
