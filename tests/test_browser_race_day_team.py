"""The race day, the team part and the race review in a real browser, as a new coach meets
them (Debian's chromium driven by Playwright; the server and page fixtures of
tests/test_browser.py).

A weather table uploaded as a CSV (written here, an invented hot July day) gives targets at
clock times and the heat caution; a bad table is refused in one line naming the row; a team
is planned and every file it offers reads back; a ride of the race (made by the independent
forward model of tests/test_review_synthetic.py, never a real event's file) is reviewed and
the time difference split into its causes. No step may log an error in the browser's console.
"""

from __future__ import annotations

import io
import os
import shutil
from pathlib import Path

import pandas as pd
import pytest
import test_browser
from test_browser import page, server  # noqa: F401
from test_review_synthetic import Day, race_csv, ride, route_gpx

pytestmark = [pytest.mark.browser, pytest.mark.slow]

HOT_DAY = (
    "time,temperature_c,relative_humidity_pct,wind_speed_mps,wind_from_deg\n"
    "2026-07-14T08:00,24,55,2,200\n"
    "2026-07-14T10:00,29,45,3,220\n"
    "2026-07-14T12:00,33,40,4,240\n"
    "2026-07-14T14:00,35,35,5,250\n"
    "2026-07-14T16:00,34,35,5,260\n")
"""An invented hot day: WBGT above 28 °C by the afternoon (the ACSM black-flag band)."""

REVIEW_TIMEOUT_MS = 300_000
"""Milliseconds for a review: the model's replays and the fit on a busy machine."""


def _watch_console(browser_page) -> list[tuple[str, str]]:
    """The console's errors and the page's uncaught errors, collected from now on."""
    seen: list[tuple[str, str]] = []
    browser_page.on("console", lambda message: seen.append((message.type, message.text)))
    browser_page.on("pageerror", lambda error: seen.append(("pageerror", str(error))))
    return seen


def _errors(seen: list[tuple[str, str]]) -> list[tuple[str, str]]:
    return [entry for entry in seen if entry[0] in ("error", "pageerror")]


def _shot(browser_page, tmp_path: Path, name: str) -> None:
    """A screenshot for a human look, kept in PACING_SCREENSHOT_DIR when it is set."""
    keep = os.environ.get("PACING_SCREENSHOT_DIR")
    if not keep:
        return
    path = tmp_path / name
    browser_page.screenshot(path=str(path), full_page=True)
    shutil.copy(path, Path(keep) / name)


def _grid_after(anchor):
    """The first table (st.dataframe) after the element `anchor`, once its cells are in."""
    grid = anchor.locator("xpath=following::div[@data-testid='stDataFrame'][1]")
    grid.locator('[role="gridcell"]').first.wait_for(state="attached")
    return grid


def _grid_rows(grid) -> tuple[list[str], list[list[str]]]:
    """(headers, rows of cell texts) of a table, read from its accessible cells."""
    headers = [h.strip() for h in grid.locator('[role="columnheader"]').all_text_contents()]
    rows = [[c.strip() for c in row.locator('[role="gridcell"]').all_text_contents()]
            for row in grid.locator('tbody [role="row"]').all()]
    return headers, [row for row in rows if row]


def _alerts(browser_page) -> list[str]:
    return [a.inner_text().strip() for a in browser_page.locator('[data-testid="stAlert"]').all()]


def _open_weather_table(browser_page, server_url: str) -> None:
    test_browser._open_page(browser_page, server_url)
    browser_page.get_by_text("Race day: weather through the race").click()
    test_browser._wait_idle(browser_page)
    browser_page.get_by_text("Weather changes through the race (a table)").click()
    test_browser._wait_idle(browser_page)
    browser_page.get_by_text("Weather table from a CSV file").wait_for()


def _upload_weather(browser_page, path: Path) -> None:
    browser_page.locator('input[type="file"][accept*=".csv"]').first.set_input_files(str(path))
    browser_page.wait_for_timeout(1000)
    test_browser._wait_idle(browser_page)


def test_a_weather_table_gives_targets_at_clock_times_and_the_heat_caution(
        server, page, tmp_path):  # noqa: F811 (the fixtures of test_browser)
    seen = _watch_console(page)
    weather = tmp_path / "hot day.csv"
    weather.write_text(HOT_DAY)
    _open_weather_table(page, server)
    _upload_weather(page, weather)
    # the date box still showed today: the start is moved into the table, and said so
    page.get_by_text("Start set to 2026-07-14 09:00").wait_for()
    assert page.get_by_role("spinbutton", name="month, Race date").inner_text() == "07"
    # an afternoon start, in the heat (WBGT above 28 °C: the black-flag band)
    page.get_by_role("spinbutton", name="hour, Start time").click()
    page.keyboard.type("13")
    page.keyboard.press("Tab")
    page.get_by_text("extreme risk of heat illness").wait_for()
    test_browser._wait_idle(page)
    page.get_by_text("Heat: WBGT up to").wait_for()

    # the heat caution, with the usual advice, in a warning box
    heat = [text for text in _alerts(page) if "heat illness" in text]
    assert heat and "WBGT up to" in heat[0]
    assert "organiser's heat policy" in heat[0] and "medical staff" in heat[0]
    # beyond the heat its source measured in, the heat model says so, named by its authors
    assert any("beyond the heat Racinais et al. 2015 measured in" in text
               for text in _alerts(page))

    # the targets are at clock times from the start
    headers, rows = _grid_rows(_grid_after(page.get_by_role("heading",
                                                           name="Segment targets")))
    clock = next((i for i, h in enumerate(headers) if h.startswith("Clock")), None)
    assert clock is not None, headers
    assert rows[0][clock] == "13:00"
    assert all(a[clock] <= b[clock] for a, b in zip(rows, rows[1:], strict=False))
    assert page.locator('[data-testid="stException"]').count() == 0
    _shot(page, tmp_path, "race_day_hot.png")
    assert not _errors(seen), _errors(seen)[:5]


def test_a_bad_weather_table_is_refused_in_one_line_naming_the_row(
        server, page, tmp_path):  # noqa: F811
    seen = _watch_console(page)
    _open_weather_table(page, server)
    backwards = tmp_path / "backwards.csv"
    backwards.write_text(
        "time,temperature_c,relative_humidity_pct,wind_speed_mps,wind_from_deg\n"
        "2026-07-14T08:00,24,55,2,200\n2026-07-14T12:00,33,40,4,240\n"
        "2026-07-14T10:00,29,45,3,220\n")
    _upload_weather(page, backwards)
    page.get_by_text("Weather table, row 3").wait_for()
    refusal = next(text for text in _alerts(page) if "row 3" in text)
    assert refusal == "Weather table, row 3: time comes before row 2 (rows must go forward in time)"
    # no other day's race is shown meanwhile
    page.get_by_text("Fix the inputs above to see the predicted race.").wait_for()

    lacking = tmp_path / "no humidity.csv"
    lacking.write_text("time,temperature_c,wind_speed_mps,wind_from_deg\n"
                       "2026-07-14T08:00,24,2,200\n2026-07-14T10:00,29,3,220\n")
    _upload_weather(page, lacking)
    page.get_by_text("Weather CSV: the weather file lacks").wait_for()
    refusal = next(text for text in _alerts(page) if text.startswith("Weather CSV"))
    assert "\n" not in refusal and "relative_humidity_pct" in refusal
    assert page.locator('[data-testid="stException"]').count() == 0
    _shot(page, tmp_path, "race_day_refused.png")
    assert not _errors(seen), _errors(seen)[:5]


def test_a_team_is_planned_and_every_file_it_offers_reads_back(
        server, page, tmp_path):  # noqa: F811
    from openpyxl import load_workbook

    seen = _watch_console(page)
    test_browser._open_page(page, server)
    page.get_by_text("Plan a team time trial or team pursuit").click()
    test_browser._wait_idle(page)
    page.get_by_role("button", name="Plan the team").click()
    page.get_by_text("equal turns at constant speed").wait_for()
    test_browser._wait_idle(page)
    assert page.get_by_text("time of the 3rd rider across the line").count() == 1
    assert page.locator('[data-testid="stException"]').count() == 0

    files = {}
    for name in ("Turn schedule (CSV)", "Turn schedule and W′ (XLSX)", "Printable card (PNG)",
                 "Printable card (PDF)"):
        # every button is still there after the downloads before it (a rerun cleared them)
        with page.expect_download() as download_info:
            page.get_by_role("button", name=name).click()
        target = tmp_path / download_info.value.suggested_filename
        download_info.value.save_as(str(target))
        files[name] = target.read_bytes()
    schedule = pd.read_csv(io.BytesIO(files["Turn schedule (CSV)"]), comment="#")
    assert {"Turn", "Leader", "Power [W]"} <= set(schedule.columns) and len(schedule) >= 4
    assert set(schedule["Leader"]) <= {"Rider 1", "Rider 2", "Rider 3", "Rider 4"}
    sheets = load_workbook(io.BytesIO(files["Turn schedule and W′ (XLSX)"])).sheetnames
    assert len(sheets) >= 2
    assert files["Printable card (PNG)"].startswith(b"\x89PNG")
    assert files["Printable card (PDF)"].startswith(b"%PDF")
    _shot(page, tmp_path, "team.png")
    assert not _errors(seen), _errors(seen)[:5]


def test_the_review_takes_a_ride_and_splits_the_time_difference(
        server, page, tmp_path):  # noqa: F811
    seen = _watch_console(page)
    course = tmp_path / "square loop.gpx"
    course.write_bytes(route_gpx())
    race = tmp_path / "loop race.csv"
    # 200 W instead of 250 W on the first climb and a 20 s stop (an invented race)
    race.write_bytes(race_csv(ride(Day(power=lambda x: 200.0 if 500.0 <= x < 1500.0
                                       else 250.0, stops=((6000.0, 20.0),)))))
    test_browser._open_page_on_route(page, server, course, "9.98", "250")
    page.get_by_text("Review a race against this plan").click()
    test_browser._wait_idle(page)
    page.locator('input[type="file"][accept*=".csv"]').last.set_input_files(str(race))
    page.get_by_text("Where the time went").wait_for(timeout=REVIEW_TIMEOUT_MS)
    test_browser._wait_idle(page)
    assert page.locator('[data-testid="stException"]').count() == 0

    # the split: one row per cause and the total last; the parts add up to it
    headers, rows = _grid_rows(_grid_after(page.get_by_text("Where the time went").first))
    assert len(headers) >= 2 and len(rows) >= 6 and "total" in rows[-1][0]
    parts = [float(row[-1].replace("−", "-")) for row in rows[:-1]]
    total = float(rows[-1][-1].replace("−", "-"))
    assert sum(parts) == pytest.approx(total, abs=0.05 * len(parts))
    # slower than planned: less power on the climb and a stop
    assert total > 20.0
    _shot(page, tmp_path, "review_split.png")
    assert not _errors(seen), _errors(seen)[:5]
