"""Strict JSON values as the library stores plans (pacing.store.jsontext): any finite JSON
value reads back equal, the text is standard JSON, NaN, infinities and values JSON cannot hold
are refused naming their place; numpy numbers and dataclasses (Athlete, Setup) in a plan are
stored as plain numbers and fields, on every backend (tests/store_fixtures.py)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

# database_fixture and library_fixture are the `database` and `library` fixtures (pytest finds
# them by those names)
from store_fixtures import (  # noqa: F401
    database_fixture,
    library_fixture,
    plan_result,
)

from pacing.athlete import Athlete, Setup
from pacing.errors import InputError
from pacing.store import jsontext

finite_json = st.recursive(
    st.none() | st.booleans() | st.integers() | st.floats(allow_nan=False, allow_infinity=False)
    | st.text(),
    lambda children: st.lists(children) | st.dictionaries(st.text(), children),
    max_leaves=30,
)


@settings(max_examples=50)
@given(finite_json)
def test_stored_json_text_reads_back_equal(value):
    # a float is written with repr, the shortest text that reads back to the same double
    # (Python's float repr, David Gay's algorithm: docs.python.org/3/tutorial/floatingpoint)
    assert jsontext.loads(jsontext.dumps(value, "v")) == value


def test_stored_json_is_standard_json():
    text = jsontext.dumps({"a": (1, 2.5), "b": np.float64(0.1), "c": np.arange(2),
                           "é": True}, "v")
    assert json.loads(text) == {"a": [1, 2.5], "b": 0.1, "c": [0, 1], "é": True}


@pytest.mark.parametrize("value, where", [
    ({"a": [1.0, math.nan]}, r"v\.a\[1\]"),
    ({"a": math.inf}, r"v\.a"),
    ({1: "x"}, "key that is not text"),
    ({"a": {1, 2}}, "set"),
])
def test_values_json_cannot_hold_are_refused(value, where):
    with pytest.raises(InputError, match=where):
        jsontext.dumps(value, "v")


# ---------------------------------------------------------------------------------------------
# values in saved plans

def test_plan_values_from_numpy_are_stored_as_plain_numbers(library):
    result = dict(plan_result(), finish_time=np.float64(3725.5), time_saved=np.float32(2.5),
                  targets=[{"power": np.arange(3) * 0.5, "segment": np.int64(1)}])
    plan = library.save_plan("numpy", {}, result)
    assert plan.summary.finish_time == 3725.5
    assert plan.targets == [{"power": [0.0, 0.5, 1.0], "segment": 1}]


def test_athlete_and_setup_objects_in_plan_inputs_are_stored_as_their_fields(library):
    athlete = Athlete(name="Ann", body_mass=61.0)
    setup = Setup(name="TT", yaw_drag_table=((0.0, 1.0),))
    plan = library.save_plan("objects", {"athlete": athlete, "setup": setup}, plan_result())
    assert Athlete(**plan.inputs["athlete"]) == athlete
    stored_setup = dict(plan.inputs["setup"])
    stored_setup["yaw_drag_table"] = tuple(map(tuple, stored_setup["yaw_drag_table"]))
    assert Setup(**stored_setup) == setup
