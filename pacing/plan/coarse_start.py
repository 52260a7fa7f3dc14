"""The coarse start of the fastest cycling plan on a fine split: the same problem solved with
one power per climb, flat or descent.

A finer split can hold any plan of a coarser one: each fine segment ridden at the power of
the coarse segment it lies in covers the same pieces at the same powers, so the finish time,
the mean power and the work carry over exactly, and the W′ balance only gains checks at the
inner ends (within a stretch of constant power the balance is monotone, so it is lowest at a
stretch's ends). When a limit binds, pacing.plan.fastest therefore first solves the grouped
problem (runs of climb, flat or descent segments, `grade_groups`) and starts from its plan,
so the fastest plan does not get slower as the segments get finer. On a split too long for
one SLSQP polish the groups are cut into runs of a few segments (`chunked_groups`, about
`run_count` runs), and that coarser problem itself starts from the climbs, flats and descents;
the fine split is then polished from it window by window (pacing.plan.slsqp_polish).

The solver of the grouped problem is passed in (`solve`: pacing.plan.fastest's
`fastest_steady_plan`), which keeps this module below the solver it serves.

References
----------
Martin, J.C., Milliken, D.L., Cobb, J.E., McFadden, K.L. & Coggan, A.R. (1998). Validation of a
mathematical model for road cycling power. J Appl Biomech 14(3):276-291.
doi:10.1123/jab.14.3.276 (the steady segment model both splits share)
"""

from __future__ import annotations

from dataclasses import replace
from typing import Protocol

import numpy as np

from pacing.course.segments import CLIMB_GRADE
from pacing.errors import InputError
from pacing.plan.fastest_problem import FastestProblem, SolverLimits, SolverReport
from pacing.plan.request import PlanRequest
from pacing.plan.steady_model import SegmentModel

GROUP_MIN_LENGTH = 300.0
"""Shortest stretch of the grouped (coarse) problem [m]; doubled while there are too many."""

GROUP_MAX_COUNT = 60
"""Most stretches in the grouped problem, so that its SLSQP polish stays cheap [-]."""

def run_count(polish_limit: int) -> int:
    """About this many runs of segments stand for a split too fine for the polish: two thirds
    of the polish limit, so that the runs and the group ends they add (at most
    GROUP_MAX_COUNT) stay within it.

    Parameters
    ----------
    polish_limit : int
        Most segments the solver polishes [-].

    Returns
    -------
    int
        The number of runs aimed at, at least 1 [-].
    """
    return max(1, 2 * polish_limit // 3)


class CoarseSolver(Protocol):
    """The fastest-plan solver the grouped problem is handed to (pacing.plan.fastest's
    `fastest_steady_plan`): segment powers [W] and its report."""

    def __call__(self, model: SegmentModel, request: PlanRequest, lower: np.ndarray | None,
                 upper: np.ndarray | None, reserve: float | None, cap: float | None, *,
                 coarse_start: bool) -> tuple[np.ndarray, SolverReport]:
        ...


def grade_groups(model: SegmentModel) -> np.ndarray:
    """Group consecutive segments into climbs, flats and descents.

    Each segment is classed by its mean grade (climb ≥ CLIMB_GRADE, descent ≤ −CLIMB_GRADE,
    else flat) and runs of one class form a group; then, while a group is shorter than
    GROUP_MIN_LENGTH (doubled until at most GROUP_MAX_COUNT groups remain), the shortest is
    merged into the neighbour whose mean grade is nearer its own, and reclassed.

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].

    Returns
    -------
    numpy.ndarray
        Group number of each segment, from 0, never decreasing, length K [-].
    """
    horizontal = model.length / np.sqrt(1.0 + model.grade**2)
    run = np.bincount(model.segment, horizontal, model.count)
    rise = np.bincount(model.segment, horizontal * model.grade, model.count)

    def klass(grade: np.ndarray) -> np.ndarray:
        return np.where(grade >= CLIMB_GRADE, 1, np.where(grade <= -CLIMB_GRADE, -1, 0))

    kind = klass(rise / np.maximum(run, 1e-12))
    starts = np.concatenate([[0], np.flatnonzero(np.diff(kind)) + 1])
    group_run = list(np.add.reduceat(run, starts))
    group_rise = list(np.add.reduceat(rise, starts))
    first = list(starts)
    minimum = GROUP_MIN_LENGTH
    while len(first) > 1:
        lengths = np.asarray(group_run)
        short = int(np.argmin(lengths))
        if lengths[short] >= minimum:
            if len(first) <= GROUP_MAX_COUNT:
                break
            minimum *= 2.0
            continue
        grades = np.asarray(group_rise) / np.maximum(lengths, 1e-12)
        if short == 0:
            into = 1
        elif short == len(first) - 1:
            into = short - 1
        else:
            into = min(short - 1, short + 1,
                       key=lambda other: abs(grades[other] - grades[short]))
        keep, drop = min(short, into), max(short, into)
        group_run[keep] += group_run[drop]
        group_rise[keep] += group_rise[drop]
        del group_run[drop], group_rise[drop], first[drop]
        # join neighbours of one class after the merge
        grades = np.asarray(group_rise) / np.maximum(np.asarray(group_run), 1e-12)
        kinds = klass(grades)
        for other in (keep + 1, keep):
            if 0 < other < len(first) and kinds[other] == kinds[other - 1]:
                group_run[other - 1] += group_run[other]
                group_rise[other - 1] += group_rise[other]
                del group_run[other], group_rise[other], first[other]
                kinds = np.delete(kinds, other)
    group = np.zeros(model.count, dtype=int)
    group[np.asarray(first[1:], dtype=int)] = 1
    return np.cumsum(group)


def chunked_groups(group: np.ndarray, chunk_count: int) -> np.ndarray:
    """Cut groups of segments into runs of at most ⌈K / chunk_count⌉ segments.

    Each group is cut from its first segment on; a run never spans two groups.

    Parameters
    ----------
    group : numpy.ndarray
        Group number of each segment, from 0, never decreasing, length K [-].
    chunk_count : int
        About this many runs stand for the K segments (more where groups end inside a run) [-].

    Returns
    -------
    numpy.ndarray
        Run number of each segment, from 0, never decreasing, length K [-].
    """
    count = group.size
    size = -(-count // max(chunk_count, 1))
    first = np.flatnonzero(np.diff(group, prepend=-1))
    within = np.arange(count) - np.repeat(first, np.diff(np.r_[first, count]))
    new = np.zeros(count, dtype=int)
    new[1:] = (np.diff(group) > 0) | (np.diff(within // size) != 0)
    return np.cumsum(new)


def grouped_model(model: SegmentModel, group: np.ndarray) -> SegmentModel:
    """The segment model with one segment per group: the same pieces, cut only at the groups'
    ends (its own empty cache of speeds).

    Parameters
    ----------
    model : SegmentModel
        The course's segments [-].
    group : numpy.ndarray
        Group number of each segment, from 0, never decreasing, length K [-].

    Returns
    -------
    SegmentModel
        The grouped model; its mean grades are the groups' net rise over horizontal
        length [-].
    """
    count = int(group[-1]) + 1
    horizontal = model.length / np.sqrt(1.0 + model.grade**2)
    piece_group = group[model.segment]
    run = np.bincount(piece_group, horizontal, count)
    rise = np.bincount(piece_group, horizontal * model.grade, count)
    return replace(model, segment=piece_group, count=count,
                   mean_grade=rise / np.maximum(run, 1e-12), speed_guess={})


def grouped_plan(problem: FastestProblem, reserve: float | None, cap: float | None,
                 solve: CoarseSolver, polish_limit: int
                 ) -> tuple[np.ndarray, SolverReport] | None:
    """The fastest plan with one power per group of segments, as segment powers.

    The groups are the climbs, flats and descents (`grade_groups`); above `polish_limit`
    segments they are cut into runs (`chunked_groups`), and that coarser problem itself starts
    from the climbs, flats and descents. Every plan of the grouped problem is a plan of the
    fine one (module docstring), so a fine split starts from the coarse optimum and can only
    improve on it.

    Parameters
    ----------
    problem : FastestProblem
        The fine problem [-].
    reserve : float or None
        W′ balance floor of the grouped problem; None for none [J].
    cap : float or None
        Cap of the solver's effort measure; None for none [W].
    solve : CoarseSolver
        The fastest-plan solver (pacing.plan.fastest.fastest_steady_plan) [-].
    polish_limit : int
        Most segments the solver's SLSQP polish takes [-].

    Returns
    -------
    tuple of (numpy.ndarray, SolverReport) or None
        Segment powers of the fine split, length K [W], with the grouped problem's report;
        None when grouping does not coarsen the split (more than half as many groups as
        segments; above `polish_limit`, as many runs as segments), the groups' power bounds
        do not overlap, or the grouped problem has no plan.
    """
    model = problem.model
    group = grade_groups(model)
    if model.count > polish_limit:
        # too many segments to polish: cut the groups into runs of a few segments, so the
        # coarser problem (≤ polish_limit) is polished and itself starts from the groups
        group = chunked_groups(group, run_count(polish_limit))
        if int(group[-1]) + 1 >= model.count:
            return None
    elif 2 * (int(group[-1]) + 1) > model.count:  # hardly coarser: not worth a second solve
        return None
    starts = np.flatnonzero(np.diff(group, prepend=-1))
    coarse = grouped_model(model, group)
    low = np.maximum.reduceat(problem.lower, starts)
    high = np.minimum.reduceat(problem.upper, starts)
    if np.any(low > high):
        return None
    try:
        power, report = solve(coarse, problem.request, low, high, reserve, cap,
                              coarse_start=model.count > polish_limit)
    except InputError:
        return None
    return power[group], report


def coarse_start_plan(problem: FastestProblem, reserve: float | None, cap: float | None,
                      solve: CoarseSolver, polish_limit: int
                      ) -> tuple[tuple[np.ndarray, SolverReport] | None, int]:
    """The grouped problem's plan as a start for the fine one, when it keeps every limit.

    Its steady evaluations are added to the problem's count.

    Parameters
    ----------
    problem : FastestProblem
        The fine problem [-].
    reserve : float or None
        W′ balance floor to keep; None for none [J].
    cap : float or None
        Cap of the solver's effort measure; None for none [W].
    solve : CoarseSolver
        The fastest-plan solver (pacing.plan.fastest.fastest_steady_plan) [-].
    polish_limit : int
        Most segments the solver's SLSQP polish takes [-].

    Returns
    -------
    start : tuple of (numpy.ndarray, SolverReport) or None
        Segment powers [W] and the grouped problem's report, or None when there is no grouped
        plan or it breaks a limit (by more than 1e-6 of W′ or the cap) [-].
    iterations : int
        The grouped problem's solver iterations [-].
    """
    found = grouped_plan(problem, reserve, cap, solve, polish_limit)
    if found is None:
        return None, 0
    problem.counter[0] += found[1].evaluations
    if problem.keeps(found[0], SolverLimits(reserve, cap), 1e-6):
        return found, found[1].iterations
    return None, found[1].iterations
