"""``pacing plan ROUTE.gpx …``: predict a race and its pacing plan (cycling or running).

The parser lists every flag of the command (a contract other tools rely on); the work is done
by pacing.cli.plan_cycling.run and pacing.cli.plan_running.run.
"""

from __future__ import annotations

import argparse

from pacing.cli import COMMANDS
from pacing.cli.common import (
    add_air_flags,
    add_course_flags,
    add_rider_flags,
    add_simulation_flags,
)
from pacing.cli.race_day_flags import (
    add_race_day_flags,
)
from pacing.plan.strategies import STRATEGIES

CYCLING_STRATEGIES = tuple(STRATEGIES["cycling"])
"""The --strategy values for cycling, from the strategy registry (pacing.plan.strategies)."""

RUNNING_STRATEGIES = tuple(STRATEGIES["running"])
"""The --strategy values for running, from the strategy registry (pacing.plan.strategies)."""


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``plan`` command.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The subcommands of ``pacing`` (pacing.cli.build_parser) [-].
    """
    parser = subparsers.add_parser(
        "plan",
        help=COMMANDS["plan"],
        description="Predict finish time and segment targets on a GPX course.",
    )
    add_plan_flags(parser)
    parser.set_defaults(run=run)


def add_plan_flags(parser: argparse.ArgumentParser) -> None:
    """Add every flag of the plan command (compare reuses them).

    Parameters
    ----------
    parser : argparse.ArgumentParser
        Gets the course, rider, air and wind flags, the race day's (--weather, --start,
        --best-start-between, --heat-acclimatised, --altitude-acclimatised,
        --heat-and-altitude), --sport, and the groups "cycling plan"
        (--power [W], --strategy, --target-time [H:MM:SS], --cp [W], --w-prime [J],
        --w-prime-reserve [J], --max-power-ratio [-] and the simulation flags [m/s]) and
        "running plan" (--flat-pace [M:SS per km], --body-mass [kg], --height [m],
        --critical-speed [m/s], --d-prime [m], --downhill-cap [-]).
    """
    add_course_flags(parser)
    parser.add_argument("--sport", choices=("cycling", "running"), default="cycling")
    add_rider_flags(parser)
    add_air_flags(parser)
    add_race_day_flags(parser)
    cyc = parser.add_argument_group("cycling plan")
    cyc.add_argument("--power", type=float, default=None,
                     help="constant crank power, or the mean power to match [W]")
    cyc.add_argument("--strategy", default=None,
                     help=f"cycling: {'|'.join(CYCLING_STRATEGIES)}; "
                          f"running: {'|'.join(RUNNING_STRATEGIES)}")
    cyc.add_argument("--target-time", default=None, help="finish time to reach, H:MM:SS")
    cyc.add_argument("--cp", type=float, default=None, help="critical power [W]")
    cyc.add_argument("--w-prime", type=float, default=None, help="W′ [J]")
    cyc.add_argument("--w-prime-reserve", type=float, default=0.0,
                     help="W′ balance never to go below [J] (default 0)")
    cyc.add_argument("--max-power-ratio", type=float, default=None,
                     help="segment power at most this multiple of critical power (or of the "
                          "mean power when --cp is not given)")
    add_simulation_flags(cyc)
    run = parser.add_argument_group("running plan")
    run.add_argument("--flat-pace", default=None,
                     help="pace held on flat ground in still air, M:SS per km")
    run.add_argument("--body-mass", type=float, default=None, help="runner's body mass [kg]")
    run.add_argument("--height", type=float, default=None, help="runner's height [m]")
    run.add_argument("--critical-speed", type=float, default=None, help="critical speed [m/s]")
    run.add_argument("--d-prime", type=float, default=None, help="D′ [m]")
    run.add_argument("--downhill-cap", default=None,
                     help="highest speed on descents as a multiple of the flat speed "
                          "(default 1.2; 'none' for no cap)")


def run(args: argparse.Namespace) -> int:
    """Run ``pacing plan`` for the sport of --sport.

    Parameters
    ----------
    args : argparse.Namespace
        The flags of `add_plan_flags` [-].

    Returns
    -------
    int
        The exit code, 0 [-].

    Raises
    ------
    InputError
        When the flags, the course or the plan cannot be used (one line for the user).
    """
    if args.sport == "running":
        from pacing.cli import plan_running

        return plan_running.run(args)
    from pacing.cli import plan_cycling

    return plan_cycling.run(args)
