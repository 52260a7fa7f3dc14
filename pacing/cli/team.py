"""``pacing team``: plan a team time trial (GPX course) or a team pursuit (velodrome).

    pacing team ROUTE.gpx --rider NAME:mass=KG,cda=M2,cp=W,w_prime=J [--rider …]
    pacing team --track-distance 4000 --lap-length 250 --rider … --counts-rider 3

Prints the turn schedule (leader, from, to, laps or km, power, speed, lap or km time), each
rider's lowest W′ balance and the gains over equal turns at constant speed and at one leader
power; --json the numbers; --csv / --xlsx write the schedule, --card-png / --card-pdf the
printable card.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import TYPE_CHECKING, Any

from pacing.cli import COMMANDS
from pacing.cli.common import CAUTION, add_air_flags, require
from pacing.errors import InputError

if TYPE_CHECKING:
    from pacing.team.plan import PlanOptions, TeamPlan
    from pacing.team.race import TeamRace
    from pacing.team.riders import Team, TeamRider

RIDER_KEYS = {"mass": "mass", "cda": "drag_area", "cp": "critical_power",
              "w_prime": "w_prime", "max_power": "max_power", "crr": "rolling_coefficient"}
"""Keys of --rider and the TeamRider fields they set."""

REQUIRED_KEYS = ("mass", "cda", "cp", "w_prime")
"""Keys every --rider must give."""

MOST_POWER_PARTS = 8
"""Most parts of --power-parts: each adds a variable to the search (time grows) [-]."""


def add_parser(subparsers: argparse._SubParsersAction) -> None:
    """Add the ``team`` command.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
        The subcommands of ``pacing`` [-].
    """
    from pacing.team.drafting import DEFAULT_DRAFTING_SET, DRAFTING_SETS

    parser = subparsers.add_parser(
        "team", help=COMMANDS["team"],
        description="Plan a team time trial on a GPX course or a team pursuit on a velodrome: "
                    "who leads, for how long and at what power, within every rider's W′.")
    parser.add_argument("route", nargs="?", default=None, help="GPX file of the course "
                        "(leave out with --track-distance)")
    parser.add_argument("--rider", action="append", default=[], metavar="NAME:KEY=VALUE,…",
                        help="a rider, in starting order: mass=KG,cda=M2,cp=W,w_prime=J "
                             "(and optionally max_power=W, crr=-); 2 to 8 riders")
    parser.add_argument("--counts-rider", type=int, default=None,
                        help="the rider whose time counts (default: 3 of 4 on the track, "
                             "all but three of 6-8 on the road, else the last)")
    parser.add_argument("--drafting-by-position", default=None, metavar="D1,D2,…",
                        help="drag reduction by place in the line, leader first, as "
                             "fractions (e.g. 0,0.30,0.38,0.40)")
    parser.add_argument("--drafting-set", choices=sorted(DRAFTING_SETS),
                        default=DEFAULT_DRAFTING_SET,
                        help=f"published drafting set (default {DEFAULT_DRAFTING_SET})")
    parser.add_argument("--w-prime-reserve", type=float, default=0.0,
                        help="W′ every rider keeps while in the line [J] (default 0)")
    parser.add_argument("--power-parts", type=int, default=None, metavar="N",
                        help="equal parts of the race, each with its own factor on the "
                             "leaders' power (default 4; 1 for one power per rider)")
    parser.add_argument("--flying-start", action="store_true",
                        help="start at race speed instead of from rest")
    parser.add_argument("--track-distance", type=float, default=None,
                        help="race on a velodrome over this distance [m]")
    parser.add_argument("--lap-length", type=float, default=None,
                        help="lap of the velodrome on the measuring line [m]")
    parser.add_argument("--track-elevation", type=float, default=0.0,
                        help="elevation of the velodrome [m] (default 0)")
    parser.add_argument("--json", action="store_true", help="print JSON instead of a table")
    parser.add_argument("--csv", default=None, metavar="PATH",
                        help="write the turn schedule as CSV")
    parser.add_argument("--xlsx", default=None, metavar="PATH",
                        help="write the turn schedule and W′ balances as XLSX")
    parser.add_argument("--card-png", default=None, metavar="FILE",
                        help="write the printable turn schedule card as PNG")
    parser.add_argument("--card-pdf", default=None, metavar="FILE",
                        help="write the printable turn schedule card as PDF")
    add_air_flags(parser)
    parser.set_defaults(run=run)


def parse_rider(text: str) -> TeamRider:
    """A rider of ``NAME:mass=KG,cda=M2,cp=W,w_prime=J[,max_power=W][,crr=-]``.

    Parameters
    ----------
    text : str
        The value of one --rider [-].

    Returns
    -------
    pacing.team.riders.TeamRider
        The rider [-].

    Raises
    ------
    InputError
        When the name, a key or a number is missing or wrong (one line naming it).
    """
    from pacing.team.riders import TeamRider

    name, colon, rest = text.partition(":")
    require(bool(colon) and bool(name.strip()),
            f"--rider {text!r}: write NAME:mass=KG,cda=M2,cp=W,w_prime=J")
    values: dict[str, float] = {}
    for item in rest.split(","):
        key, equals, number = item.partition("=")
        key = key.strip().lower()
        require(bool(equals) and key in RIDER_KEYS,
                f"--rider {name}: unknown item {item.strip()!r} (keys: "
                f"{', '.join(RIDER_KEYS)})")
        try:
            values[RIDER_KEYS[key]] = float(number)
        except ValueError:
            raise InputError(f"--rider {name}: {key} must be a number, got {number!r}") \
                from None
    missing = [key for key in REQUIRED_KEYS if RIDER_KEYS[key] not in values]
    require(not missing, f"--rider {name}: give {', '.join(missing)}")
    return TeamRider(name=name, **values)


def _drafting(args: argparse.Namespace) -> tuple[float, ...]:
    from pacing.team.drafting import DRAFTING_SETS, checked_reductions

    if args.drafting_by_position is None:
        return DRAFTING_SETS[args.drafting_set].reductions
    try:
        values = [float(v) for v in args.drafting_by_position.split(",")]
    except ValueError:
        raise InputError("--drafting-by-position must be numbers separated by commas, e.g. "
                         "0,0.30,0.38,0.40") from None
    return checked_reductions(values)


def default_counts_rider(riders: int, track: bool) -> int:
    """The counting rider when none is given: 3 of 4 on the track (team pursuit), the 5th of
    6-8 on the road (team time trials count the 4th or 5th), else the last [-].

    >>> [default_counts_rider(4, True), default_counts_rider(8, False)]
    [3, 5]
    """
    if track and riders == 4:
        return 3
    if riders >= 6:
        return 5
    return riders


def race_from_args(args: argparse.Namespace, team: Team) -> TeamRace:
    """The race of the flags: a velodrome (--track-distance, --lap-length) or a GPX course.

    Parameters
    ----------
    args : argparse.Namespace
        The flags [-].
    team : pacing.team.riders.Team
        The riders (for the default counting rider) [-].

    Returns
    -------
    pacing.team.race.TeamRace
        The race [-].
    """
    import numpy as np

    from pacing.cli.common import conditions_from_args
    from pacing.team.race import race_on_road, race_on_track
    from pacing.weather.conditions import air_along_course, density_along

    track = args.track_distance is not None or args.lap_length is not None
    require(not (track and args.route), "give a GPX course or --track-distance, not both")
    require(track or bool(args.route), "give a GPX course or --track-distance and --lap-length")
    counts = (default_counts_rider(team.size, track) if args.counts_rider is None
              else args.counts_rider)
    require(1 <= counts <= team.size,
            f"--counts-rider must be 1 to {team.size} (the riders), got {counts}")
    rules = {"counts_rider": counts, "drafting": _drafting(args),
             "w_prime_reserve": args.w_prime_reserve, "standing_start": not args.flying_start}
    conditions = conditions_from_args(args)
    if track:
        require(args.track_distance is not None and args.lap_length is not None,
                "a velodrome needs both --track-distance and --lap-length")
        require(not args.wind_speed, "a velodrome has no wind: leave out --wind-speed")
        density = float(density_along(np.array([args.track_elevation]), args.track_elevation,
                                      conditions)[0])
        return race_on_track(args.track_distance, args.lap_length, density, **rules)
    from pacing.io.gpx import load_course

    course = load_course(args.route)
    return race_on_road(course, air_along_course(course, conditions), **rules)


def plan_from_args(args: argparse.Namespace) -> tuple[Team, TeamRace, TeamPlan]:
    """The team (as given), race and plan (its team in the plan's starting order)."""
    from pacing.team.plan import plan_team
    from pacing.team.riders import Team

    require(len(args.rider) >= 2, "give at least two --rider")
    team = Team(tuple(parse_rider(text) for text in args.rider))
    race = race_from_args(args, team)
    return team, race, plan_team(team, race, plan_options(args))


def plan_options(args: argparse.Namespace) -> PlanOptions:
    """The search's options of the flags (--power-parts, 1 to MOST_POWER_PARTS).

    Parameters
    ----------
    args : argparse.Namespace
        The flags [-].

    Returns
    -------
    pacing.team.plan.PlanOptions
        The options [-].
    """
    from pacing.team.plan import PlanOptions

    if args.power_parts is None:
        return PlanOptions()
    require(1 <= args.power_parts <= MOST_POWER_PARTS,
            f"--power-parts must be 1 to {MOST_POWER_PARTS}, got {args.power_parts}")
    return PlanOptions(power_parts=args.power_parts)


def plan_as_dict(plan: TeamPlan) -> dict[str, Any]:
    """The plan as JSON-ready numbers (SI; keys name their unit).

    Parameters
    ----------
    plan : pacing.team.plan.TeamPlan
        The plan; its riders in its starting order [-].

    Returns
    -------
    dict
        finish_time_s, equal_turns_time_s, gain_s, equal_turns_speed_mps, equal_power_time_s
        (equal turns, every leader at one power), equal_power_gain_s, equal_power_w,
        optimised, riders
        in starting order (name, min_w_prime_balance_j, lead_time_s, mean_power_w,
        dropped_at_m), turns (leader,
        start_m, end_m, duration_s, power_w, speed_mps), warnings and notices [SI].
    """
    from dataclasses import asdict

    from pacing.cli.common import notices_as_json, warnings_as_text
    from pacing.team.schedule import plan_notices, rider_rows, turn_rows

    notices = plan_notices(plan)
    turns = [{key: value for key, value in asdict(row).items() if key != "number"}
             for row in turn_rows(plan.team, plan.ride)]
    return {
        "finish_time_s": plan.ride.finish_time,
        "equal_turns_time_s": plan.equal_turns.finish_time,
        "gain_s": plan.gain,
        "equal_turns_speed_mps": plan.equal_turns_speed,
        "equal_power_time_s": plan.equal_power.finish_time,
        "equal_power_gain_s": plan.power_gain,
        "equal_power_w": plan.equal_power_w,
        "optimised": plan.optimised,
        "riders": [asdict(row) for row in rider_rows(plan.team, plan.ride)],
        "turns": turns,
        "warnings": warnings_as_text(notices),
        "notices": notices_as_json(notices),
    }


def plan_as_text(race: TeamRace, plan: TeamPlan) -> str:
    """The turn schedule and the riders as readable tables (metric).

    Parameters
    ----------
    race : pacing.team.race.TeamRace
        The race (lap length) [-].
    plan : pacing.team.plan.TeamPlan
        The plan [-].

    Returns
    -------
    str
        Schedule, riders and the times of the plan and of equal turns [-].
    """
    from pacing.display.units import format_duration
    from pacing.io.team_file import rider_table, turn_table
    from pacing.team.schedule import rider_rows, turn_rows

    turns = turn_table(turn_rows(plan.team, plan.ride), "metric", race.lap_length)
    riders = rider_table(rider_rows(plan.team, plan.ride), "metric")
    finish, equal = plan.ride.finish_time, plan.equal_turns.finish_time
    power = plan.equal_power.finish_time
    return "\n".join([
        turns.to_string(index=False), "", riders.to_string(index=False, na_rep=""), "",
        f"finish (rider {race.counts_rider}): {format_duration(finish)} ({finish:.2f} s); "
        f"equal turns at constant speed {format_duration(equal)} ({equal:.2f} s); "
        f"gain {plan.gain:.2f} s",
        f"equal turns, every leader at {plan.equal_power_w:.0f} W: "
        f"{format_duration(power)} ({power:.2f} s); gain {plan.power_gain:.2f} s",
    ])


def _write_cards(args: argparse.Namespace, race: TeamRace, plan: TeamPlan) -> None:
    """The printable card (--card-png, --card-pdf): warnings and notes above the caution."""
    from pacing.io.team_file import team_card_inputs, team_card_pdf, team_card_png, write_bytes

    if not (args.card_png or args.card_pdf):
        return
    card = team_card_inputs(race, plan, "metric")
    if args.card_png:
        write_bytes(args.card_png, team_card_png(**card))
    if args.card_pdf:
        write_bytes(args.card_pdf, team_card_pdf(**card))


def _write_files(args: argparse.Namespace, race: TeamRace, plan: TeamPlan) -> None:
    from pacing.display.notices import labelled
    from pacing.io.team_file import balance_table, schedule_csv, schedule_xlsx, write_bytes
    from pacing.team.schedule import plan_notices, rider_rows, turn_rows

    _write_cards(args, race, plan)
    team = plan.team
    words = [labelled(n, "metric") for n in plan_notices(plan)]
    turns = turn_rows(team, plan.ride)
    if args.csv:
        write_bytes(args.csv, schedule_csv(turns, words, "metric", race.lap_length))
    if args.xlsx:
        cells = plan.ride.cells
        balance = balance_table(cells.start + cells.length, plan.ride.balance,
                                [r.name for r in team.riders])
        write_bytes(args.xlsx, schedule_xlsx(turns, rider_rows(team, plan.ride), balance,
                                             words, "metric", race.lap_length))


def run(args: argparse.Namespace) -> int:
    """Run ``pacing team``: the schedule as a table or JSON; files with --csv / --xlsx.

    Parameters
    ----------
    args : argparse.Namespace
        The flags [-].

    Returns
    -------
    int
        The exit code, 0 [-].
    """
    from pacing.cli.common import report_notices
    from pacing.team.schedule import plan_notices

    _, race, plan = plan_from_args(args)
    _write_files(args, race, plan)
    notices = plan_notices(plan)
    if args.json:
        output = plan_as_dict(plan)
        report_notices(notices, table=False)
        sys.stdout.write(json.dumps(output, indent=2, allow_nan=False) + "\n")
        return 0
    print(plan_as_text(race, plan))
    for line in report_notices(notices, table=True):
        print(line)
    print(CAUTION)
    return 0
