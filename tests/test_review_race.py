"""The race review end to end on synthetic races (pacing.review.race).

Each race is ridden by the independent forward model of test_review_synthetic (Martin et al.
1998 integrated by Runge-Kutta in the test, not the project's simulate), with one known
departure from the plan. The truth of a cause is what the forward model itself says it cost:
the race's time minus the time of the same model ridden as planned. Tolerances: 1 Hz samples
and 3 m GNSS noise put about ±1 s on a finish time; the plan's model (trapezoidal energy steps
on 10 m pieces, CIPM-2007 air) and the forward model (Runge-Kutta in time, ideal-gas air)
agree to about 0.5 s over the 10 km loop.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from test_review_synthetic import (
    STEP,
    Day,
    finish_time,
    loop_heading,
    loop_profile,
    ride,
    wind_at_rider,
)

from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_by_grade
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.race import RaceRequest, plan_race
from pacing.plan.request import PlanRequest
from pacing.review.race import review_race
from pacing.review.recording import make_race_recording
from pacing.weather.conditions import Conditions

SIDE_LOOP = np.arange(0.0, 10_000.0 + 1.0, STEP)


@pytest.fixture(scope="module")
def planned():
    """250 W on the 10 km square loop, CdA 0.30, Crr 0.004, 80 kg, from 10 m/s, calm; CP and
    W′ given so the W′ balance is compared."""
    course = synthetic_course(SIDE_LOOP, loop_profile(SIDE_LOOP),
                              loop_heading(SIDE_LOOP[:-1] + STEP / 2))
    request = RaceRequest(
        course=course, bounds=split_by_grade(course), conditions=Conditions(),
        rider=Rider(mass=80.0, drag_area=0.30, rolling_coefficient=0.004),
        cycling=PlanRequest(strategy="constant", mean_power=250.0, critical_power=270.0,
                            w_prime=20000.0),
        options=SimulationOptions(start_speed=10.0))
    return plan_race(request)


@pytest.fixture(scope="module")
def as_planned_time():
    return finish_time(Day())


def reviewed(planned, day, **options):
    samples = ride(day)
    recording = make_race_recording(samples["time"], samples["power"], speed=samples["speed"],
                                    distance=samples["distance"],
                                    latitude=samples["latitude"],
                                    longitude=samples["longitude"])
    options.setdefault("bootstrap", 40)
    return review_race(planned, recording, **options)


def test_a_race_ridden_as_planned_has_nothing_to_explain(planned):
    review = reviewed(planned, Day())
    assert review.actual_time == pytest.approx(review.planned_time, abs=1.5)
    for key, value in review.attribution.parts().items():
        assert abs(value) < 1.5, key
    assert review.fitted is not None
    assert review.fitted.drag_area == pytest.approx(0.30, rel=0.01)


def test_lower_power_on_the_climb_is_the_power_part(planned, as_planned_time):
    day = Day(power=lambda x: 200.0 if 500.0 <= x < 1500.0 else 250.0)
    truth = finish_time(day) - as_planned_time
    review = reviewed(planned, day)
    parts = review.attribution.parts()
    assert truth > 30.0
    assert parts["power_s"] == pytest.approx(truth, abs=1.5)
    assert abs(parts["drag_s"]) + abs(parts["stops_s"]) + abs(parts["other_s"]) < 2.0
    climb = [s for s in review.segments if s.start >= 480.0 and s.end <= 1500.0]
    assert climb and all(s.actual_power == pytest.approx(200.0, abs=2.0) for s in climb)
    assert all(s.delta > 5.0 for s in climb)


def test_a_worse_position_is_the_drag_part_and_the_fitted_cda(planned, as_planned_time):
    day = Day(drag_area=0.33)
    truth = finish_time(day) - as_planned_time
    review = reviewed(planned, day)
    assert review.fitted.drag_area == pytest.approx(0.33, rel=0.015)
    assert review.attribution.drag_s == pytest.approx(truth, rel=0.05)
    assert abs(review.attribution.power_s) < 1.0


def test_a_stop_is_the_stops_part(planned, as_planned_time):
    day = Day(stops=((3000.0, 60.0),))
    truth = finish_time(day) - as_planned_time
    review = reviewed(planned, day)
    parts = review.attribution.parts()
    assert review.attribution.stopped_s == pytest.approx(60.0, abs=1.5)
    assert parts["stops_s"] == pytest.approx(truth, abs=3.0)
    assert abs(parts["power_s"]) < 2.0
    assert "review-stops" in {n.code for n in review.notices}
    stopped = [s for s in review.segments if s.start <= 3000.0 <= s.end]
    assert stopped[0].stopped_time == pytest.approx(60.0, abs=1.5)


def test_a_known_wind_the_plan_did_not_know_is_the_wind_part(planned, as_planned_time):
    day = Day(wind_speed=4.0, wind_from=45.0)
    truth = finish_time(day) - as_planned_time
    review = reviewed(planned, day, day_conditions=Conditions(wind_speed=4.0, wind_from=45.0))
    assert truth > 10.0
    assert review.attribution.wind_s == pytest.approx(truth, abs=1.5)
    assert review.fitted.drag_area == pytest.approx(0.30, rel=0.05)


def test_an_untold_wind_is_estimated_and_is_the_wind_part(planned, as_planned_time):
    """The loop's four headings make the wind identifiable (the fit of pacing.fieldtest)."""
    day = Day(wind_speed=4.0, wind_from=45.0)
    truth = finish_time(day) - as_planned_time
    review = reviewed(planned, day)
    assert review.fitted.wind_estimated
    assert review.fitted.wind_speed == pytest.approx(4.0, abs=0.8)
    assert abs((review.fitted.wind_from - 45.0 + 180.0) % 360.0 - 180.0) < 15.0
    assert review.day_conditions.wind_speed == pytest.approx(review.fitted.wind_speed)
    parts = review.attribution.parts()
    assert parts["wind_s"] + parts["drag_s"] + parts["rolling_s"] == pytest.approx(truth, abs=3.0)


def test_an_untold_wind_is_replayed_over_the_plans_terrain(planned, as_planned_time):
    """The estimated wind is reported at 10 m over the plan's roughness and rider height, so
    its replays carry it back to the wind the rider met. Rough terrain (z0 = 0.25 m) makes the
    10 m wind ln(10/0.25)/ln(1/0.25) = 2.66 times the wind at 1 m (neutral log profile,
    Stull 1988, ch. 9); the race itself is ridden over z0 = 0.03 m at 1 m (the forward
    model), so what the rider met is 4 m/s · 0.604 = 2.42 m/s."""
    from dataclasses import replace

    rough = plan_race(replace(planned.request, conditions=Conditions(roughness_length=0.25)))
    day = Day(wind_speed=4.0, wind_from=45.0)
    truth = finish_time(day) - as_planned_time
    review = reviewed(rough, day)
    met = wind_at_rider(4.0)
    assert review.fitted.wind_estimated
    assert review.fitted.wind_speed == pytest.approx(
        met * math.log(10.0 / 0.25) / math.log(1.0 / 0.25), rel=0.2)
    assert review.day_conditions.roughness_length == 0.25
    assert review.day_conditions.wind_at_rider == pytest.approx(met, rel=0.2)
    parts = review.attribution.parts()
    assert parts["wind_s"] + parts["drag_s"] + parts["rolling_s"] == pytest.approx(truth, abs=3.0)


def test_the_parts_add_up_exactly_whatever_happened(planned):
    day = Day(power=lambda x: 220.0 if x > 5000.0 else 260.0, drag_area=0.32,
              stops=((7000.0, 20.0),), wind_speed=3.0, wind_from=200.0)
    review = reviewed(planned, day)
    parts = review.attribution.parts()
    total = review.actual_time - review.planned_time
    assert math.fsum(parts.values()) == pytest.approx(total, abs=1e-9)
    assert review.attribution.total_s == total
    assert len(review.attribution.replays) == 32


def test_without_the_fit_the_planned_drag_is_kept(planned):
    review = reviewed(planned, Day(drag_area=0.33), fit=False)
    assert review.fitted is None
    assert review.attribution.drag_s == 0.0
    assert review.attribution.other_s > 20.0  # the worse position is left unexplained
    assert "review-unexplained" in {n.code for n in review.notices}


def test_segments_and_the_time_gap_along_the_course(planned):
    review = reviewed(planned, Day(power=lambda x: 200.0 if 500.0 <= x < 1500.0 else 250.0),
                      fit=False)
    assert review.segments[0].start == 0.0 and review.segments[-1].end == 10_000.0
    assert sum(s.delta for s in review.segments) == pytest.approx(
        review.actual_time - review.planned_time, abs=1e-6)
    assert review.gap_along[0] == 0.0
    assert review.gap_along[-1] == pytest.approx(review.actual_time - review.planned_time)
    assert np.all(np.diff(review.actual_time_along) >= 0)
    assert review.actual_power.shape == review.planned_power.shape == (SIDE_LOOP.size - 1,)
    lowest = [s.actual_min_w_prime for s in review.segments]
    assert all(value is not None and 0.0 < value <= 20000.0 for value in lowest)


def test_a_running_plan_is_refused():
    from pacing.physics.running import Runner
    from pacing.plan.race import RunningRequest

    course = synthetic_course([0.0, 500.0, 1000.0], [0.0, 0.0, 0.0])
    result = plan_race(RaceRequest(course=course, bounds=np.array([0, 2]),
                                   conditions=Conditions(), sport="running",
                                   strategy="even-pace", runner=Runner(),
                                   running=RunningRequest(flat_speed=4.0)))
    samples = ride(Day())
    recording = make_race_recording(samples["time"], samples["power"], speed=samples["speed"])
    with pytest.raises(InputError, match="cycling"):
        review_race(result, recording)


@pytest.mark.parametrize("system", ["metric", "imperial"])
@pytest.mark.parametrize("number", [0.42, float("nan")])
def test_every_review_notice_reads_without_nan_in_both_systems(system, number):
    from words_samples import SampleValues

    from pacing.display.review_words import WORDS

    for code, words in WORDS.items():
        text = words(SampleValues(number), system)
        assert text and "nan" not in text.lower() and "inf" not in text.lower(), code


def test_a_missed_stretch_and_a_stretch_off_the_course_are_told_and_still_add_up(planned):
    samples = ride(Day())
    keep = (samples["time"] < 300.0) | (samples["time"] > 360.0)  # a minute not recorded
    lat = samples["latitude"].copy()
    lat[(samples["time"] > 600.0) & (samples["time"] < 640.0)] += 300.0 / 111_195.0
    recording = make_race_recording(samples["time"][keep], samples["power"][keep],
                                    speed=samples["speed"][keep],
                                    distance=samples["distance"][keep], latitude=lat[keep],
                                    longitude=samples["longitude"][keep])
    review = review_race(planned, recording, bootstrap=20)
    codes = {n.code for n in review.notices}
    assert {"review-dropout", "review-detour"} <= codes
    assert review.actual_time == pytest.approx(float(samples["finish_time"]), abs=1.5)
    assert math.fsum(review.attribution.parts().values()) == pytest.approx(
        review.actual_time - review.planned_time, abs=1e-9)
