"""Pure helpers of the library panel (ui.library_panel): the plan inputs and results saved
with a plan and worked out again, and the page's values of a stored athlete and setup. No
Streamlit here. Showing a saved plan in the page is ui.library_page_state; the panel's tables
and captions are ui.library_tables.

Plan inputs (`page_plan_inputs`, all SI) are described in ui.library_panel.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from typing import Any

from pacing.errors import ConflictError, InputError, first_line

CONFLICT_MESSAGE = "changed in another window — reload"
"""What a stale save or delete says (pacing.errors.ConflictError), before the details."""

ATHLETE_KEYS = ("body_mass", "critical_power", "w_prime", "height", "flat_pace",
                "critical_speed", "d_prime")
SETUP_KEYS = ("bike_mass", "drag_area", "power_share", "rolling_coefficient",
              "drivetrain_efficiency")

LIBRARY_COURSE = "library:course"
"""Session key of the course file the page shows instead of its demo or upload after "Show
in the page": {"gpx": bytes, "name": str, "plan": the saved plan's name, "plan_id": its id}."""

PAGE_PLAN = "library:page_plan"
"""Session key of the page's plan as the library would save it, left by the library panel
(ui.library_panel.render_library_for_page) in every run it is drawn: {"inputs":
page_plan_inputs(...), "result": plan_result(...)}; absent when the page has no plan. The
race review (ui.review_panel) saves it together with a review."""


def error_message(error: Exception) -> str:
    """One line for the page; a conflict says plainly that another window changed it.

    Parameters
    ----------
    error : Exception
        A refusal (InputError, ConflictError) or a file's decoding error.

    Returns
    -------
    str
        The first line of its message; for a ConflictError, CONFLICT_MESSAGE before it.
    """
    if isinstance(error, ConflictError):
        return f"{CONFLICT_MESSAGE}: {first_line(error)}"
    return first_line(error)


# ------------------------------------------------------------------------ plan inputs, result

def page_plan_inputs(course_gpx: bytes, course_name: str, course, bounds, athlete: dict,
                     weather: dict, approach: dict, smoothing: dict,
                     allow_flat: bool = False, split: dict | None = None) -> dict:
    """The `current_inputs` of render_library from the page's values.

    Parameters
    ----------
    course_gpx : bytes
        The course file as uploaded or read [bytes].
    course_name : str
        Its label.
    course : pacing.course.geometry.Course
        The course made from it (for its distance [m] and ascent [m]).
    bounds : sequence of int
        Segment boundary point indices [-].
    athlete : dict
        ui.sections athlete and equipment inputs (SI).
    weather : dict
        ui.sections weather inputs (SI; Conditions fields).
    approach : dict
        ui.sections approach inputs (SI).
    smoothing : dict
        ``{"window": [m], "max_grade": [-]}``: how the elevation was cleaned.
    allow_flat : bool
        A file without heights was read as flat.
    split : dict or None
        How the page cut the course (ui.sections.split_inputs: ``"mode"``, ``"length"`` [m],
        ``"marks"`` [m]), kept so "Show in the page" can set the same choice again.

    Returns
    -------
    dict
        The plan inputs described in ui.library_panel (SI).
    """
    return {
        "course_gpx": bytes(course_gpx),
        "course_name": str(course_name),
        "course_distance": float(course.total_distance),
        "course_ascent": float(course.ascent),
        "smoothing": {"window": float(smoothing["window"]),
                      "max_grade": float(smoothing["max_grade"]),
                      "allow_flat": bool(allow_flat)},
        "bounds": [int(b) for b in bounds],
        "athlete": dict(athlete),
        "weather": dict(weather),
        "approach": dict(approach),
        **({} if split is None else {"split": {
            "mode": str(split["mode"]),
            "length": None if split.get("length") is None else float(split["length"]),
            "marks": [float(m) for m in split.get("marks") or ()]}}),
    }


def plan_result(outcome, weather: dict | None = None, approach: dict | None = None) -> dict:
    """The `current_result` of render_library from a ui.pipeline.Outcome.

    Parameters
    ----------
    outcome : ui.pipeline.Outcome
        The page's predicted race (finish_time [s], time_saved [s] or None, rows).
    weather : dict or None
        The weather inputs it used (SI), saved as the plan's weather.
    approach : dict or None
        The approach inputs it used (SI), saved as the plan's strategy.

    Returns
    -------
    dict
        The keys of pacing.store.records.PLAN_RESULT_KEYS: finish_time [s], time_saved [s]
        or None, targets as one dict of SI numbers per segment, strategy and weather as
        given.
    """
    targets = [dataclasses.asdict(row)
               if dataclasses.is_dataclass(row) and not isinstance(row, type) else dict(row)
               for row in outcome.rows]
    return {
        "strategy": None if approach is None else dict(approach),
        "weather": None if weather is None else dict(weather),
        "targets": targets,
        "time_saved": outcome.time_saved,
        "finish_time": float(outcome.finish_time),
    }


def recompute_plan(inputs: Mapping[str, Any], gpx: bytes) -> dict:
    """Work a saved plan out again from its inputs and its course file, through the same
    calls as the page (ui.pipeline).

    Parameters
    ----------
    inputs : Mapping
        The saved plan's inputs, as page_plan_inputs made them (SI).
    gpx : bytes
        Its stored course file [bytes].

    Returns
    -------
    dict
        The result as plan_result gives it.

    Raises
    ------
    InputError
        Inputs not made by the page, or a course or plan the page would refuse.
    """
    from ui import pipeline

    try:
        smoothing = inputs["smoothing"]
        athlete, weather, approach = inputs["athlete"], inputs["weather"], inputs["approach"]
        bounds = inputs["bounds"]
    except (KeyError, TypeError):
        raise InputError("this saved plan was not made by the page: its inputs cannot be "
                         "worked out again here") from None
    course = pipeline.load_course_from_bytes(
        gpx, inputs.get("course_name", "course"), smoothing["window"], smoothing["max_grade"],
        smoothing.get("allow_flat", False))
    outcome = pipeline.race_outcome(course, bounds, dict(athlete), dict(weather), dict(approach))
    return plan_result(outcome, weather, approach)


def library_compute(library) -> Callable[[dict], dict]:
    """The computation that works saved plans out again, for
    pacing.store.reproduce.reproduce_plan.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library, which holds the plans' course files.

    Returns
    -------
    callable
        ``compute(inputs) -> result``: recompute_plan on the course named by the inputs'
        ``course_id`` (InputError when they name none).
    """
    def compute(inputs: dict) -> dict:
        course_id = inputs.get("course_id")
        if course_id is None:
            raise InputError("this saved plan names no stored course")
        return recompute_plan(inputs, library.course(int(course_id)).gpx)

    return compute


def store_course(library, name: str, gpx: bytes, distance: float, ascent: float) -> int:
    """Id of the stored course with exactly this GPX file, storing it first if new.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library.
    name : str
        Label, if the course is new.
    gpx : bytes
        The course file [bytes].
    distance : float
        Course length, if the course is new [m].
    ascent : float
        Total climbing, if the course is new [m].

    Returns
    -------
    int
        The course's library id (the oldest one holding this file).
    """
    found = library.find_courses(gpx)
    if found:
        return found[0].id
    # another file under this name: both are kept ("name (2)"); saved plans name it by id
    return library.add_course(name, gpx, distance, ascent, on_existing="keep-both").id


def save_current_plan(library, name: str, notes: str, current_inputs: Mapping[str, Any],
                      current_result: Mapping[str, Any], athlete_id: int | None = None,
                      setup_id: int | None = None, on_existing: str = "refuse"):
    """Save the page's plan, its course file stored once (store_course).

    The library records the version of pacing that made the plan.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library.
    name : str
        The plan's label.
    notes : str
        The coach's free text.
    current_inputs : Mapping
        The page's plan inputs (page_plan_inputs); ``course_gpx`` is stored as a course and
        replaced by its ``course_id``.
    current_result : Mapping
        The page's plan result (plan_result).
    athlete_id : int or None
        Library id of the athlete to file it under, or None.
    setup_id : int or None
        Library id of the setup to file it under, or None.
    on_existing : str
        When a saved plan of that name is stored: "refuse"
        (pacing.store.statements.NameTaken), "replace" or "keep-both" [-].

    Returns
    -------
    pacing.store.records.PlanRecord
        The saved plan.
    """
    inputs = _library_inputs(library, current_inputs, athlete_id, setup_id)
    return library.save_plan(name, inputs, dict(current_result), notes=notes,
                             on_existing=on_existing)


def _library_inputs(library, current_inputs: Mapping[str, Any], athlete_id: int | None,
                    setup_id: int | None) -> dict:
    """The page's plan inputs as the library keeps them: the course file stored once
    (store_course) and named by ``course_id``, the athlete and setup linked."""
    inputs = {k: v for k, v in current_inputs.items() if k != "course_gpx"}
    gpx = current_inputs.get("course_gpx")
    if gpx:
        inputs["course_id"] = store_course(
            library, current_inputs.get("course_name") or "course", gpx,
            current_inputs.get("course_distance", 0.0),
            current_inputs.get("course_ascent", 0.0))
    if athlete_id is not None:
        inputs["athlete_id"] = int(athlete_id)
    if setup_id is not None:
        inputs["setup_id"] = int(setup_id)
    return inputs


PLAN_DEFINING_KEYS = ("course_name", "course_distance", "course_ascent", "smoothing", "bounds",
                      "athlete", "weather", "approach", "split")
"""Keys of the page's plan inputs that make the plan (the course file, named by its id once
stored, and the library links are left out)."""


def same_page_plan(saved_inputs: Mapping[str, Any], page_inputs: Mapping[str, Any]) -> bool:
    """Whether a saved plan's inputs are the page's plan inputs (PLAN_DEFINING_KEYS equal as
    JSON): the page's plan was saved before (e.g. before the race) and not reopened since.

    Parameters
    ----------
    saved_inputs : Mapping
        A saved plan's inputs (as save_current_plan stored them).
    page_inputs : Mapping
        The page's plan inputs (page_plan_inputs).

    Returns
    -------
    bool
    """
    import json

    def defining(inputs: Mapping[str, Any]) -> str:
        return json.dumps({k: inputs.get(k) for k in PLAN_DEFINING_KEYS}, sort_keys=True,
                          default=str)

    return defining(saved_inputs) == defining(page_inputs)


def save_current_plan_with_review(library, name: str, current_inputs: Mapping[str, Any],
                                  current_result: Mapping[str, Any],
                                  review: Mapping[str, Any], ride_name: str,
                                  ride_sha256: str, athlete_id: int | None = None,
                                  setup_id: int | None = None, on_existing: str = "refuse"):
    """Save the page's plan and keep a race review with it in one step (the race review of a
    plan made on the page): the course file stored once (store_course), then the plan and
    the review in one transaction (Library.save_plan_with_review), never replacing a saved
    plan.

    Parameters
    ----------
    library : pacing.store.library.Library
        The open library.
    name : str
        The plan's label.
    current_inputs, current_result : Mapping
        The page's plan inputs and result (PAGE_PLAN: page_plan_inputs, plan_result).
    review : Mapping
        The review as JSON (ui.review_panel.review_json: what ``pacing review --json``
        prints).
    ride_name : str
        The race file's name.
    ride_sha256 : str
        SHA-256 of the race file.
    athlete_id, setup_id : int or None
        Library ids to file the plan under, or None.
    on_existing : str
        "refuse" (pacing.store.statements.NameTaken) or "keep-both" [-].

    Returns
    -------
    tuple of (PlanRecord, PlanReviewRecord)
        The saved plan and the review kept with it.
    """
    inputs = _library_inputs(library, current_inputs, athlete_id, setup_id)
    return library.save_plan_with_review(name, inputs, dict(current_result), review,
                                         ride_name=ride_name, ride_sha256=ride_sha256,
                                         on_existing=on_existing)


# ------------------------------------------------------------------------ page values

def page_values(athlete, setup=None) -> dict:
    """SI values of a stored athlete (and setup) under the page's keys (ui.sections).

    Parameters
    ----------
    athlete : pacing.athlete.Athlete
        The stored athlete (SI).
    setup : pacing.athlete.Setup or None
        The stored setup (SI), or None for the athlete alone.

    Returns
    -------
    dict
        body_mass [kg], critical_power [W], w_prime [J], height [m], flat_pace [s/km],
        critical_speed [m/s], d_prime [m], and with a setup bike_mass [kg], drag_area [m²],
        power_share [-], rolling_coefficient [-], drivetrain_efficiency [-]. Unknown values
        (None) are left out.
    """
    values = {key: getattr(athlete, key) for key in ATHLETE_KEYS
              if getattr(athlete, key) is not None}
    if setup is not None:
        values.update({key: getattr(setup, key) for key in SETUP_KEYS})
    return values


def athlete_from_page(name: str, values: Mapping[str, Any]):
    """An Athlete from the page's athlete dict.

    Parameters
    ----------
    name : str
        The athlete's name.
    values : Mapping
        The page's athlete inputs (SI, keys of ATHLETE_KEYS; None or missing values take the
        Athlete defaults).

    Returns
    -------
    pacing.athlete.Athlete
        The athlete (InputError if a value is out of range).
    """
    from pacing.athlete import Athlete

    return Athlete(name=name, **{k: values[k] for k in ATHLETE_KEYS if values.get(k) is not None})


def setup_from_page(name: str, values: Mapping[str, Any]):
    """A Setup from the page's athlete dict.

    Parameters
    ----------
    name : str
        The setup's name.
    values : Mapping
        The page's athlete and equipment inputs (SI, keys of SETUP_KEYS; None or missing
        values take the Setup defaults).

    Returns
    -------
    pacing.athlete.Setup
        The setup (InputError if a value is out of range).
    """
    from pacing.athlete import Setup

    return Setup(name=name, **{k: values[k] for k in SETUP_KEYS if values.get(k) is not None})
