"""A plan that changes riding position by segment.

The mixed plan picks, for every segment, the position (among setups of the same bike: equal in
every rider parameter but the drag area) with the shortest steady-state segment time at its
planned power (pacing.plan.steady_model.steady_segment_times), then rides the whole course once
with the inertial simulation, the drag area and power given per piece, and reports whether the
mix is faster than every single position.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, fields, replace
from typing import cast

import numpy as np

from pacing.compare.setups import Comparison, SetupResult
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.prediction import Prediction
from pacing.plan.simulate import simulate
from pacing.plan.steady_model import segment_model, steady_segment_times


@dataclass(frozen=True, eq=False)
class MixedPlan:
    """A position chosen for every segment, verified by the inertial simulation.

    Attributes
    ----------
    names : tuple of str
        Setup name ridden on each segment, length K [-].
    choice : np.ndarray
        Index into `candidates` per segment, length K [-].
    candidates : tuple of str
        Names of the setups the choice was made among [-].
    piece_power : np.ndarray
        Crank power per piece [W], length N-1 (each segment at its setup's plan).
    prediction : Prediction
        The verified ride (pacing.plan.simulate.simulate with the chosen drag area per piece).
    finish_time : float
        Its finish time [s].
    best_single : str
        Name of the fastest single candidate [-].
    best_single_time : float
        Its finish time [s].
    gain : float
        best_single_time − finish_time [s] (positive: the mix is faster).
    """

    names: tuple[str, ...]
    choice: np.ndarray
    candidates: tuple[str, ...]
    piece_power: np.ndarray
    prediction: Prediction
    finish_time: float
    best_single: str
    best_single_time: float
    gain: float

    @property
    def faster(self) -> bool:
        """Whether the verified mix beats every single candidate."""
        return self.gain > 0


SWAPPABLE_FIELDS = tuple(field.name for field in fields(Rider) if field.name != "drag_area")
"""Rider parameters two setups must share to be swapped during a ride: everything but the
drag area (the same bike, tyres, wheels and yaw response; only the position changes)."""


def _same_value(name: str, mine: object, theirs: object) -> bool:
    """Whether one rider parameter is the same (per-piece values compared whole)."""
    if name != "yaw_drag_table":
        return bool(np.array_equal(np.asarray(mine, dtype=np.float64),
                                   np.asarray(theirs, dtype=np.float64)))
    if mine is None or theirs is None:
        return mine is None and theirs is None
    return bool(np.array_equal(np.asarray(sorted(cast(Iterable, mine)), dtype=np.float64),
                               np.asarray(sorted(cast(Iterable, theirs)), dtype=np.float64)))


def _same_bike(rider: Rider, other: Rider) -> bool:
    """Whether two riders differ at most in drag area."""
    return all(_same_value(name, getattr(rider, name), getattr(other, name))
               for name in SWAPPABLE_FIELDS)


def bike_groups(comparison: Comparison) -> list[list[SetupResult]]:
    """The setups grouped by bike: each group equal in every rider parameter but the drag area
    (SWAPPABLE_FIELDS), in the comparison's order within and between groups.

    Parameters
    ----------
    comparison : Comparison
        Setups side by side.

    Returns
    -------
    list of list of SetupResult
        One list per bike, ordered by its first setup in `comparison.results`.
    """
    groups: list[list[SetupResult]] = []
    for result in comparison.results:
        group = next((g for g in groups if _same_bike(g[0].setup.rider, result.setup.rider)),
                     None)
        if group is None:
            groups.append([result])
        else:
            group.append(result)
    return groups


def mix_candidates(comparison: Comparison) -> list[SetupResult]:
    """Setups that can be swapped during a ride: the positions of the bike with the most.

    Parameters
    ----------
    comparison : Comparison
        Setups side by side.

    Returns
    -------
    list of SetupResult
        The largest group of `bike_groups` (positions on one bike); among groups of one size,
        the one holding the quickest setup. A lighter bike that is quickest on its own does
        not hide two positions of another bike.
    """
    groups = bike_groups(comparison)
    return max(groups, key=lambda group: (len(group),
                                          -min(result.finish_time for result in group)))


def _chosen_candidates(comparison: Comparison,
                       candidates: Iterable[str] | None) -> list[SetupResult]:
    if candidates is None:
        return mix_candidates(comparison)
    chosen = [comparison.result(name) for name in candidates]
    for result in chosen[1:]:
        if not _same_bike(result.setup.rider, chosen[0].setup.rider):
            raise InputError(f"setups {chosen[0].name!r} and {result.name!r} differ in more "
                             f"than CdA; only positions on one bike can be mixed")
    return chosen


def mixed_plan(comparison: Comparison,
               candidates: Iterable[str] | None = None) -> MixedPlan | None:
    """Choose the position per segment where it is faster, and verify the whole ride.

    For each segment k and candidate j the steady-state segment time t_kj at the candidate's
    planned segment power (pacing.plan.steady_model.steady_segment_times) is computed; segment
    k is ridden with argmin_j t_kj. The whole course is then ridden once by the inertial
    simulation with that setup's drag area and planned power on each piece (the candidates
    share every other rider parameter), so speed carries over segment ends and look-ahead
    braking sees the whole course.

    Parameters
    ----------
    comparison : Comparison
        Setups side by side (its course, air and simulation options are used).
    candidates : iterable of str or None
        Names of the setups to mix; None for `mix_candidates(comparison)`. Named setups must
        differ only in drag area (InputError otherwise).

    Returns
    -------
    MixedPlan or None
        None when fewer than two candidates are available.

    References
    ----------
    Martin, J.C. et al. (1998). J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276.
    """
    chosen = _chosen_candidates(comparison, candidates)
    if len(chosen) < 2:
        return None
    course, air = comparison.race.course, comparison.air
    bounds = comparison.bounds
    times = np.vstack([
        steady_segment_times(segment_model(course, bounds, result.setup.rider, air),
                             result.plan.segment_power)[0]
        for result in chosen
    ])
    choice = np.argmin(times, axis=0)
    segment_of_piece = np.repeat(np.arange(bounds.size - 1), np.diff(bounds))
    pieces = np.arange(segment_of_piece.size)
    powers = np.vstack([result.plan.piece_power for result in chosen])
    piece_power = powers[choice[segment_of_piece], pieces]
    areas = np.vstack([np.broadcast_to(np.asarray(result.setup.rider.drag_area,
                                                  dtype=np.float64), pieces.shape)
                       for result in chosen])
    rider = replace(chosen[0].setup.rider, drag_area=areas[choice[segment_of_piece], pieces])
    prediction = simulate(course, piece_power, rider, air, comparison.race.options)
    best = min(chosen, key=lambda result: result.finish_time)
    return MixedPlan(
        names=tuple(chosen[j].name for j in choice),
        choice=choice,
        candidates=tuple(result.name for result in chosen),
        piece_power=piece_power,
        prediction=prediction,
        finish_time=prediction.finish_time,
        best_single=best.name,
        best_single_time=best.finish_time,
        gain=best.finish_time - prediction.finish_time,
    )
