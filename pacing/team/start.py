"""A standing start: the line accelerates from rest behind its first leader.

The first leader rides at his cap on power; the line's speed follows from his power balance
with the inertia of rider and wheels (Martin et al. 1998):

    dv/dt = (η·P/v − F_resist(v)) / (m + I/r²),   dv/dt ≤ START_ACCELERATION_LIMIT

integrated by explicit steps of START_STEP seconds from START_SPEED until the line reaches 99 %
of the speed of the first turn. The followers ride at the power their own drag (sheltered) and
inertia need at each step. The time lost against a flying start is t_start − x_start / v₁.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from pacing.constants import STANDARD_GRAVITY
from pacing.physics.cycling import Rider

START_STEP = 0.2
"""Time step of the start [s]."""

START_SPEED = 0.5
"""Speed at the first pedal stroke [m/s] (the holder's push; from memory)."""

START_ACCELERATION_LIMIT = 2.5
"""Largest acceleration of the line at the start [m/s²]: at low speed power is limited by the
torque a rider can put on the pedals, not by the cap (an assumption of ours, from memory of
standing-start times of 0 to 60 km/h in about 15-20 s)."""

REACHED = 0.99
"""Share of the first turn's speed at which the start ends [-]."""


@dataclass(frozen=True, eq=False)
class StartRun:
    """The samples of a standing start.

    Attributes
    ----------
    speed : numpy.ndarray
        Mean speed of each step [m/s].
    acceleration : numpy.ndarray
        Acceleration in each step [m/s²].
    step_duration : numpy.ndarray
        Length of each step [s].
    duration : float
        Time of the start [s].
    distance : float
        Distance covered during the start [m].
    """

    speed: np.ndarray
    acceleration: np.ndarray
    step_duration: np.ndarray
    duration: float
    distance: float


def standing_start(leader: Rider, power: float, target_speed: float, grade: float,
                   density: float, headwind: float, crosswind: float) -> StartRun:
    """Accelerate the line from rest at the leader's power to 99 % of `target_speed`.

    Parameters
    ----------
    leader : pacing.physics.cycling.Rider
        The first leader's power balance (scalar drag area: his place's drafting included)
        [-].
    power : float
        His power during the start [W].
    target_speed : float
        Speed of the first turn [m/s].
    grade, density, headwind, crosswind : float
        The first piece: grade [-], air density [kg/m³], wind components [m/s].

    Returns
    -------
    StartRun
        Speeds and accelerations by step, time and distance of the start [m/s, m/s², s, m].

    References
    ----------
    Martin et al. (1998), J Appl Biomech 14(3):276-291. doi:10.1123/jab.14.3.276
    """
    drive = leader.drivetrain_efficiency * power
    area = 0.5 * density * (float(leader.drag_area) + leader.wheel_drag_area)
    slope = math.sqrt(1.0 + grade * grade)
    fixed = (float(leader.rolling_coefficient) * leader.mass * STANDARD_GRAVITY / slope
             + leader.mass * STANDARD_GRAVITY * grade / slope + leader.bearing_force_constant)
    mass = leader.effective_mass
    speed, time, distance = START_SPEED, 0.0, 0.0
    speeds: list[float] = []
    accelerations: list[float] = []
    steps: list[float] = []
    goal = REACHED * target_speed
    while speed < goal and time < 300.0:
        along = speed + headwind
        force = (area * math.hypot(along, crosswind) * along + fixed
                 + leader.bearing_force_per_speed * speed)
        acceleration = min((drive / speed - force) / mass, START_ACCELERATION_LIMIT)
        if acceleration <= 1e-6:
            break
        step = min(START_STEP, (goal - speed) / acceleration + 1e-9)
        new_speed = speed + acceleration * step
        speeds.append(0.5 * (speed + new_speed))
        accelerations.append(acceleration)
        steps.append(step)
        distance += 0.5 * (speed + new_speed) * step
        time += step
        speed = new_speed
    return StartRun(np.array(speeds), np.array(accelerations), np.array(steps), time, distance)
