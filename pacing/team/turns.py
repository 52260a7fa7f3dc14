"""The turns of a line: who leads, from where to where, and who sits where behind.

The line rotates: the leader rides his turn, swings off and rejoins at the back; the next rider
leads. A rider allowed to drop out (pacing.team.plan chooses who) rides his turns until the one
after which his next turn would start beyond his drop distance: that last turn is stretched to
end at the drop distance (a last long turn) and he leaves the line at its end. Riders leave only
while more riders than the counting one remain.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.errors import InputError

MOST_TURNS = 5000
"""Most turns in a race; more means turns far too short for the distance [-]."""


@dataclass(frozen=True, eq=False)
class TurnChoice:
    """What the coach chooses for each rider (arrays in team order).

    Attributes
    ----------
    turn_length : numpy.ndarray
        Length of each of the rider's turns in front [m].
    turn_power : numpy.ndarray
        Power of the rider while leading [W].
    drop_distance : numpy.ndarray
        Distance by which the rider leaves the line after a last turn; inf to ride to the
        finish [m].
    power_profile : numpy.ndarray or None
        Factor on every leader's power in each of equal parts of the distance (a turn takes
        the factor of the part where it starts), so that one rider's turns need not share one
        power; None for one power per rider [-].
    ride_on_to_finish : bool
        The leader of the turn before the last rides on to the finish: no last change of lead
        (pacing.team.plan sets it after the search when the last turn would be a scrap; the
        search itself never does, so its objective stays continuous) [-].
    """

    turn_length: np.ndarray
    turn_power: np.ndarray
    drop_distance: np.ndarray
    power_profile: np.ndarray | None = None
    ride_on_to_finish: bool = False


@dataclass(frozen=True, eq=False)
class Turns:
    """The turns of a race, in order.

    Attributes
    ----------
    leader : numpy.ndarray
        Team index of the leader of each turn [-].
    start, end : numpy.ndarray
        Where each turn starts and ends [m].
    position : numpy.ndarray
        (turns × riders) place in the line, 0 = leader, −1 out of the line [-].
    dropped_at : numpy.ndarray
        Where each rider left the line; inf for riders who finish [m].
    """

    leader: np.ndarray
    start: np.ndarray
    end: np.ndarray
    position: np.ndarray
    dropped_at: np.ndarray

    @property
    def line_size(self) -> np.ndarray:
        """Riders in the line in each turn [-]."""
        return (self.position >= 0).sum(axis=1)


def build_turns(choice: TurnChoice, distance: float, counts_rider: int) -> Turns:
    """The turns that a choice of turn lengths and drop distances makes over a race.

    Parameters
    ----------
    choice : TurnChoice
        Turn length [m] and drop distance [m] of each rider; the team's order is the
        starting order [-].
    distance : float
        Race distance [m].
    counts_rider : int
        The rider whose time counts: the line never gets smaller than this [-].

    Returns
    -------
    Turns
        Leader, start and end of each turn, places in the line, where riders dropped [-].

    Raises
    ------
    InputError
        When the turns are so short that the race needs more than MOST_TURNS of them.

    Examples
    --------
    Two riders, turns of 300 m and 200 m over 1000 m:

    >>> choice = TurnChoice(np.array([300.0, 200.0]), np.array([400.0, 400.0]),
    ...                     np.array([np.inf, np.inf]))
    >>> turns = build_turns(choice, 1000.0, 2)
    >>> turns.leader.tolist(), turns.end.tolist()
    ([0, 1, 0, 1], [300.0, 500.0, 800.0, 1000.0])

    Over 1050 m the last turn would be 50 m; with ride_on_to_finish rider 1 rides on:

    >>> on = TurnChoice(choice.turn_length, choice.turn_power, choice.drop_distance,
    ...                 ride_on_to_finish=True)
    >>> turns = build_turns(on, 1050.0, 2)
    >>> turns.leader.tolist(), turns.end.tolist()
    ([0, 1, 0, 1], [300.0, 500.0, 800.0, 1050.0])
    """
    riders = choice.turn_length.size
    lengths = [float(value) for value in choice.turn_length]
    drops = [float(value) for value in choice.drop_distance]
    line = list(range(riders))
    dropped = np.full(riders, np.inf)
    leaders: list[int] = []
    starts: list[float] = []
    ends: list[float] = []
    lines: list[list[int]] = []
    start = 0.0
    while start < distance - 1e-6:
        if len(leaders) >= MOST_TURNS:
            raise InputError(f"turns too short: the race would need more than {MOST_TURNS}")
        leader = line[0]
        end = start + lengths[leader]
        # his last turn: his next one would start beyond his drop distance
        last = (drops[leader] < np.inf and len(line) > counts_rider
                and drops[leader] < end + sum(lengths[other] for other in line[1:]))
        if last:
            end = max(end, drops[leader])
        end = min(end, distance)
        leaders.append(leader)
        starts.append(start)
        ends.append(end)
        lines.append(line)
        line = line[1:] if last else line[1:] + [leader]
        if last and end < distance - 1e-6:
            dropped[leader] = end
        start = end
    if choice.ride_on_to_finish and len(leaders) > 1:
        _ride_on(leaders, ends, lines, dropped)
        starts.pop()
    return Turns(np.array(leaders, dtype=int), np.array(starts), np.array(ends),
                 _places(lines, riders), dropped)


def _ride_on(leaders: list[int], ends: list[float], lines: list[list[int]],
             dropped: np.ndarray) -> None:
    """The last turn merged into the one before (in place): its leader rides on to the finish
    and so does not drop out where his turn would have ended."""
    finish = ends.pop()
    leaders.pop()
    lines.pop()
    if dropped[leaders[-1]] == ends[-1]:
        dropped[leaders[-1]] = np.inf
    ends[-1] = finish


def _places(lines: list[list[int]], riders: int) -> np.ndarray:
    """(turns × riders) place of each rider in each turn's line, −1 out of it [-]."""
    places = np.full((len(lines), riders), -1)
    for turn, line in enumerate(lines):
        places[turn, line] = np.arange(len(line))
    return places


def leader_powers(choice: TurnChoice, turns: Turns, distance: float,
                  caps: np.ndarray) -> np.ndarray:
    """The leader's power in each turn: his turn power times the profile's factor of the part
    of the race where the turn starts, at most his cap.

    Parameters
    ----------
    choice : TurnChoice
        Turn power per rider [W] and the power profile [-].
    turns : Turns
        The turns [-].
    distance : float
        Race distance [m].
    caps : numpy.ndarray
        Each rider's cap on power [W].

    Returns
    -------
    numpy.ndarray
        Power of each turn's leader [W].

    Examples
    --------
    >>> choice = TurnChoice(np.array([300.0, 200.0]), np.array([400.0, 500.0]),
    ...                     np.array([np.inf, np.inf]), np.array([1.0, 1.1]))
    >>> turns = build_turns(choice, 1000.0, 2)
    >>> leader_powers(choice, turns, 1000.0, np.array([600.0, 520.0])).tolist()
    [400.0, 500.0, 440.0, 520.0]
    """
    power = np.asarray(choice.turn_power, dtype=float)[turns.leader]
    profile = choice.power_profile
    if profile is not None and len(profile) > 0:
        part = np.minimum((turns.start / distance * len(profile)).astype(int), len(profile) - 1)
        power = power * np.asarray(profile, dtype=float)[part]
    return np.minimum(power, np.asarray(caps, dtype=float)[turns.leader])
