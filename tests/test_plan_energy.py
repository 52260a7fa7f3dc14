"""Where the watts go (pacing.plan.energy): the crank work of a predicted race split by what it
pays for closes on the work, matches a hand calculation of the Martin et al. (1998) power
balance on a steady flat ride, and the Reynolds number of a rider uses a viscosity that agrees
with a reference library.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pytest
from samples import flat_course, hilly_course, still, windy_air
from scipy.optimize import brentq

from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.physics.running import Runner, metabolic_power
from pacing.plan.energy import (
    ENERGY_TERMS,
    RUNNING_TERMS,
    air_viscosity,
    drag_growth,
    easing_events,
    energy_budget,
    planned_mean_power,
    reynolds_number,
    running_energy_budget,
)
from pacing.plan.prediction import SimulationOptions
from pacing.plan.simulate import simulate

G = 9.80665  # standard gravity [m/s²] (CGPM 1901, common practice)


def test_the_terms_sum_to_the_crank_work_on_a_hilly_windy_ride():
    course = hilly_course()
    rider = Rider(mass=78.0, drag_area=0.28)
    prediction = simulate(course, 260.0, rider, windy_air(course))
    bounds = np.arange(0, course.distance.size, 50)
    bounds[-1] = course.distance.size - 1
    budget = energy_budget(prediction, bounds)
    assert list(budget.terms) == list(ENERGY_TERMS)
    assert budget.work.size == bounds.size - 1
    # each segment closes to the simulation's rounding (1 mJ in ~20 kJ)
    assert np.abs(budget.imbalance()).max() < 1e-3
    assert budget.total_work == pytest.approx(
        float(np.sum(prediction.power * np.diff(prediction.time))), rel=1e-12)
    assert sum(budget.totals().values()) == pytest.approx(budget.total_work, rel=1e-9)
    # where it comes from and where it goes: every flow ≥ 0, sources = sinks per segment
    sources, sinks = budget.flows()
    assert all((v >= 0).all() for v in (*sources.values(), *sinks.values()))
    assert np.allclose(sum(sources.values()), sum(sinks.values()), atol=1e-3)
    assert sources["gravity"].max() > 0 and sinks["height"].max() > 0  # hills both ways
    # climbing is the net height gained: m·g·Δh over the course (hand calculation)
    rise = float(course.elevation[-1] - course.elevation[0])
    assert budget.totals()["climbing"] == pytest.approx(78.0 * G * rise, abs=1.0)


def test_a_steady_flat_ride_splits_as_the_martin_balance_by_hand():
    # Hand calculation (Martin et al. 1998, eq. 1-9, still air, flat): at the steady speed v
    # of crank power P,  η·P = ½·ρ·(CdA + F_w)·v³ + Crr·m·g·v + v·(91 + 8.7·v)·10⁻³.
    # The crank work then goes in these shares: air ½ρ(CdA+F_w)v³/P, rolling Crr·m·g·v/P,
    # bearings v(91+8.7v)·10⁻³/P, drivetrain 1 − η.
    power, mass, cda, crr, eta, wheel, rho = 250.0, 80.0, 0.30, 0.0032, 0.976, 0.0044, 1.2

    def surplus(v):
        return (eta * power - 0.5 * rho * (cda + wheel) * v ** 3 - crr * mass * G * v
                - v * (91.0 + 8.7 * v) * 1e-3)

    v = brentq(surplus, 1.0, 30.0)
    course = flat_course(5000.0)
    prediction = simulate(course, power, Rider(mass=mass, drag_area=cda),
                          still(course, density=rho), SimulationOptions(start_speed=v))
    shares = {key: value / energy_budget(prediction).total_work
              for key, value in energy_budget(prediction).totals().items()}
    assert shares["air"] == pytest.approx(0.5 * rho * (cda + wheel) * v ** 3 / power, rel=1e-4)
    assert shares["rolling"] == pytest.approx(crr * mass * G * v / power, rel=1e-4)
    assert shares["bearings"] == pytest.approx(v * (91.0 + 8.7 * v) * 1e-3 / power, rel=1e-4)
    assert shares["drivetrain"] == pytest.approx(1.0 - eta, rel=1e-6)
    for key in ("climbing", "speed change", "braking"):
        assert abs(shares[key]) < 1e-4


def test_bounds_must_run_from_the_first_to_the_last_point():
    course = flat_course(1000.0)
    prediction = simulate(course, 200.0, Rider(mass=80.0), still(course))
    with pytest.raises(InputError, match="bounds"):
        energy_budget(prediction, [0, 50])


def fake_prediction(power, braking, speed):
    """A prediction-shaped object of 10 m pieces at 1 s each."""
    pieces = len(power)
    return SimpleNamespace(distance=np.arange(pieces + 1) * 10.0,
                           time=np.arange(pieces + 1, dtype=float),
                           speed=np.asarray(speed, dtype=float),
                           power=np.asarray(power, dtype=float),
                           braking=np.asarray(braking, dtype=float))


def test_easing_events_are_the_stretches_below_the_plan():
    planned = np.full(10, 240.0)
    ridden = planned.copy()
    ridden[0] = 100.0                    # the standing start
    ridden[4:6] = 0.0                    # brakes before a bend
    ridden[8] = 200.0                    # eases off, no brakes
    braking = np.zeros(10)
    braking[5] = 500.0
    speed = [0, 5, 9, 10, 10, 8, 7, 9, 10, 10, 10]
    radius = np.full(11, np.inf)
    radius[6] = 25.0
    events = easing_events(fake_prediction(ridden, braking, speed), planned, radius, join=1)
    assert [e.kind for e in events] == ["start", "braking", "coasting"]
    bend = events[1]
    assert (bend.start, bend.end) == (40.0, 60.0)
    assert bend.lowest_speed == 7.0 and bend.tightest_radius == 25.0
    assert bend.braking_work == 500.0
    assert bend.work_not_given == pytest.approx(2 * 240.0)  # 240 W for 2 s not given
    assert events[2].tightest_radius == np.inf
    # the plan asks 240 W throughout: its time-weighted mean
    assert planned_mean_power(fake_prediction(ridden, braking, speed), planned) == 240.0


def test_air_viscosity_by_sutherland_agrees_with_coolprop():
    # CoolProp (Bell et al. 2014, Ind Eng Chem Res 53(6):2498) air viscosity, a reference
    # library; Sutherland's law is within 1 % of it from -20 to 40 °C.
    props = pytest.importorskip("CoolProp.CoolProp")
    for celsius in (-20.0, 0.0, 20.0, 40.0):
        reference = props.PropsSI("V", "T", celsius + 273.15, "P", 101325.0, "Air")
        assert air_viscosity(celsius) == pytest.approx(reference, rel=0.01)


def test_air_viscosity_at_the_reference_point_and_by_hand():
    assert air_viscosity(0.0) == pytest.approx(1.716e-5, rel=1e-12)  # μ₀ at T₀ (White 2006)
    # 20 °C by hand: 1.716e-5 · (293.15/273.15)^1.5 · (273.15 + 110.4)/(293.15 + 110.4)
    hand = 1.716e-5 * (293.15 / 273.15) ** 1.5 * 383.55 / 403.55
    assert air_viscosity(20.0) == pytest.approx(hand, rel=1e-12)
    with pytest.raises(InputError):
        air_viscosity(-300.0)


def test_a_rider_at_race_speed_is_far_in_the_square_law():
    # 1.2 kg/m³, 11 m/s, 1 m: Re = 1.2 · 11 · 1 / 1.81e-5 ≈ 7.3·10⁵ (hand calculation)
    reynolds = reynolds_number(1.2, 11.0, 20.0, 1.0)
    assert reynolds == pytest.approx(1.2 * 11.0 / air_viscosity(20.0), rel=1e-12)
    assert 5e5 < reynolds < 1e6
    force, power = drag_growth(1.2)
    assert (round(force, 2), round(power, 2)) == (1.44, 1.73)



def minetti_by_hand(grade: float) -> float:
    """Minetti et al. (2002), J Appl Physiol 93:1039, eq. for running:
    Cr = 155.4 i⁵ − 30.4 i⁴ − 43.3 i³ + 46.3 i² + 19.5 i + 3.6 [J/(kg·m)]."""
    i = grade
    return 155.4 * i**5 - 30.4 * i**4 - 43.3 * i**3 + 46.3 * i**2 + 19.5 * i + 3.6


def test_a_runner_on_a_treadmill_spends_the_minetti_cost_by_hand():
    # no air (drag area 0): 60 kg over 1000 m flat then 1000 m at +10 %, 4 m/s
    runner = Runner(60.0, drag_area=0.0)
    speed = np.full(20, 4.0)
    duration = np.full(20, 100.0 / 4.0)            # 100 m pieces
    grade = np.r_[np.zeros(10), np.full(10, 0.10)]
    budget = running_energy_budget(speed, duration, grade, runner, 1.2,
                                   bounds=[0, 10, 20])
    assert list(budget.terms) == list(RUNNING_TERMS)
    flat, climb = 3.6 * 60.0 * 1000.0, minetti_by_hand(0.10) * 60.0 * 1000.0
    assert budget.work.tolist() == pytest.approx([flat, climb], rel=1e-9)
    assert budget.terms["flat running"].tolist() == pytest.approx([flat, flat], rel=1e-9)
    assert budget.terms["grade"].tolist() == pytest.approx([0.0, climb - flat], abs=1e-6)
    assert budget.terms["air"].tolist() == [0.0, 0.0]


def test_a_runners_energy_closes_on_the_metabolic_power_with_wind():
    runner = Runner.from_body(70.0, 1.75)
    rng = np.random.default_rng(3)
    speed = rng.uniform(2.5, 5.5, 50)
    duration = 10.0 / speed
    grade = rng.uniform(-0.08, 0.08, 50)
    budget = running_energy_budget(speed, duration, grade, runner, 1.18, headwind=2.0,
                                   crosswind=1.0, bounds=[0, 20, 50])
    total = metabolic_power(speed, grade, 1.18, runner, 2.0, 1.0) * 70.0 * duration
    assert budget.total_work == pytest.approx(float(total.sum()), rel=1e-12)
    assert np.abs(budget.imbalance()).max() < 1e-6
    sources, sinks = budget.flows()
    assert np.allclose(sum(sources.values()), sum(sinks.values()))
    # the air takes a few per cent at these speeds (Pugh 1971: about 2-8 %)
    assert 0.01 < budget.terms["air"].sum() / budget.total_work < 0.12
