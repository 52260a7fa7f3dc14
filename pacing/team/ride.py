"""A team's ride through its turns: the line's speed, each rider's power and W′ balance.

The race is cut into *cells*: the pieces of the course further cut at every change of lead.
On each cell the line rides at one steady speed: the speed the leader's power holds against
his drag (his solo CdA times 1 − d₁, the leader's gain from the riders behind), rolling,
bearings and gravity (pacing.physics.cycling, Martin et al. 1998). A follower at place k rides
at that speed with his solo CdA times 1 − d_k; his power is the power balance's power at that
speed. At each change of lead the rider who swings off rides unsheltered for the changeover
t_c = (n − 1)·s / Δv (n riders in the line, s the wheel spacing, Δv the drop-back speed) at the
mean speed v − Δv + e/t_c (e the extra path of the swing), then rides last in the line.
W′ balance per rider by Skiba's differential form (pacing.physiology.critical_power) over his
samples while he is in the line. docs/team.md describes the model and its assumptions.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from pacing.physics.cycling import power_for_speed, speed_for_power
from pacing.physiology.critical_power import w_prime_balance_differential
from pacing.team.drafting import reduction_by_position
from pacing.team.race import TeamRace
from pacing.team.riders import Team
from pacing.team.start import StartRun, standing_start
from pacing.team.turns import Turns


@dataclass(frozen=True, eq=False)
class Cells:
    """The race cut at piece ends and changes of lead.

    Attributes
    ----------
    start, length : numpy.ndarray
        Where each cell starts and its length [m].
    piece, turn : numpy.ndarray
        The piece of the race and the turn each cell belongs to [-].
    """

    start: np.ndarray
    length: np.ndarray
    piece: np.ndarray
    turn: np.ndarray


@dataclass(frozen=True, eq=False)
class TeamRide:
    """The line's ride and every rider's effort.

    Attributes
    ----------
    finish_time : float
        Time of the line (and so of the counting rider) at the finish [s].
    turns : Turns
        The turns ridden [-].
    cells : Cells
        The cells [-].
    speed : numpy.ndarray
        Line speed on each cell [m/s].
    duration : numpy.ndarray
        Time on each cell (less the part covered by the start) [s].
    power : numpy.ndarray
        (riders × cells) power of each rider on each cell, 0 out of the line [W].
    balance : numpy.ndarray
        (riders × cells) W′ balance at the end of each cell (held once out of the line) [J].
    start : StartRun or None
        The standing start, None for a flying start [-].
    start_power : numpy.ndarray
        (riders × start steps) power during the start [W].
    start_balance : numpy.ndarray
        (riders × start steps) W′ balance during the start [J].
    """

    finish_time: float
    turns: Turns
    cells: Cells
    speed: np.ndarray
    duration: np.ndarray
    power: np.ndarray
    balance: np.ndarray
    start: StartRun | None
    start_power: np.ndarray
    start_balance: np.ndarray

    @property
    def lowest_balance(self) -> np.ndarray:
        """Each rider's lowest W′ balance while in the line, the start included [J]."""
        lowest = self.balance.min(axis=1)
        if self.start_balance.shape[1]:
            lowest = np.minimum(lowest, self.start_balance.min(axis=1))
        return lowest


def cut_cells(race: TeamRace, turns: Turns) -> Cells:
    """The cells of a race: its pieces cut at every change of lead.

    Parameters
    ----------
    race : TeamRace
        The pieces [m].
    turns : Turns
        Start of each turn [m].

    Returns
    -------
    Cells
        Start, length, piece and turn of each cell [m, -].
    """
    points = np.union1d(race.bounds, turns.start)
    keep = np.concatenate([[True], np.diff(points) > 1e-6])
    points = points[keep]
    points[-1] = race.distance
    middle = 0.5 * (points[:-1] + points[1:])
    piece = np.clip(np.searchsorted(race.bounds, middle) - 1, 0, race.piece_length.size - 1)
    turn = np.clip(np.searchsorted(turns.start, middle, side="right") - 1, 0,
                   turns.leader.size - 1)
    return Cells(points[:-1], np.diff(points), piece, turn)


def reduction_table(race: TeamRace, riders: int) -> np.ndarray:
    """(line size + 1) × riders: the drag reduction of place p in a line of s riders [-]."""
    table = np.zeros((riders + 1, riders))
    for size in range(1, riders + 1):
        table[size, :size] = reduction_by_position(race.drafting, size)
    return table


class LeaderSpeeds:
    """The line's steady speed behind each leader at a power, on every kind of piece and for
    every line size, solved once per (leader, power) and remembered.

    A search that changes one rider's power at a time (finite differences) then solves one
    leader's speeds per change; a change of turn lengths solves none.

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        The pieces and their kinds [-].
    """

    MEMORY = 512
    """Most (leader, power) tables kept; all are dropped when it is full."""

    def __init__(self, team: Team, race: TeamRace) -> None:
        self.team, self.race = team, race
        _, first = np.unique(race.piece_kind, return_index=True)
        self.piece = first  # one piece of each kind
        smallest = min(race.counts_rider, team.size)
        self.sizes = np.arange(smallest, team.size + 1)
        self.reduction = reduction_table(race, team.size)[self.sizes, 0]
        self._memo: dict[tuple[int, float], np.ndarray] = {}

    def table(self, index: int, power: float) -> np.ndarray:
        """(line size + 1) × piece kinds: speed behind rider `index` at `power` [m/s]."""
        key = (index, float(power))
        found = self._memo.get(key)
        if found is not None:
            return found
        if len(self._memo) >= self.MEMORY:
            self._memo.clear()
        rider, race, piece = self.team.riders[index], self.race, self.piece
        area = np.repeat(rider.drag_area * (1.0 - self.reduction), piece.size)
        every = np.tile(piece, self.sizes.size)
        solved = speed_for_power(power, race.grade[every], race.density[every],
                                 rider.power_model(area), race.headwind[every],
                                 race.crosswind[every])
        table = np.zeros((self.team.size + 1, piece.size))
        table[self.sizes] = solved.reshape(self.sizes.size, piece.size)
        self._memo[key] = table
        return table


def line_speeds(team: Team, race: TeamRace, turns: Turns, cells: Cells,
                turn_power: np.ndarray, memo: LeaderSpeeds | None = None) -> np.ndarray:
    """Steady speed of the line on each cell at its leader's power [m/s].

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        Grade, air on each piece [-, kg/m³, m/s].
    turns, cells : Turns, Cells
        Leaders and cells [-].
    turn_power : numpy.ndarray
        The leader's power in each turn (pacing.team.turns.leader_powers) [W].
    memo : LeaderSpeeds, optional
        Speeds solved before (a search passes one along) [-].

    Returns
    -------
    numpy.ndarray
        Speed on each cell [m/s].
    """
    memo = memo or LeaderSpeeds(team, race)
    pairs, group = np.unique(np.column_stack([turns.leader, turn_power]), axis=0,
                             return_inverse=True)
    cell_group = np.asarray(group).reshape(-1)[cells.turn]
    size = turns.line_size[cells.turn]
    kind = race.piece_kind[cells.piece]
    speed = np.empty(cells.length.size)
    for number, (index, power) in enumerate(pairs):
        mine = np.flatnonzero(cell_group == number)
        if mine.size:
            speed[mine] = memo.table(int(index), float(power))[size[mine], kind[mine]]
    return speed


def _start_run(team: Team, race: TeamRace, turns: Turns, speed: np.ndarray,
               cells: Cells) -> tuple[StartRun | None, np.ndarray]:
    """The standing start and every rider's power in it (riders × steps) [-, W]."""
    if not race.standing_start:
        return None, np.zeros((team.size, 0))
    table = reduction_table(race, team.size)
    size = int(turns.line_size[0])
    first = int(turns.leader[0])
    piece = int(cells.piece[0])
    air = (float(race.grade[piece]), float(race.density[piece]),
           float(race.headwind[piece]), float(race.crosswind[piece]))
    leader = team.riders[first]
    run = standing_start(leader.power_model(leader.drag_area * (1.0 - table[size, 0])),
                         leader.power_cap, float(speed[0]), *air)
    power = np.zeros((team.size, run.speed.size))
    for index, rider in enumerate(team.riders):
        place = int(turns.position[0, index])
        model = rider.power_model(rider.drag_area * (1.0 - table[size, place]))
        power[index] = np.maximum(power_for_speed(run.speed, air[0], air[1], model, air[2],
                                                  air[3], run.acceleration), 0.0)
    return run, power


def _swing_share(race: TeamRace, turns: Turns, cells: Cells,
                 duration: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each cell: the rider swinging off (−1 none) and the share of the cell's time he
    spends in the changeover [-]."""
    size = turns.line_size[cells.turn]
    changeover = (size - 1) * race.wheel_spacing / race.drop_back_speed
    elapsed = np.cumsum(duration)
    first = np.flatnonzero(np.diff(np.concatenate([[-1], cells.turn])) != 0)
    turn_start = elapsed[first] - duration[first]
    since = elapsed - np.repeat(turn_start, np.diff(np.concatenate([first, [cells.turn.size]])))
    inside = np.clip(np.minimum(since, changeover) - (since - duration), 0.0, None)
    share = np.where(duration > 0, inside / np.where(duration > 0, duration, 1.0), 0.0)
    swinger = np.full(cells.turn.size, -1)
    later = cells.turn > 0
    previous = turns.leader[np.maximum(cells.turn - 1, 0)]
    still_in = turns.position[cells.turn, previous] >= 0
    swinger[later & still_in & (size > 1)] = previous[later & still_in & (size > 1)]
    return swinger, np.where(swinger >= 0, np.minimum(share, 1.0), 0.0)


def _rider_power(team: Team, race: TeamRace, turns: Turns, cells: Cells, speed: np.ndarray,
                 duration: np.ndarray) -> np.ndarray:
    """(riders × cells) power in the line, with the changeover of the rider swinging off."""
    table = reduction_table(race, team.size)
    size = turns.line_size[cells.turn]
    swinger, share = _swing_share(race, turns, cells, duration)
    changeover = np.maximum((size - 1) * race.wheel_spacing / race.drop_back_speed, 1e-9)
    swing_speed = np.maximum(speed - race.drop_back_speed
                             + race.swing_extra_distance / changeover, 0.5)
    power = np.zeros((team.size, cells.length.size))
    air = (race.grade[cells.piece], race.density[cells.piece], race.headwind[cells.piece],
           race.crosswind[cells.piece])
    for index, rider in enumerate(team.riders):
        place = turns.position[cells.turn, index]
        inside = np.flatnonzero(place >= 0)
        mine = np.flatnonzero(swinger == index)
        where = np.concatenate([inside, mine])  # in the line, then alone while swinging
        area = np.concatenate([rider.drag_area * (1.0 - table[size[inside], place[inside]]),
                               np.full(mine.size, rider.drag_area)])
        ground = np.concatenate([speed[inside], swing_speed[mine]])
        both = power_for_speed(ground, air[0][where], air[1][where], rider.power_model(area),
                               air[2][where], air[3][where])
        power[index, inside] = both[:inside.size]
        if mine.size:
            alone = both[inside.size:]
            power[index, mine] = share[mine] * alone + (1 - share[mine]) * power[index, mine]
    return np.maximum(power, 0.0)


def _balances(team: Team, turns: Turns, cells: Cells, power: np.ndarray, duration: np.ndarray,
              start_power: np.ndarray, start: StartRun | None) -> tuple[np.ndarray, np.ndarray]:
    """W′ balance (Skiba's differential form): (riders × start steps) in the start and
    (riders × cells) after it, held once a rider is out of the line [J]."""
    steps = start.step_duration if start is not None else np.zeros(0)
    balance = np.empty_like(power)
    in_start = np.empty((team.size, steps.size))
    for index, rider in enumerate(team.riders):
        inside = turns.position[cells.turn, index] >= 0
        values = w_prime_balance_differential(
            np.concatenate([start_power[index], power[index, inside]]),
            np.concatenate([steps, duration[inside]]), rider.critical_power, rider.w_prime)
        in_start[index] = values[:steps.size]
        held = np.full(cells.length.size, np.nan)
        held[inside] = values[steps.size:]
        balance[index] = _hold_last(held)
    return in_start, balance


def _hold_last(values: np.ndarray) -> np.ndarray:
    """NaN entries take the last finite value before them (the first entry is finite)."""
    index = np.where(np.isfinite(values), np.arange(values.size), 0)
    np.maximum.accumulate(index, out=index)
    return values[index]


def ride_at_speeds(team: Team, race: TeamRace, turns: Turns, cells: Cells,
                   speed: np.ndarray) -> TeamRide:
    """The ride at given line speeds: time, every rider's power and W′ balance.

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        The pieces and rules [-].
    turns, cells : Turns, Cells
        Turns and cells of the race [-].
    speed : numpy.ndarray
        Line speed on each cell [m/s].

    Returns
    -------
    TeamRide
        Finish time [s], powers [W], W′ balances [J] along the race.
    """
    start, start_power = _start_run(team, race, turns, speed, cells)
    duration = cells.length / speed
    finish = float(duration.sum())
    if start is not None:
        covered = np.clip((start.distance - cells.start) / cells.length, 0.0, 1.0)
        duration = duration * (1.0 - covered)
        finish = float(duration.sum()) + start.duration
    power = _rider_power(team, race, turns, cells, speed, duration)
    start_balance, balance = _balances(team, turns, cells, power, duration, start_power, start)
    return TeamRide(finish, turns, cells, speed, duration, power, balance, start, start_power,
                    start_balance)
