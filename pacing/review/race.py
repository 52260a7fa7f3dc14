"""The race review: a ridden race against its plan, in one call.

`review_race(result, recording)` takes the plan (a cycling pacing.plan.race.RaceResult, from
the one planning chain) and the race file's arrays (pacing.review.recording.RaceRecording):

1. places every sample on the course (pacing.review.align);
2. fits the drag area, Crr and — when the day's weather is not given — the wind on the day
   from the race over the known course (pacing.fieldtest.race_fit, Chung's virtual elevation);
3. sums what the rider did along the course: time, moving time, work, stops, braking
   (pacing.review.along);
4. compares planned and ridden segment by segment (pacing.review.compare);
5. splits the time difference among power, drag, rolling, wind, stops and braking and the rest
   (pacing.review.attribution, Shapley values of model replays).

The notices say what was assumed or could not be done (codes "review-…", and the fit's).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from pacing.errors import InputError
from pacing.fieldtest.ride import STOP_SPEED
from pacing.notices import Notice, note, warning
from pacing.plan.prediction import segment_results
from pacing.review.align import Alignment, align_to_course
from pacing.review.along import Along, SlowPoints, along_course, slow_points
from pacing.review.attribution import Attribution, Replay, attribute, with_slow_points
from pacing.review.compare import SegmentComparison, compare_segments, ridden_w_prime_balance
from pacing.review.recording import RaceRecording
from pacing.weather.conditions import Conditions, air_along_course

if TYPE_CHECKING:
    from pacing.course.geometry import Course
    from pacing.fieldtest.race_fit import RaceDragFit
    from pacing.plan.cycling import RacePlan
    from pacing.plan.race import RaceResult

FINISH_TOLERANCE = 50.0
"""A race whose alignment ends farther than this before the finish did not reach it [m]."""

UNEXPLAINED_SHARE = 0.02
"""A remainder ("other") above this share of the ridden time is warned of [-]."""


@dataclass(frozen=True, eq=False)
class RaceReview:
    """The review of one race (SI).

    Attributes
    ----------
    planned_time, actual_time : float
        Finish times, planned and ridden (from leaving the start line) [s].
    segments : tuple of SegmentComparison
        Planned against ridden, segment by segment.
    attribution : Attribution
        The time difference split by cause.
    fitted : RaceDragFit or None
        CdA, Crr and wind on the day (None when not fitted).
    distance : numpy.ndarray
        Course distance of each point [m], length N.
    planned_time_along, actual_time_along : numpy.ndarray
        Time at each course point [s], length N (the gap is their difference).
    planned_power, actual_power : numpy.ndarray
        Crank power on each piece, planned and ridden while moving [W], length N-1.
    alignment : Alignment
        Where each sample lies on the course.
    day_conditions : Conditions
        The air and wind of the day used (given, estimated or the plan's).
    notices : tuple of pacing.notices.Notice
        What the user must be told.
    """

    planned_time: float
    actual_time: float
    segments: tuple[SegmentComparison, ...]
    attribution: Attribution
    fitted: RaceDragFit | None
    distance: np.ndarray
    planned_time_along: np.ndarray
    actual_time_along: np.ndarray
    planned_power: np.ndarray
    actual_power: np.ndarray
    alignment: Alignment
    day_conditions: Conditions
    notices: tuple[Notice, ...] = ()

    @property
    def gap_along(self) -> np.ndarray:
        """Ridden − planned time at each course point [s] (positive: behind the plan)."""
        return self.actual_time_along - self.planned_time_along

    def as_json(self, notices_json: Callable[[tuple[Notice, ...]], list[dict[str, Any]]]
                | None = None) -> dict[str, Any]:
        """The review as a JSON value (what ``pacing review --json`` prints and the library
        keeps with a saved plan), SI with the unit in each key, no NaN.

        Parameters
        ----------
        notices_json : callable or None
            Turns the notices into the "warnings" list (the edges add words, e.g.
            pacing.cli.common.notices_as_json); None: each notice's ``as_dict()``.

        Returns
        -------
        dict
            planned_time_s, actual_time_s, segments, attribution, attribution_detail, fitted,
            day_conditions, alignment, warnings.
        """
        alignment, day = self.alignment, self.day_conditions
        return {
            "planned_time_s": self.planned_time,
            "actual_time_s": self.actual_time,
            "segments": [
                {"start_m": s.start, "end_m": s.end, "planned_time_s": s.planned_time,
                 "actual_time_s": s.actual_time, "delta_s": s.delta,
                 "planned_power_w": s.planned_power, "actual_power_w": s.actual_power,
                 "planned_speed_mps": s.planned_speed, "actual_speed_mps": s.actual_speed,
                 "stopped_s": s.stopped_time, "planned_min_w_prime_j": s.planned_min_w_prime,
                 "actual_min_w_prime_j": s.actual_min_w_prime}
                for s in self.segments],
            "attribution": self.attribution.parts(),
            "attribution_detail": {
                "stopped_s": self.attribution.stopped_s,
                "replays": [{"causes": list(causes), "finish_time_s": time}
                            for causes, time in self.attribution.replays]},
            "fitted": None if self.fitted is None else self.fitted.as_json(),
            "day_conditions": {"temperature_c": day.temperature,
                               "wind_speed_mps": day.wind_speed,
                               "wind_from_deg": day.wind_from, "wind_height_m": day.wind_height},
            "alignment": {"method": alignment.method,
                          "off_course_samples": int(alignment.off_course.sum()),
                          "dropouts": int(alignment.dropout.sum())},
            "warnings": (notices_json(self.notices) if notices_json is not None
                         else [n.as_dict() for n in self.notices]),
        }


def _piece_at(course: Course, distance: np.ndarray) -> np.ndarray:
    """Index of the course piece holding each course distance [-]."""
    index = np.searchsorted(course.distance, distance, side="right") - 1
    return np.clip(index, 0, course.distance.size - 2)


def _fit(recording: RaceRecording, alignment: Alignment, result: RaceResult,
         day: Conditions | None, bootstrap: int, notices: list[Notice]) -> RaceDragFit | None:
    """The day's CdA, Crr (and wind when `day` is None) from the race, or None (noted).

    Only the samples on the course between start and finish go in (detours, the ride to the
    start and on after the finish are left out; the fit leaves out the gaps this makes). When
    the race cannot separate CdA from Crr (the fit holds Crr), it is fitted again with the
    plan's Crr held: the planned value is the coach's best knowledge of the tyres. An
    estimated wind is reduced to 10 m with the plan's rider height and roughness, the ones its
    replays (`_day_conditions`) carry it back down with."""
    from pacing.fieldtest.race_fit import fit_race_drag

    course, plan_air = result.request.course, result.air
    where = alignment.course_distance
    on = ~alignment.off_course & (where >= course.distance[0]) & (where <= course.distance[-1])
    where = where[on]
    piece = _piece_at(course, where)
    density = (plan_air.density if day is None
               else air_along_course(course, day).density)[piece]
    rider = result.request.rider
    assert rider is not None  # a cycling plan has its rider
    arrays = (where, recording.time[on], recording.speed[on], recording.power[on],
              np.asarray(course.heading)[piece],
              np.interp(where, course.distance, course.elevation), density, rider)
    heights = day or result.request.conditions
    try:
        fit = fit_race_drag(*arrays, wind=day, bootstrap=bootstrap, heights=heights)
        if fit.rolling_held:  # CdA and Crr inseparable: hold the plan's Crr, not a typical one
            planned = float(np.mean(np.atleast_1d(rider.rolling_coefficient)))
            fit = fit_race_drag(*arrays, wind=day, bootstrap=bootstrap, heights=heights,
                                rolling_coefficient=planned)
            notices.append(note("review-crr-held-planned", rolling_coefficient=planned))
    except InputError as error:
        notices.append(warning("review-fit-failed", message=str(error)))
        return None
    notices.extend(fit.warnings)
    return fit


def _day_conditions(plan: Conditions, day: Conditions | None,
                    fit: RaceDragFit | None) -> Conditions:
    """The day's air: given, else the plan's with the estimated wind, else the plan's."""
    if day is not None:
        return day
    if fit is not None and fit.wind_estimated:
        return dataclasses.replace(plan, wind_speed=float(fit.wind_speed),
                                   wind_from=float(fit.wind_from), wind_height=10.0)
    return plan


def _stops_notices(along: Along, slow: SlowPoints) -> list[Notice]:
    """Notes of the stops and of the braking stretches found."""
    notices = []
    if slow.stops:
        notices.append(note("review-stops", count=slow.stops,
                            duration_s=float(along.stopped_time[-1]), speed_mps=STOP_SPEED))
    if slow.distance.size > slow.stops:
        notices.append(note("review-braking", count=int(slow.distance.size - slow.stops)))
    return notices


def _checked_plan(result: RaceResult) -> RacePlan:
    """The cycling plan of the result, or a one-line refusal."""
    from pacing.plan.cycling import RacePlan

    if result.sport != "cycling" or not isinstance(result.plan, RacePlan):
        raise InputError("the race review is for cycling plans")
    return result.plan


def _w_prime(plan: RacePlan, recording: RaceRecording, alignment: Alignment
             ) -> tuple[np.ndarray | None, tuple[np.ndarray, np.ndarray] | None]:
    """Planned W′ balance at the course points and the ridden one at the samples (or None)."""
    request = plan.request
    if request.critical_power is None or request.w_prime is None:
        return None, None
    ridden = ridden_w_prime_balance(recording.time, recording.power, request.critical_power,
                                    request.w_prime)
    return plan.w_prime_balance, (alignment.course_distance, ridden)


def _reach_notices(course: Course, alignment: Alignment, review_attr: Attribution,
                   actual_time: float) -> list[Notice]:
    """A warning when the race did not reach the finish, or the model misses much."""
    notices = []
    end = float(np.max(alignment.course_distance))
    if end < float(course.distance[-1]) - FINISH_TOLERANCE:
        notices.append(warning("review-finish-not-reached", reached_m=end,
                               course_m=float(course.distance[-1])))
    if actual_time > 0 and abs(review_attr.other_s) > UNEXPLAINED_SHARE * actual_time:
        notices.append(warning("review-unexplained", other_s=review_attr.other_s,
                               share=abs(review_attr.other_s) / actual_time))
    return notices


def review_race(result: RaceResult, recording: RaceRecording, *,
                day_conditions: Conditions | None = None, fit: bool = True,
                bootstrap: int = 200) -> RaceReview:
    """Review a ridden race against its plan (module docstring).

    Parameters
    ----------
    result : pacing.plan.race.RaceResult
        The cycling plan reviewed (course, segments, rider, air, options, plan).
    recording : RaceRecording
        What the head unit recorded.
    day_conditions : pacing.weather.conditions.Conditions or None
        The day's air and wind when known; None estimates the wind from the race (with `fit`).
    fit : bool
        Fit CdA, Crr (and the wind) on the day; False keeps the planned values.
    bootstrap : int
        Block-bootstrap draws of the fit's intervals (0: none).

    Returns
    -------
    RaceReview

    Raises
    ------
    InputError
        For a running plan, or a race file that cannot be placed on the course.
    """
    plan = _checked_plan(result)
    course = result.request.course
    rider = result.request.rider
    assert rider is not None  # checked by RaceRequest
    alignment = align_to_course(recording, course)
    notices: list[Notice] = [*recording.notes, *alignment.notices]
    day_fit = (_fit(recording, alignment, result, day_conditions, bootstrap, notices)
               if fit else None)
    day = _day_conditions(result.request.conditions, day_conditions, day_fit)
    day_air = air_along_course(course, day) if day is not result.request.conditions \
        else result.air
    day_rider = rider if day_fit is None else dataclasses.replace(
        rider, drag_area=float(day_fit.drag_area),
        rolling_coefficient=float(day_fit.rolling_coefficient))
    along = along_course(recording, alignment, course)
    slow = slow_points(recording, alignment)
    notices.extend(_stops_notices(along, slow))
    options = result.request.options
    replay = Replay(course=course, options=options, rider=rider,
                    stops_course=with_slow_points(course, slow.distance, slow.speed, options),
                    plan_power=np.asarray(plan.piece_power, dtype=float),
                    day_power=along.piece_power(),
                    day_drag_area=float(np.mean(np.atleast_1d(day_rider.drag_area))),
                    day_rolling_coefficient=float(
                        np.mean(np.atleast_1d(day_rider.rolling_coefficient))),
                    plan_air=result.air, day_air=day_air,
                    stopped_time=float(along.stopped_time[-1]))
    planned_time_along = plan.prediction.time - plan.prediction.time[0]
    split = attribute(replay, plan.prediction.finish_time, along.finish_time)
    planned_balance, ridden_balance = _w_prime(plan, recording, alignment)
    planned_segments = segment_results(course, plan.prediction, result.request.bounds)
    segments = compare_segments(np.asarray(course.distance, dtype=float),
                                np.asarray(result.request.bounds, dtype=int),
                                planned_time_along,
                                np.array([s.power for s in planned_segments]), along,
                                planned_balance, ridden_balance)
    notices.extend(_reach_notices(course, alignment, split, along.finish_time))
    return RaceReview(
        planned_time=plan.prediction.finish_time, actual_time=along.finish_time,
        segments=tuple(segments), attribution=split, fitted=day_fit,
        distance=np.asarray(course.distance, dtype=float),
        planned_time_along=planned_time_along, actual_time_along=along.time,
        planned_power=np.asarray(plan.prediction.power, dtype=float),
        actual_power=along.piece_power(), alignment=alignment, day_conditions=day,
        notices=tuple(notices))
