"""Specification of drafting in the cycling model, checked against published drag reductions.

pacing.physics.cycling.Rider(drafting_reduction=d) removes the share d of the rider's own drag area
(CdA of rider and bike) and leaves Martin's rotating-wheel term F_w as it is::

    F_aero = ½·ρ·(CdA·k(β)·(1 − d) + F_w)·V·v_a        (pacing.physics.cycling.aerodynamic_force)

So the CdA part of the air drag falls by exactly d, and the whole air drag by d·CdA/(CdA + F_w)
(26.7 % instead of 27.1 % for an upright CdA of 0.270 m²): the model does not apply the
published share to the wheel term.

Published reductions used here (each checked against the paper's abstract, [read]):

- Blocken, Defraeye, Koninckx, Hespel & Carmeliet (2013), "CFD simulations of the aerodynamic
  drag of two drafting cyclists", Computers & Fluids 71:435-445 [read: abstract, Heriot-Watt
  research portal]: the trailing cyclist at a bicycle spacing of 0.01 m has 27.1 % (upright),
  23.1 % (dropped) and 13.8 % (time-trial position) less drag than a single cyclist.
- Fitton, Symons & Caddy (2018), "The impact of relative athlete characteristics on the drag
  reductions caused by drafting when cycling in a velodrome", Proc IMechE Part P: J Sports Eng
  Technol, doi:10.1177/1754337117692280 [read: abstract]: average drag reductions in positions
  1-4 of the team pursuit 4 %, 42 %, 48 % and 47 %.

The time value of a reduction is derived in each test independently of pacing's solvers: the
steady power balance of Martin et al. (1998) on flat ground in still air is a cubic in speed,

    η·P = v·(½·ρ·(CdA·(1 − d) + F_w)·v² + Crr·m·g + a + b·v),

solved by scipy.optimize.brentq; with a standing start the equation of motion
m_eff·dv/dt = min(η·P/v, F_max) − F_resist(v) is integrated by scipy.integrate.solve_ivp.
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from scipy import integrate, optimize

from pacing.cli import main
from pacing.compare.setups import RiderSetup, compare_setups
from pacing.constants import STANDARD_GRAVITY
from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import MARTIN_1998, Rider, aerodynamic_force, power_for_speed
from pacing.plan.prediction import REAR_WHEEL_LOAD_SHARE, TYRE_ROAD_FRICTION, SimulationOptions
from pacing.plan.race import RaceRequest
from pacing.plan.request import PlanRequest
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, air_along_course, still_air

# Trailing rider at 0.01 m spacing: Blocken et al. 2013, Computers & Fluids 71:435 (abstract).
# Each reduction is paired with a drag area of that position, Defraeye et al. 2010
# (J Biomech 43:1262) via docs/references.md, "Typical CdA, Crr", FROM MEMORY: they only set a
# plausible scale; no check
# below depends on their exact values.
BLOCKEN_2013_TRAILING = {
    "upright": (0.270, 0.271),
    "dropped": (0.243, 0.231),
    "time-trial": (0.216, 0.138),
}

# Team pursuit positions 1-4: Fitton et al. 2018, Proc IMechE P, doi:10.1177/1754337117692280
# (abstract).
FITTON_2018_TEAM_PURSUIT = {"position 1": 0.04, "position 2": 0.42, "position 3": 0.48,
                            "position 4": 0.47}

# A team-pursuit-like ride: 4 km on flat ground in still air at one power. 400 W, 80 kg and
# ρ = 1.2 kg/m³ are round numbers of the right size (not published figures).
DISTANCE = 4000.0
POWER = 400.0
MASS = 80.0
DENSITY = 1.2

M = MARTIN_1998


def flat_course(length: float = DISTANCE, step: float = 10.0):
    distance = np.arange(0.0, length + step / 2, step)
    return synthetic_course(distance, np.zeros_like(distance), heading=0.0)


def wheel_force(speed, density, apparent, along):
    """Martin's rotating-wheel drag ½·ρ·F_w·V·v_a [N], which drafting leaves as it is."""
    return 0.5 * density * M["wheel_drag_area"] * apparent * along


def steady_speed(power, drag_area, drafting, mass=MASS, density=DENSITY):
    """Steady speed on flat ground in still air [m/s]: brentq on the cubic of Martin et al.
    (1998), η·P = v·(½ρ(CdA·(1 − d) + F_w)·v² + Crr·m·g + a + b·v), with the constants of
    Martin et al. (1998) (docs/references.md, "Cycling power balance (Martin et al. 1998)")."""
    area = drag_area * (1.0 - drafting) + M["wheel_drag_area"]

    def balance(v):
        return v * (0.5 * density * area * v**2
                    + M["rolling_coefficient"] * mass * STANDARD_GRAVITY
                    + M["bearing_force_constant"] + M["bearing_force_per_speed"] * v
                    ) - M["drivetrain_efficiency"] * power

    return optimize.brentq(balance, 0.5, 40.0, xtol=1e-14)


def standing_start_time(power, drag_area, drafting, distance=DISTANCE, mass=MASS,
                        density=DENSITY, start_speed=0.0):
    """Time to ride `distance` from `start_speed` [m/s] (default from rest) on flat ground in
    still air [s], by solve_ivp (DOP853)
    on m_eff·dv/dt = min(η·P/v, F_max) − F_resist(v), dx/dt = v (Martin et al. 1998, with
    m_eff = m + I/r²). F_max = 0.6·1.0·m·g is pacing.plan.simulate's rear-wheel traction cap (its
    modelling choice, taken over so both solve the same problem; it acts below 0.9 m/s only)."""
    area = drag_area * (1.0 - drafting) + M["wheel_drag_area"]
    m_eff = mass + M["wheel_inertia"] / M["wheel_radius"] ** 2
    drive_cap = REAR_WHEEL_LOAD_SHARE * TYRE_ROAD_FRICTION * mass * STANDARD_GRAVITY
    eta_power = M["drivetrain_efficiency"] * power

    def motion(_t, state):
        x, v = state
        drive = drive_cap if v * drive_cap <= eta_power else eta_power / v
        resist = (0.5 * density * area * v * v + M["rolling_coefficient"] * mass
                  * STANDARD_GRAVITY + M["bearing_force_constant"]
                  + M["bearing_force_per_speed"] * v)
        return [v, (drive - resist) / m_eff]

    def finish(_t, state):
        return state[0] - distance

    finish.terminal = True
    solution = integrate.solve_ivp(motion, (0.0, 10_000.0), [0.0, start_speed], method="DOP853",
                                   rtol=1e-10, atol=1e-10, events=finish)
    return float(solution.t_events[0][0])


# ------------------------------------------------------------------ (a) the force itself

@pytest.mark.parametrize("position", sorted(BLOCKEN_2013_TRAILING))
def test_rider_drag_falls_by_the_published_share_behind_another_rider(position):
    """Blocken et al. 2013 (abstract): trailing rider at 0.01 m, −27.1/−23.1/−13.8 % drag."""
    drag_area, reduction = BLOCKEN_2013_TRAILING[position]
    speed = np.array([8.0, 12.0, 15.0])
    alone = Rider(mass=MASS, drag_area=drag_area)
    behind = Rider(mass=MASS, drag_area=drag_area, drafting_reduction=reduction)
    wheel = wheel_force(speed, DENSITY, speed, speed)
    own_alone = aerodynamic_force(speed, DENSITY, alone) - wheel
    own_behind = aerodynamic_force(speed, DENSITY, behind) - wheel
    np.testing.assert_allclose(own_behind / own_alone, 1.0 - reduction, rtol=1e-12)
    # the wheel term F_w is not reduced, so the whole air drag falls by a little less
    whole = aerodynamic_force(speed, DENSITY, behind) / aerodynamic_force(speed, DENSITY, alone)
    share_of_rider = drag_area / (drag_area + M["wheel_drag_area"])
    np.testing.assert_allclose(whole, 1.0 - reduction * share_of_rider, rtol=1e-12)
    assert np.all(whole > 1.0 - reduction)


@pytest.mark.parametrize("position", sorted(FITTON_2018_TEAM_PURSUIT))
def test_team_pursuit_positions_remove_the_published_share_of_drag_power(position):
    """Fitton et al. 2018 (abstract): positions 1-4 have 4, 42, 48, 47 % less drag. At a fixed
    speed the aerodynamic power of the rider's own CdA falls by the same share."""
    reduction = FITTON_2018_TEAM_PURSUIT[position]
    speed = 16.0  # about 58 km/h, team pursuit speed (common practice)
    alone = Rider(mass=MASS, drag_area=0.216)
    behind = Rider(mass=MASS, drag_area=0.216, drafting_reduction=reduction)
    saved = power_for_speed(speed, 0.0, DENSITY, alone) - power_for_speed(
        speed, 0.0, DENSITY, behind)
    own_aero_power = 0.5 * DENSITY * 0.216 * speed**3 / M["drivetrain_efficiency"]
    assert saved == pytest.approx(reduction * own_aero_power, rel=1e-12)


@given(
    reduction=st.floats(0.0, 0.99),
    speed=st.floats(0.5, 25.0),
    headwind=st.floats(-10.0, 10.0),
    crosswind=st.floats(-10.0, 10.0),
    drag_area=st.floats(0.15, 0.6),
    with_yaw_table=st.booleans(),
)
def test_drafting_scales_only_the_riders_own_drag_at_any_wind(reduction, speed, headwind,
                                                              crosswind, drag_area,
                                                              with_yaw_table):
    """Property: F(d) − F_wheel = (1 − d)·(F(0) − F_wheel) for any apparent wind and yaw."""
    table = ((0.0, 1.0), (10.0, 0.95), (20.0, 0.9)) if with_yaw_table else None
    alone = Rider(drag_area=drag_area, yaw_drag_table=table)
    behind = Rider(drag_area=drag_area, yaw_drag_table=table, drafting_reduction=reduction)
    along = speed + headwind
    wheel = wheel_force(speed, DENSITY, np.hypot(along, crosswind), along)
    own_alone = aerodynamic_force(speed, DENSITY, alone, headwind, crosswind) - wheel
    own_behind = aerodynamic_force(speed, DENSITY, behind, headwind, crosswind) - wheel
    assert float(own_behind) == pytest.approx((1.0 - reduction) * float(own_alone),
                                              rel=1e-9, abs=1e-12)


def test_drafting_share_out_of_range_is_refused():
    with pytest.raises(InputError, match="drafting_reduction"):
        Rider(drafting_reduction=1.0)
    with pytest.raises(InputError, match="drafting_reduction"):
        Rider(drafting_reduction=-0.1)


# ------------------------------------------------------------------ (b) time value on 4 km

@pytest.mark.parametrize("position", sorted(BLOCKEN_2013_TRAILING))
def test_time_value_on_4_km_follows_the_steady_cubic(position):
    """4 km flat, still air, 400 W, flying start at each rider's own steady speed: the finish
    times and the time saved by the Blocken et al. 2013 reduction equal L/v from the cubic
    (brentq) within 0.5 % (measured: 1e-9)."""
    drag_area, reduction = BLOCKEN_2013_TRAILING[position]
    course = flat_course()
    air = still_air(course, DENSITY)
    expected = {}
    simulated = {}
    for label, share in (("alone", 0.0), ("behind", reduction)):
        speed = steady_speed(POWER, drag_area, share)
        expected[label] = DISTANCE / speed
        rider = Rider(mass=MASS, drag_area=drag_area, drafting_reduction=share)
        simulated[label] = simulate(course, POWER, rider, air,
                                    SimulationOptions(start_speed=speed)).finish_time
        assert simulated[label] == pytest.approx(expected[label], rel=0.005)
    saved = simulated["alone"] - simulated["behind"]
    assert saved == pytest.approx(expected["alone"] - expected["behind"], rel=0.005)
    assert saved > 0


def test_time_values_of_the_three_positions():
    """The seconds saved on 4 km at 400 W (flying start) by the trailing position, from the
    steady cubic: 29.39 s upright, 23.76 s dropped, 13.15 s time-trial [calc]. Printed here so a
    change of the model's constants shows up as a changed number, not a silent drift."""
    saved = {position: DISTANCE / steady_speed(POWER, cda, 0.0)
             - DISTANCE / steady_speed(POWER, cda, reduction)
             for position, (cda, reduction) in BLOCKEN_2013_TRAILING.items()}
    assert saved["upright"] == pytest.approx(29.385, abs=0.01)
    assert saved["dropped"] == pytest.approx(23.756, abs=0.01)
    assert saved["time-trial"] == pytest.approx(13.147, abs=0.01)


@pytest.mark.parametrize("position", sorted(BLOCKEN_2013_TRAILING))
def test_time_value_from_a_standing_start_matches_the_equation_of_motion(position):
    """Standing start (team pursuits start from rest): finish times and the time saved agree
    with solve_ivp on the equation of motion within 0.5 %."""
    drag_area, reduction = BLOCKEN_2013_TRAILING[position]
    course = flat_course()
    air = still_air(course, DENSITY)
    times = {}
    for label, share in (("alone", 0.0), ("behind", reduction)):
        rider = Rider(mass=MASS, drag_area=drag_area, drafting_reduction=share)
        times[label] = simulate(course, POWER, rider, air).finish_time
        assert times[label] == pytest.approx(
            standing_start_time(POWER, drag_area, share), rel=0.005)
    expected_saving = (standing_start_time(POWER, drag_area, 0.0)
                       - standing_start_time(POWER, drag_area, reduction))
    assert times["alone"] - times["behind"] == pytest.approx(expected_saving, rel=0.005)


# ------------------------------------------------------------------ (c) compare_setups

def constant_power_race(course, options=None):
    """The race every setup rides: constant POWER on the whole course as one segment (the
    rider is replaced by each setup's)."""
    return RaceRequest(course=course, bounds=np.array([0, len(course.distance) - 1]),
                       conditions=Conditions(), strategy="constant", rider=Rider(mass=MASS),
                       cycling=PlanRequest(strategy="constant", mean_power=POWER),
                       options=options or SimulationOptions())


def test_compare_ranks_the_drafting_setup_faster_by_the_expected_seconds():
    """compare_setups, constant 400 W on 4 km from rest: the trailing rider of Blocken et al.
    2013 (upright, −27.1 %) is the fastest setup, and its delta is the time saved from the
    equation of motion (solve_ivp) within 0.5 %."""
    drag_area, reduction = BLOCKEN_2013_TRAILING["upright"]
    course = flat_course()
    air = still_air(course, DENSITY)
    setups = [RiderSetup("alone", Rider(mass=MASS, drag_area=drag_area)),
              RiderSetup("behind", Rider(mass=MASS, drag_area=drag_area,
                                         drafting_reduction=reduction))]
    comparison = compare_setups(constant_power_race(course), setups, air=air)
    assert comparison.fastest.name == "behind"
    behind = comparison.result("behind")
    expected = (standing_start_time(POWER, drag_area, reduction)
                - standing_start_time(POWER, drag_area, 0.0))
    assert behind.delta < 0
    assert behind.delta == pytest.approx(expected, rel=0.005)
    assert behind.delta_along[-1] == pytest.approx(behind.delta)


def test_compare_with_a_flying_start_gives_the_steady_time_value():
    """Both setups start at the baseline's steady speed: the baseline's time is L/v of the
    cubic; the trailing rider first speeds up to its own steady speed (1.4 m/s faster), so it
    saves fewer seconds than the steady value (measured 27.95 s against 29.39 s), as many as
    the equation of motion from that start gives (solve_ivp) within 0.5 %."""
    drag_area, reduction = BLOCKEN_2013_TRAILING["upright"]
    course = flat_course()
    air = still_air(course, DENSITY)
    alone_speed = steady_speed(POWER, drag_area, 0.0)
    setups = [RiderSetup("alone", Rider(mass=MASS, drag_area=drag_area)),
              RiderSetup("behind", Rider(mass=MASS, drag_area=drag_area,
                                         drafting_reduction=reduction))]
    comparison = compare_setups(
        constant_power_race(course, SimulationOptions(start_speed=alone_speed)), setups,
        air=air)
    steady_saving = DISTANCE / alone_speed - DISTANCE / steady_speed(POWER, drag_area,
                                                                     reduction)
    assert comparison.result("alone").finish_time == pytest.approx(DISTANCE / alone_speed,
                                                                   rel=1e-6)
    saved = -comparison.result("behind").delta
    assert saved < steady_saving
    run_up = standing_start_time(POWER, drag_area, reduction, start_speed=alone_speed)
    assert saved == pytest.approx(DISTANCE / alone_speed - run_up, rel=0.005)


def test_compare_orders_team_pursuit_positions_as_their_published_reductions():
    """Fitton et al. 2018: positions 3 (−48 %), 4 (−47 %), 2 (−42 %), 1 (−4 %) from the least
    drag to the most; at equal power the finish times come in the same order, and each delta
    to position 1 is the time saved from the equation of motion within 0.5 %."""
    drag_area = BLOCKEN_2013_TRAILING["time-trial"][0]
    course = flat_course()
    air = still_air(course, DENSITY)
    setups = [RiderSetup(name, Rider(mass=MASS, drag_area=drag_area,
                                     drafting_reduction=reduction))
              for name, reduction in FITTON_2018_TEAM_PURSUIT.items()]
    comparison = compare_setups(constant_power_race(course), setups, baseline="position 1",
                                air=air)
    by_time = [result.name for result in sorted(comparison.results,
                                                key=lambda r: r.finish_time)]
    by_reduction = sorted(FITTON_2018_TEAM_PURSUIT, key=lambda name: -FITTON_2018_TEAM_PURSUIT[
        name])
    assert by_time == by_reduction == ["position 3", "position 4", "position 2", "position 1"]
    leader_time = standing_start_time(POWER, drag_area, FITTON_2018_TEAM_PURSUIT["position 1"])
    for name in ("position 2", "position 3", "position 4"):
        expected = standing_start_time(POWER, drag_area, FITTON_2018_TEAM_PURSUIT[name]) \
            - leader_time
        assert comparison.result(name).delta == pytest.approx(expected, rel=0.005)


# ------------------------------------------------------------------ command line

@pytest.fixture(scope="module")
def flat_route(tmp_path_factory):
    """A straight 4 km flat course heading north at 45° N, a point every 25 m (GPX 1.1)."""
    metres_per_degree = 111_195.0
    distance = np.arange(0.0, DISTANCE + 1.0, 25.0)
    points = "\n".join(
        f'<trkpt lat="{45.0 + d / metres_per_degree:.7f}" lon="6.0000000"><ele>50.00</ele>'
        "</trkpt>" for d in distance)
    text = ('<?xml version="1.0" encoding="UTF-8"?>\n'
            '<gpx version="1.1" creator="tests" xmlns="http://www.topografix.com/GPX/1/1">'
            f"<trk><name>flat 4 km</name><trkseg>\n{points}\n</trkseg></trk></gpx>\n")
    path = tmp_path_factory.mktemp("routes") / "flat4k.gpx"
    path.write_text(text, encoding="utf-8")
    return str(path)


def _plan_json(capsys, *argv):
    code = main(["plan", *argv, "--json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def test_cli_drafting_percent_saves_what_the_library_gives(capsys, flat_route):
    """`pacing plan ROUTE --power 400 --drafting 27.1 --json` (Blocken et al. 2013, upright
    trailing rider) is faster than without --drafting by the seconds the library gives for
    Rider(drafting_reduction=0.271) on the same course and air (CLI defaults: 80 kg, CdA 0.30,
    20 °C, 50 % humidity, standard pressure, still air, standing start)."""
    from pacing.io.gpx import load_course

    alone = _plan_json(capsys, flat_route, "--power", "400")
    behind = _plan_json(capsys, flat_route, "--power", "400", "--drafting", "27.1")
    assert behind["finish_time_s"] < alone["finish_time_s"]

    course = load_course(flat_route)
    air = air_along_course(course, Conditions())
    library = {share: simulate(course, 400.0, Rider(mass=80.0, drag_area=0.30,
                                                    drafting_reduction=share), air).finish_time
               for share in (0.0, 0.271)}
    assert alone["finish_time_s"] == pytest.approx(library[0.0], rel=1e-12)
    assert behind["finish_time_s"] == pytest.approx(library[0.271], rel=1e-12)
    assert alone["finish_time_s"] - behind["finish_time_s"] == pytest.approx(
        library[0.0] - library[0.271], rel=1e-9)
    # and that saving is the equation of motion's, at the CLI's air density, within 0.5 %
    density = float(np.mean(air.density))
    expected = (standing_start_time(400.0, 0.30, 0.0, course.total_distance, 80.0, density)
                - standing_start_time(400.0, 0.30, 0.271, course.total_distance, 80.0,
                                      density))
    assert alone["finish_time_s"] - behind["finish_time_s"] == pytest.approx(expected,
                                                                            rel=0.005)


@pytest.mark.parametrize("value", ["100", "-5"])
def test_cli_drafting_out_of_range_is_one_line(capsys, flat_route, value):
    code = main(["plan", flat_route, "--power", "400", "--drafting", value, "--json"])
    captured = capsys.readouterr()
    assert code == 2
    assert "--drafting" in captured.err
    assert len(captured.err.strip().splitlines()) == 1
    assert captured.out == ""
