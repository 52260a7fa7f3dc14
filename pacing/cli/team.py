"""``pacing team``: placeholder until the command is built (it refuses with one line)."""

from __future__ import annotations

import argparse

from pacing.cli import COMMANDS
from pacing.errors import InputError


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``team`` command."""
    parser = subparsers.add_parser("team", help=COMMANDS["team"])
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Refuse: the command is not built yet."""
    raise InputError("pacing team is not available yet")
