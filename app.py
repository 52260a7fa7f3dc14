"""Streamlit front end: from a GPX course to a race plan and a segment target table.

One page, top to bottom: route → athlete and equipment → weather → pacing approach → predicted
race → downloads, then three sections opened on request (setups side by side, the coach's
library, drag area from road tests: their imports and work are paid only when asked for). The
folds "Where the watts go" and the segments' table work out their content only while open,
and a session's first page sends the course's figures after the headline, so the browser
shows the finish time before it loads the plotting library. The page only calls the library
(ui.pipeline). Results and figures are cached with st.cache_data on the file's digest and the
inputs (each session gets its own copy); the library's compiled kernels are made ready once
per server process, in the background after the first page. Run with ``make app``
(``streamlit run app.py``).
"""

from __future__ import annotations

import contextlib
import functools
import hashlib
import os
import subprocess
import sys
import threading
import time
from collections.abc import Callable
from concurrent.futures import Future
from pathlib import Path

import numpy as np
import streamlit as st

from pacing.display.notices import describe
from pacing.display.units import format_duration, to_display, unit_label
from pacing.errors import InputError, first_line
from pacing.physics.wind import ROUGHNESS_LENGTHS
from ui import figures, library_data, pipeline, sections, text

st.set_page_config(page_title="pacing · race plan", layout="wide")


# ------------------------------------------------------------------------------ cached steps
# Results and figures are cached with st.cache_data, keyed on the inputs they depend on (the
# course's key: the file's digest and how it was read; the plan's inputs as sorted tuples; the
# unit system): every session gets its own copy, a rerun that changes nothing they depend on
# recomputes nothing, and a refusal is cached like a result. Figures are cached as plotly's
# plain data (ui.figures *_spec) and drawn from it without validating it again.

# (Constants are described in comments, not strings: Streamlit's "magic" would print a bare
# string of this script on the page.)
# Longest wait for the library's kernels to compile in their own process [s].
KERNEL_COMPILE_TIMEOUT = 900.0
# Environment variable: "0" keeps the page from warming up the kernels (the app's tests set
# it, so no background compilation runs beside the rest of a test session).
WARM_UP_VARIABLE = "PACING_APP_WARM_UP"
# Seconds between the end of the first page and the kernels' warm-up: the page reaches the
# browser and is drawn before the warm-up takes a core (a coach reads the page longer).
KERNEL_WARM_UP_DELAY = 2.0


def ready_kernels(warm_up: Callable[[], float]) -> float:
    """Seconds until the library's compiled kernels are loaded in this process: first
    `warm_up` in a Python process of its own, which compiles them into numba's on-disk cache
    when that is missing or stale (minutes, on a busy machine) without holding this server's
    interpreter lock or numba's compiler lock meanwhile, then `warm_up` here, a load from that
    cache (a fraction of a second)."""
    start = time.perf_counter()
    with contextlib.suppress(OSError, subprocess.SubprocessError):
        subprocess.run([sys.executable, "-c", "from pacing.kernels import warm_up; warm_up()"],
                       capture_output=True, timeout=KERNEL_COMPILE_TIMEOUT, check=False)
    warm_up()
    return time.perf_counter() - start


@st.cache_resource(show_spinner=False)
def kernels_warm_up() -> Future | None:
    """Make the library's compiled kernels ready in a background thread, once per server
    process (`ready_kernels`): started after the first page is drawn, so that page does not
    wait (its plan runs the kernels as plain Python), and ready for the reruns that follow
    (KERNEL_WARM_UP_DELAY later). None when the library has no compiled kernels."""
    try:
        from pacing import kernels  # importing it is cheap: numba loads in warm_up
    except ImportError:
        return None
    warm_up = getattr(kernels, "warm_up", None)
    if warm_up is None:
        return None
    started: Future = Future()

    def work() -> None:
        time.sleep(KERNEL_WARM_UP_DELAY)
        try:
            started.set_result(ready_kernels(warm_up))
        except Exception as error:  # shown in the caption; the plans run as plain Python
            started.set_exception(error)

    # a daemon: a server stopping does not wait for a compilation
    threading.Thread(target=work, name="pacing-kernels", daemon=True).start()
    return started


def kernels_status() -> Future | None:
    """The kernels' warm-up (`kernels_warm_up`), started on the first call; None when
    WARM_UP_VARIABLE is "0" or the library has no compiled kernels."""
    if os.environ.get(WARM_UP_VARIABLE, "1") == "0":
        return None
    return kernels_warm_up()


def kernels_caption(started: Future | None) -> str | None:
    """A quiet line on the kernels' one-time cost: ready in N s, still loading, or not
    available (the library then runs them as plain Python); None without kernels."""
    if started is None:
        return None
    if not started.done():
        return "Numeric kernels loading in the background (once per server start)."
    failure = started.exception()
    if failure is not None:
        return f"Numeric kernels not available ({first_line(failure)}): plain Python instead."
    return (f"Numeric kernels ready in {started.result():.1f} s (once per server start, in "
            "the background).")


@st.cache_data(max_entries=16, show_spinner=False)
def read_demo(path: str) -> bytes:
    return Path(path).read_bytes()


@st.cache_data(max_entries=12, show_spinner="Reading the course…")
def cached_course(digest: str, _data: bytes, name: str, window: float, max_grade: float,
                  allow_flat: bool, tracks: tuple[int, ...] | None = None, gaps: str = "join"):
    """(course, None) or (None, the refusal in one line), keyed on the file's `digest` and how
    it is read: a refused file is not read again on every rerun."""
    try:
        return pipeline.load_course_from_bytes(_data, name, window, max_grade, allow_flat,
                                               tracks, gaps), None
    except (InputError, ValueError, OSError) as error:
        return None, pipeline.page_words(first_line(error))


def recording_choices(course, system: str) -> tuple[tuple[int, ...] | None, str]:
    """The tracks that make the course and what to do with gaps, asked only when the file has
    more than one track or gaps; shows the tracks and the gaps found."""
    tracks, gaps = None, "join"
    if len(course.tracks) > 1 or course.gaps:
        import pandas as pd  # only for a file with more tracks or gaps: not on the first page

        with st.expander("What the file holds: tracks and gaps", expanded=bool(course.gaps)):
            st.dataframe(pd.DataFrame([{
                "Track": t.index, "Name": t.name or "–", "Points": t.points,
                f"Length [{unit_label('distance', system)}]":
                    round(float(to_display(t.distance, "distance", system)), 2),
                "Time span [h:mm:ss]": "–" if t.duration is None else format_duration(
                    t.duration)} for t in course.tracks]), hide_index=True)
            if len(course.tracks) > 1:
                chosen = st.multiselect("Tracks that make the course",
                                        [t.index for t in course.tracks],
                                        default=[t.index for t in course.tracks],
                                        key="course_tracks")
                if chosen and len(chosen) < len(course.tracks):
                    tracks = tuple(sorted(chosen))
            gaps = st.radio("Gaps in the recording", ("join", "drop", "refuse"),
                            key="course_gaps", horizontal=True,
                            help="join: a straight line across (flagged); drop: the gap's "
                                 "distance is not counted; refuse: do not use this file")
    return tracks, gaps


def course_notices(course, system: str) -> None:
    """What reading the course found, beside its facts: warnings boxed, notes as captions."""
    for notice in course.notices:
        if notice.level == "warning":
            st.warning(f"⚠ {describe(notice, system)}")
        else:
            st.caption(f"Note: {describe(notice, system)}")


@st.cache_data(max_entries=64, show_spinner=False)
def cached_bounds(course_key: str, _course, mode: str, length, marks: tuple) -> np.ndarray:
    return pipeline.segment_bounds(_course, mode, length, marks)


def plain_inputs(values: dict) -> tuple:
    """A dict of the page's inputs as a sorted tuple, whole numbers as floats (a widget gives
    240 before it is touched and 240.0 after: the same plan, one cache entry)."""
    return tuple(sorted((key, float(value) if type(value) is int else value)
                        for key, value in values.items()))


@st.cache_data(max_entries=64, show_spinner="Working out the race…")
def cached_outcome(course_key: str, _course, bounds: tuple, athlete: tuple, weather: tuple,
                   approach: tuple):
    """(outcome, None) or (None, error message): refusals are cached too, so a slow refusal
    is not recomputed on every rerun."""
    arguments = (_course, np.asarray(bounds), dict(athlete), dict(weather), dict(approach))
    try:
        return pipeline.race_outcome(*arguments), None
    except InputError as error:
        return None, pipeline.page_words(first_line(error)) if str(error) else "bad input"
    except (ValueError, ArithmeticError, RuntimeError) as error:  # a model could not solve
        first = first_line(error)
        return None, f"the model could not work out this race ({first}); check the inputs"


@st.cache_data(max_entries=32, show_spinner=False)
def cached_profile(course_key: str, _course, system: str, bounds: tuple | None) -> dict:
    return figures.profile_spec(_course, system, None if bounds is None else np.asarray(bounds))


@st.cache_data(max_entries=32, show_spinner=False)
def cached_map(course_key: str, _course, system: str, wind_speed: float,
               wind_from: float) -> dict:
    return figures.route_map_spec(_course, system, wind_speed, wind_from)


@st.cache_data(max_entries=32, show_spinner=False)
def cached_along(outcome_key: str, _outcome, system: str) -> dict:
    return figures.along_course_spec(
        _outcome.distance, _outcome.speed, _outcome.power, _outcome.headwind,
        _outcome.w_prime_balance, system, reserve="D′" if _outcome.sport == "running" else "W′",
        events=_outcome.easing)


@st.cache_data(max_entries=32, show_spinner=False)
def cached_targets(outcome_key: str, _rows: list, system: str):
    """(segment target table, None) or (None, the refusal in one line)."""
    from pacing.io.exports import segment_table  # pandas: paid after the headline is out

    try:
        return segment_table(_rows, system), None
    except InputError as error:
        return None, first_line(error)


# Session state: this session's first page is out (its figures are drawn in place after).
FIRST_PAGE_DRAWN = "first_page_drawn"


def in_turn(queue: list[Callable[[], None]] | None, draw: Callable[[], None]) -> None:
    """`draw` now, or later (appended to `queue`) when a queue is given."""
    if queue is None:
        draw()
    else:
        queue.append(draw)


def draw_profile(slot, course_key: str, course, system: str, bounds: tuple | None) -> None:
    """The course's profile in its `slot` (an st.empty)."""
    slot.plotly_chart(figures.drawable(cached_profile(course_key, course, system, bounds)),
                      key="profile")


def draw_map(slot, course_key: str, course, system: str, wind_speed: float,
             wind_from: float) -> None:
    """The route's map with the wind's arrow in its `slot` (an st.empty)."""
    slot.plotly_chart(figures.drawable(cached_map(course_key, course, system, wind_speed,
                                                  wind_from)), key="map")


def show_error(error: Exception, where: str = "") -> None:
    """One clear line in the page for a bad input."""
    message = first_line(error)
    st.error(f"{where}: {message}" if where else message, icon="⚠️")


# ------------------------------------------------------------------------------------- page

system = st.sidebar.radio("Units", ("metric", "imperial"), key="units",
                          help="applies to every input, chart, table and download")
st.sidebar.caption(text.speed_caution(st.session_state.get("sport", "cycling")))
st.sidebar.caption(text.EXERTION_CAUTION)

st.title("Race plan")
st.caption("Load a course, describe the athlete and the day, and take away segment targets.")

course = None
split = None
course_key = ""
bounds = None
map_slot = None
# a session's first page draws the course's figures after the headline (their slots are kept
# in place): the browser shows the finish time before it loads and runs the plotting
# library; later runs draw them in place, so nothing on screen blinks
first_page = not st.session_state.get(FIRST_PAGE_DRAWN)
later: list[Callable[[], None]] = []

# 1 · route -----------------------------------------------------------------------------
st.header(text.SECTION_ROUTE)
try:
    demos = pipeline.demo_routes()
except OSError:
    demos = {}


def leave_library_course() -> None:
    """Choosing a demo course or a file puts the page back on it (off a reopened plan's)."""
    st.session_state.pop(library_data.LIBRARY_COURSE, None)


cols = st.columns([2, 3])
choice = cols[0].selectbox("Demo course", list(demos) or ["(none available yet)"],
                           key="demo_route", disabled=not demos, on_change=leave_library_course,
                           format_func=pipeline.demo_label,
                           help="invented courses shipped with the program")
upload = cols[1].file_uploader("…or your own course (GPX)", type=["gpx"], key="upload_gpx",
                               on_change=leave_library_course)
allow_flat = cols[1].checkbox("A file without heights is a flat course", key="allow_flat",
                              help="otherwise such a file is refused")
smoothing = sections.smoothing_inputs(system)
source_bytes, source_name = None, None
library_course = st.session_state.get(library_data.LIBRARY_COURSE)
if library_course:
    source_bytes, source_name = library_course["gpx"], library_course["name"]
    cols = st.columns([4, 1])
    cols[0].info(f"Course of the saved plan {library_course['plan']!r} from the library: "
                 f"{source_name}. Choose a demo course or a file to leave it.")
    cols[1].button("Leave it", key="leave_library_course", on_click=leave_library_course)
elif upload is not None:
    source_bytes, source_name = upload.getvalue(), Path(upload.name).stem
elif demos:
    source_bytes, source_name = read_demo(str(demos[choice])), pipeline.demo_label(choice)
if source_bytes is None:
    st.warning("No course yet: upload a GPX file.")
else:
    digest = hashlib.sha1(source_bytes).hexdigest()
    reading = (digest, source_bytes, source_name, smoothing["window"], smoothing["max_grade"],
               allow_flat)
    course, refusal = cached_course(*reading)
    if course is not None:
        tracks, gaps = recording_choices(course, system)
        if tracks is not None or gaps != "join":
            course, refusal = cached_course(*reading, tracks, gaps)
        course_key = (f"{digest}:{source_name}:{smoothing['window']}:{smoothing['max_grade']}"
                      f":{allow_flat}:{tracks}:{gaps}")
    if refusal:
        show_error(InputError(refusal), "Course file")
if course is not None:
    sections.route_facts(course, system)
    course_notices(course, system)
    try:
        split = sections.split_inputs(system, course.total_distance)
        bounds = cached_bounds(course_key, course, split["mode"], split["length"],
                               split["marks"])
        sections.segment_overview(course, bounds, system)
    except InputError as error:
        show_error(error, "Segments")
    cols = st.columns([3, 2])
    profile_slot, map_slot = cols[0].empty(), cols[1].empty()
    in_turn(later if first_page else None, functools.partial(
        draw_profile, profile_slot, course_key, course, system,
        None if bounds is None else tuple(map(int, bounds))))

# 2 · athlete and equipment ---------------------------------------------------------------
st.header(text.SECTION_RIDER)
athlete = None
try:
    athlete = sections.athlete_inputs(system)
except InputError as error:
    show_error(error, "Athlete")

# 3 · weather -----------------------------------------------------------------------------
st.header(text.SECTION_WEATHER)
weather = sections.weather_inputs(system, ROUGHNESS_LENGTHS)
with st.expander("Race day: weather through the race, heat, altitude, forecast band"):
    from ui import race_day_panel

    race_day = race_day_panel.render(course, system)
if race_day is not None:
    weather = {**weather, "race_day": race_day}
# a weather table that does not read (said in the panel) plans no race: not another day's
race_day_unread = race_day is None and bool(st.session_state.get("race_day_table"))
if map_slot is not None:
    in_turn(later if first_page else None, functools.partial(
        draw_map, map_slot, course_key, course, system, float(weather.get("wind_speed", 0.0)),
        float(weather.get("wind_from", 0.0))))

# 4 · approach ----------------------------------------------------------------------------
st.header(text.SECTION_APPROACH)
approach = None
if athlete is not None:
    try:
        approach = sections.approach_inputs(athlete["sport"], athlete, system)
    except InputError as error:
        show_error(error, "Plan")

# 5 · outcome -----------------------------------------------------------------------------
st.header(text.SECTION_OUTCOME)
outcome = None
table = None
if (course is None or bounds is None or athlete is None or approach is None
        or race_day_unread):
    st.info("Fix the inputs above to see the predicted race.")
else:
    inputs = (tuple(int(b) for b in bounds), plain_inputs(athlete), plain_inputs(weather),
              plain_inputs(approach))
    outcome_key = course_key + hashlib.sha1(repr(inputs).encode()).hexdigest()
    try:
        outcome, refusal = cached_outcome(course_key, course, *inputs)
        if refusal:
            show_error(InputError(refusal), "Prediction")
    except InputError as error:
        show_error(error, "Prediction")
if outcome is not None:
    sections.outcome_headline(outcome, system)
for draw in later:  # the course's figures of a first page (see first_page)
    draw()
st.session_state[FIRST_PAGE_DRAWN] = True
if outcome is not None:
    race_day_panel.show_environment(outcome.race_day, (), system)
    if race_day is not None and race_day.get("rows"):
        with st.expander("Best start time within a window"):
            race_day_panel.show_best_start(pipeline.race_request(course, bounds, athlete,
                                                                 weather, approach))
    st.warning(text.speed_caution(outcome.sport))
    # the race-day model's heat warning ("heat-risk", from the WBGT) says more; without it,
    # a hot air temperature alone brings the page's own heat caution
    if (float(weather.get("temperature", 20.0)) >= text.HOT_AIR_TEMPERATURE
            and not any(n.code == "heat-risk" for n in outcome.notices)):
        st.warning(text.HEAT_CAUTION)
    for notice in outcome.notices:  # warnings and notes of the planning chain, in words
        if notice in course.notices:
            continue  # shown beside the course facts already
        if notice.level == "warning":
            st.warning(f"⚠ {describe(notice, system)}")
        else:
            st.caption(f"Note: {describe(notice, system)}")
    st.plotly_chart(figures.drawable(cached_along(outcome_key, outcome, system)), key="along")
    st.subheader("Segment targets")
    table, refusal = cached_targets(outcome_key, outcome.rows, system)
    if table is None:
        show_error(InputError(refusal or "no table"), "Target table")
    else:
        # short headers: the whole table fits the page's width without scrolling sideways;
        # the page adds where the rider eases off below the plan (the files do not)
        easing = None
        if outcome.easing:
            from ui import energy_panel

            easing = energy_panel.easing_per_segment(outcome.rows, outcome.easing)
        shown = sections.page_targets(table, easing)
        st.dataframe(shown, hide_index=True, key="targets",
                     column_config=sections.target_columns(shown.columns))
    if outcome.easing:
        from ui import energy_panel

        with st.expander(f"Where the rider eases off below the plan ({len(outcome.easing)})"):
            st.dataframe(energy_panel.easing_frame(outcome.easing, system), hide_index=True,
                         key="easing_table")
            st.caption(text.speed_caution(outcome.sport))
    # worked out and drawn only while open (its chart and table are not on the first page)
    watts = st.expander("Where the watts go", key="watts_open", on_change="rerun")
    if watts.open:
        with watts:
            sections.where_the_watts_go(outcome, system)
    st.caption(text.EXERTION_CAUTION)

# 6 · take it with you --------------------------------------------------------------------
st.header(text.SECTION_TAKEAWAY)
if outcome is not None and table is not None:
    sections.downloads(outcome, course, table, system, course.name)
else:
    st.caption("Downloads appear once there is a predicted race.")

# 7 · setups side by side -----------------------------------------------------------------
st.header(text.SECTION_SETUPS)
if st.toggle("Compare positions and equipment on this course", key="show_setups",
             help="finish time, time won or lost along the course, break-even figures and "
                  "what each change is worth; takes a few seconds"):
    from ui import comparison  # imported when asked for: the comparison's scipy parts

    comparison.render_comparison_for_page(course, bounds, athlete, weather, approach, system)

# 8 · coach's library ---------------------------------------------------------------------
st.header(text.SECTION_LIBRARY)
if st.toggle("Open the coach's library", key="show_library",
             help="athletes and setups to fill the page from, this plan saved with its course, "
                  "saved plans reopened and worked out again, the library as a file"):
    from ui import library_panel  # imported when asked for: the store (SQLAlchemy, Alembic)

    library_panel.render_library_for_page(source_bytes, source_name, course, bounds, athlete,
                                          weather, approach, smoothing, allow_flat, outcome,
                                          system, split=split)

# 9 · measure drag area on the road -------------------------------------------------------
st.header(text.SECTION_ROAD_TEST)
if st.toggle("Estimate CdA and Crr from test rides", key="show_road_test",
             help="upload rides with power and speed (CSV or GPX) from a quiet loop"):
    from ui import fieldtest_panel  # imported when asked for

    fieldtest_panel.render_fieldtest(system)

# 10 · review a race ----------------------------------------------------------------------
st.header(text.SECTION_REVIEW)
if (st.toggle("Review a race against this plan", key="show_review",
              help="upload the race's ride (CSV or GPX with power): where time was won or "
                   "lost, why, and the drag area on the day")
        and course is not None and bounds is not None and athlete is not None
        and approach is not None):
    from ui import review_panel  # imported when asked for

    review_panel.render(course, bounds, athlete, weather, approach, system)

# 11 · team time trial or team pursuit ----------------------------------------------------
st.header(text.SECTION_TEAM)
if st.toggle("Plan a team time trial or team pursuit", key="show_team",
             help="who leads, for how long and at what power, within every rider's W′; "
                  "takes a few seconds"):
    from ui import team_panel  # imported when asked for

    team_panel.render(st, system, course, weather)

# the end of the page: the kernels load now, once per server process (see kernels_warm_up)
kernels = kernels_caption(kernels_status())
if kernels is not None:
    st.caption(kernels)
