"""Checks of what goes into the library (pacing.store.rows): names, plan results and notes are
refused with a one-line InputError naming the field, and nothing is stored, on every backend
(tests/store_fixtures.py)."""

from __future__ import annotations

import datetime
import math

import pytest

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    library_fixture,
    plan_result,
)

from pacing.athlete import Athlete
from pacing.errors import InputError


@pytest.mark.parametrize("result, words", [
    ({"targets": []}, "needs 'finish_time'"),
    ({"finish_time": 100.0}, "needs 'targets'"),
    ({"finish_time": -1.0, "targets": []}, r"finish time must be in \(0, 1e\+07\] s"),
    ({"finish_time": math.nan, "targets": []}, "finite"),
    ({"finish_time": 1.0, "targets": [{"power": math.inf}]}, r"targets\[0\].power"),
    ({"finish_time": 1.0, "targets": [{"power": float("nan")}]}, "finite"),
    ({"finish_time": 1.0, "targets": "fast"}, "list of records"),
    ({"finish_time": 1.0, "targets": [], "speed": 3}, "unknown keys"),
    ({"finish_time": 1.0, "targets": [{"when": datetime.date(2026, 1, 1)}]}, "cannot be saved"),
])
def test_bad_plan_results_are_refused(library, result, words):
    with pytest.raises(InputError, match=words):
        library.save_plan("bad", {}, result)
    assert library.plans() == ()


@pytest.mark.parametrize("name", [
    "", "   ", "Ann\x00", "Ann\nBo", "x" * 201, 7, "An\x85n",  # C1 control NEL
    "\u202eennA",  # RIGHT-TO-LEFT OVERRIDE shows "Anne" backwards (Unicode UAX #9)
    "Ann\u202a", "Ann\u202b", "Ann\u202c", "Ann\u202d",  # embeddings, pop
    "Ann\u2066", "Ann\u2067", "Ann\u2068", "Ann\u2069",  # isolates
    "x" * 100_000,
])
def test_bad_names_are_refused_on_every_backend(library, name):
    with pytest.raises(InputError, match="name") as error:
        library.add_athlete(Athlete(name=name))
    assert "\n" not in str(error.value) and len(str(error.value)) < 200
    assert library.athletes() == ()


@pytest.mark.parametrize("given, stored", [
    ("  Ann  ", "Ann"),
    ("Ann\u0301e", "An\u0144e"),
    ("Zoë", "Zoë"),
    ("x" * 200, "x" * 200),
    ("مريم", "مريم"),  # right-to-left text itself is fine
    ("می\u200cخواهم", "می\u200cخواهم"),  # Persian needs the ZERO WIDTH NON-JOINER
])
def test_names_are_trimmed_and_put_in_normal_form_c(library, given, stored):
    # NFC: Unicode Standard Annex #15; "n" + COMBINING ACUTE ACCENT composes to U+0144
    assert library.add_athlete(Athlete(name=given)).athlete.name == stored


def test_plan_notes_may_span_lines_but_hold_no_nul(library):
    plan = library.save_plan("p", {}, plan_result(), notes="line one\nline two\tend")
    assert library.plan(plan.id).summary.notes == "line one\nline two\tend"
    with pytest.raises(InputError, match="NUL"):
        library.save_plan("p", {}, plan_result(), notes="a\x00b")


@pytest.mark.parametrize("gpx, distance, ascent, words", [
    (b"", 1000.0, 0.0, "the GPX file is empty"),
    ("<gpx/>", 1000.0, 0.0, "must be bytes"),
    (b"<gpx/>", 0.0, 0.0, r"distance must be in \(0, 1e\+07\] m"),
    (b"<gpx/>", 1000.0, -1.0, r"ascent must be in \[0, 1e\+06\] m"),
    (b"<gpx/>", 1e300, 0.0, "distance must be in"),  # stored as given before (issue 14)
    (b"<gpx/>", 10**400, 0.0, "too large"),  # an int no float holds
    (b"<gpx/>", math.inf, 0.0, "finite"),
    (b"<gpx/>", 1000.0, None, "must be a number"),
])
def test_bad_courses_are_refused(library, gpx, distance, ascent, words):
    with pytest.raises(InputError, match=words):
        library.add_course("c", gpx, distance, ascent)
    assert library.courses() == ()


@pytest.mark.parametrize("value", [0, -3, 1.0, "1", True, None, 2**31, 10**23])
def test_ids_are_positive_whole_numbers(library, value):
    with pytest.raises(InputError, match="positive whole number"):
        library.athlete(value)


@pytest.mark.parametrize("field, value", [
    ("critical_power", 1e300), ("critical_power", 3000.5), ("flat_pace", 2000.5),
    ("w_prime", 1e9), ("height", 9.0), ("flat_pace", 30.0), ("critical_speed", 40.0),
    ("d_prime", 1e6),
])
def test_athlete_numbers_outside_physical_ranges_are_refused(library, field, value):
    with pytest.raises(InputError, match=field.replace("_", " ") + " must be in") as error:
        library.add_athlete(Athlete(name="Ann", **{field: value}))
    assert "\n" not in str(error.value)
    assert library.athletes() == ()


def test_the_ranges_hold_every_value_the_page_offers(library):
    # ui.sections' widest inputs: CP 600 W, W' 60 kJ, height 2.2 m, critical speed 7 m/s,
    # D' 600 m, flat pace 1:24/km (RUNNING_SPEED_RANGE's fastest)
    stored = library.add_athlete(Athlete(name="Ann", critical_power=600.0, w_prime=60000.0,
                                         height=2.2, critical_speed=7.0, d_prime=600.0,
                                         flat_pace=1000.0 / 12.0))
    assert stored.athlete.flat_pace == pytest.approx(83.333, abs=1e-3)


def test_a_yaw_table_outside_its_ranges_is_refused(library):
    from pacing.athlete import Setup

    ann = library.add_athlete(Athlete(name="Ann"))
    for table, words in [(((0.0, 1.0), (400.0, 0.9)), "yaw must be in"),
                         (((0.0, 1e30),), "CdA multiplier must be in")]:
        with pytest.raises(InputError, match=words):
            library.add_setup(ann.id, Setup(name="TT", yaw_drag_table=table))
    assert library.setups() == ()
