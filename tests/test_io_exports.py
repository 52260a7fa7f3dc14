"""Exports of the segment target table (pacing.io.exports).

Each file is read back with an independent reader: pandas and openpyxl for CSV and XLSX,
gpxpy for GPX (the card: tests/test_io_target_card.py).
"""

from __future__ import annotations

import datetime
import io

import gpxpy
import numpy as np
import openpyxl
import pandas as pd
import pytest

from pacing.course.geometry import synthetic_course
from pacing.display.notices import describe
from pacing.display.units import format_duration
from pacing.errors import InputError
from pacing.io.exports import (
    course_with_targets_gpx,
    located_warnings,
    race_day_lines,
    segment_table,
    segment_waypoints,
    table_to_csv,
    table_to_xlsx,
)
from pacing.notices import note, warning


def make_rows(count=6, running=False, wprime=True):
    """Segment targets in SI units, shaped like pacing.plan.targets.SegmentTarget rows."""
    rows, elapsed = [], 0.0
    for i in range(count):
        length = 5000.0 + 250.0 * i
        start = sum(5000.0 + 250.0 * k for k in range(i))
        speed = 9.0 + 0.37 * i
        time = length / speed
        elapsed += time
        rows.append(dict(
            index=i, start=start, end=start + length, length=length, grade=0.013 * (i - 2),
            target_power=None if running else 250.0 + 7.3 * i,
            power_low=None if running else 240.0, power_high=None if running else 310.0,
            target_pace=1000.0 / speed if running else None, speed=speed, time=time,
            cumulative_time=elapsed, w_prime_balance=(20000.0 - 900.0 * i) if wprime else None,
            headwind=1.25 - 0.5 * i,
        ))
    return rows



SAID = ["warning: W′ runs out at 3.8 km: this plan asks more than the athlete's critical power "
        "and W′ allow (lowest balance -46.8 kJ). Lower the power or plan the fastest race "
        "within the limits.", "note: the plan holds to the mean power asked for"]


def clock_text(duration: datetime.timedelta) -> str:
    """"H:MM:SS" of a duration read back from a spreadsheet."""
    total = round(duration.total_seconds())
    return f"{total // 3600}:{total % 3600 // 60:02d}:{total % 60:02d}"


def with_clock_texts(frame: pd.DataFrame) -> pd.DataFrame:
    """The frame with its duration columns (read back as timedeltas) as "H:MM:SS" texts."""
    for name in ("Split [h:mm:ss]", "Elapsed [h:mm:ss]"):
        if name in frame:
            frame[name] = [clock_text(value.to_pytimedelta()) for value in frame[name]]
    return frame


class TestTable:
    def test_every_column_names_its_unit(self):
        table = segment_table(make_rows())
        for column in table.columns:
            assert column == "Segment" or ("[" in column and column.endswith("]")), column

    def test_the_walked_distance_has_a_column_only_when_some_segment_walks(self):
        # issue 14: segment rows say how far the bike was pushed on foot
        rows = make_rows(3)
        assert not any(c.startswith("Walked") for c in segment_table(rows).columns)
        rows[1]["walking_distance"] = 1609.344  # one international mile (NIST SP 811, B.8)
        assert list(segment_table(rows)["Walked [km]"]) == [0.0, 1.61, 0.0]
        assert list(segment_table(rows, "imperial")["Walked [mi]"]) == [0.0, 1.0, 0.0]

    def test_a_joined_gap_has_a_column_only_when_some_segment_holds_one(self):
        # issue 13: the table says which segment holds a gap in the recording joined by a
        # straight line, and how long it is
        rows = make_rows(3)
        assert not any(c.startswith("Gap") for c in segment_table(rows).columns)
        for row in rows:
            row["gap_length"] = 0.0
        assert not any(c.startswith("Gap") for c in segment_table(rows).columns)
        rows[1]["gap_length"] = 12_700.0
        assert list(segment_table(rows)["Gap [km]"]) == [0.0, 12.7, 0.0]
        # 12 700 m / 1 609.344 m per international mile (NIST SP 811, B.8) = 7.89 mi
        assert list(segment_table(rows, "imperial")["Gap [mi]"]) == [0.0, 7.89, 0.0]
        back = pd.read_csv(io.BytesIO(table_to_csv(segment_table(rows))))
        assert list(back["Gap [km]"]) == [0.0, 12.7, 0.0]

    def test_metric_numbers(self):
        row = make_rows()[1]
        table = segment_table(make_rows())
        assert table.loc[1, "From [km]"] == pytest.approx(row["start"] / 1000, abs=0.005)
        assert table.loc[1, "Speed [km/h]"] == pytest.approx(row["speed"] * 3.6, abs=0.05)
        assert table.loc[1, "Target power [W]"] == round(row["target_power"])
        assert table.loc[1, "Grade [%]"] == pytest.approx(100 * row["grade"], abs=0.05)
        assert table.loc[1, "W′ left [kJ]"] == pytest.approx(row["w_prime_balance"] / 1000)

    def test_imperial_units(self):
        table = segment_table(make_rows(), "imperial")
        assert "From [mi]" in table.columns and "Speed [mph]" in table.columns
        # 1 mi = 1609.344 m (NIST SP 811, exact)
        assert table.loc[1, "From [mi]"] == pytest.approx(5000 / 1609.344, abs=0.005)

    def test_running_table_shows_pace_not_power(self):
        table = segment_table(make_rows(running=True))
        assert "Target pace [min/km]" in table.columns
        assert "Target power [W]" not in table.columns
        # 9 m/s is 1000/9 = 111.1 s/km → "1:51"
        assert table.loc[0, "Target pace [min/km]"] == "1:51"
        assert "Target pace [min/mi]" in segment_table(make_rows(running=True), "imperial")

    def test_columns_without_data_are_left_out_and_nothing_is_nan(self):
        table = segment_table(make_rows(wprime=False))
        assert "W′ left [kJ]" not in table.columns
        assert not table.isna().any().any()

    def test_no_segments_is_an_input_error(self):
        with pytest.raises(InputError, match="no segments"):
            segment_table([])

    def test_a_row_without_time_is_an_input_error(self):
        rows = make_rows()
        rows[2]["time"] = float("nan")
        with pytest.raises(InputError):
            segment_table(rows)

    def test_rows_can_be_objects_with_attributes(self):
        from types import SimpleNamespace

        table = segment_table([SimpleNamespace(**row) for row in make_rows()])
        pd.testing.assert_frame_equal(table, segment_table(make_rows()))


class TestCsvAndXlsx:
    def test_csv_reads_back_with_pandas_holding_the_table(self):
        table = segment_table(make_rows())
        back = pd.read_csv(io.BytesIO(table_to_csv(table)))
        pd.testing.assert_frame_equal(back, table, check_dtype=False)

    def test_imperial_running_csv_reads_back(self):
        table = segment_table(make_rows(running=True), "imperial")
        back = pd.read_csv(io.BytesIO(table_to_csv(table)), dtype={"Target pace [min/mi]": str})
        pd.testing.assert_frame_equal(back, table, check_dtype=False)

    def test_xlsx_reads_back_with_openpyxl_holding_the_table(self):
        table = segment_table(make_rows())
        book = openpyxl.load_workbook(io.BytesIO(table_to_xlsx(table, title="Test loop")))
        sheet = book.active
        values = list(sheet.values)
        assert list(values[0]) == list(table.columns)
        assert len(values) == len(table) + 1
        for got, (_, expected) in zip(values[1:], table.iterrows(), strict=True):
            for cell, want in zip(got, expected, strict=True):
                if isinstance(cell, datetime.timedelta):  # durations are Excel durations
                    cell = clock_text(cell)
                assert cell == pytest.approx(want) if isinstance(want, float) else cell == want
        assert book.properties.title == "Test loop"

    def test_xlsx_durations_are_time_values_a_spreadsheet_can_add(self):
        table = segment_table(make_rows())
        sheet = openpyxl.load_workbook(io.BytesIO(table_to_xlsx(table))).active
        header = [cell.value for cell in sheet[1]]
        for name in ("Split [h:mm:ss]", "Elapsed [h:mm:ss]"):
            cell = sheet.cell(row=2, column=header.index(name) + 1)
            assert cell.number_format == "[h]:mm:ss"
            assert clock_text(cell.value) == table[name].iloc[0]

    def test_xlsx_clock_is_a_time_of_day(self):
        rows = make_rows(2)
        for row, clock in zip(rows, ("2026-07-14T09:00:00+02:00", "2026-07-14T09:08:20+02:00"),
                              strict=True):
            row.update(clock_time=clock)
        table = segment_table(rows)
        sheet = openpyxl.load_workbook(io.BytesIO(table_to_xlsx(table))).active
        header = [cell.value for cell in sheet[1]]
        cells = [sheet.cell(row=r, column=header.index("Clock [hh:mm]") + 1) for r in (2, 3)]
        assert [c.value for c in cells] == [datetime.time(9, 0), datetime.time(9, 8)]
        assert {c.number_format for c in cells} == {"hh:mm"}

    def test_xlsx_reads_back_with_pandas(self):
        table = segment_table(make_rows())
        back = with_clock_texts(pd.read_excel(io.BytesIO(table_to_xlsx(table))))
        pd.testing.assert_frame_equal(back, table, check_dtype=False)



class TestGpx:
    def course(self):
        distance = np.linspace(0.0, 40000.0, 2001)
        return synthetic_course(distance, 100 + 30 * np.sin(distance / 3000.0),
                                heading=np.linspace(0.0, 300.0, 2000), name="test loop")

    def test_one_waypoint_per_segment_at_its_start(self):
        course, rows = self.course(), make_rows(6)
        parsed = gpxpy.parse(course_with_targets_gpx(course, rows))
        assert len(parsed.waypoints) == len(rows)
        for waypoint, row in zip(parsed.waypoints, rows, strict=True):
            lat = np.interp(row["start"], course.distance, course.latitude)
            lon = np.interp(row["start"], course.distance, course.longitude)
            assert waypoint.latitude == pytest.approx(lat, abs=1e-5)
            assert waypoint.longitude == pytest.approx(lon, abs=1e-5)
            assert f"{round(row['target_power'])} W" in waypoint.name

    def test_track_is_the_course(self):
        course = self.course()
        parsed = gpxpy.parse(course_with_targets_gpx(course, make_rows()))
        points = [p for t in parsed.tracks for s in t.segments for p in s.points]
        assert len(points) == course.distance.size
        assert points[-1].latitude == pytest.approx(course.latitude[-1], abs=1e-6)

    def test_waypoint_text_carries_target_split_and_units(self):
        _, name, description = segment_waypoints(make_rows(), "imperial")[1]
        assert name.startswith("S2 ")
        assert "mi" in description and "mph" in description and "split 0:" in description

    def test_running_waypoints_carry_pace(self):
        _, name, _ = segment_waypoints(make_rows(running=True))[0]
        assert "min/km" in name

    def test_the_segment_where_w_prime_runs_out_carries_the_warning(self):
        # issue 14: GPX waypoint notes say where W′ runs out; make_rows' third segment spans
        # 10 250 m to 15 750 m
        notice = warning("w-prime-exhausted", distance_m=12000.0, lowest_balance_j=-4000.0)
        located = located_warnings([notice, note("limits-reached", limits=["cp"])])
        assert located == [(12000.0, describe(notice, "metric"))]
        course = self.course()
        parsed = gpxpy.parse(course_with_targets_gpx(course, make_rows(), "metric", located))
        told = [w.description for w in parsed.waypoints]
        assert "W′ runs out" in told[2] and "12.0 km" in told[2]
        assert not any("W′ runs out" in text for k, text in enumerate(told) if k != 2)

    def test_the_waypoint_of_a_segment_holding_a_joined_gap_tells_its_length(self):
        rows = make_rows(3)
        rows[1]["gap_length"] = 12_700.0
        told = [description for _, _, description in segment_waypoints(rows)]
        assert told[1].endswith(", joined gap 12.7 km")
        assert not any("gap" in text for k, text in enumerate(told) if k != 1)
        imperial = segment_waypoints(rows, "imperial")[1][2]
        assert "joined gap 7.9 mi" in imperial  # NIST SP 811, B.8: 1 mi = 1 609.344 m

    def test_a_warning_past_the_last_segment_goes_on_the_last_waypoint(self):
        rows = make_rows(3)
        points = segment_waypoints(rows, warnings=[(rows[-1]["end"], "D′ runs out")])
        assert points[-1][2].endswith("Warning: D′ runs out")


@pytest.fixture(scope="module")
def planned():
    from pacing.course.segments import split_every
    from pacing.physics.cycling import Rider
    from pacing.plan.cycling import make_plan
    from pacing.plan.request import PlanRequest
    from pacing.plan.targets import target_table
    from pacing.weather.conditions import Conditions, air_along_course

    distance = np.linspace(0.0, 12000.0, 1201)
    course = synthetic_course(distance, 150 + 40 * np.sin(distance / 2000.0),
                              heading=np.linspace(0.0, 270.0, 1200), name="rolling road")
    bounds = split_every(course, 2000.0)
    air = air_along_course(course, Conditions(wind_speed=4.0, wind_from=200.0))
    plan = make_plan(course, bounds, Rider(mass=80.0, drag_area=0.28), air,
                     PlanRequest(strategy="constant", mean_power=250.0,
                                 critical_power=280.0, w_prime=20000.0))
    return course, target_table(course, bounds, plan)


class TestWithTheLibrary:
    """The table and its files from a real plan (pacing.plan.cycling → pacing.plan.targets)."""

    def test_table_numbers_are_the_targets(self, planned):
        _, rows = planned
        table = segment_table(rows)
        assert len(table) == len(rows) == 6
        for (_, line), row in zip(table.iterrows(), rows, strict=True):
            assert line["Target power [W]"] == round(row.target_power)
            assert line["Speed [km/h]"] == pytest.approx(row.speed * 3.6, abs=0.051)
            assert line["W′ left [kJ]"] == pytest.approx(row.w_prime_balance / 1000, abs=0.051)
        assert table["Elapsed [h:mm:ss]"].iloc[-1] == format_duration(rows[-1].cumulative_time)

    def test_csv_and_xlsx_hold_the_same_numbers(self, planned):
        _, rows = planned
        table = segment_table(rows, "imperial")
        from_csv = pd.read_csv(io.BytesIO(table_to_csv(table)))
        from_xlsx = with_clock_texts(pd.read_excel(io.BytesIO(table_to_xlsx(table))))
        pd.testing.assert_frame_equal(from_csv, table, check_dtype=False)
        pd.testing.assert_frame_equal(from_xlsx, table, check_dtype=False)

    def test_gpx_has_a_waypoint_per_segment(self, planned):
        course, rows = planned
        parsed = gpxpy.parse(course_with_targets_gpx(course, rows))
        assert len(parsed.waypoints) == len(rows)
        assert all(" W" in w.name for w in parsed.waypoints)



# ------------------------------------------------------ the plan's warnings reach every file


def test_csv_starts_with_the_warnings_as_comment_lines_and_reads_back():
    table = segment_table(make_rows(), "metric")
    data = table_to_csv(table, SAID).decode("utf-8")
    assert data.splitlines()[0].startswith("# warning: W′ runs out at 3.8 km")
    assert data.splitlines()[1] == "# note: the plan holds to the mean power asked for"
    back = pd.read_csv(io.StringIO(data), comment="#")
    assert list(back.columns) == list(table.columns) and len(back) == len(table)
    assert not table_to_csv(table).decode("utf-8").startswith("#")  # nothing to say: bare table


def test_xlsx_keeps_the_targets_first_and_the_warnings_on_their_own_sheet():
    table = segment_table(make_rows(), "metric")
    book = openpyxl.load_workbook(io.BytesIO(table_to_xlsx(table, notices=SAID)))
    assert book.sheetnames == ["segment targets", "warnings and notes"]
    said = [row[0].value for row in book["warnings and notes"].iter_rows(min_row=2)]
    assert said == SAID
    assert pd.read_excel(io.BytesIO(table_to_xlsx(table, notices=SAID))).shape == table.shape



def test_a_race_day_adds_clock_and_weather_columns_in_both_unit_systems():
    rows = make_rows(2)
    assert not any(c.startswith(("Clock", "Air", "Wind")) for c in segment_table(rows).columns)
    for row, clock in zip(rows, ("2026-07-14T09:00:00+02:00", "2026-07-14T09:08:20+02:00"),
                          strict=True):
        row.update(clock_time=clock, temperature=25.0, wind_speed=5.0, wind_from=350.0)
    metric = segment_table(rows)
    assert list(metric["Clock [ISO 8601]"]) == ["2026-07-14T09:00:00+02:00",
                                                "2026-07-14T09:08:20+02:00"]
    assert list(metric["Clock [hh:mm]"]) == ["09:00", "09:08"]  # the race's local clock
    assert list(metric["Air [°C]"]) == [25.0, 25.0]
    assert list(metric["Wind [km/h]"]) == [18.0, 18.0]
    assert list(metric["Wind from [deg]"]) == [350, 350]
    imperial = segment_table(rows, "imperial")
    assert list(imperial["Air [°F]"]) == [77.0, 77.0]  # 25 °C = 77 °F (NIST SP 811)
    assert list(imperial["Wind [mph]"]) == [11.2, 11.2]  # 5 m/s / 0.44704
    text = table_to_csv(metric).decode("utf-8")
    assert "2026-07-14T09:00:00+02:00" in text


def test_a_files_comments_say_the_race_days_test_conditions_and_band():
    """Issue 16: the test conditions assumed and the forecast band in the file's comments."""
    import numpy as np

    from pacing.course.geometry import synthetic_course
    from pacing.course.segments import split_every
    from pacing.physics.cycling import Rider
    from pacing.plan.forecast_band import WeatherSpread
    from pacing.plan.race import RaceRequest, plan_race
    from pacing.plan.race_day import RaceDay
    from pacing.plan.request import PlanRequest
    from pacing.weather.conditions import Conditions

    distance = np.arange(0.0, 5000.0 + 5.0, 10.0)
    course = synthetic_course(distance, np.zeros_like(distance), heading=0.0)
    result = plan_race(RaceRequest(
        course=course, bounds=split_every(course, 1000.0), conditions=Conditions(wind_speed=3.0),
        rider=Rider(), cycling=PlanRequest(mean_power=200.0),
        race_day=RaceDay(spread=WeatherSpread(wind_speed=1.0, samples=10, seed=5))))
    lines = race_day_lines(result.race_day, "imperial")
    assert "68 °F, 50 % humidity, 0 ft (assumed)" in lines[0]
    assert lines[-1].startswith("forecast band (5-50-95 %)") and "10 sampled weathers, seed 5" \
        in lines[-1]
    text = table_to_csv(segment_table(result.targets), lines).decode()
    assert text.startswith("# heat and altitude: limits factor 1.0000")
    assert race_day_lines(None) == []


def test_the_gpx_export_describes_the_plan_s_warnings_and_notes():
    # the same lines as the CSV's comment lines and the XLSX's sheet, in <metadata><desc>
    course = synthetic_course(np.arange(0.0, 20001.0, 10.0), np.zeros(2001), heading=0.0)
    text = course_with_targets_gpx(course, make_rows(count=3), notices=SAID)
    description = gpxpy.parse(text).description
    assert description.splitlines() == SAID
    assert gpxpy.parse(course_with_targets_gpx(course, make_rows(count=3))).description is None
