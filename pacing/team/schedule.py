"""What a coach takes to the race: the turn schedule and each rider's summary (numbers only).

A turn row gives the leader, where the turn starts and ends, its time (the standing start
included in the first), the leader's mean power and the line's mean speed; a rider row gives
the lowest W′ balance, the time in front, the mean power while in the line and where the rider
dropped out (None for riders who finish). Notices: who drops out and where (notes), a reserve
no constant speed could keep (warning), the equal turns kept (note).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.notices import Notice, note
from pacing.team.plan import TeamPlan
from pacing.team.ride import TeamRide
from pacing.team.riders import Team


@dataclass(frozen=True)
class TurnRow:
    """One turn in front.

    Attributes
    ----------
    number : int
        Turn number, from 1 [-].
    leader : str
        Name of the rider in front [-].
    start_m, end_m : float
        Where the turn starts and ends [m].
    duration_s : float
        Its time [s].
    power_w : float
        The leader's mean power [W].
    speed_mps : float
        The line's mean speed [m/s].
    """

    number: int
    leader: str
    start_m: float
    end_m: float
    duration_s: float
    power_w: float
    speed_mps: float


@dataclass(frozen=True)
class RiderRow:
    """One rider's race.

    Attributes
    ----------
    name : str
        The rider [-].
    min_w_prime_balance_j : float
        Lowest W′ balance while in the line [J].
    lead_time_s : float
        Time in front [s].
    mean_power_w : float
        Mean power while in the line [W].
    dropped_at_m : float or None
        Where the rider left the line; None when he finishes [m].
    """

    name: str
    min_w_prime_balance_j: float
    lead_time_s: float
    mean_power_w: float
    dropped_at_m: float | None


def _turn_time_and_work(ride: TeamRide) -> tuple[np.ndarray, np.ndarray]:
    """Time [s] and the leader's work [J] of each turn, the start in the first."""
    count = ride.turns.leader.size
    leader = ride.turns.leader[ride.cells.turn]
    work = ride.power[leader, np.arange(leader.size)] * ride.duration
    time = np.bincount(ride.cells.turn, ride.duration, minlength=count)
    total = np.bincount(ride.cells.turn, work, minlength=count)
    if ride.start is not None:
        time[0] += ride.start.duration
        total[0] += float(ride.start_power[ride.turns.leader[0]] @ ride.start.step_duration)
    return time, total


def turn_rows(team: Team, ride: TeamRide) -> list[TurnRow]:
    """The turn schedule of a ride.

    Parameters
    ----------
    team : Team
        The riders (names) [-].
    ride : TeamRide
        The ride [-].

    Returns
    -------
    list of TurnRow
        One row per turn, in order [-].
    """
    time, work = _turn_time_and_work(ride)
    turns = ride.turns
    rows = []
    for index in range(turns.leader.size):
        length = float(turns.end[index] - turns.start[index])
        span = float(time[index])
        rows.append(TurnRow(index + 1, team.riders[int(turns.leader[index])].name,
                            float(turns.start[index]), float(turns.end[index]), span,
                            float(work[index] / span) if span > 0 else 0.0,
                            length / span if span > 0 else 0.0))
    return rows


def rider_rows(team: Team, ride: TeamRide) -> list[RiderRow]:
    """Each rider's lowest W′ balance, time in front, mean power and drop-out.

    Parameters
    ----------
    team : Team
        The riders [-].
    ride : TeamRide
        The ride [-].

    Returns
    -------
    list of RiderRow
        One row per rider, in team order [-].
    """
    time, _ = _turn_time_and_work(ride)
    lowest = ride.lowest_balance
    rows = []
    for index, rider in enumerate(team.riders):
        inside = ride.turns.position[ride.cells.turn, index] >= 0
        span = float(ride.duration[inside].sum())
        work = float(ride.power[index, inside] @ ride.duration[inside])
        if ride.start is not None:
            span += ride.start.duration
            work += float(ride.start_power[index] @ ride.start.step_duration)
        dropped = float(ride.turns.dropped_at[index])
        rows.append(RiderRow(rider.name, float(lowest[index]),
                             float(time[ride.turns.leader == index].sum()),
                             work / span if span > 0 else 0.0,
                             dropped if np.isfinite(dropped) else None))
    return rows


def plan_notices(plan: TeamPlan) -> tuple[Notice, ...]:
    """The plan's notices and one note per rider who drops out.

    Parameters
    ----------
    plan : TeamPlan
        The plan [-].

    Returns
    -------
    tuple of Notice
        Notices of the plan, then "team-rider-drops" notes in order of distance [-].
    """
    dropped = plan.ride.turns.dropped_at
    drops = [note("team-rider-drops", name=plan.team.riders[int(i)].name,
                  distance_m=float(dropped[i]))
             for i in np.argsort(dropped) if np.isfinite(dropped[i])]
    return tuple(plan.notices) + tuple(drops)
