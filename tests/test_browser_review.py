"""The race review in a real browser (Debian's chromium, Playwright; fixtures of
tests/test_browser.py): a coach plans on the page, reviews a simulated ride of the race,
saves the plan and its review together in the library, and finds the review again under the
saved plan after reopening it.

The course and the ride come from the independent forward model of
tests/test_review_synthetic.py (Martin et al. 1998 power balance, Runge-Kutta in time), never
from a real event's file.
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest
import test_browser
from test_browser import page, server  # noqa: F401
from test_review_synthetic import Day, race_csv, ride, route_gpx

pytestmark = [pytest.mark.browser, pytest.mark.slow]

REVIEW_TIMEOUT_MS = 300_000
"""Milliseconds for the first review: 32 replays of the model and the fit, with the kernels
compiled on first need, on a busy machine."""


def _shot(browser_page, tmp_path: Path, name: str) -> None:
    """A screenshot for a human look, kept in PACING_SCREENSHOT_DIR when it is set."""
    keep = os.environ.get("PACING_SCREENSHOT_DIR")
    if not keep:
        return
    path = tmp_path / name
    browser_page.screenshot(path=str(path), full_page=True)
    shutil.copy(path, Path(keep) / name)


def test_a_race_reviewed_on_the_page_is_saved_with_its_plan_and_found_again(
        server, page, tmp_path):  # noqa: F811 (the fixtures of test_browser)
    course = tmp_path / "square loop.gpx"
    course.write_bytes(route_gpx())
    race = tmp_path / "loop race.csv"
    # 200 W instead of 250 W on the first climb (an invented race)
    # the page's default rider (80 kg with the bike, CdA 0.30, Crr 0.0032, standing start)
    # at 250 W, but 200 W on the climb from 500 m to 1500 m (an invented race)
    race.write_bytes(race_csv(ride(Day(power=lambda x: 200.0 if 500.0 <= x < 1500.0
                                       else 250.0, rolling=0.0032, start_speed=0.0))))

    test_browser._open_page_on_route(page, server, course, "9.98", "250")
    planned = test_browser._metric_value(page, "Finish time")

    page.get_by_text("Open the coach's library").click()
    test_browser._wait_idle(page)
    page.get_by_text("Review a race against this plan").click()
    test_browser._wait_idle(page)
    page.locator('input[type="file"][accept*=".csv"]').last.set_input_files(str(race))
    page.get_by_text("Where the time went").wait_for(timeout=REVIEW_TIMEOUT_MS)
    test_browser._wait_idle(page)
    assert page.locator('[data-testid="stException"]').count() == 0
    assert test_browser._metric_value(page, "Planned") == planned
    _shot(page, tmp_path, "review.png")
    with page.expect_download() as download_info:
        page.get_by_role("button", name="Download the review table (Excel)").click()
    workbook = tmp_path / "race_review.xlsx"
    download_info.value.save_as(str(workbook))
    from openpyxl import load_workbook

    assert load_workbook(workbook).sheetnames == ["race review", "warnings and notes"]

    name = page.get_by_role("textbox", name="Save the plan as")
    assert name.input_value() == "loop race"
    name.fill("Loop race, June")
    name.press("Enter")
    test_browser._wait_idle(page)
    page.get_by_role("button", name="Save the page's plan with this review").click()
    page.get_by_text("Saved the plan 'Loop race, June' with the review of loop race.csv") \
        .wait_for()
    test_browser._wait_idle(page)
    page.get_by_text("kept with the saved plan 'Loop race, June'").wait_for()
    assert page.get_by_role("button", name="Save the page's plan with this review").count() == 0

    page.get_by_role("tab", name="Saved plans").click()
    page.get_by_text("Race reviews kept with this plan (1)").wait_for()
    page.get_by_role("button", name="Show in the page").click()
    page.get_by_text("The page now shows the saved plan 'Loop race, June'").wait_for()
    test_browser._wait_idle(page)
    assert test_browser._metric_value(page, "Finish time") == planned
    # the review of the reopened plan is named, not offered again
    page.get_by_text("kept with the saved plan 'Loop race, June'").wait_for()
    assert page.get_by_role("button", name="Keep this review with the saved plan 'Loop race, "
                                          "June'").count() == 0
    assert page.locator('[data-testid="stException"]').count() == 0
    _shot(page, tmp_path, "review_reopened.png")
