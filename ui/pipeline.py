"""The app's calls into the library, as plain functions of plain inputs (no Streamlit here).

app.py wraps these in st.cache_data / st.cache_resource keyed on file bytes and parameters;
tests call them directly. No physics here: every number comes from `pacing`.
"""

from __future__ import annotations

from dataclasses import dataclass, fields, replace
from pathlib import Path
from typing import Any

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


def demo_label(name: str) -> str:
    """A demo course's name as the page shows it: "01_corravey_hill_loop_40k" → "Corravey
    hill loop, 40 km" (the file's order number dropped, underscores as spaces)."""
    import re

    words = re.sub(r"^\d+[_\s-]*", "", name).replace("_", " ").strip()
    words = re.sub(r"\s(\d+(?:\.\d+)?)k$", r", \1 km", words)
    return words[:1].upper() + words[1:] if words else name


def _default_demo_name(paths: dict[str, Path], default) -> str | None:
    """The name of the default demo course among `paths` (by name, path or file name), else
    the first one; None when there is none."""
    if default in paths:
        return default
    for name, path in paths.items():
        if Path(path) == Path(str(default)) or Path(path).name == Path(str(default)).name:
            return name
    return next(iter(paths), None)


def load_course_from_bytes(data: bytes, name: str, smoothing_window: float,
                           max_grade: float, allow_flat: bool = False,
                           tracks: tuple[int, ...] | None = None, gaps: str = "join"):
    """Parse a GPX file's bytes into a Course with the given elevation cleaning.

    Parameters
    ----------
    data : the file's content (GPX bytes).
    name : label of the course.
    smoothing_window : width of the elevation smoothing window [m].
    max_grade : steepest grade kept after smoothing [-].
    allow_flat : a file without heights becomes a flat course instead of an error.
    tracks : the tracks (numbered from 1) that make the course; None for all, in order.
    gaps : what to do with gaps in the recording: "join", "drop" or "refuse".

    What reading found (gaps, missing or constant heights, what cleaning removed) is on the
    course's `notices`; the page shows them beside the course facts.
    """
    from pacing.course.elevation import ElevationSmoothing
    from pacing.io.gpx import load_course

    if not data:
        raise InputError("the file is empty")
    smoothing = ElevationSmoothing(window=float(smoothing_window), max_grade=float(max_grade))
    return load_course(data, smoothing=smoothing, name=name, allow_missing_elevation=allow_flat,
                       tracks=None if tracks is None else list(tracks), gaps=gaps)


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


NO_HEIGHTS_PAGE_WORDS = ("the file has no heights: tick 'A file without heights is a flat "
                         "course' to ride it as a flat course")
"""The page's words for a course file without elevations (the library's refusal names the
command line's flag)."""


def page_words(message: str) -> str:
    """A refusal of the library in the page's words: a course file without heights says how
    to plan it as flat here (the checkbox; the command line names its own flag).

    Parameters
    ----------
    message : str
        The refusal's one line.

    Returns
    -------
    str
        The same line, or the page's words for it.
    """
    from pacing.io.gpx import NO_HEIGHTS_MESSAGE

    if message.startswith(NO_HEIGHTS_MESSAGE):
        return NO_HEIGHTS_PAGE_WORDS
    return message


# ------------------------------------------------------------------------------- the outcome

@dataclass(frozen=True, eq=False)
class Outcome:
    """What the results section shows, all SI (a view of pacing.plan.race.RaceResult).

    Attributes
    ----------
    sport : "cycling" or "running".
    finish_time [s], average_speed [m/s], max_speed [m/s], average_power [W] or None.
    time_saved : against constant power at the same mean [s], or None.
    distance, speed : per point [m], [m/s] (N) for cycling; running speed is per piece (N-1).
    power, headwind : per piece [W], [m/s] (N-1) or None.
    w_prime_balance : per point [J] (cycling W′), or per piece end [m] (running D′), or None.
    rows : segment targets (pacing.plan.targets.SegmentTarget).
    notices : what the user must be told (pacing.notices.Notice; words by
        pacing.display.notices in the page's unit system).
    exhausted_at : where the W′ (or D′) balance first falls below zero [m], or None.
    strategy : the plan's strategy key.
    planned_power : time-weighted mean of the planned power [W] (cycling), or None.
    easing : where the rider eases off: braking, coasting, the start
        (pacing.plan.energy.EasingEvent), in order.
    budget : the athlete's energy per segment and what it pays for: the crank work
        (pacing.plan.energy.EnergyBudget, cycling) or the metabolic energy
        (pacing.plan.energy.RunningBudget, running).
    reynolds : Reynolds number of the athlete at the race's mean air speed [-], or None.
    air_speed : time-weighted mean speed of the air past the athlete [m/s], or None.
    w_prime_model : the W′ balance model of the plan (a key of
        pacing.physiology.critical_power.W_PRIME_BALANCE_MODELS), or None (running).
    race_day : the clock, weather met, heat and altitude of the plan
        (pacing.plan.race_day.RaceDayResult), or None.
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
    notices: tuple = ()
    exhausted_at: float | None = None
    strategy: str = ""
    planned_power: float | None = None
    easing: tuple = ()
    budget: Any = None
    reynolds: float | None = None
    air_speed: float | None = None
    w_prime_model: str | None = None
    race_day: Any = None


def _build(cls, values: dict):
    """cls(**values) keeping only the fields cls has (the library may add or drop options)."""
    names = {f.name for f in fields(cls)}
    return cls(**{k: v for k, v in values.items() if k in names and v is not None})


def conditions_from(values: dict):
    """pacing.weather.conditions.Conditions from a dict of SI values (its "race_day" entry,
    the race-day panel's inputs, is for race_day_of)."""
    from pacing.weather.conditions import Conditions

    return _build(Conditions, {k: v for k, v in values.items() if k != "race_day"})


def race_day_of(weather: dict):
    """The pacing.plan.race_day.RaceDay of the page's weather: its "race_day" entry (the
    race-day panel's inputs, ui.race_day_panel.render), or None for the default race day
    (one weather all day, limits measured at 20 °C, 50 %, sea level)."""
    from pacing.io.weather_file import race_day_from_inputs

    return race_day_from_inputs(weather.get("race_day"))


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


def race_request(course, bounds, athlete: dict, weather: dict, approach: dict):
    """The pacing.plan.race.RaceRequest of the page's inputs (all SI).

    Parameters
    ----------
    athlete : sport ("cycling" | "running"); cycling: body_mass, bike_mass [kg], drag_area
        [m²], rolling_coefficient [-], drivetrain_efficiency [-], critical_power [W],
        w_prime [J]; running: body_mass [kg], height [m], flat_pace [s/km],
        critical_speed [m/s], d_prime [m].
    weather : pacing.weather.conditions.Conditions fields (SI) and, optionally, "race_day":
        the race-day panel's inputs (race_day_of).
    approach : strategy (a key of pacing.plan.strategies.STRATEGIES[sport]); cycling:
        mean_power [W], target_time [s], max_power_ratio [-], w_prime_reserve [J],
        w_prime_model (a key of W_PRIME_BALANCE_MODELS, default "differential"), and the
        race's own: start_speed [m/s] (default 0), max_descent_speed [m/s] (None: no cap),
        drafting_reduction [-] (share of the drag area saved behind others, default 0).
    """
    from pacing.plan.race import RaceRequest

    sport = athlete.get("sport", "cycling")
    if sport == "running":
        return _running_request(course, bounds, athlete, weather, approach)
    from pacing.athlete import Athlete, Setup, rider_for
    from pacing.plan.prediction import SimulationOptions
    from pacing.plan.request import PlanRequest

    person = _build(Athlete, athlete)
    plan_request = _build(PlanRequest, {**approach, "critical_power": person.critical_power,
                                        "w_prime": person.w_prime})
    options = _build(SimulationOptions, {
        "start_speed": approach.get("start_speed"),
        "max_descent_speed": approach.get("max_descent_speed")})
    rider = rider_for(person, _build(Setup, athlete),
                      drafting_reduction=float(approach.get("drafting_reduction") or 0.0))
    return RaceRequest(course=course, bounds=np.asarray(bounds),
                       conditions=conditions_from(weather), sport="cycling",
                       strategy=approach.get("strategy", "constant"), rider=rider,
                       cycling=plan_request, options=options, race_day=race_day_of(weather))


def _running_request(course, bounds, athlete: dict, weather: dict, approach: dict):
    """The running RaceRequest: flat pace [s/km] → flat speed [m/s]; the fastest plan takes
    critical speed [m/s] and D′ [m] instead."""
    from pacing.physics.running import Runner
    from pacing.plan.race import RaceRequest, RunningRequest

    strategy = approach.get("strategy", "equal-effort")
    if strategy == "fastest":
        running = RunningRequest(critical_speed=athlete["critical_speed"],
                                 d_prime=athlete["d_prime"])
    else:
        running = RunningRequest(flat_speed=1000.0 / athlete["flat_pace"])
    return RaceRequest(course=course, bounds=np.asarray(bounds),
                       conditions=conditions_from(weather), sport="running", strategy=strategy,
                       runner=Runner.from_body(athlete["body_mass"], height=athlete.get("height")),
                       running=running, race_day=race_day_of(weather))


def race_outcome(course, bounds, athlete: dict, weather: dict, approach: dict) -> Outcome:
    """Plan the race of the page's inputs (one chain: pacing.plan.race.plan_race) and gather
    what the page shows (see race_request for the inputs)."""
    from pacing.plan.race import plan_race

    result = plan_race(race_request(course, bounds, athlete, weather, approach))
    if result.sport == "running":
        return _running_outcome(result)
    return _cycling_outcome(result)


def _race_reynolds(result, speed, duration) -> dict:
    """{"reynolds": Re [-], "air_speed": [m/s]}: the Reynolds number
    (pacing.plan.energy.reynolds_number) at the time-weighted mean air speed past the athlete
    and mean air density of the race; {} where not finite."""
    from pacing.plan.energy import reynolds_number

    duration = np.asarray(duration, dtype=float)
    if duration.sum() <= 0:
        return {}
    air_speed = np.abs(np.asarray(speed, dtype=float) + np.asarray(result.air.headwind))
    mean = float(np.sum(air_speed * duration) / duration.sum())
    density = float(np.sum(np.asarray(result.air.density) * duration) / duration.sum())
    try:
        value = reynolds_number(density, mean, result.request.conditions.temperature)
    except InputError:
        return {}
    return {"reynolds": value, "air_speed": mean} if np.isfinite(value) else {}


def _running_outcome(result) -> Outcome:
    """The Outcome of a running RaceResult: speed per piece [m/s], D′ balance [m]."""
    plan = result.plan
    speed = np.asarray(plan.speed, dtype=float)
    duration = np.diff(np.asarray(result.request.course.distance)) / speed
    return check_finite(Outcome(
        sport="running", finish_time=plan.finish_time, average_speed=plan.average_speed,
        max_speed=float(np.max(plan.speed)), average_power=None, time_saved=None,
        distance=np.asarray(result.request.course.distance), speed=np.asarray(plan.speed),
        power=None, headwind=np.asarray(result.air.headwind),
        w_prime_balance=plan.d_prime_balance, rows=list(result.targets),
        notices=result.notices, exhausted_at=result.exhausted_at,
        strategy=result.request.strategy, **_race_reynolds(result, speed, duration),
        budget=_running_budget(result), race_day=result.race_day,
    ))


def _running_budget(result):
    """The runner's metabolic energy per segment and what it pays for
    (pacing.plan.energy.running_energy_budget)."""
    from pacing.plan.energy import running_energy_budget

    plan, request = result.plan, result.request
    return running_energy_budget(plan.speed, plan.time, request.course.grade, request.runner,
                                 result.air.density, result.air.headwind,
                                 result.air.crosswind, bounds=request.bounds)


def _cycling_outcome(result) -> Outcome:
    """The Outcome of a cycling RaceResult: its verified prediction per point, W′ balance [J]."""
    from pacing.plan.energy import easing_events, energy_budget, planned_mean_power

    plan = result.plan
    prediction = plan.prediction
    pieces = 0.5 * (np.asarray(prediction.speed)[1:] + np.asarray(prediction.speed)[:-1])
    return check_finite(Outcome(
        sport="cycling", finish_time=float(prediction.finish_time),
        average_speed=float(prediction.average_speed), max_speed=float(prediction.max_speed),
        average_power=float(prediction.average_power),
        time_saved=None if result.request.strategy == "constant" else float(plan.time_saved),
        distance=np.asarray(prediction.distance), speed=np.asarray(prediction.speed),
        power=np.asarray(prediction.power), headwind=np.asarray(prediction.headwind),
        w_prime_balance=plan.w_prime_balance, rows=list(result.targets),
        notices=result.notices, exhausted_at=result.exhausted_at,
        strategy=result.request.strategy, w_prime_model=result.request.cycling.w_prime_model,
        planned_power=planned_mean_power(prediction, plan.piece_power),
        easing=tuple(easing_events(prediction, plan.piece_power,
                                   result.request.course.corner_radius)),
        budget=energy_budget(prediction, plan.bounds), race_day=result.race_day,
        **_race_reynolds(result, pieces, np.diff(np.asarray(prediction.time))),
    ))


def notes_in(outcome: Outcome, system: str) -> list[str]:
    """The outcome's notices in words, in the page's unit system."""
    from pacing.display.notices import describe_all

    return describe_all(outcome.notices, system)
