"""Specification of the speed, time and energy along a course (pacing.plan.simulate).

References beside each check: the closed-form coasting solution (Taylor, Classical Mechanics
2005, §2.4; check values in docs/references.md, "Braking and coasting" [calc]), scipy's
solve_ivp on the same model as the reference integrator, and
pacing.physics.cycling.speed_for_power for steady state. The types, speed limits, steady
prediction and segment summaries are specified in tests/test_plan_prediction.py.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from samples import hilly_course, still, windy_air
from scipy.integrate import solve_ivp

from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider, resistive_force, speed_for_power
from pacing.plan.prediction import (
    SimulationOptions,
    segment_results,
    steady_prediction,
)
from pacing.plan.simulate import finish_times, simulate
from pacing.weather.conditions import CourseAir

G = 9.80665


@pytest.fixture(params=["compiled", "python"])
def kernel_policy(request, monkeypatch):
    """Run the test with the compiled kernels and again as plain Python (pacing.kernels)."""
    if request.param == "compiled":
        pytest.importorskip("numba")
    monkeypatch.setenv("PACING_KERNELS", request.param)
    return request.param


def reference_ivp(course, power, rider, air, start_speed):
    """solve_ivp (DOP853, rtol 1e-10) piece by piece on m_eff·v·dv/dx = η·P/v − F(v).

    The state is (½v², t) along the road distance; a flying start (start_speed > 0).
    Returns speeds and cumulative times at the points.
    """
    grade = course.grade
    road = np.diff(course.distance) * np.sqrt(1 + grade**2)
    m_eff, eta = rider.effective_mass, rider.drivetrain_efficiency
    state = [0.5 * start_speed**2, 0.0]
    speeds, times = [start_speed], [0.0]
    for i in range(road.size):
        def rates(_, y, i=i):
            v = math.sqrt(max(2 * y[0], 1e-30))
            force = resistive_force(v, grade[i], air.density[i], rider, air.headwind[i],
                                    air.crosswind[i])
            return [(eta * power / v - force) / m_eff, 1.0 / v]
        solution = solve_ivp(rates, (0.0, road[i]), state, method="DOP853", rtol=1e-10,
                             atol=1e-12)
        state = solution.y[:, -1]
        speeds.append(math.sqrt(2 * state[0]))
        times.append(state[1])
    return np.array(speeds), np.array(times)


# ---------------------------------------------------------------- closed form and references

COAST_RIDER = Rider(mass=85.0, drag_area=0.30, rolling_coefficient=0.004, wheel_drag_area=0.0,
                    bearing_force_constant=0.0, bearing_force_per_speed=0.0)
"""The coasting check of docs/references.md, "Braking and coasting": m 85 kg, CdA 0.30 m²,
ρ 1.2 kg/m³, Crr 0.004, no bearing or wheel term."""


def coasting_constants(grade=0.08, density=1.2):
    theta = math.atan(grade)
    force = 85.0 * G * (math.sin(theta) - 0.004 * math.cos(theta))
    k = 0.5 * density * 0.30
    terminal = math.sqrt(force / k)
    return terminal, COAST_RIDER.effective_mass * terminal / force


def test_closed_form_coasting_reproduces_references_check_values():
    # Taylor 2005 §2.4 closed form; docs/references.md, "Braking and coasting" [calc]:
    # v_t 18.7304, v(10 s) 6.95578, x(60 s) 795.3679, m_eff = m + 1.447
    terminal, tau = coasting_constants()
    assert COAST_RIDER.effective_mass - 85.0 == pytest.approx(1.447, abs=5e-4)
    assert terminal == pytest.approx(18.7304, abs=5e-5)
    assert terminal * math.tanh(10.0 / tau) == pytest.approx(6.95578, abs=5e-6)
    assert terminal * tau * math.log(math.cosh(60.0 / tau)) == pytest.approx(795.3679, abs=5e-5)


def test_coasting_from_rest_matches_closed_form(kernel_policy):
    # v(t) = v_t·tanh(t/τ), x(t) = v_t·τ·ln cosh(t/τ) (Taylor 2005 §2.4), within 0.1 %
    terminal, tau = coasting_constants()
    step, grade = 10.0, 0.08
    horizontal = np.arange(0.0, 2000.0 + step / 2, step)
    course = synthetic_course(horizontal, -grade * horizontal)
    prediction = simulate(course, 0.0, COAST_RIDER, still(course))
    road = horizontal * math.sqrt(1 + grade**2)
    exact_time = tau * np.arccosh(np.exp(road / (terminal * tau)))
    exact_speed = terminal * np.tanh(exact_time / tau)
    assert prediction.time[1:] == pytest.approx(exact_time[1:], rel=1e-3)
    assert prediction.speed[1:] == pytest.approx(exact_speed[1:], rel=1e-3)
    # the check values themselves: x(60 s) and v(10 s) read off the simulated trajectory
    assert np.interp(60.0, prediction.time, road) == pytest.approx(795.3679, rel=1e-3)
    assert np.interp(10.0, prediction.time, prediction.speed) == pytest.approx(6.95578, rel=1e-3)
    assert prediction.speed[-1] == pytest.approx(18.7304, rel=1e-3)  # terminal speed


def test_finish_time_agrees_with_solve_ivp_on_a_hilly_windy_course(kernel_policy):
    # scipy solve_ivp (DOP853, rtol 1e-10) on the same model: within 0.05 % of finish time
    course = hilly_course()
    air = windy_air(course)
    rider = Rider()
    speeds, times = reference_ivp(course, 250.0, rider, air, start_speed=4.0)
    prediction = simulate(course, 250.0, rider, air, SimulationOptions(start_speed=4.0))
    assert prediction.finish_time == pytest.approx(times[-1], rel=5e-4)
    assert prediction.time[1:] == pytest.approx(times[1:], rel=5e-4)
    assert prediction.speed == pytest.approx(speeds, rel=5e-3)


def test_standing_start_agrees_with_solve_ivp_in_time():
    # scipy solve_ivp in time, dv/dt = (min(η·P/v, F_max) − F(v))/m_eff, dx/dt = v, from rest
    rider = Rider()
    options = SimulationOptions()
    cap = 0.6 * 1.0 * rider.mass * G  # rear-wheel traction (documented default)
    eta, m_eff = rider.drivetrain_efficiency, rider.effective_mass

    def rates(_, y):
        v = max(y[0], 0.0)
        drive = cap if v * cap <= eta * 300.0 else eta * 300.0 / v
        return [(drive - resistive_force(v, 0.0, 1.2, rider)) / m_eff, v]

    marks = [5.0, 20.0, 100.0, 400.0]
    events = [lambda t, y, m=m: y[1] - m for m in marks]
    solution = solve_ivp(rates, (0.0, 200.0), [0.0, 0.0], method="DOP853", rtol=1e-11,
                         atol=1e-12, events=events)
    course = synthetic_course(np.arange(0.0, 401.0, 5.0), np.zeros(81))
    prediction = simulate(course, 300.0, rider, still(course), options)
    for mark, hit, state in zip(marks, solution.t_events, solution.y_events, strict=True):
        index = int(round(mark / 5.0))
        assert prediction.time[index] == pytest.approx(hit[0], rel=1e-3), mark
        assert prediction.speed[index] == pytest.approx(state[0][0], rel=1e-3), mark


def test_long_steady_piece_settles_at_the_steady_speed():
    # pacing.physics.cycling.speed_for_power as the steady-state reference
    course = synthetic_course(np.arange(0.0, 3001.0, 10.0), 0.03 * np.arange(0.0, 3001.0, 10.0))
    prediction = simulate(course, 280.0, Rider(), still(course, headwind=2.0, crosswind=1.0))
    steady = float(speed_for_power(280.0, 0.03, 1.2, Rider(), 2.0, 1.0))
    assert prediction.speed[-1] == pytest.approx(steady, rel=1e-6)
    assert prediction.power[-10:] == pytest.approx(280.0, rel=1e-9)


# ---------------------------------------------------------------- energy

def _cases():
    hills = hilly_course()
    corners = np.full(hills.distance.size, 1000.0)
    corners[::50] = 8.0
    twisty = synthetic_course(hills.distance, hills.elevation, hills.heading, corners)
    climb_x = np.arange(0.0, 1001.0, 10.0)
    return {
        "hilly, windy, standing start": (hills, 250.0, windy_air(hills), SimulationOptions()),
        "corners and a descent limit": (twisty, 300.0, windy_air(twisty),
                                        SimulationOptions(max_descent_speed=13.0)),
        "coasting speed": (hills, 350.0, still(hills), SimulationOptions(coasting_speed=12.0)),
        "zero power up a wall: walking": (synthetic_course(climb_x, 0.12 * climb_x), 0.0,
                                          still(synthetic_course(climb_x, 0.12 * climb_x)),
                                          SimulationOptions(start_speed=10.0)),
        "varied power, flying start": (hills, 150 + 100 * np.sin(np.arange(500) / 30.0) ** 2,
                                       windy_air(hills, 6.0), SimulationOptions(start_speed=8.0)),
    }


@pytest.mark.parametrize("name", list(_cases()))
def test_energy_balance_closes_on_every_course(name, kernel_policy):
    # rider work (at the cranks, plus pushing the bike on foot) = aero + rolling + bearings +
    # drivetrain loss + Δpotential + Δkinetic + braking, to 0.1 % (issue 3)
    course, power, air, options = _cases()[name]
    rider = Rider()
    prediction = simulate(course, power, rider, air, options)
    terms = (prediction.aero + prediction.rolling + prediction.bearing
             + prediction.drivetrain_loss + prediction.potential + prediction.kinetic
             + prediction.braking)
    assert prediction.work + prediction.walking_work.sum() == pytest.approx(
        float(terms.sum()), rel=1e-3)
    assert prediction.energy_balance_residual < 1e-3
    # Δpotential is m·g·Δh and Δkinetic is ½·m_eff·Δ(v²), course-wide
    assert prediction.potential.sum() == pytest.approx(
        rider.mass * G * (course.elevation[-1] - course.elevation[0]), rel=1e-9, abs=1e-6)
    assert prediction.kinetic.sum() == pytest.approx(
        0.5 * rider.effective_mass * (prediction.speed[-1] ** 2 - prediction.speed[0] ** 2))
    assert np.all(prediction.braking >= 0) and np.all(prediction.power >= -1e-9)
    for field in ("time", "speed", "power", "air_speed", "yaw", "aero"):
        assert np.all(np.isfinite(getattr(prediction, field))), field


def test_walking_is_flagged_when_the_bike_stalls():
    x = np.arange(0.0, 1001.0, 10.0)
    course = synthetic_course(x, 0.12 * x)
    prediction = simulate(course, 0.0, Rider(), still(course), SimulationOptions(start_speed=10))
    assert prediction.walking.any() and not prediction.walking[0]
    assert np.all(prediction.speed > 0)


@pytest.mark.parametrize("power", [0.0, 1e-6, 0.5, 2.0])
def test_no_or_tiny_power_from_a_standing_start_walks_the_bike(power):
    """Review finding 1: zero power from rest on flat ground gave a speed of 8e-30 m/s, a
    finish of 2.4e30 s and NaN power. A power that cannot hold the walking speed on the bike
    walks it at the walking speed from the start: finite, flagged, energy still closes."""
    x = np.arange(0.0, 2001.0, 10.0)
    course = synthetic_course(x, 0.0 * x)
    options = SimulationOptions()
    prediction = simulate(course, power, Rider(), still(course), options)
    assert prediction.walking.all()
    assert np.all(prediction.speed[1:] == pytest.approx(options.minimum_speed))
    # 2000 m at 1 m/s plus the first piece, from rest to walking speed at a mean of 0.5 m/s
    assert prediction.finish_time == pytest.approx(2000.0 + 10.0, rel=1e-9)
    for field in ("time", "speed", "power", "air_speed", "yaw", "aero"):
        assert np.all(np.isfinite(getattr(prediction, field))), field
    # issue 14: pushing the bike does not go through the pedals: no crank power, no crank
    # work; the work of pushing is the rider's walking work (the energy still closes)
    assert prediction.average_power == 0.0 and prediction.work == 0.0
    assert np.all(prediction.walking_work[1:] > 0)
    assert prediction.energy_balance_residual < 1e-9
    results = segment_results(course, prediction, [0, 100, x.size - 1])
    assert all(r.power == 0.0 and r.time > 0 for r in results)
    assert [r.walking_distance for r in results] == pytest.approx([1000.0, 1000.0])


def test_walking_work_does_not_go_through_the_drivetrain():
    # issue 14: with --efficiency 0.01 the walked work was divided by the efficiency (a mean of
    # 1878 W). Walking a bike at 1 m/s on the flat takes the resistive force times the
    # distance, the same whatever the drivetrain (docs/references.md, "Cycling power balance
    # (Martin et al. 1998)": rolling + bearing + air at 1 m/s)
    x = np.arange(0.0, 2001.0, 10.0)
    course = synthetic_course(x, 0.0 * x)
    options = SimulationOptions(start_speed=1.0)
    lossy = Rider(drivetrain_efficiency=0.5)
    walked = simulate(course, 0.5, lossy, still(course), options)
    assert walked.walking.all() and walked.work == 0.0
    force = float(resistive_force(1.0, 0.0, 1.2, lossy))
    assert walked.walking_work.sum() == pytest.approx(force * 2000.0, rel=1e-9)
    same = simulate(course, 0.5, Rider(), still(course), options)
    assert same.walking_work.sum() == pytest.approx(walked.walking_work.sum(), rel=1e-12)


def test_a_segment_s_power_counts_only_the_pieces_ridden():
    # issue 14: 100 W up a 25 % wall walks; the segment showed 197 W (band 97-103 W). The
    # ridden flat before the wall holds the plan's 100 W; the wall carries no crank power.
    x = np.arange(0.0, 2001.0, 10.0)
    elevation = np.where(x <= 1000.0, 0.0, 0.25 * (x - 1000.0))
    course = synthetic_course(x, elevation)
    prediction = simulate(course, 100.0, Rider(), still(course), SimulationOptions(start_speed=8))
    # the first piece of the wall is climbed on momentum, then the bike is pushed
    assert prediction.walking[101:].all() and not prediction.walking[:101].any()
    assert np.all(prediction.power[101:] == 0.0)
    whole, = segment_results(course, prediction, [0, x.size - 1])
    assert whole.power == pytest.approx(100.0, rel=0.02)
    assert whole.walking_distance == pytest.approx(1000.0, abs=30.0)


def test_zero_power_on_a_descent_rolls_from_rest_without_walking():
    """From rest on a -8 % descent gravity alone accelerates the bike (terminal speed about
    19 m/s, as the 85 kg coasting check of docs/references.md, "Braking and coasting"): no
    walking, and the start is not mistaken for a stall."""
    x = np.arange(0.0, 3001.0, 10.0)
    course = synthetic_course(x, -0.08 * x)
    prediction = simulate(course, 0.0, Rider(), still(course))
    assert not prediction.walking.any()
    assert prediction.speed[-1] > 15.0
    assert prediction.energy_balance_residual < 1e-9


def test_steady_and_inertial_finish_times_are_close_on_gentle_terrain():
    # on long, gentle grades the rider is near steady speed almost everywhere: within 0.5 %
    x = np.arange(0.0, 10001.0, 10.0)
    course = synthetic_course(x, 40.0 * np.sin(x / 1500.0))
    steady = steady_prediction(course, 250.0, Rider(), still(course))
    inertial = simulate(course, 250.0, Rider(), still(course),
                        SimulationOptions(start_speed=float(steady.speed[0])))
    assert inertial.finish_time == pytest.approx(steady.finish_time, rel=0.005)


# ---------------------------------------------------------------- speed caps

def test_corner_and_descent_limits_are_respected_with_braking_in_time():
    x = np.arange(0.0, 3001.0, 10.0)
    radius = np.full(x.size, 1000.0)
    radius[150] = 12.0
    course = synthetic_course(x, -0.07 * x, corner_radius=radius)
    options = SimulationOptions(max_descent_speed=16.0, lateral_acceleration=2.5,
                                braking_deceleration=3.0)
    prediction = simulate(course, 200.0, Rider(), still(course), options)
    assert prediction.speed[150] <= math.sqrt(2.5 * 12.0) + 1e-9
    assert prediction.max_speed <= 16.0 + 1e-9
    assert prediction.braking.sum() > 0
    # never slower-down faster than the braking deceleration (plus the resistance's share)
    road = np.diff(x) * math.sqrt(1 + 0.07**2)
    deceleration = -np.diff(prediction.speed**2) / (2 * road)
    assert deceleration.max() <= 3.0 + 1e-6


def test_coasting_speed_stops_pedalling():
    x = np.arange(0.0, 3001.0, 10.0)
    course = synthetic_course(x, -0.06 * x)
    prediction = simulate(course, 300.0, Rider(), still(course),
                          SimulationOptions(coasting_speed=12.0, start_speed=5.0))
    fast = prediction.speed[:-1] > 12.0 + 1e-6
    assert fast.any() and np.all(prediction.power[fast] == 0)
    assert prediction.braking.sum() == 0


# ---------------------------------------------------------------- segments and properties

@pytest.mark.parametrize(
    ("power", "message"),
    [(np.full(3, 200.0), "one per piece"), (-5.0, "not negative"), (math.nan, "finite")],
)
def test_bad_power_is_refused(power, message):
    course = hilly_course(1000.0)
    with pytest.raises(InputError, match=message):
        simulate(course, power, Rider(), still(course))


SMALL = hilly_course(1500.0, 10.0)


@settings(max_examples=25, deadline=None)
@given(st.floats(50.0, 500.0), st.floats(1.0, 100.0), st.floats(-6.0, 6.0))
def test_more_power_is_never_slower_along_the_course(power, extra, headwind):
    air = still(SMALL, headwind=headwind)
    slow = simulate(SMALL, power, Rider(), air).finish_time
    fast = simulate(SMALL, power + extra, Rider(), air).finish_time
    assert fast <= slow * (1 + 1e-9)


@settings(max_examples=25, deadline=None)
@given(st.floats(0.0, 60.0), st.floats(0.01, 30.0), st.floats(-3.0, 6.0))
def test_more_power_is_never_slower_even_at_walking_powers(power, extra, headwind):
    """Property (issue 3): more power is never slower, also where the power is too small to
    hold the walking speed on the bike (rolling hills up to ±10 %, from the walking speed; from
    a standing start see the known defect below)."""
    air = still(SMALL, headwind=headwind)
    rolling = SimulationOptions(start_speed=SimulationOptions().minimum_speed)
    slow = simulate(SMALL, power, Rider(), air, rolling)
    fast = simulate(SMALL, power + extra, Rider(), air, rolling)
    assert math.isfinite(slow.finish_time) and math.isfinite(fast.finish_time)
    assert fast.finish_time <= slow.finish_time * (1 + 1e-9)
    assert slow.energy_balance_residual < 1e-8


@pytest.mark.xfail(strict=True, reason="known defect: from a standing start, a power just able "
                   "to hold the walking speed creeps up to it on the bike, slower than a smaller "
                   "power that walks off at once")
def test_more_power_is_never_slower_at_the_edge_of_walking_from_a_standing_start():
    """Counterexample found by the property above (hypothesis, random draw): 4.5 W cannot hold
    1 m/s on the first piece into a 1 m/s headwind and walks off at 1 m/s; 5.5 W can, so the
    bike accelerates from rest on 5.5 W and the first piece takes 2.6 s longer."""
    air = still(SMALL, headwind=1.0)
    slow = simulate(SMALL, 4.5, Rider(), air)
    fast = simulate(SMALL, 5.5, Rider(), air)
    assert fast.finish_time <= slow.finish_time * (1 + 1e-9)


@settings(max_examples=25, deadline=None)
@given(st.floats(50.0, 500.0), st.floats(-6.0, 6.0), st.floats(0.1, 5.0))
def test_more_headwind_is_never_faster_along_the_course(power, headwind, extra):
    calm = simulate(SMALL, power, Rider(), still(SMALL, headwind=headwind)).finish_time
    windy = simulate(SMALL, power, Rider(), still(SMALL, headwind=headwind + extra)).finish_time
    assert windy >= calm * (1 - 1e-9)


@settings(max_examples=25, deadline=None)
@given(st.floats(100.0, 500.0), st.floats(0.01, 0.12), st.floats(50.0, 110.0),
       st.floats(1.0, 20.0))
def test_more_mass_is_never_faster_uphill_along_the_course(power, grade, mass, extra):
    x = np.arange(0.0, 1001.0, 10.0)
    course = synthetic_course(x, grade * x)
    light = simulate(course, power, Rider(mass=mass), still(course)).finish_time
    heavy = simulate(course, power, Rider(mass=mass + extra), still(course)).finish_time
    assert heavy >= light * (1 - 1e-9)


def test_yaw_table_and_drafting_are_used_along_the_course():
    # steady-state reference: pacing.physics.cycling.speed_for_power with the same rider
    rider = Rider(yaw_drag_table=((0.0, 1.0), (20.0, 0.9)), drafting_reduction=0.2)
    x = np.arange(0.0, 3001.0, 10.0)
    course = synthetic_course(x, np.zeros(x.size))
    air = still(course, headwind=1.0, crosswind=4.0)
    prediction = simulate(course, 250.0, rider, air)
    steady = float(speed_for_power(250.0, 0.0, 1.2, rider, 1.0, 4.0))
    assert prediction.speed[-1] == pytest.approx(steady, rel=1e-6)
    assert prediction.energy_balance_residual < 1e-6


def test_a_single_piece_course_and_a_course_air_object():
    from pacing.weather.conditions import Conditions, air_along_course

    course = synthetic_course(np.array([0.0, 50.0]), np.array([0.0, 1.0]))
    air = air_along_course(course, Conditions(wind_speed=3.0, wind_from=90.0))
    prediction = simulate(course, 200.0, Rider(), air)
    assert prediction.time.shape == (2,) and prediction.finish_time > 0
    assert prediction.energy_balance_residual < 1e-6


# ---------------------------------------------------------------- per-piece drag area and Crr

def test_one_drag_area_per_piece_of_equal_values_is_the_scalar_ride_exactly():
    course = hilly_course(2000.0)
    air = windy_air(course)
    pieces = course.grade.size
    scalar = simulate(course, 250.0, Rider(drag_area=0.28), air)
    per_piece = simulate(course, 250.0, Rider(drag_area=np.full(pieces, 0.28)), air)
    assert per_piece.finish_time == scalar.finish_time
    assert np.array_equal(per_piece.speed, scalar.speed)
    assert np.array_equal(per_piece.aero, scalar.aero)


def test_per_piece_drag_area_changes_speed_where_it_changes():
    # 2 km flat at 250 W from a steady start: the lower position on the second kilometre only
    x = np.arange(0.0, 2001.0, 10.0)
    course = synthetic_course(x, np.zeros(x.size))
    air = still(course)
    upright = Rider(drag_area=0.32)
    start = float(speed_for_power(250.0, 0.0, 1.2, upright))
    areas = np.where(np.arange(course.grade.size) < 100, 0.32, 0.24)
    mixed = simulate(course, 250.0, Rider(drag_area=areas), air,
                     SimulationOptions(start_speed=start))
    assert mixed.speed[100] == pytest.approx(start, rel=1e-6)  # unchanged up to the switch
    # then speeds up without overshoot towards the lower position's steady speed: 1 km later
    # it is within 0.1 % of it (measured 0.03 % short; the approach is exponential)
    low = float(speed_for_power(250.0, 0.0, 1.2, Rider(drag_area=0.24)))
    assert np.all(np.diff(mixed.speed[100:]) >= 0) and np.all(mixed.speed < low)
    assert mixed.speed[-1] == pytest.approx(low, rel=1e-3)
    assert mixed.energy_balance_residual < 1e-6


@pytest.mark.parametrize("changes", [{"drag_area": np.full(3, 0.3)},
                                     {"rolling_coefficient": np.full(3, 0.004)}])
def test_per_piece_values_of_the_wrong_length_are_refused(changes):
    course = hilly_course(1000.0)
    for ride in (simulate, steady_prediction):
        with pytest.raises(InputError, match="one per piece") as error:
            ride(course, 250.0, Rider(**changes), still(course))
        assert "\n" not in str(error.value)


@settings(max_examples=20, deadline=None)
@given(st.lists(st.integers(0, SMALL.grade.size - 1), min_size=1, max_size=40, unique=True),
       st.floats(0.005, 0.1), st.floats(100.0, 400.0), st.floats(0.0, 6.0))
def test_less_drag_area_on_any_pieces_is_never_slower(lowered, saving, power, headwind):
    """Property: in still air or a headwind less CdA on some pieces lowers the resisting force
    there at every speed, so the ride is never slower. (Not so in a tailwind faster than the
    rider, e.g. from a standing start: there the wind pushes, and less area is slower.)"""
    air = still(SMALL, headwind=headwind)
    areas = np.full(SMALL.grade.size, 0.32)
    base = simulate(SMALL, power, Rider(drag_area=areas), air).finish_time
    areas[lowered] -= saving
    faster = simulate(SMALL, power, Rider(drag_area=areas), air).finish_time
    assert faster <= base * (1 + 1e-9)


# ---------------------------------------------------------------- compiled and plain Python

FIELDS = ("time", "speed", "power", "air_speed", "yaw", "aero", "rolling", "bearing",
          "drivetrain_loss", "potential", "kinetic", "braking", "walking", "walking_work")


def _kernel_cases():
    hills = hilly_course()
    yawing = Rider(yaw_drag_table=((0.0, 1.0), (10.0, 0.9), (20.0, 0.95)),
                   drafting_reduction=0.3)
    cases = {name: (course, power, Rider(), air, options)
             for name, (course, power, air, options) in _cases().items()}
    cases["yaw table, drafting"] = (hills, 250.0, yawing, windy_air(hills, 6.0),
                                    SimulationOptions(start_speed=3.0))
    cases["drag area per piece"] = (hills, 250.0,
                                    Rider(drag_area=np.linspace(0.25, 0.35, hills.grade.size)),
                                    windy_air(hills), SimulationOptions())
    return cases


@pytest.mark.parametrize("name", list(_kernel_cases()))
def test_compiled_kernels_ride_exactly_as_plain_python(name, monkeypatch):
    # the same kernel source compiled by numba and run as Python: bit for bit the same ride
    # (the compiled hypot is CPython's algorithm, pacing.kernels.cpython_hypot)
    pytest.importorskip("numba")
    course, power, rider, air, options = _kernel_cases()[name]
    rides = {}
    for policy in ("python", "compiled"):
        monkeypatch.setenv("PACING_KERNELS", policy)
        rides[policy] = simulate(course, power, rider, air, options)
    for field in FIELDS:
        assert np.array_equal(getattr(rides["python"], field),
                              getattr(rides["compiled"], field)), field


@pytest.mark.parametrize("options", [SimulationOptions(start_speed=6.0),
                                     SimulationOptions(coasting_speed=13.0,
                                                       max_descent_speed=15.0,
                                                       max_drive_force=350.0)])
def test_finish_times_of_draws_are_the_simulated_finish_times(options, kernel_policy):
    # reference: simulate with the draw's rider and the draw's wind, one draw at a time
    course = hilly_course()
    pieces = course.grade.size
    rider = Rider(drag_area=np.linspace(0.28, 0.33, pieces), rolling_coefficient=0.004,
                  yaw_drag_table=((0.0, 1.0), (15.0, 0.93)))
    unit = windy_air(course, 1.0)
    draws = [[82.0, 0.01, -0.001, 3.0], [70.0, -0.5, -0.01, 0.0], [95.0, 0.0, 0.002, 7.5]]
    floors = (0.02, 0.001)
    power = 150 + 100 * np.sin(np.arange(pieces) / 30.0) ** 2
    expected = []
    for mass, d_area, d_rolling, wind in draws:
        changed = Rider(mass=mass, drag_area=np.maximum(rider.drag_area + d_area, floors[0]),
                        rolling_coefficient=max(0.004 + d_rolling, floors[1]),
                        yaw_drag_table=rider.yaw_drag_table)
        air = CourseAir(unit.density, wind * unit.headwind, wind * unit.crosswind)
        expected.append(simulate(course, power, changed, air, options).finish_time)
    times = finish_times(course, power, rider, unit, draws, options, floors)
    np.testing.assert_array_equal(times, expected)


@pytest.mark.parametrize(("draws", "floors", "message"), [
    ([[80.0, 0.0, 0.0]], (0.01, 0.0), "rows of 4 numbers"),
    ([[0.0, 0.0, 0.0, 1.0]], (0.01, 0.0), "positive mass"),
    ([[80.0, np.nan, 0.0, 1.0]], (0.01, 0.0), "finite"),
    ([[80.0, 0.0, 0.0, 1.0]], (0.0, 0.0), "floors")])
def test_bad_draws_are_refused(draws, floors, message):
    course = hilly_course(1000.0)
    with pytest.raises(InputError, match=message):
        finish_times(course, 250.0, Rider(), still(course), draws, None, floors)
