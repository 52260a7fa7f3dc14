"""Running plans (pacing.plan.running): equal effort, even pace, fastest under critical speed
and D′. Their segment and target rows are tested in tests/test_plan_running_plan.py.

Each check names its source; check values are in docs/references.md, "Running". The courses
and runners are those of tests/test_physics_running.py. The even paces and the D′ balance the
plans share are tested in tests/test_plan_even_pace.py.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq
from test_physics_running import (
    FIVE_MINUTES_PER_KM,
    NO_AIR,
    average_runner,
    out_and_back,
    straight_course,
)

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.running import metabolic_power
from pacing.physics.running_cost import running_cost_minetti
from pacing.physiology.critical_speed import critical_speed_flat_race_time
from pacing.plan.even_pace import (
    even_pace_for_mean_power,
    even_pace_within_limits,
    plan_d_prime_balance,
)
from pacing.plan.running import (
    DOWNHILL_SPEED_RATIO_CAP,
    plan_equal_effort,
    plan_even_pace,
    plan_fastest,
)

# --------------------------------------------------------------------------- equal effort, grades


@pytest.mark.parametrize(
    "grade, pace",
    # docs/references.md, "Running" [calc]: flat 5:00/km → +5 % 6:30, +10 % 8:17, −5 % 3:49,
    # −10 % 2:59.
    [(0.05, "6:30"), (0.10, "8:17"), (-0.05, "3:49"), (-0.10, "2:59")],
)
def test_equal_effort_paces_on_grades_without_air(grade, pace):
    """Recomputed: with no air the power is Cr(i)·v, so pace(i) = 300 s × Cr(i)/Cr(0).

    Cr(0.05) = 155.4·0.05⁵ − 30.4·0.05⁴ − 43.3·0.05³ + 46.3·0.05² + 19.5·0.05 + 3.6 = 4.68520
    → 300 × 4.68520/3.6 = 390.43 s = 6:30; Cr(0.10) = 5.96821 → 497.35 s = 8:17;
    Cr(−0.05) = 2.74592 → 228.83 s = 3:49; Cr(−0.10) = 2.15171 → 179.31 s = 2:59.
    """
    expected_seconds = 300.0 * float(running_cost_minetti(grade)) / 3.6
    minutes, seconds = (int(part) for part in pace.split(":"))
    assert expected_seconds == pytest.approx(60 * minutes + seconds, abs=0.5)
    course = straight_course(2000.0, grade=grade)
    plan = plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM,
                             downhill_speed_ratio_cap=None)
    assert 1000.0 / plan.speed == pytest.approx(expected_seconds, rel=1e-9)


def test_downhill_speed_is_capped_by_default_and_the_cap_is_settable():
    course = straight_course(2000.0, grade=-0.10)
    capped = plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM)
    assert np.allclose(capped.speed, DOWNHILL_SPEED_RATIO_CAP * FIVE_MINUTES_PER_KM)
    assert [n.code for n in capped.notes] == ["running-descent-capped"]
    assert capped.notes[0].values == {"ratio": DOWNHILL_SPEED_RATIO_CAP, "share": 1.0}
    looser = plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM,
                               downhill_speed_ratio_cap=1.5)
    assert np.allclose(looser.speed, 1.5 * FIVE_MINUTES_PER_KM)
    with pytest.raises(InputError):
        plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM, downhill_speed_ratio_cap=0.8)


def test_flat_course_in_still_air_takes_distance_times_flat_pace():
    # definition of the flat pace (issue 5): exact up to rounding
    course = straight_course(10000.0, step=7.0)
    plan = plan_equal_effort(course, average_runner(), FIVE_MINUTES_PER_KM, air_density=1.18)
    assert plan.finish_time == pytest.approx(course.total_distance * 0.300, rel=1e-12)
    assert plan.segments[-1].cumulative_time == pytest.approx(plan.finish_time, rel=1e-12)
    assert [row.end for row in plan.segments][:3] == [1000.0 - 1000.0 % 7 + 7, 2002.0, 3003.0]

# --------------------------------------------------------------------------- even pace


def test_even_pace_matches_the_mean_effort_and_shows_its_cost():
    distance = np.arange(0.0, 4000.1, 10.0)
    elevation = np.where(distance < 2000, 0.05 * distance, 0.05 * (4000 - distance))
    course = synthetic_course(distance, elevation)
    plan = plan_even_pace(course, NO_AIR, FIVE_MINUTES_PER_KM, bounds=[0, 200, 400])
    assert np.ptp(plan.speed) == 0
    mean = np.sum(plan.metabolic_power * plan.time) / plan.finish_time
    assert mean == pytest.approx(plan.effort, rel=1e-9)
    up, down = plan.segments
    assert up.effort_ratio > 1.2 and down.effort_ratio < 0.8
    # no air: energy Σ Cr·L is fixed by the course, so the same mean power gives the same time
    equal = plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM, bounds=[0, 200, 400],
                              downhill_speed_ratio_cap=None)
    assert equal.finish_time == pytest.approx(plan.finish_time, rel=1e-9)


def test_even_pace_can_be_given():
    plan = plan_even_pace(straight_course(1000.0), NO_AIR, FIVE_MINUTES_PER_KM, speed=3.0)
    assert plan.finish_time == pytest.approx(1000.0 / 3.0)
    assert plan.even_pace_speed == 3.0 and plan.even_pace_time == plan.finish_time


@pytest.mark.parametrize("speed", [0.49, 12.01, 0.0, -3.0, float("nan"), float("inf")])
def test_a_given_even_pace_must_be_a_running_speed(speed):
    # 0.5-12 m/s, 33:20 to 1:24 per km, as the flat pace (pacing.physics.running.flat_effort)
    with pytest.raises(InputError, match="0.5-12 m/s"):
        plan_even_pace(straight_course(1000.0), NO_AIR, FIVE_MINUTES_PER_KM, speed=speed)

# --------------------------------------------------------------------------- fastest

def test_fastest_plan_on_a_flat_course_spends_exactly_d_prime():
    # Kordi et al. 2019 typical values; closed form t = (d − D′)/CS (Poole et al. 2016)
    course = straight_course(5000.0)
    plan = plan_fastest(course, NO_AIR, 4.94, 123.0)
    assert plan.finish_time == pytest.approx(987.247, abs=0.01)
    assert plan.d_prime_balance[-1] == pytest.approx(0.0, abs=0.01)
    assert plan.d_prime_balance.min() >= 0.0
    assert "d-prime-recovery-by-analogy" in [n.code for n in plan.notes]
    reserve = plan_fastest(course, NO_AIR, 4.94, 123.0, d_prime_reserve=23.0)
    assert reserve.finish_time == pytest.approx(5000.0 / (4.94 + 100.0 / reserve.finish_time),
                                                abs=0.01)
    assert reserve.finish_time > plan.finish_time


def test_fastest_plan_on_hills_recovers_on_capped_descents():
    distance = np.arange(0.0, 6000.1, 10.0)
    elevation = 60.0 * np.sin(2 * np.pi * distance / 2000.0)
    course = synthetic_course(distance, elevation)
    plan = plan_fastest(course, average_runner(), 4.94, 123.0)
    assert plan.d_prime_balance.min() == pytest.approx(0.0, abs=0.05)
    assert plan.finish_time > critical_speed_flat_race_time(course.total_distance, 4.94, 123.0)
    assert np.any(np.diff(plan.d_prime_balance) > 0)  # recovery where the descent is capped


# --------------------------------------------------------------------------- properties

@settings(max_examples=30, deadline=None)
@given(wind=st.floats(0.0, 8.0), pace=st.floats(150.0, 480.0), cross=st.floats(-5.0, 5.0))
def test_equal_effort_beats_even_pace_on_an_out_and_back_in_wind(wind, pace, cross):
    """Same average effort (time-weighted mean metabolic power) in both plans (issue 5).

    Holds for winds up to 8 m/s at the runner (≈13 m/s at 10 m). A scan found that in
    near-gale winds (≥ 9 m/s at the runner) at slow paces (8:00/km) with crosswind, even pace
    is up to 0.2 % faster: there the tailwind outruns the runner and its push is worth most
    at low speed, so equal effort is no longer better than a constant speed.
    """
    course = out_and_back(2000.0, step=50.0)
    head = np.where(course.heading == 0.0, wind, -wind)
    runner = average_runner()
    equal = plan_equal_effort(course, runner, 1000.0 / pace, headwind=head, crosswind=cross)
    even = plan_even_pace(course, runner, 1000.0 / pace, headwind=head, crosswind=cross)
    assert equal.finish_time <= even.finish_time * (1 + 1e-9)
    # flat: no descent cap, so equal effort's mean effort is the target and its reference even
    # pace is the even-pace plan itself; time_saved is the gain over it
    assert equal.even_pace_time == pytest.approx(even.finish_time, rel=1e-9)
    assert equal.time_saved >= -1e-9 * even.finish_time


@settings(max_examples=30, deadline=None)
@given(amplitude=st.floats(0.0, 80.0), pace=st.floats(170.0, 420.0))
def test_plan_time_is_the_sum_of_length_over_speed(amplitude, pace):
    distance = np.arange(0.0, 3000.1, 20.0)
    course = synthetic_course(distance, amplitude * np.sin(distance / 400.0))
    plan = plan_equal_effort(course, average_runner(), 1000.0 / pace)
    assert plan.finish_time == pytest.approx(np.sum(course.piece_length / plan.speed))
    assert sum(row.time for row in plan.segments) == pytest.approx(plan.finish_time)
    assert plan.distance == pytest.approx(course.total_distance)


def test_capped_descents_lower_the_mean_effort():
    distance = np.arange(0.0, 2000.1, 10.0)
    elevation = np.where(distance < 1000, 0.08 * distance, 0.08 * (2000 - distance))
    plan = plan_equal_effort(synthetic_course(distance, elevation), NO_AIR, FIVE_MINUTES_PER_KM)
    assert plan.mean_effort_ratio < 1.0
    assert plan.segments[0].effort_ratio == pytest.approx(1.0)
    assert plan.segments[1].effort_ratio < 1.0


# --------------------------------------------------------------------------- which plan is faster


def hill_course(amplitude=40.0, wavelength=2000.0, length=6000.0, step=20.0):
    distance = np.arange(0.0, length + step / 2, step)
    return synthetic_course(distance, amplitude * np.sin(2 * np.pi * distance / wavelength))


def time_at_mean_power(shape, course, runner, mean_power):
    """Scale a speed profile so that its time-weighted mean metabolic power is mean_power;
    return the finish time [s]."""
    length = course.piece_length

    def excess(scale):
        speed = scale * shape
        power = metabolic_power(speed, course.grade, 1.2, runner)
        time = length / speed
        return np.sum(power * time) / time.sum() - mean_power

    scale = brentq(excess, 0.05, 20.0, xtol=1e-13)
    return float(np.sum(length / (scale * shape)))


@settings(max_examples=25, deadline=None)
@given(
    profile=st.lists(st.floats(0.7, 1.3), min_size=3, max_size=3),
    amplitude=st.floats(5.0, 80.0),
    pace=st.floats(180.0, 420.0),
)
def test_even_pace_is_the_fastest_plan_of_its_mean_effort_in_still_air(profile, amplitude, pace):
    """Specification (module docstring of pacing.plan.running), windless and without a cap.

    The energy per metre on piece j is e_j(v) = Cr_j + k·v²: Minetti's Cr_j (Minetti et al.
    2002) does not depend on speed, and k·v² is the still-air term. Minimise T = Σ L_j/v_j at
    a fixed time-weighted mean metabolic power P̄, i.e. subject to Σ L_j·e_j(v_j) = P̄·T.
    Lagrangian T + λ(Σ L_j(Cr_j + k·v_j²) − P̄·T): ∂/∂v_j = −(1 − λP̄)L_j/v_j² + 2λk·L_j·v_j = 0,
    so v_j³ = (1 − λP̄)/(2λk) on every piece: a constant speed. Any other speed profile of the
    same mean effort, equal effort included, takes at least as long.
    """
    course = hill_course(amplitude)
    runner = average_runner()
    equal = plan_equal_effort(course, runner, 1000.0 / pace, downhill_speed_ratio_cap=None)
    mean_power = equal.mean_effort_ratio * equal.effort
    even_speed = even_pace_for_mean_power(course, runner, mean_power)
    even_time = float(course.total_distance / even_speed)
    assert equal.even_pace_time == pytest.approx(even_time, rel=1e-9)
    assert equal.finish_time >= even_time * (1 - 1e-9)
    assert equal.time_saved <= 1e-6
    # any other profile (piecewise by thirds of the course), scaled to the same mean effort
    thirds = np.minimum((3 * np.arange(course.grade.size)) // course.grade.size, 2)
    shape = np.asarray(profile)[thirds]
    assert time_at_mean_power(shape, course, runner, mean_power) >= even_time * (1 - 1e-9)


def test_without_air_every_plan_of_a_mean_effort_takes_the_same_time():
    # the k = 0 case of the derivation above: T = Σ L_j·Cr_j / P̄ whatever the speeds
    course = hill_course(60.0)
    equal = plan_equal_effort(course, NO_AIR, FIVE_MINUTES_PER_KM, downhill_speed_ratio_cap=None)
    expected = np.sum(course.piece_length * running_cost_minetti(course.grade)) / equal.effort
    assert equal.finish_time == pytest.approx(expected, rel=1e-9)
    assert equal.time_saved == pytest.approx(0.0, abs=1e-6)


@settings(max_examples=25, deadline=None)
@given(amplitude=st.floats(0.0, 80.0), pace=st.floats(170.0, 420.0), wind=st.floats(-6.0, 6.0),
       cap=st.sampled_from([None, 1.1, 1.2, 1.5]))
def test_equal_effort_never_runs_above_its_target(amplitude, pace, wind, cap):
    # the definition of equal effort (issue 5): every piece at the target, capped descents below
    course = hill_course(amplitude)
    plan = plan_equal_effort(course, average_runner(), 1000.0 / pace, headwind=wind,
                             downhill_speed_ratio_cap=cap)
    assert np.all(plan.metabolic_power <= plan.effort * (1 + 1e-9))
    assert plan.peak_effort_ratio == pytest.approx(1.0, abs=1e-9)
    below = plan.metabolic_power < plan.effort * (1 - 1e-9)
    assert np.all(course.grade[below] < 0)  # only capped descents run below the target


def test_even_pace_shows_its_effort_on_the_climb():
    """Up 5 % then down 5 %, no air: the even pace v meets the mean effort,
    (Cr(+5 %) + Cr(−5 %))/2 · v = Cr(0)·v_flat, so the climb costs
    Cr(+5 %)/((Cr(+5 %) + Cr(−5 %))/2) = 4.68520/3.71556 = 1.26097 of the flat effort
    (Minetti et al. 2002 polynomial, recomputed by hand: Cr(+5 %) = 4.68520,
    Cr(−5 %) = 2.74592)."""
    distance = np.arange(0.0, 4000.1, 10.0)
    elevation = np.where(distance < 2000, 0.05 * distance, 0.05 * (4000 - distance))
    course = synthetic_course(distance, elevation)
    plan = plan_even_pace(course, NO_AIR, FIVE_MINUTES_PER_KM, bounds=[0, 200, 400])
    assert plan.peak_effort_ratio == pytest.approx(1.26097, abs=1e-5)
    assert plan.segments[0].effort_ratio == pytest.approx(1.26097, abs=1e-5)
    assert plan.time_saved == 0.0
    average = next(n for n in plan.notes if n.code == "even-pace-effort-on-average")
    assert average.values["peak_effort_ratio"] == pytest.approx(1.26097, abs=1e-5)
    assert average.values["mean_effort_ratio"] == pytest.approx(1.0)


def test_fastest_gains_over_the_fastest_even_pace_within_d_prime_on_hills():
    # Kordi et al. 2019 typical CS/D′; the even pace's climbs spend D′ that equal effort spreads
    course = hill_course(40.0, wavelength=3000.0)
    runner = average_runner()
    plan = plan_fastest(course, runner, 4.94, 123.0)
    even_speed = even_pace_within_limits(course, runner, 4.94, 123.0)
    assert plan.limited_even_pace_time == pytest.approx(course.total_distance / even_speed)
    assert plan.limited_even_pace_time > plan.finish_time + 10.0
    even = plan_even_pace(course, runner, FIVE_MINUTES_PER_KM, speed=even_speed,
                          critical_speed=4.94, d_prime=123.0)
    assert even.min_d_prime_balance == pytest.approx(0.0, abs=0.05)
    within = next(n for n in plan.notes if n.code == "even-pace-within-limits")
    assert within.values["later_s"] > 0
    # the even pace of the same mean effort is faster in this model only by overdrawing D′
    same = next(n for n in plan.notes if n.code == "even-pace-at-same-effort")
    assert same.values["later_s"] < 0 and same.values["overdrawn_balance_m"] < 0


def test_on_a_flat_course_the_fastest_even_pace_is_the_fastest_plan():
    # flat, still air: both are t = (d − D′)/CS (Poole et al. 2016)
    course = straight_course(5000.0)
    plan = plan_fastest(course, NO_AIR, 4.94, 123.0)
    assert plan.limited_even_pace_time == pytest.approx(plan.finish_time, abs=0.01)
    assert plan.limited_even_pace_time == pytest.approx(987.247, abs=0.01)


def test_any_plan_shows_its_d_prime_balance_when_critical_speed_is_given():
    # flat course at the pace of t = (d − D′)/CS (Poole et al. 2016): D′ is spent exactly
    course = straight_course(5000.0)
    flat_speed = 5000.0 / critical_speed_flat_race_time(5000.0, 4.94, 123.0)
    plan = plan_equal_effort(course, NO_AIR, flat_speed, critical_speed=4.94, d_prime=123.0,
                             bounds=[0, 250, 500])
    assert plan.d_prime_balance[-1] == pytest.approx(0.0, abs=1e-6)
    assert plan.min_d_prime_balance == pytest.approx(0.0, abs=1e-6)
    assert plan.min_d_prime_distance == pytest.approx(5000.0)
    # above CS the balance falls at (u − CS) m/s: half-way, half of D′ is left
    assert plan.segments[0].d_prime_balance == pytest.approx(61.5, abs=1e-6)
    assert plan.segments[1].d_prime_balance == pytest.approx(plan.d_prime_balance[-1])
    balance = plan_d_prime_balance(plan.metabolic_power, plan.time, NO_AIR, 1.2, 4.94, 123.0)
    assert np.allclose(balance, plan.d_prime_balance)
    assert plan_equal_effort(course, NO_AIR, flat_speed).d_prime_balance is None
    with pytest.raises(InputError):
        plan_equal_effort(course, NO_AIR, flat_speed, critical_speed=4.94)


@pytest.mark.parametrize("plan", ["equal-effort", "even-pace", "fastest"])
def test_a_gale_at_the_runner_cannot_be_run_in(plan):
    # issue 14: 40-60 m/s of wind gave efforts of −221 % and a pace of 1:00/km. From Beaufort
    # force 8 (gale, 17.2 m/s: "generally impedes progress"; WMO / UK Met Office Beaufort
    # scale, from memory) every plan refuses in one line; just below it the efforts and paces
    # stay physical.
    from pacing.physics.running import Runner
    from pacing.plan.even_pace import RUNNABLE_WIND_LIMIT
    from pacing.plan.running import plan_equal_effort, plan_even_pace, plan_fastest

    distance = np.arange(0.0, 3001.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance))
    tail = -np.where(distance[:-1] < 1500.0, 1.0, -1.0)  # out with the wind, back against it
    runner = Runner(64.0)

    def make(wind):
        if plan == "equal-effort":
            return plan_equal_effort(course, runner, 1000 / 270, headwind=wind * tail)
        if plan == "even-pace":
            return plan_even_pace(course, runner, 1000 / 270, headwind=wind * tail)
        return plan_fastest(course, runner, 4.2, 200.0, headwind=wind * tail)

    with pytest.raises(InputError, match="cannot be run in") as error:
        make(1.01 * RUNNABLE_WIND_LIMIT)
    assert "\n" not in str(error.value)
    held = make(0.99 * RUNNABLE_WIND_LIMIT)
    assert all(row.effort_ratio > 0 for row in held.segments)
    # no faster than the fastest sprint ever timed, 12.4 m/s (Bolt, Berlin 2009; from memory)
    assert held.max_speed < 12.4
