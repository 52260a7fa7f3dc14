"""The team's plan: turn lengths, leader powers and last turns, fastest within every W′.

Two plans are made and compared:

- *Equal turns* (the simple schedule): every rider leads turns of one length, the line rides
  one constant speed, nobody drops out; the speed is the highest at which every rider's W′
  balance stays at or above the reserve and no leader passes his cap (bisection).
- *Optimised*: per rider a turn length and a leader power, and for the riders allowed to drop
  out (the weakest by critical power, as many as the counting rule lets go) the distance of
  their last long turn; chosen by SLSQP (scipy.optimize.minimize, Kraft 1988) to finish
  fastest subject to every rider's lowest W′ balance ≥ the reserve, starting from the equal
  turns; then, from that answer, a second search that also moves a power profile (a factor
  on every leader's power in each of PlanOptions.power_parts equal parts of the race), so a
  rider's turns need not share one power. The fastest of these is the plan (the optimiser
  never returns a slower plan than the equal turns, nor the profile one slower than one
  power per rider).
- *Equal turns at one power* (second reference): equal turns, every leader at the highest
  common power within every reserve and cap (bisection); the plan if faster.

Then a scrap of a last turn goes where cheap (finish_without_scrap).

References
----------
Kraft, D. (1988). A software package for sequential quadratic programming. DFVLR-FB 88-28.
Skiba et al. (2015), Eur J Appl Physiol 115(4):703-713 (W′ balance).
docs/team.md, "The plan".
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np
from scipy.optimize import minimize

from pacing.errors import InputError
from pacing.notices import Notice, note, warning
from pacing.team.race import TeamRace
from pacing.team.ride import LeaderSpeeds, TeamRide, cut_cells, line_speeds, ride_at_speeds
from pacing.team.riders import Team
from pacing.team.turns import TurnChoice, build_turns, leader_powers

ROAD_EQUAL_TURN = 400.0
"""Length of the equal turns on the road [m] (about 30 s at 50 km/h; common practice)."""

STARTERS = 2
"""Riders tried as first leader besides the given one: those with the highest caps [-]."""

SPEED_RANGE = (3.0, 30.0)
"""Speeds searched for the equal-turns plan [m/s]."""

LOWEST_POWER_SHARE = 0.6
"""Lowest leader power the optimiser considers, as a share of the rider's CP [-]."""

PROFILE_RANGE = (0.85, 1.15)
"""Range of the leader-power factor of a part of the race (PlanOptions.power_parts) [-]."""

PROFILE_ITERATIONS = 10
"""Most SLSQP iterations of the search that also moves the power profile [-]."""

POWER_TOLERANCE = 0.1
"""Last bracket of the equal-power plan's bisection [W]."""

SCRAP_TURN_SHARE = 0.5
"""A last turn shorter than this share of its leader's turn length is a scrap: no change of
lead a few metres before the finish, the rider before rides on to it (common practice) [-]."""

FINISH_SLACK = 0.5
"""Time the plan may lose to have no scrap last turn [s]."""

FEASIBLE = -1e-9
"""Constraint value accepted as met [-] (SLSQP's answer is first pulled inside by
`_within_reserve`)."""


@dataclass(frozen=True)
class PlanOptions:
    """How the plan is searched.

    Attributes
    ----------
    equal_turn_length : float or None
        Turn length of the equal-turns plan; None for a lap on a velodrome, ROAD_EQUAL_TURN on
        the road [m].
    shortest_turn : float or None
        Shortest turn the optimiser may give; None for a quarter lap or 100 m [m].
    max_iterations : int
        Most SLSQP iterations per search [-].
    allow_drop_outs : bool
        Let riders beyond the counting one do a last long turn and drop out [-].
    power_parts : int
        Equal parts of the distance with a leader-power factor of their own (the first part's
        is 1): a rider's turns in different parts need not share one power; 1 for one power
        per rider [-].
    choose_start : bool
        Try the STARTERS riders with the highest caps as first leader (the line's order kept
        around the rotation) and keep the order whose equal turns are fastest [-].
    """

    equal_turn_length: float | None = None
    shortest_turn: float | None = None
    max_iterations: int = 40
    allow_drop_outs: bool = True
    choose_start: bool = True
    power_parts: int = 4


@dataclass(frozen=True, eq=False)
class TeamPlan:
    """The plan and the equal-turns plan it is compared with.

    Attributes
    ----------
    team : Team
        The riders in the plan's starting order (its indices are the ride's) [-].
    ride : TeamRide
        The plan's ride [-].
    choice : TurnChoice
        Turn length [m], leader power [W] and drop distance [m] per rider.
    equal_turns : TeamRide
        The equal-turns plan's ride [-].
    equal_turns_speed : float
        Its constant speed [m/s].
    optimised : bool
        True when the optimiser's plan beat the equal turns [-].
    notices : tuple of Notice
        What the coach must hear [-].
    equal_power : TeamRide
        The second reference: equal turns, every leader at one power (equal_power_plan) [-].
    equal_power_w : float
        Its leaders' power [W].
    """

    team: Team
    ride: TeamRide
    choice: TurnChoice
    equal_turns: TeamRide
    equal_turns_speed: float
    optimised: bool
    notices: tuple[Notice, ...]
    equal_power: TeamRide
    equal_power_w: float

    @property
    def gain(self) -> float:
        """Time the plan gains on the equal turns at constant speed [s]."""
        return self.equal_turns.finish_time - self.ride.finish_time

    @property
    def power_gain(self) -> float:
        """Time the plan gains on the equal turns at one leader power [s]."""
        return self.equal_power.finish_time - self.ride.finish_time


def _margins(team: Team, race: TeamRace, ride: TeamRide) -> np.ndarray:
    """Each rider's lowest W′ balance above the reserve, as a share of his W′ [-]."""
    return (ride.lowest_balance - race.w_prime_reserve) / team.array("w_prime")


def ride_choice(team: Team, race: TeamRace, choice: TurnChoice,
                memo: LeaderSpeeds | None = None) -> TeamRide:
    """The ride of a choice of turn lengths, leader powers and drop distances.

    Parameters
    ----------
    team : Team
        The riders in starting order [-].
    race : TeamRace
        The race [-].
    choice : TurnChoice
        Per rider: turn length [m], leader power [W], drop distance [m].
    memo : LeaderSpeeds, optional
        Line speeds solved before [-].

    Returns
    -------
    TeamRide
        Time, powers and W′ balances [s, W, J].
    """
    turns = build_turns(choice, race.distance, race.counts_rider)
    cells = cut_cells(race, turns)
    power = leader_powers(choice, turns, race.distance, team.power_caps)
    speed = line_speeds(team, race, turns, cells, power, memo)
    return ride_at_speeds(team, race, turns, cells, speed)


def ride_at_constant_speed(team: Team, race: TeamRace, turn_length: float,
                           speed: float) -> TeamRide:
    """Equal turns at one constant speed, nobody dropping out.

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        The race [-].
    turn_length : float
        Every turn's length [m].
    speed : float
        The line's speed [m/s].

    Returns
    -------
    TeamRide
        Its time, powers and W′ balances [s, W, J].
    """
    riders = team.size
    choice = TurnChoice(np.full(riders, turn_length), np.zeros(riders), np.full(riders, np.inf))
    turns = build_turns(choice, race.distance, race.counts_rider)
    cells = cut_cells(race, turns)
    return ride_at_speeds(team, race, turns, cells, np.full(cells.length.size, float(speed)))


def _leaders_within_caps(team: Team, ride: TeamRide) -> bool:
    leader = ride.turns.leader[ride.cells.turn]
    power = ride.power[leader, np.arange(leader.size)]
    return bool(np.all(power <= team.power_caps[leader] + 1e-9))


def _keeps_limits(team: Team, race: TeamRace, ride: TeamRide, floor: float = 0.0) -> bool:
    """Whether every rider's W′ balance stays at or above the reserve (margins ≥ `floor`
    [J]) and every leader within his cap [-]."""
    return bool(np.all(_margins(team, race, ride) >= floor)) and _leaders_within_caps(team, ride)


def _highest_kept(ride_at: Callable[[float], TeamRide], keeps: Callable[[TeamRide], bool],
                  low: float, high: float, tolerance: float, try_high: bool = False
                  ) -> tuple[TeamRide, float, bool]:
    """The highest value in [low, high] (a speed or a power) whose ride keeps every limit,
    by bisection to `tolerance`; `try_high` rides `high` itself first.

    Returns (the ride, the value, True), or (the ride at `low`, low, False) when even `low`
    does not keep the limits.
    """
    best = ride_at(low)
    if not keeps(best):
        return best, low, False
    if try_high:
        top = ride_at(high)
        if keeps(top):
            return top, high, True
    while high - low > tolerance:
        middle = 0.5 * (low + high)
        ride = ride_at(middle)
        if keeps(ride):
            low, best = middle, ride
        else:
            high = middle
    return best, low, True


def equal_turns_plan(team: Team, race: TeamRace, turn_length: float,
                     tolerance: float = 1e-3) -> tuple[TeamRide, float, bool]:
    """The fastest constant speed with equal turns that every rider can hold.

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        The race, with its W′ reserve [J].
    turn_length : float
        Every turn's length [m].
    tolerance : float, optional
        Width of the last speed bracket [m/s].

    Returns
    -------
    tuple of (TeamRide, float, bool)
        The ride, its speed [m/s], and whether it keeps every reserve (False: even the lowest
        speed searched does not) [-].
    """
    return _highest_kept(lambda speed: ride_at_constant_speed(team, race, turn_length, speed),
                         lambda ride: _keeps_limits(team, race, ride), *SPEED_RANGE, tolerance)


def equal_power_plan(team: Team, race: TeamRace, turn_length: float,
                     tolerance: float = POWER_TOLERANCE) -> tuple[TeamRide, float, bool]:
    """The highest power that every leader holds through equal turns, nobody dropping out.

    What a team without a plan rides: every rider leads turns of one length at one common
    power P [W] (the line's speed follows the course); P is the highest (bisection between
    LOWEST_POWER_SHARE of the smallest CP and the smallest cap) at which every rider's W′
    balance stays at or above the reserve and no leader passes his cap.

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        The race, with its W′ reserve [J].
    turn_length : float
        Every turn's length [m].
    tolerance : float, optional
        Width of the last power bracket [W].

    Returns
    -------
    tuple of (TeamRide, float, bool)
        The ride, the leaders' power [W], and whether it keeps every reserve (False: even the
        lowest power searched does not) [-].
    """
    riders = team.size
    memo = LeaderSpeeds(team, race)

    def ride_at(power: float) -> TeamRide:
        choice = TurnChoice(np.full(riders, turn_length), np.full(riders, power),
                            np.full(riders, np.inf))
        return ride_choice(team, race, choice, memo)

    return _highest_kept(ride_at, lambda ride: _keeps_limits(team, race, ride),
                         LOWEST_POWER_SHARE * float(team.array("critical_power").min()),
                         float(team.power_caps.min()), tolerance, try_high=True)


def drop_out_riders(team: Team, race: TeamRace) -> np.ndarray:
    """The riders allowed a last long turn: the weakest by CP, as many as can be spared [-].

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        The counting rule [-].

    Returns
    -------
    numpy.ndarray
        Team indices, weakest first [-].
    """
    spare = max(team.size - race.counts_rider, 0)
    order = np.argsort(team.array("critical_power"), kind="stable")
    return np.sort(order[:spare])


class _Search:
    """The optimiser's view: x = (turn length / L₀, leader power / CP, factors of the power
    profile after the first part, drop share of distance)."""

    def __init__(self, team: Team, race: TeamRace, base_length: float,
                 droppers: np.ndarray, scale_time: float, parts: int = 1) -> None:
        self.team, self.race, self.base_length = team, race, base_length
        self.droppers, self.scale_time, self.parts = droppers, scale_time, max(int(parts), 1)
        self.critical = team.array("critical_power")
        self._cache: dict[bytes, TeamRide] = {}
        self.memo = LeaderSpeeds(team, race)

    def choice(self, x: np.ndarray) -> TurnChoice:
        riders, extra = self.team.size, self.parts - 1
        drop = np.full(riders, np.inf)
        drop[self.droppers] = x[2 * riders + extra:] * self.race.distance
        profile = (np.concatenate([[1.0], x[2 * riders:2 * riders + extra]]) if extra
                   else None)
        return TurnChoice(x[:riders] * self.base_length, x[riders:2 * riders] * self.critical,
                          drop, profile)

    def ride(self, x: np.ndarray) -> TeamRide:
        key = np.asarray(x, dtype=float).tobytes()
        ride = self._cache.get(key)
        if ride is None:
            if len(self._cache) > 256:  # the finite differences of one step are enough
                self._cache.clear()
            ride = self._cache[key] = ride_choice(self.team, self.race, self.choice(x),
                                                  self.memo)
        return ride

    def time(self, x: np.ndarray) -> float:
        return self.ride(x).finish_time / self.scale_time

    def margins(self, x: np.ndarray) -> np.ndarray:
        return _margins(self.team, self.race, self.ride(x))


def _search(search: _Search, start: np.ndarray, bounds: list[tuple[float, float]],
            iterations: int) -> tuple[np.ndarray, TeamRide] | None:
    """SLSQP from `start`; the best plan that keeps every reserve, or None."""
    result = minimize(search.time, start, method="SLSQP", bounds=bounds,
                      constraints=[{"type": "ineq", "fun": search.margins}],
                      options={"maxiter": iterations, "ftol": 1e-7, "eps": 1e-4})
    x = _within_reserve(search, np.clip(result.x, [b[0] for b in bounds],
                                        [b[1] for b in bounds]), bounds)
    if x is None:
        return None
    return x, search.ride(x)


def _within_reserve(search: _Search, x: np.ndarray, bounds: list[tuple[float, float]]
                    ) -> np.ndarray | None:
    """x, its leader powers lowered by 0.1 % steps (at most 20) until every rider keeps his
    reserve (SLSQP ends on the constraint, a rounding either side); None when that fails."""
    riders = search.team.size
    low = np.array([b[0] for b in bounds[riders:2 * riders]])
    for _ in range(20):
        if np.all(search.margins(x) >= FEASIBLE):
            return x
        x = x.copy()
        x[riders:2 * riders] = np.maximum(x[riders:2 * riders] * 0.999, low)
    return None


def _bounds(team: Team, race: TeamRace, base: float, shortest: float,
            droppers: int, parts: int = 1) -> list[tuple[float, float]]:
    longest = max(race.distance / base, shortest / base + 1e-3)
    caps = team.power_caps / team.array("critical_power")
    length = [(shortest / base, longest)] * team.size
    power = [(LOWEST_POWER_SHARE, float(cap)) for cap in caps]
    profile = [PROFILE_RANGE] * (max(int(parts), 1) - 1)
    return length + power + profile + [(0.3, 1.0)] * droppers


def _default_lengths(race: TeamRace, options: PlanOptions) -> tuple[float, float]:
    """(equal turn length, shortest turn) [m]."""
    lap = race.lap_length
    base = options.equal_turn_length or (lap if lap is not None else ROAD_EQUAL_TURN)
    shortest = options.shortest_turn or (0.25 * lap if lap is not None else 100.0)
    return float(min(base, race.distance)), float(min(shortest, base))


def plan_team(team: Team, race: TeamRace, options: PlanOptions | None = None) -> TeamPlan:
    """The fastest plan of turns and powers within every rider's W′, and the equal turns.

    Parameters
    ----------
    team : Team
        The riders in starting order [-].
    race : TeamRace
        The race, its counting rule and W′ reserve [-].
    options : PlanOptions, optional
        How to search [-].

    Returns
    -------
    TeamPlan
        The plan (never slower than the equal turns), the equal turns and notices [-].
    """
    options = options or PlanOptions()
    if race.counts_rider > team.size:
        raise InputError(f"the counting rider ({race.counts_rider}) must be one of the "
                         f"{team.size} riders")
    smallest = float(team.array("w_prime").min())
    if race.w_prime_reserve >= smallest:
        raise InputError(f"the W′ reserve ({race.w_prime_reserve:g} J) must be below every "
                         f"rider's W′ (the smallest is {smallest:g} J)")
    base, shortest = _default_lengths(race, options)
    if options.choose_start:
        team = starting_order(team, race, base)
    equal, speed, holds = equal_turns_plan(team, race, base)
    notices: list[Notice] = []
    if not holds:
        notices.append(warning("team-reserve-unreachable", speed_mps=speed,
                               reserve_j=race.w_prime_reserve))
    leader = equal.turns.leader[equal.cells.turn]
    lead_power = np.array([
        np.average(equal.power[k, leader == k], weights=equal.duration[leader == k])
        if np.any((leader == k) & (equal.duration > 0)) else team.riders[k].critical_power
        for k in range(team.size)])
    droppers = drop_out_riders(team, race) if options.allow_drop_outs else np.zeros(0, int)
    best = _optimised(team, race, options, base, shortest, droppers, lead_power, equal)
    power_ride, power, power_holds = equal_power_plan(team, race, base)
    if power_holds and (best is None or power_ride.finish_time < best[1].finish_time):
        best = (TurnChoice(np.full(team.size, base), np.full(team.size, power),
                           np.full(team.size, np.inf)), power_ride)
    if best is None or best[1].finish_time >= equal.finish_time:
        choice = TurnChoice(np.full(team.size, base), lead_power, np.full(team.size, np.inf))
        notices.append(note("team-equal-turns-kept", time_s=equal.finish_time))
        notices.extend(_scrap_notices(team, equal, base))
        return TeamPlan(team, equal, choice, equal, speed, False, tuple(notices), power_ride,
                        power)
    choice, ride, scrap = finish_without_scrap(team, race, *best, not_after=min(
        equal.finish_time, power_ride.finish_time if power_holds else np.inf))
    notices.extend(scrap)
    return TeamPlan(team, ride, choice, equal, speed, True, tuple(notices), power_ride, power)


def _scrap_length(ride: TeamRide, turn_length: float) -> float | None:
    """The last turn's length when it is shorter than SCRAP_TURN_SHARE of `turn_length`
    (and not the only turn), else None [m]."""
    turns = ride.turns
    last = float(turns.end[-1] - turns.start[-1])
    if turns.leader.size > 1 and last < SCRAP_TURN_SHARE * turn_length:
        return last
    return None


def _scrap_notices(team: Team, ride: TeamRide, turn_length: float) -> list[Notice]:
    """A "team-last-turn-short" note when the ride's last turn is a scrap, else none."""
    last = _scrap_length(ride, turn_length)
    if last is None:
        return []
    return [note("team-last-turn-short", distance_m=last,
                 name=team.riders[int(ride.turns.leader[-1])].name)]


def finish_without_scrap(team: Team, race: TeamRace, choice: TurnChoice, ride: TeamRide,
                         not_after: float = np.inf
                         ) -> tuple[TurnChoice, TeamRide, list[Notice]]:
    """The plan without a scrap last turn where that costs little.

    When the last turn is shorter than SCRAP_TURN_SHARE of its leader's turn length, the
    plan with the leader before riding on to the finish (TurnChoice.ride_on_to_finish) is
    taken if every rider's W′ balance stays at or above the reserve, every leader within his
    cap and the finish at most FINISH_SLACK later (and not after `not_after`, so that the plan
    stays no slower than its references); else the plan is kept with a
    "team-last-turn-short" note (how far before the finish the last change of lead is).

    Parameters
    ----------
    team : Team
        The riders [-].
    race : TeamRace
        The race, with its W′ reserve [J].
    choice : TurnChoice
        The plan's turn lengths [m], leader powers [W] and drop distances [m].
    ride : TeamRide
        Its ride [-].
    not_after : float, optional
        Latest finish accepted without the scrap turn (the references' best) [s].

    Returns
    -------
    tuple of (TurnChoice, TeamRide, list of Notice)
        The choice and ride kept, and the note when the scrap stays [-].
    """
    leader = int(ride.turns.leader[-1])
    if _scrap_length(ride, float(choice.turn_length[leader])) is None:
        return choice, ride, []
    on = replace(choice, ride_on_to_finish=True)
    merged = ride_choice(team, race, on)
    if (_keeps_limits(team, race, merged, FEASIBLE)
            and merged.finish_time <= min(ride.finish_time + FINISH_SLACK, not_after)):
        return on, merged, []
    return choice, ride, _scrap_notices(team, ride, float(choice.turn_length[leader]))


def starting_order(team: Team, race: TeamRace, turn_length: float) -> Team:
    """The team's order around the rotation, started by the rider whose equal turns are
    fastest among the given first rider and the STARTERS riders with the highest caps.

    Drafting depends only on the place in the line, so the rotation's order matters through
    who leads off (the standing start at his cap) and where the finish and the drop-outs
    fall; the given order around the rotation is kept.

    Parameters
    ----------
    team : Team
        The riders in the given order [-].
    race : TeamRace
        The race [-].
    turn_length : float
        Turn length of the equal turns [m].

    Returns
    -------
    Team
        The riders from the chosen first leader on [-].
    """
    candidates = [0] + [int(i) for i in np.argsort(-team.power_caps, kind="stable")[:STARTERS]]
    best, best_time = team, np.inf
    for first in dict.fromkeys(candidates):
        turned = Team(team.riders[first:] + team.riders[:first])
        time = equal_turns_plan(turned, race, turn_length, tolerance=1e-2)[0].finish_time
        if time < best_time - 1e-9:
            best, best_time = turned, time
    return best


def _optimised(team: Team, race: TeamRace, options: PlanOptions, base: float, shortest: float,
               droppers: np.ndarray, lead_power: np.ndarray, equal: TeamRide
               ) -> tuple[TurnChoice, TeamRide] | None:
    """SLSQP from the equal turns (their lengths and each leader's mean power; the riders who
    may drop out start with a last turn that ends at the finish) with one power per rider;
    then, with PlanOptions.power_parts > 1, a second SLSQP from that answer that also moves
    the power profile (at most PROFILE_ITERATIONS iterations). The faster plan that keeps
    every reserve is returned."""
    critical = team.array("critical_power")
    caps = team.power_caps / critical
    power_share = np.clip(lead_power / critical, LOWEST_POWER_SHARE, caps)
    start = np.concatenate([np.ones(team.size), power_share, np.ones(droppers.size)])
    search = _Search(team, race, base, droppers, equal.finish_time)
    found = _search(search, start, _bounds(team, race, base, shortest, droppers.size),
                    options.max_iterations)
    if found is None:
        return None
    best = (search.choice(found[0]), found[1])
    parts = max(int(options.power_parts), 1)
    if parts == 1:
        return best
    riders = team.size
    x = found[0]
    start = np.concatenate([x[:2 * riders], np.ones(parts - 1), x[2 * riders:]])
    profiled = _Search(team, race, base, droppers, equal.finish_time, parts)
    profiled.memo = search.memo  # the line speeds solved so far serve again
    refined = _search(profiled, start,
                      _bounds(team, race, base, shortest, droppers.size, parts),
                      min(PROFILE_ITERATIONS, options.max_iterations))
    if refined is not None and refined[1].finish_time < best[1].finish_time:
        return profiled.choice(refined[0]), refined[1]
    return best
