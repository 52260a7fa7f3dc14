"""An independent forward model of a ridden race, for the race-review tests (and its own checks).

Written here from the published equations, not from pacing.physics.cycling or pacing.plan:
the power balance of Martin et al. (1998), J Appl Biomech 14(3):276-291, with its coefficient
set (η 0.976, F_w 0.0044 m², wheels 0.14 kg·m² on r 0.311 m, bearing loss v·(91 + 8.7·v)·1e-3 W;
from the paper, as remembered), integrated in time with the classical Runge-Kutta method
(step 0.05 s) and recorded at 1 Hz, like a head unit. The wind at the rider's height (1 m) is
the 10 m wind reduced by the neutral log profile u(z) ∝ ln(z/z0) (Stull 1988, ch. 9; z0 0.03 m);
the air is humid air as an ideal-gas mixture with the Magnus saturation pressure (Alduchov &
Eskridge 1996 coefficients 6.1094 hPa, 17.625, 243.04 °C) and the ISA lapse of 6.5 K/km with
the barometric pressure (ICAO Doc 7488/3). Positions are the course's (a flat map of the
square loop near 0° N 0° E) plus Gaussian GNSS noise.

The race may ride a different power on stretches, a different CdA or Crr, in a wind the plan
did not know, and stop: brakes at 2.5 m/s² to a standstill at a point, waits, and starts again
(drive force capped at 470 N, about the traction of the rear wheel).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np
import pytest
from scipy.optimize import brentq

GRAVITY = 9.80665
"""Standard gravity [m/s²] (CGPM 1901)."""

ETA, WHEEL_AREA, WHEEL_INERTIA, WHEEL_RADIUS = 0.976, 0.0044, 0.14, 0.311
"""Martin et al. (1998): drivetrain efficiency, wheel drag area [m²], inertia [kg·m²], radius."""

METRES_PER_DEGREE = 111_195.0
"""Metres per degree on the mean Earth sphere (2π·6371.0088 km/360), common practice."""

SIDE = 2500.0
"""Side of the square loop [m]."""

STEP = 10.0
"""Point spacing of the course [m]."""


def loop_profile(distance: np.ndarray) -> np.ndarray:
    """Elevation of the loop [m]: 1 km at 5 % up from 500 m, then down evenly to the finish."""
    d = np.asarray(distance, dtype=float)
    up = np.clip((d - 500.0) * 0.05, 0.0, 50.0)
    down = np.clip((d - 1500.0) / (4 * SIDE - 1500.0) * 50.0, 0.0, 50.0)
    return up - down


def loop_heading(distance: np.ndarray) -> np.ndarray:
    """Direction of travel [deg]: north, east, south, west along the four sides."""
    side = np.clip(np.floor(np.asarray(distance) / SIDE), 0, 3)
    return side * 90.0


def loop_position(distance: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(north, east) [m] of a course distance on the square loop."""
    d = np.clip(np.asarray(distance, dtype=float), 0.0, 4 * SIDE)
    north = np.select([d < SIDE, d < 2 * SIDE, d < 3 * SIDE],
                      [d, SIDE + 0 * d, 3 * SIDE - d], 0.0)
    east = np.select([d < SIDE, d < 2 * SIDE, d < 3 * SIDE], [0 * d, d - SIDE, SIDE + 0 * d],
                     4 * SIDE - d)
    return north, east


def humid_air_density(temperature: float, humidity: float, pressure: float) -> float:
    """Humid air as ideal gases [kg/m³]: dry air R 287.058, vapour R 461.495 J/(kg·K);
    saturation pressure by the Magnus form (Alduchov & Eskridge 1996)."""
    vapour = humidity * 610.94 * math.exp(17.625 * temperature / (temperature + 243.04))
    kelvin = temperature + 273.15
    return (pressure - vapour) / (287.058 * kelvin) + vapour / (461.495 * kelvin)


def density_at(height: float, temperature: float = 20.0, humidity: float = 0.5,
               sea_level_pressure: float = 101325.0) -> float:
    """Air density at a height [kg/m³], the start at 0 m at `temperature` (ISA lapse)."""
    pressure = sea_level_pressure * (1.0 - 0.0065 * height / 288.15) ** 5.25588
    return humid_air_density(temperature - 0.0065 * height, humidity, pressure)


@dataclass
class Day:
    """How the race went (SI)."""

    power: Callable[[float], float] = lambda x: 250.0
    drag_area: float = 0.30
    rolling: float = 0.004
    mass: float = 80.0
    wind_speed: float = 0.0  # at 10 m
    wind_from: float = 0.0
    stops: tuple[tuple[float, float], ...] = ()  # (course distance [m], wait [s])
    start_speed: float = 10.0
    laps: int = 1
    gnss_noise: float = 3.0
    seed: int = 1
    extra: dict = field(default_factory=dict)


def wind_at_rider(speed_10m: float) -> float:
    """The 10 m wind at 1 m over z0 = 0.03 m by the log profile (Stull 1988) [m/s]."""
    return speed_10m * math.log(1.0 / 0.03) / math.log(10.0 / 0.03)


def loop_grade(at: float) -> float:
    """Grade of the loop at a course distance within the lap [-] (of `loop_profile`)."""
    if at < 500.0:
        return 0.0
    return 0.05 if at < 1500.0 else -50.0 / (4 * SIDE - 1500.0)


def _acceleration(x: float, v: float, day: Day, braking: bool) -> float:
    """dv/dt on the road [m/s²] at course distance x and road speed v."""
    at = x % (4 * SIDE)
    grade = loop_grade(at)
    cos_t, sin_t = 1 / math.sqrt(1 + grade**2), grade / math.sqrt(1 + grade**2)
    heading = math.radians(min(math.floor(at / SIDE), 3) * 90.0)
    w = wind_at_rider(day.wind_speed)
    head = w * math.cos(heading - math.radians(day.wind_from))
    cross = w * math.sin(heading - math.radians(day.wind_from))
    height = min(max((at - 500.0) * 0.05, 0.0), 50.0) - min(
        max((at - 1500.0) / (4 * SIDE - 1500.0) * 50.0, 0.0), 50.0)
    rho = density_at(height)
    along = v + head
    aero = 0.5 * rho * (day.drag_area + WHEEL_AREA) * math.hypot(along, cross) * along
    resist = (aero + day.rolling * day.mass * GRAVITY * cos_t + day.mass * GRAVITY * sin_t
              + (91.0 + 8.7 * v) * 1e-3)
    m_eff = day.mass + WHEEL_INERTIA / WHEEL_RADIUS**2
    if braking:
        return -2.5
    drive = min(ETA * day.power(at) / max(v, 0.1), 470.0)
    return (drive - resist) / m_eff


def _rates(x: float, v: float, day: Day) -> tuple[float, float]:
    """(dx/dt horizontal [m/s], dv/dt [m/s²])."""
    grade = loop_grade(x % (4 * SIDE))
    return v / math.sqrt(1 + grade * grade), _acceleration(x, v, day, False)


def _runge_kutta_step(x: float, v: float, day: Day, dt: float) -> tuple[float, float]:
    """One classical Runge-Kutta step of (x, v)."""
    a1, b1 = _rates(x, v, day)
    a2, b2 = _rates(x + 0.5 * dt * a1, v + 0.5 * dt * b1, day)
    a3, b3 = _rates(x + 0.5 * dt * a2, v + 0.5 * dt * b2, day)
    a4, b4 = _rates(x + dt * a3, v + dt * b3, day)
    return (x + dt / 6.0 * (a1 + 2 * a2 + 2 * a3 + a4),
            max(v + dt / 6.0 * (b1 + 2 * b2 + 2 * b3 + b4), 0.0))


def ride(day: Day, dt: float = 0.05, after: float = 20.0) -> dict[str, np.ndarray]:
    """Ride `day.laps` laps from a rolling start and on past the finish for `after` seconds
    (the head unit still recording); samples at 1 Hz: time [s], distance along the course
    (horizontal) [m], road speed [m/s], power [W], latitude, longitude [deg]; "finish_time"
    the time at the finish line [s]."""
    total = 4 * SIDE * day.laps
    finish = None
    x, v, t = 0.0, day.start_speed, 0.0
    stops = sorted(day.stops)
    samples: list[tuple[float, float, float, float]] = [(0.0, 0.0, v, day.power(0.0))]
    waiting_until = None
    next_sample = 1.0
    while finish is None or t < finish + after:
        braking = bool(stops) and x >= stops[0][0] - v * v / 5.0 and waiting_until is None
        if waiting_until is not None:
            v_next, x_next = 0.0, x
            if t + dt >= waiting_until:
                waiting_until = None
        elif braking:
            v_next = max(v - 2.5 * dt, 0.0)
            x_next = x + 0.5 * (v + v_next) * dt
            if v_next == 0.0:
                waiting_until = t + dt + stops.pop(0)[1]
        else:
            x_next, v_next = _runge_kutta_step(x, v, day, dt)
        if finish is None and x_next >= total:
            finish = t + dt * (total - x) / (x_next - x)
        x, v, t = float(x_next), float(v_next), t + dt
        if t >= next_sample - 1e-9:
            pedalling = waiting_until is None and not braking
            samples.append((t, x, v, day.power(x % (4 * SIDE)) if pedalling
                            else 0.0))
            next_sample += 1.0
    time, distance, speed, power = (np.array(c) for c in zip(*samples, strict=True))
    rng = np.random.default_rng(day.seed)
    north, east = loop_position(np.where(distance > total, distance - total, distance)
                                % (4 * SIDE))
    noise = rng.normal(0.0, day.gnss_noise, (2, time.size))
    return {"time": time, "distance": distance, "speed": speed, "power": power,
            "latitude": (north + noise[0]) / METRES_PER_DEGREE,
            "longitude": (east + noise[1]) / METRES_PER_DEGREE,
            "finish_time": np.array(finish)}


def finish_time(day: Day) -> float:
    """The forward model's time for the whole race [s]."""
    return float(ride(day)["finish_time"])


def race_csv(samples: dict[str, np.ndarray], positions: bool = True) -> bytes:
    """The samples as a race CSV file (time_s, power_w, speed_mps, distance_m, lat, lon)."""
    columns = ["time_s", "power_w", "speed_mps", "distance_m"]
    keys = ["time", "power", "speed", "distance"]
    if positions:
        columns += ["latitude", "longitude"]
        keys += ["latitude", "longitude"]
    lines = [",".join(columns)]
    for row in zip(*(samples[k] for k in keys), strict=True):
        lines.append(",".join(f"{value:.9g}" for value in row))
    return ("\n".join(lines) + "\n").encode()


def race_gpx(samples: dict[str, np.ndarray]) -> bytes:
    """The samples as a race GPX file: times from 2026-06-01T09:00:00Z, power, speed and
    cadence in track-point extensions."""
    import datetime

    start = datetime.datetime(2026, 6, 1, 9, 0, 0, tzinfo=datetime.UTC)
    points = []
    for t, lat, lon, p, v in zip(samples["time"], samples["latitude"], samples["longitude"],
                                 samples["power"], samples["speed"], strict=True):
        stamp = (start + datetime.timedelta(seconds=float(t))).isoformat().replace("+00:00", "Z")
        points.append(f'<trkpt lat="{lat:.9f}" lon="{lon:.9f}"><time>{stamp}</time>'
                      f"<extensions><power>{p:.1f}</power><tpx:TrackPointExtension>"
                      f"<tpx:speed>{v:.3f}</tpx:speed><tpx:cad>90</tpx:cad>"
                      "</tpx:TrackPointExtension></extensions></trkpt>")
    return ('<?xml version="1.0"?><gpx version="1.1" creator="test" '
            'xmlns="http://www.topografix.com/GPX/1/1" '
            'xmlns:tpx="http://example.org/TrackPointExtension"><trk><trkseg>'
            + "".join(points) + "</trkseg></trk></gpx>").encode()


def route_gpx(step: float = 50.0) -> bytes:
    """The square loop as a GPX route file (track points every `step` metres)."""
    distance = np.arange(0.0, 4 * SIDE + step / 2, step)
    north, east = loop_position(distance)
    height = loop_profile(distance)
    points = "".join(f'<trkpt lat="{n / METRES_PER_DEGREE:.9f}" lon="{e / METRES_PER_DEGREE:.9f}">'
                     f"<ele>{h:.2f}</ele></trkpt>" for n, e, h in zip(north, east, height,
                                                                        strict=True))
    return (f'<?xml version="1.0"?><gpx version="1.1" creator="test" '
            f'xmlns="http://www.topografix.com/GPX/1/1"><trk><trkseg>{points}</trkseg></trk>'
            "</gpx>").encode()


# ------------------------------------------------------------------ the model's own checks


def test_steady_speed_on_the_flat_solves_the_power_balance():
    """A long flat ride at 250 W settles at the root of η·P = F(v)·v (Martin et al. 1998),
    found by scipy's brentq: the integration is right."""
    rho = humid_air_density(20.0, 0.5, 101325.0)

    def balance(v: float) -> float:
        resist = (0.5 * rho * (0.30 + WHEEL_AREA) * v * v + 0.004 * 80 * GRAVITY
                  + (91 + 8.7 * v) * 1e-3)
        return ETA * 250.0 - resist * v

    steady = brentq(balance, 1.0, 30.0)
    v = steady - 2.0
    for _ in range(6000):  # 300 s at 0.05 s on the flat (x = 0: no climb)
        v += 0.05 * _acceleration(0.0, v, Day(), False)
    assert v == pytest.approx(steady, abs=1e-4)


def test_humid_air_density_at_20_degrees_and_half_humidity():
    """1.1988 kg/m³ as ideal gases; CIPM-2007 (Picard et al. 2008, Metrologia 45:149-155) gives
    1.1993 kg/m³ for the same air (from memory): within 0.1 %."""
    assert humid_air_density(20.0, 0.5, 101325.0) == pytest.approx(1.1993, rel=1e-3)


def test_log_profile_reduces_a_10_m_wind_to_60_percent_at_1_m():
    """ln(1/0.03)/ln(10/0.03) = 0.6037 (Stull 1988, neutral log profile)."""
    assert wind_at_rider(1.0) == pytest.approx(0.6037, abs=1e-4)


def test_a_stop_waits_and_costs_more_than_its_wait():
    """Braking, waiting 30 s and starting again costs the wait plus the speed lost."""
    plain = finish_time(Day())
    stopped = finish_time(Day(stops=((3000.0, 30.0),)))
    assert 30.0 + 5.0 < stopped - plain < 30.0 + 40.0
