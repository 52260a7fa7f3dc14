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
