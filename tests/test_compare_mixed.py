"""A plan that changes position by segment (pacing.compare.mixed), checked against riding the
course segment by segment with an independent stitching of simulations (shared courses and
requests: tests/test_compare_setups.py)."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from samples import six_km_hill as hill_course
from test_compare_setups import HILL_BOUNDS, race_on

from pacing.compare.mixed import mix_candidates, mixed_plan
from pacing.compare.setups import RiderSetup, compare_setups
from pacing.course.geometry import synthetic_course
from pacing.errors import InputError
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions, speed_limits
from pacing.plan.simulate import simulate
from pacing.weather.conditions import Conditions, air_along_course, still_air


def corner_course():
    """3 km with a 6 % climb, a descent, and tight corners right after segment ends."""
    distance = np.arange(0.0, 3001.0, 10.0)
    elevation = np.interp(distance, [0, 1000, 2000, 3000], [0, 0, 60, 0])
    radius = np.full(distance.shape, 1000.0)
    radius[[102, 205, 230]] = 8.0
    return synthetic_course(distance, elevation, heading=0.0, corner_radius=radius)


def ride_by_segments(course, bounds, riders, piece_power, air, options=None):
    """Reference for a position changed by segment: each segment simulated on its own with
    its own scalar Rider (pacing.plan.simulate.simulate on a sub-course), starting at the speed the
    previous one ended with. Look-ahead braking across a segment end is kept by imposing the
    whole course's speed limit there (pacing.plan.prediction.speed_limits) through the corner
    radius R = limit²/a_lat. Returns (time [s] and speed [m/s] at every point, braking [J])."""
    options = options or SimulationOptions()
    grade = np.asarray(course.grade, dtype=float)
    road = np.diff(course.distance) * np.sqrt(1.0 + grade**2)
    limit = speed_limits(course, road, options)
    piece_power = np.broadcast_to(np.asarray(piece_power, dtype=float), road.shape)
    times, speeds, braking = [0.0], [float(options.start_speed)], 0.0
    for rider, first, last in zip(riders, bounds[:-1], bounds[1:], strict=True):
        radius = np.array(course.corner_radius[first:last + 1], dtype=float)
        if last < bounds[-1]:
            radius[-1] = min(radius[-1], float(limit[last]) ** 2 / options.lateral_acceleration)
        part_course = dataclasses.replace(
            course, distance=course.distance[first:last + 1],
            latitude=course.latitude[first:last + 1], longitude=course.longitude[first:last + 1],
            elevation=course.elevation[first:last + 1],
            raw_elevation=course.raw_elevation[first:last + 1], grade=course.grade[first:last],
            heading=course.heading[first:last], corner_radius=radius)
        part_air = dataclasses.replace(air, density=air.density[first:last],
                                       headwind=air.headwind[first:last],
                                       crosswind=air.crosswind[first:last])
        part = simulate(part_course, piece_power[first:last], rider, part_air,
                        dataclasses.replace(options, start_speed=speeds[-1]))
        times.extend(part.time[1:] + times[-1])
        speeds.extend(part.speed[1:])
        braking += float(part.braking.sum())
    return np.array(times), np.array(speeds), braking


def test_simulating_by_segments_with_one_rider_equals_one_simulation():
    """Chaining segments keeps look-ahead braking for corners beyond a segment end."""
    course = corner_course()
    air = still_air(course, 1.2)
    rider = Rider(mass=80.0, drag_area=0.30)
    bounds = np.array([0, 100, 200, 300])
    whole = simulate(course, 300.0, rider, air)
    time, speed, braking = ride_by_segments(course, bounds, [rider] * 3, 300.0, air)
    assert time[-1] == pytest.approx(whole.finish_time, rel=1e-9)
    assert speed == pytest.approx(whole.speed, rel=1e-9)
    assert braking == pytest.approx(whole.braking.sum(), rel=1e-6)
    assert whole.braking.sum() > 0  # the corners do bind


def test_the_mixed_plan_rides_upright_on_the_climb_and_is_verified_faster():
    distance = np.arange(0.0, 9001.0, 10.0)
    elevation = np.interp(distance, [0, 4000, 6000, 9000], [0, 0, 160, 160])  # 8 % climb
    course = synthetic_course(distance, elevation, heading=0.0)
    air = still_air(course, 1.2)
    bounds = np.array([0, 400, 600, 900])
    setups = [RiderSetup("upright", Rider(mass=78, drag_area=0.33)),
              RiderSetup("aero", Rider(mass=78, drag_area=0.24), power_share=0.88)]
    comparison = compare_setups(race_on(course, bounds), setups, air=air)
    mixed = mixed_plan(comparison)
    assert mixed.names == ("aero", "upright", "aero")
    assert mixed.faster and mixed.gain > 0
    assert mixed.finish_time < min(r.finish_time for r in comparison.results)
    assert mixed.piece_power[450] == pytest.approx(250.0)
    assert mixed.piece_power[100] == pytest.approx(220.0)


def test_no_mixed_plan_without_two_positions_of_one_bike():
    course = hill_course()
    air = still_air(course, 1.2)
    setups = [RiderSetup("a", Rider(mass=78, drag_area=0.3)),
              RiderSetup("b", Rider(mass=82, drag_area=0.25))]
    comparison = compare_setups(race_on(course, HILL_BOUNDS), setups, air=air)
    assert mixed_plan(comparison) is None


def test_per_piece_drag_area_in_simulate_matches_riding_by_segments():
    course = hill_course()
    air = still_air(course, 1.2)
    rider = Rider(mass=80.0, drag_area=0.30)
    areas = np.repeat([0.25, 0.32, 0.25], np.diff(HILL_BOUNDS))
    whole = simulate(course, 250.0, dataclasses.replace(rider, drag_area=areas), air)
    riders = [dataclasses.replace(rider, drag_area=a) for a in (0.25, 0.32, 0.25)]
    time, speed, _ = ride_by_segments(course, HILL_BOUNDS, riders, 250.0, air)
    assert whole.finish_time == pytest.approx(time[-1], rel=1e-9)
    assert whole.speed == pytest.approx(speed, rel=1e-9)


def test_the_mixed_ride_equals_each_segment_ridden_by_its_own_setup():
    """The mixed plan's single simulation (drag area and power per piece) reproduces riding
    each segment with the chosen setup's own Rider, speed carried over, corners included."""
    course = corner_course()
    air = air_along_course(course, Conditions(wind_speed=3.0, wind_from=200.0))
    bounds = np.array([0, 100, 200, 300])
    table = ((0.0, 1.0), (15.0, 0.9))
    setups = [RiderSetup("upright", Rider(mass=78, drag_area=0.33, yaw_drag_table=table)),
              RiderSetup("aero", Rider(mass=78, drag_area=0.24, yaw_drag_table=table),
                         power_share=0.88)]
    comparison = compare_setups(race_on(course, bounds), setups, air=air)
    mixed = mixed_plan(comparison)
    assert set(mixed.names) == {"upright", "aero"}  # both positions are used
    riders = [comparison.result(name).setup.rider for name in mixed.names]
    time, speed, braking = ride_by_segments(course, bounds, riders, mixed.piece_power, air)
    assert mixed.finish_time == pytest.approx(time[-1], rel=1e-9)
    assert mixed.prediction.speed == pytest.approx(speed, rel=1e-9)
    assert mixed.prediction.braking.sum() == pytest.approx(braking, rel=1e-6)
    assert mixed.prediction.energy_balance_residual < 1e-6


def test_only_setups_that_differ_in_drag_area_alone_are_mixed():
    """A position swap mid-ride keeps the bike: a setup with another yaw response, mass or
    Crr is no candidate, and naming one explicitly is refused in one line."""
    course = hill_course()
    air = still_air(course, 1.2)
    setups = [RiderSetup("hoods", Rider(mass=80, drag_area=0.32)),
              RiderSetup("aero", Rider(mass=80, drag_area=0.25), power_share=0.95),
              RiderSetup("deep", Rider(mass=80, drag_area=0.25,
                                       yaw_drag_table=((0.0, 1.0), (15.0, 0.9))),
                         power_share=0.95),
              RiderSetup("slick", Rider(mass=80, drag_area=0.25, rolling_coefficient=0.0025),
                         power_share=0.95)]
    comparison = compare_setups(race_on(course, HILL_BOUNDS), setups, air=air)
    assert comparison.fastest.name == "slick"  # same CdA as aero, less rolling resistance
    # the quickest setup is alone on its bike; the two positions of the other bike are mixed
    assert [r.name for r in mix_candidates(comparison)] == ["hoods", "aero"]
    assert mixed_plan(comparison).candidates == ("hoods", "aero")
    mixed = mixed_plan(comparison, candidates=["hoods", "aero"])
    assert mixed.candidates == ("hoods", "aero")
    with pytest.raises(InputError, match="differ in more than CdA") as error:
        mixed_plan(comparison, candidates=["aero", "deep"])
    assert "\n" not in str(error.value)


def test_the_bike_with_the_most_positions_is_mixed_and_a_tie_goes_to_the_quickest():
    """Issue 18: a lighter bike that is quickest must not leave the positions of another bike
    unmixed; of two bikes with as many positions, the one holding the quickest setup is mixed.
    A bike is every rider parameter but the drag area (here: mass and Crr)."""
    course = hill_course()
    air = still_air(course, 1.2)
    light = {"mass": 76.0, "rolling_coefficient": 0.0035}
    setups = [RiderSetup("hoods", Rider(mass=80, drag_area=0.32)),
              RiderSetup("light", Rider(drag_area=0.26, **light)),
              RiderSetup("aero", Rider(mass=80, drag_area=0.26), power_share=0.96),
              RiderSetup("drops", Rider(mass=80, drag_area=0.29))]
    comparison = compare_setups(race_on(course, HILL_BOUNDS), setups, air=air)
    assert comparison.fastest.name == "light"
    assert [r.name for r in mix_candidates(comparison)] == ["hoods", "aero", "drops"]
    # the light bike gets a second position and the other loses one: two bikes of two each
    tied = setups[:2] + [RiderSetup("light tops", Rider(drag_area=0.32, **light)),
                         setups[2]]
    comparison = compare_setups(race_on(course, HILL_BOUNDS), tied, air=air)
    assert [r.name for r in mix_candidates(comparison)] == ["light", "light tops"]
    mixed = mixed_plan(comparison)
    assert mixed.candidates == ("light", "light tops")
    assert mixed.best_single == "light"
