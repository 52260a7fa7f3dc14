"""The race review's table as CSV and XLSX (pacing.io.review_file); the workbook read back with
openpyxl (the reference reader of the Office Open XML format in Python)."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
import pytest
from test_review_synthetic import STEP, Day, loop_heading, loop_profile, ride

from pacing.course.geometry import synthetic_course
from pacing.course.segments import split_by_grade
from pacing.errors import InputError
from pacing.io.review_file import (
    review_table,
    review_to_csv,
    review_to_xlsx,
    write_review_csv,
    write_review_xlsx,
)
from pacing.physics.cycling import Rider
from pacing.plan.prediction import SimulationOptions
from pacing.plan.race import RaceRequest, plan_race
from pacing.plan.request import PlanRequest
from pacing.review.race import review_race
from pacing.review.recording import make_race_recording
from pacing.weather.conditions import Conditions


@pytest.fixture(scope="module")
def review():
    distance = np.arange(0.0, 10_001.0, STEP)
    course = synthetic_course(distance, loop_profile(distance),
                              loop_heading(distance[:-1] + STEP / 2))
    result = plan_race(RaceRequest(
        course=course, bounds=split_by_grade(course), conditions=Conditions(),
        rider=Rider(rolling_coefficient=0.004),
        cycling=PlanRequest(strategy="constant", mean_power=250.0, critical_power=280.0,
                            w_prime=20000.0),
        options=SimulationOptions(start_speed=10.0)))
    samples = ride(Day(stops=((3000.0, 20.0),)))
    recording = make_race_recording(samples["time"], samples["power"], speed=samples["speed"],
                                    latitude=samples["latitude"],
                                    longitude=samples["longitude"])
    return review_race(result, recording, fit=False)


def test_the_table_has_a_unit_on_every_column_and_one_row_per_segment(review):
    table = review_table(review)
    assert len(table) == len(review.segments)
    assert list(table.columns[:6]) == ["Segment", "From [km]", "To [km]", "Planned [h:mm:ss]",
                                       "Ridden [h:mm:ss]", "Lost [s]"]
    assert "Ridden lowest W′ [kJ]" in table.columns
    assert table["Lost [s]"].sum() == pytest.approx(review.actual_time - review.planned_time,
                                                    abs=0.5)


def test_imperial_swaps_km_for_miles(review):
    table = review_table(review, "imperial")
    assert "To [mi]" in table.columns and "Ridden speed [mph]" in table.columns
    assert table["To [mi]"].iloc[-1] == pytest.approx(10.0 / 1.609344, abs=0.01)


def test_the_csv_reads_back_with_the_notices_and_the_split_as_comments(review, tmp_path):
    data = review_to_csv(review)
    text = data.decode("utf-8")
    assert text.startswith("# note: 1 stop (")
    assert "# time split (positive: slower than planned): power_s" in text
    back = pd.read_csv(io.BytesIO(data), comment="#")
    assert len(back) == len(review.segments)
    assert "nan" not in text.lower()
    path = write_review_csv(review, tmp_path / "review.csv")
    assert path.read_bytes() == data


def test_an_unwritable_path_is_refused_in_one_line(review, tmp_path):
    with pytest.raises(InputError, match="cannot write"):
        write_review_csv(review, tmp_path / "missing" / "review.csv")


def test_the_workbook_holds_the_table_then_the_notices_and_the_split(review, tmp_path):
    from openpyxl import load_workbook

    data = review_to_xlsx(review)
    book = load_workbook(io.BytesIO(data))
    assert book.sheetnames == ["race review", "warnings and notes"]
    table = review_table(review)
    rows = list(book["race review"].values)
    assert list(rows[0]) == list(table.columns)
    assert len(rows) == len(table) + 1
    assert rows[1][table.columns.get_loc("Lost [s]")] == table["Lost [s]"].iloc[0]
    notes = [row[0] for row in book["warnings and notes"].values]
    assert notes[1].startswith("note: 1 stop (")
    assert any(str(n).startswith("time split (positive: slower than planned)") for n in notes)
    assert book.properties.title == "race review"
    assert write_review_xlsx(review, tmp_path / "review.xlsx").read_bytes()[:2] == b"PK"
    with pytest.raises(InputError, match="cannot write"):
        write_review_xlsx(review, tmp_path / "missing" / "review.xlsx")
