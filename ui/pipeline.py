"""The app's calls into the library, as plain functions of plain inputs (no Streamlit here).

app.py wraps these in st.cache_data / st.cache_resource keyed on file bytes and parameters;
tests call them directly. No physics here: every number comes from `pacing`.
"""

from __future__ import annotations

import re
import warnings
from dataclasses import dataclass, field, fields, replace
from pathlib import Path

import numpy as np

from pacing.errors import InputError

# ------------------------------------------------------------------------------------ course

def demo_routes() -> dict[str, Path]:
    """Demo courses by name, the default first."""
    from pacing.io.gpx import DEFAULT_DEMO_ROUTE, demo_route_paths

    paths = dict(demo_route_paths())
    default = _default_demo_name(paths, DEFAULT_DEMO_ROUTE)
    ordered = {default: paths[default]} if default else {}
    ordered.update({name: path for name, path in sorted(paths.items()) if name != default})
    return ordered


def _default_demo_name(paths: dict[str, Path], default) -> str | None:
    if default in paths:
        return default
    for name, path in paths.items():
        if Path(path) == Path(str(default)) or Path(path).name == Path(str(default)).name:
            return name
    return next(iter(paths), None)


def load_course_from_bytes(data: bytes, name: str, smoothing_window: float,
                           max_grade: float, allow_flat: bool = False):
    """Parse a GPX file's bytes into a Course with the given elevation cleaning.

    Parameters
    ----------
    data : the file's content.
    name : label of the course.
    smoothing_window : width of the elevation smoothing window [m].
    max_grade : steepest grade kept after smoothing [-].
    allow_flat : a file without heights becomes a flat course instead of an error.
    """
    from pacing.course.elevation import ElevationSmoothing
    from pacing.io.gpx import load_course

    if not data:
        raise InputError("the file is empty")
    smoothing = ElevationSmoothing(window=float(smoothing_window), max_grade=float(max_grade))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", UserWarning)  # the page says it itself
        return load_course(data, smoothing=smoothing, name=name,
                           allow_missing_elevation=allow_flat)


SPLIT_MODES = ("by terrain", "fixed length", "my own marks")
"""How the course is cut into segments (our names): by grade, every N metres, at given marks."""


def segment_bounds(course, mode: str, length: float | None = None,
                   marks: tuple[float, ...] = ()) -> np.ndarray:
    """Boundary point indices of the segments.

    Parameters
    ----------
    mode : one of SPLIT_MODES.
    length : segment length for "fixed length" [m].
    marks : split distances from the start for "my own marks" [m].
    """
    from pacing.course.segments import split_at, split_by_grade, split_every

    if mode == "by terrain":
        return split_by_grade(course)
    if mode == "fixed length":
        return split_every(course, length)
    if mode == "my own marks":
        if not marks:
            raise InputError("enter at least one split mark, e.g. 5, 12.5, 30")
        return split_at(course, list(marks))
    raise InputError(f"unknown way to split the course: {mode!r}")


def parse_marks(text: str) -> tuple[float, ...]:
    """"5, 12.5; 30" → (5.0, 12.5, 30.0) in the units the user typed (converted by the caller)."""
    parts = [p for p in text.replace(";", ",").replace(" ", ",").split(",") if p.strip()]
    try:
        values = tuple(float(p) for p in parts)
    except ValueError:
        raise InputError(f"split marks must be numbers separated by commas, got {text!r}") from None
    if any(not np.isfinite(v) for v in values):
        raise InputError("split marks must be finite numbers")
    return values


# ------------------------------------------------------------------------------- the outcome

@dataclass(frozen=True, eq=False)
class Outcome:
    """What the results section shows, all SI.

    Attributes
    ----------
    sport : "cycling" or "running".
    finish_time [s], average_speed [m/s], max_speed [m/s], average_power [W] or None.
    time_saved : against constant power at the same mean [s], or None.
    distance, speed : per point [m], [m/s] (N).
    power, headwind : per piece [W], [m/s] (N-1) or None.
    w_prime_balance : per point [J] (cycling W′), or per piece end [m] (running D′), or None.
    rows : segment targets (pacing.plan.targets.SegmentTarget or objects with the same fields).
    notes : short remarks from the library (binding limits, solver messages).
    exhausted_at : where the W′ (or D′) balance first falls below zero [m], or None.
    note_paces : (text, speed [m/s]) pairs: the metric paces written into `notes` by the
        library ("5:07 /km") and the exact speeds they stand for, so `notes_in` can show them
        in the page's unit system.
    """

    sport: str
    finish_time: float
    average_speed: float
    max_speed: float
    average_power: float | None
    time_saved: float | None
    distance: np.ndarray
    speed: np.ndarray
    power: np.ndarray | None
    headwind: np.ndarray | None
    w_prime_balance: np.ndarray | None
    rows: list
    notes: list[str] = field(default_factory=list)
    exhausted_at: float | None = None
    note_paces: tuple = ()


def _build(cls, values: dict):
    """cls(**values) keeping only the fields cls has (the library may add or drop options)."""
    names = {f.name for f in fields(cls)}
    return cls(**{k: v for k, v in values.items() if k in names and v is not None})


def conditions_from(values: dict):
    """pacing.weather.conditions.Conditions from a dict of SI values."""
    from pacing.weather.conditions import Conditions

    return _build(Conditions, values)


def check_finite(outcome: Outcome) -> Outcome:
    """Refuse an outcome with NaN or infinite headline numbers (never shown to a user)."""
    for name in ("finish_time", "average_speed", "max_speed"):
        if not np.isfinite(getattr(outcome, name)):
            raise InputError(f"the prediction gave no finite {name.replace('_', ' ')}; "
                             "check the inputs")
    return outcome


def with_replaced(obj, **changes):
    """dataclasses.replace for the fields obj has."""
    names = {f.name for f in fields(obj)}
    return replace(obj, **{k: v for k, v in changes.items() if k in names})


# ---------------------------------------------------------------------------------- running

RUNNING_PLANNERS = {
    "equal-effort": "plan_equal_effort",
    "even-pace": "plan_even_pace",
    "fastest": "plan_fastest",
}
"""Running strategy name → pacing.plan.running function."""


def running_outcome(course, bounds, athlete: dict, weather: dict, approach: dict) -> Outcome:
    """Plan a run with pacing.plan.running and gather what the page shows.

    Parameters
    ----------
    athlete : body_mass [kg], height [m], flat_pace [s/km], critical_speed [m/s], d_prime [m].
    weather : pacing.weather.conditions.Conditions fields (SI).
    approach : {"strategy": one of RUNNING_PLANNERS}.
    """
    from pacing.physics.running import Runner
    from pacing.plan import running as running_plans
    from pacing.weather.conditions import air_along_course

    runner = Runner.from_body(athlete["body_mass"], height=athlete.get("height"))
    air = air_along_course(course, conditions_from(weather))
    strategy = approach.get("strategy", "equal-effort")
    if strategy not in RUNNING_PLANNERS:
        raise InputError(f"unknown running plan {strategy!r}")
    common = dict(air_density=air.density, headwind=air.headwind, crosswind=air.crosswind,
                  bounds=np.asarray(bounds))
    if strategy == "fastest":
        plan = running_plans.plan_fastest(course, runner, athlete["critical_speed"],
                                    athlete["d_prime"], **common)
    else:
        flat_speed = 1000.0 / athlete["flat_pace"]
        plan = getattr(running_plans, RUNNING_PLANNERS[strategy])(course, runner, flat_speed,
                                                                    **common)
    rows = running_rows(plan)
    return check_finite(Outcome(
        sport="running", finish_time=plan.finish_time, average_speed=plan.average_speed,
        max_speed=float(np.max(plan.speed)), average_power=None, time_saved=None,
        distance=np.asarray(course.distance), speed=np.asarray(plan.speed), power=None,
        headwind=np.asarray(air.headwind), w_prime_balance=plan.d_prime_balance, rows=rows,
        notes=list(plan.notes), note_paces=running_note_paces(plan, course.total_distance),
    ))


def running_note_paces(plan, total_distance: float) -> tuple:
    """The paces pacing.plan.running writes into its notes, as (text, speed [m/s]) pairs:
    the even pace at the same mean effort (`even_pace_speed`) and, for the fastest plan, the
    fastest even pace within critical speed and D′ (total distance / its finish time)."""
    from pacing.plan.even_pace import pace_clock

    speeds = []
    if plan.even_pace_speed:
        speeds.append(float(plan.even_pace_speed))
    if plan.limited_even_pace_time:
        speeds.append(float(total_distance) / float(plan.limited_even_pace_time))
    return tuple((f"({pace_clock(1000.0 / v)} /km)", v) for v in speeds
                 if np.isfinite(v) and v > 0)


_METRIC_PACE = re.compile(r"\b(\d+):(\d{2}) /km\b")


def notes_in(outcome: Outcome, system: str) -> list[str]:
    """The outcome's notes with every pace in the unit system's own words: "(5:07 /km)"
    becomes "(8:14 /mi)" in imperial, from the exact speed when the plan gave it, else
    converted from the written M:SS (1 mi = 1.609344 km, NIST SP 811)."""
    from pacing.display.units import (
        format_pace,
        pace_from_speed,
        pace_per_km_to_display,
        unit_label,
    )

    if system == "metric":
        return list(outcome.notes)
    label = "/" + unit_label("pace", system).split("/")[-1]
    notes = []
    for note in outcome.notes:
        for text, speed in outcome.note_paces:
            note = note.replace(
                text, f"({format_pace(float(pace_from_speed(speed, system)))} {label})")
        def converted(match, label=label):
            per_km = 60 * int(match.group(1)) + int(match.group(2))
            return f"{format_pace(float(pace_per_km_to_display(per_km, system)))} {label}"

        note = _METRIC_PACE.sub(converted, note)
        notes.append(note)
    return notes


def cycling_plan(course, bounds, athlete: dict, weather: dict, approach: dict):
    """The RacePlan (pacing.plan.cycling.make_plan) for the page's inputs.

    Parameters
    ----------
    athlete : body_mass, bike_mass [kg], drag_area [m²], rolling_coefficient [-],
        drivetrain_efficiency [-], critical_power [W], w_prime [J].
    weather : pacing.weather.conditions.Conditions fields (SI).
    approach : strategy ("constant" | "fastest" | "target-time"), mean_power [W],
        target_time [s], max_power_ratio [-], w_prime_reserve [J].
    """
    from pacing.athlete import Athlete, Setup, rider_for
    from pacing.plan.cycling import make_plan
    from pacing.plan.prediction import SimulationOptions
    from pacing.plan.request import PlanRequest
    from pacing.weather.conditions import air_along_course

    person = _build(Athlete, athlete)
    setup = _build(Setup, athlete)
    rider = rider_for(person, setup)
    air = air_along_course(course, conditions_from(weather))
    request = _build(PlanRequest, {
        **approach,
        "critical_power": person.critical_power,
        "w_prime": person.w_prime,
    })
    return make_plan(course, np.asarray(bounds), rider, air, request, SimulationOptions())


def cycling_outcome(course, bounds, athlete: dict, weather: dict, approach: dict) -> Outcome:
    """Plan a ride and gather what the page shows (see cycling_plan for the inputs)."""
    plan = cycling_plan(course, bounds, athlete, weather, approach)
    prediction = plan.prediction
    rows = cycling_rows(course, plan)
    notes = []
    if plan.binding:
        notes.append("limits reached: " + ", ".join(str(b) for b in plan.binding))
    if np.any(np.asarray(prediction.walking)):
        notes.append("the predicted speed drops to walking pace on part of the course")
    strategy = approach.get("strategy", "constant")
    exhausted_at = None
    if plan.w_prime_balance is not None and np.min(plan.w_prime_balance) < 0:
        first = int(np.argmax(np.asarray(plan.w_prime_balance) < 0))
        exhausted_at = float(np.asarray(prediction.distance)[first])
    return check_finite(Outcome(
        sport="cycling", finish_time=float(prediction.finish_time),
        average_speed=float(prediction.average_speed), max_speed=float(prediction.max_speed),
        average_power=float(prediction.average_power),
        time_saved=None if strategy == "constant" else float(plan.time_saved),
        distance=np.asarray(prediction.distance), speed=np.asarray(prediction.speed),
        power=np.asarray(prediction.power), headwind=np.asarray(prediction.headwind),
        w_prime_balance=plan.w_prime_balance, rows=rows, notes=notes,
        exhausted_at=exhausted_at,
    ))


def cycling_rows(course, plan) -> list:
    """Segment target rows of a RacePlan (pacing.plan.targets.target_table)."""
    from pacing.plan.targets import target_table

    return list(target_table(course, plan.bounds, plan))


def running_rows(plan) -> list:
    """Segment target rows (pacing.plan.targets.SegmentTarget) of a running plan: target pace,
    expected speed, split and elapsed time, no power."""
    from pacing.plan.targets import SegmentTarget

    return [
        SegmentTarget(index=i, start=s.start, end=s.end, length=s.end - s.start, grade=s.grade,
                      target_power=None, power_low=None, power_high=None, target_pace=s.pace,
                      speed=s.speed, time=s.time, cumulative_time=s.cumulative_time,
                      w_prime_balance=None, headwind=s.headwind)
        for i, s in enumerate(plan.segments)
    ]
