"""The race a team rides: a road course or a velodrome, cut into pieces, and its rules.

Road: the course of a GPX file (pacing.course.geometry.Course) with the air along it
(pacing.weather.conditions.CourseAir), merged into pieces of about `piece_length` metres
(grade as rise over run of the merged piece, density and wind components length-weighted).

Velodrome: flat, still air, the race distance measured on the measuring line. The banking is
simplified (docs/team.md, "Velodrome"): the line rides the measuring line, whose length is the
race distance; lean and the banking's slope change neither drag area nor rolling resistance;
the rider who swings off climbs the banking and comes down behind the line, which adds
`swing_extra_distance` to his path.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from pacing.errors import InputError
from pacing.team.drafting import DEFAULT_DRAFTING_SET, DRAFTING_SETS, checked_reductions

ROAD_PIECE_LENGTH = 100.0
"""Length of the pieces a road course is merged into for the team plan [m]."""

TRACK_PIECES_PER_LAP = 8
"""Pieces per lap of a velodrome [-]."""

WHEEL_SPACING = 2.0
"""Distance from one rider's front wheel to the next rider's: a bicycle (about 1.75 m) and a
gap of about 0.25 m (common practice in team pursuits, from memory) [m]."""

DROP_BACK_SPEED = 1.0
"""How much slower than the line the rider who swings off rides while the line passes him
(an assumption of ours, from memory of race footage; settable) [m/s]."""

TRACK_SWING_EXTRA = 3.0
"""Extra path of a swing up the banking and back down behind the line on a velodrome
(an assumption of ours: about 1.5 m up and down over about a bike length each way) [m]."""

ROAD_SWING_EXTRA = 0.5
"""Extra path of a swing aside on the road (about 1 m aside and back over several metres) [m]."""


@dataclass(frozen=True, eq=False)
class TeamRace:
    """The pieces of the race, its air and its rules.

    Attributes
    ----------
    piece_length : numpy.ndarray
        Length of each piece [m].
    grade : numpy.ndarray
        Grade of each piece, rise/run [-].
    density : numpy.ndarray
        Air density on each piece [kg/m³].
    headwind, crosswind : numpy.ndarray
        Wind components on each piece at rider height [m/s].
    counts_rider : int
        The rider whose finishing time counts (3 in a team pursuit of 4) [-].
    drafting : tuple of float
        Drag reduction by position in the line, leader first [-].
    w_prime_reserve : float
        Least W′ balance every rider keeps while in the line [J].
    standing_start : bool
        Start from rest (True) or at race speed (a flying start) [-].
    lap_length : float or None
        Lap of a velodrome; None on the road [m].
    wheel_spacing : float
        Front wheel to front wheel in the line [m].
    drop_back_speed : float
        Speed of the rider who swings off relative to the line while he drops back [m/s].
    swing_extra_distance : float
        Extra path of the swing aside (up the banking) and back [m].
    bounds : numpy.ndarray
        Where each piece starts, and the finish (derived) [m].
    piece_kind : numpy.ndarray
        Pieces of equal grade and air share a number (derived; every piece of a velodrome
        the same): the line's speed is solved once per kind [-].
    """

    piece_length: np.ndarray
    grade: np.ndarray
    density: np.ndarray
    headwind: np.ndarray
    crosswind: np.ndarray
    counts_rider: int
    drafting: tuple[float, ...] = DRAFTING_SETS[DEFAULT_DRAFTING_SET].reductions
    w_prime_reserve: float = 0.0
    standing_start: bool = True
    lap_length: float | None = None
    wheel_spacing: float = WHEEL_SPACING
    drop_back_speed: float = DROP_BACK_SPEED
    swing_extra_distance: float = ROAD_SWING_EXTRA
    bounds: np.ndarray = field(init=False, repr=False)
    piece_kind: np.ndarray = field(init=False, repr=False)

    def __post_init__(self) -> None:
        arrays = [np.array(getattr(self, name), dtype=float) for name in
                  ("piece_length", "grade", "density", "headwind", "crosswind")]
        if len({a.shape for a in arrays}) != 1 or arrays[0].ndim != 1 or arrays[0].size < 1:
            raise InputError("the race's pieces must be 1-D arrays of one length")
        if not all(np.all(np.isfinite(a)) for a in arrays):
            raise InputError("the race's pieces must hold finite numbers")
        if np.any(arrays[0] <= 0) or np.any(arrays[2] <= 0):
            raise InputError("pieces must have positive lengths and air densities")
        for name, array in zip(("piece_length", "grade", "density", "headwind", "crosswind"),
                               arrays, strict=True):
            array.flags.writeable = False
            object.__setattr__(self, name, array)
        object.__setattr__(self, "drafting", checked_reductions(self.drafting))
        bounds = np.concatenate([[0.0], np.cumsum(arrays[0])])
        bounds.flags.writeable = False
        object.__setattr__(self, "bounds", bounds)
        conditions = np.column_stack(arrays[1:])
        _, kind = np.unique(conditions, axis=0, return_inverse=True)
        object.__setattr__(self, "piece_kind", kind.reshape(-1).astype(int))
        self._check_rules()

    def _check_rules(self) -> None:
        if not 1 <= int(self.counts_rider) <= 8:
            raise InputError(f"the counting rider must be 1 to 8, got {self.counts_rider}")
        if not (np.isfinite(self.w_prime_reserve) and self.w_prime_reserve >= 0):
            raise InputError(f"W′ reserve must be 0 J or more, got {self.w_prime_reserve:g}")
        if not (0.5 <= self.wheel_spacing <= 5.0 and 0.1 <= self.drop_back_speed <= 5.0
                and 0.0 <= self.swing_extra_distance <= 50.0):
            raise InputError("changeover: wheel spacing 0.5-5 m, drop-back speed 0.1-5 m/s "
                             "and swing extra distance 0-50 m")

    @property
    def distance(self) -> float:
        """Race distance [m]."""
        return float(self.bounds[-1])


def merged_pieces(piece_length: np.ndarray, target: float) -> np.ndarray:
    """Bounds (indices of the original pieces) of runs of about `target` metres.

    Parameters
    ----------
    piece_length : numpy.ndarray
        Length of each original piece [m].
    target : float
        Length of a merged piece [m].

    Returns
    -------
    numpy.ndarray
        Increasing indices, first 0, last the number of pieces [-].

    Examples
    --------
    >>> merged_pieces(np.full(10, 10.0), 30.0).tolist()
    [0, 3, 6, 9, 10]
    """
    ends = np.concatenate([[0.0], np.cumsum(piece_length)])
    marks = np.arange(target, ends[-1], target)
    cuts = np.searchsorted(ends, marks - 1e-9 * target)
    return np.unique(np.concatenate([[0], cuts, [piece_length.size]])).astype(int)


def race_on_road(course, air, *, counts_rider: int, piece_length: float = ROAD_PIECE_LENGTH,
                 **rules) -> TeamRace:
    """The race on a road course with its air.

    Parameters
    ----------
    course : pacing.course.geometry.Course
        The course (distance per point [m], grade per piece [-]).
    air : pacing.weather.conditions.CourseAir
        Density [kg/m³], headwind and crosswind [m/s] on each piece of the course.
    counts_rider : int
        The rider whose time counts [-].
    piece_length : float, optional
        Length of the merged pieces [m].
    **rules
        Other fields of TeamRace (drafting, w_prime_reserve, standing_start, …).

    Returns
    -------
    TeamRace
        The road race [-].
    """
    length = np.diff(np.asarray(course.distance, dtype=float))
    rise = length * np.asarray(course.grade, dtype=float)
    cuts = merged_pieces(length, piece_length)
    run = np.add.reduceat(length, cuts[:-1])

    def weighted(values: np.ndarray) -> np.ndarray:
        return np.add.reduceat(length * np.asarray(values, dtype=float), cuts[:-1]) / run

    return TeamRace(piece_length=run, grade=np.add.reduceat(rise, cuts[:-1]) / run,
                    density=weighted(air.density), headwind=weighted(air.headwind),
                    crosswind=weighted(air.crosswind), counts_rider=counts_rider, **rules)


def race_on_track(distance: float, lap_length: float, density: float, *, counts_rider: int,
                  **rules) -> TeamRace:
    """The race on a velodrome: flat, still air, TRACK_PIECES_PER_LAP pieces per lap.

    Parameters
    ----------
    distance : float
        Race distance on the measuring line, 100 m to 100 km [m].
    lap_length : float
        Length of a lap on the measuring line, 100 to 1000 m [m].
    density : float
        Air density in the velodrome [kg/m³].
    counts_rider : int
        The rider whose time counts [-].
    **rules
        Other fields of TeamRace; swing_extra_distance defaults to TRACK_SWING_EXTRA.

    Returns
    -------
    TeamRace
        The track race [-].
    """
    if not (np.isfinite(distance) and 100.0 <= distance <= 100000.0):
        raise InputError(f"track distance must be 100 m to 100 km, got {distance:g}")
    if not (np.isfinite(lap_length) and 100.0 <= lap_length <= 1000.0):
        raise InputError(f"lap length must be 100 to 1000 m, got {lap_length:g}")
    step = lap_length / TRACK_PIECES_PER_LAP
    pieces = int(np.ceil(distance / step - 1e-9))
    length = np.full(pieces, step)
    length[-1] = distance - step * (pieces - 1)
    zeros = np.zeros(pieces)
    rules.setdefault("swing_extra_distance", TRACK_SWING_EXTRA)
    return TeamRace(piece_length=length, grade=zeros, density=np.full(pieces, float(density)),
                    headwind=zeros, crosswind=zeros, counts_rider=counts_rider,
                    lap_length=float(lap_length), **rules)
