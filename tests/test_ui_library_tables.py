"""The library panel's tables and captions (ui.library_tables): a saved plan says which version
of pacing made it, and warns when that is another version than this one.
"""

from __future__ import annotations

import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:  # the app's ui/ package sits beside app.py
    sys.path.insert(0, str(ROOT))

from ui import library_tables  # noqa: E402


def test_a_saved_plan_says_which_pacing_made_it(monkeypatch):
    import types

    import pacing

    monkeypatch.setattr(pacing, "__version__", "0.2.0")
    same = types.SimpleNamespace(library_version="0.2.0")
    older = types.SimpleNamespace(library_version="0.1.0")
    assert library_tables.version_caption(same) == "made with pacing 0.2.0"
    caption = library_tables.version_caption(older)
    assert caption.startswith("made with pacing 0.1.0; this is pacing 0.2.0")
    assert "other numbers" in caption


def test_the_plans_table_names_the_athlete_and_the_summary_the_pacing_in_words():
    # issue 18: no athlete column; "plan: constant" (an internal name) in the summary
    import datetime
    import types

    plans = [types.SimpleNamespace(name="hill", athlete_id=3, finish_time=3725.0,
                                   time_saved=None, updated_at=datetime.datetime(2026, 5, 1),
                                   library_version="0.2.0", notes=""),
             types.SimpleNamespace(name="flat", athlete_id=None, finish_time=1800.0,
                                   time_saved=12.0, updated_at=datetime.datetime(2026, 5, 2),
                                   library_version="0.2.0", notes="windy")]
    table = library_tables.plans_table(plans, {3: "Ann"})
    assert table["Athlete"].tolist() == ["Ann", "–"]
    lines = library_tables.inputs_summary(
        {"athlete": {"sport": "cycling"}, "approach": {"strategy": "constant",
                                                       "mean_power": 240.0}}, "metric")
    assert lines == ["pacing: Even power, average 240 W"]
    running = library_tables.inputs_summary(
        {"athlete": {"sport": "running"}, "approach": {"strategy": "equal-effort"}}, "metric")
    assert running == ["pacing: Equal effort on every grade"]


def test_the_plans_table_counts_the_race_reviews_each_plan_keeps():
    import datetime
    import types

    plans = [types.SimpleNamespace(id=i, name=f"plan {i}", athlete_id=None, finish_time=900.0,
                                   time_saved=None, updated_at=datetime.datetime(2026, 5, i),
                                   library_version="0.2.0", notes="") for i in (1, 2)]
    assert "Race reviews" not in library_tables.plans_table(plans).columns
    table = library_tables.plans_table(plans, {}, {2: 3})
    assert table["Race reviews"].tolist() == [0, 3]
    assert list(table.columns).index("Race reviews") == 4  # after the finish and the gain


def test_a_setup_says_where_its_cda_came_from():
    import types

    from pacing.athlete import Setup
    from pacing.store.records import DragAreaOrigin

    typed = types.SimpleNamespace(setup=Setup(name="TT", drag_area=0.23), drag_area_origin=None)
    assert library_tables.setup_origin_caption(typed) is None
    measured = types.SimpleNamespace(
        setup=Setup(name="TT", drag_area=0.236),
        drag_area_origin=DragAreaOrigin(0.228, 0.244, "race review of a.csv, 2026-12-05"))
    assert library_tables.setup_origin_caption(measured) == (
        "CdA 0.2360 m², 95 % interval 0.2280-0.2440 m², from race review of a.csv, 2026-12-05")


def test_the_reviews_kept_with_a_plan_as_a_table():
    import datetime
    import types

    kept = types.SimpleNamespace(
        ride_name="a.csv", created_at=datetime.datetime(2026, 12, 5, 9, 30,
                                                        tzinfo=datetime.UTC),
        review={"planned_time_s": 3725.0, "actual_time_s": 3790.4, "fitted": None})
    frame = library_tables.reviews_frame([kept])
    row = frame.iloc[0].to_dict()
    assert row["Race file"] == "a.csv" and row["Kept"] == "2026-12-05 09:30 UTC"
    assert row["Planned"] == "1:02:05" and row["Ridden"] == "1:03:10"
    assert row["Ridden − planned [s]"] == 65.4 and row["CdA on the day [m²]"] is None
    assert library_tables.reviews_frame([]).empty
