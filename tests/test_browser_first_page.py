"""The app's first page in a real browser (issues 15 and 18): Debian's chromium driven by
Playwright against ``streamlit run app.py`` (the `server` and `page` fixtures of
test_browser.py).

The first page shows the headline (the finish time), then draws the course's figures, with
no error in the browser's console; the folds that work out their content only when opened
("Where the watts go", the segments' table) show it when clicked. No timed assertions here:
how long the first page takes is measured by bench/bench_app.py --browser.
"""

from __future__ import annotations

import re

import pytest
from test_browser import page, server  # noqa: F401 (pytest fixtures)

pytestmark = [pytest.mark.browser, pytest.mark.slow]

RUN_OVER = ("() => !document.querySelector('[data-testid=\"stStatusWidget\"] button')"
            " && !document.querySelector('[data-testid=\"stSpinner\"]')")
"""True once the page's script run is over (no stop button, no spinner)."""
CLOCK = re.compile(r"^\d+:\d\d:\d\d$")
"""A finish time as the headline shows it."""
COURSE_AND_RACE_FIGURES = 3
"""Figures on the first page: the profile, the map and the race along the course."""


def _console_errors(page) -> list[str]:  # noqa: F811 (the fixture's page)
    """Collects the console's errors and the page's uncaught exceptions from now on."""
    errors: list[str] = []
    page.on("console", lambda message: errors.append(message.text)
            if message.type == "error" else None)
    page.on("pageerror", lambda error: errors.append(str(error)))
    return errors


def _finish_time(page) -> str:  # noqa: F811
    """The headline's finish time once it is drawn (H:MM:SS)."""
    value = page.locator('[data-testid="stMetric"]', has_text="Finish time") \
        .locator('[data-testid="stMetricValue"]', has_text=CLOCK).first
    value.wait_for()
    return value.inner_text().strip()


def test_the_first_page_shows_the_headline_and_its_figures_without_console_errors(
        server, page):  # noqa: F811
    errors = _console_errors(page)
    page.goto(server)
    assert CLOCK.match(_finish_time(page))
    page.wait_for_function(
        "n => document.querySelectorAll('.js-plotly-plot .main-svg').length > 0"
        " && document.querySelectorAll('.js-plotly-plot').length >= n",
        arg=COURSE_AND_RACE_FIGURES)
    page.wait_for_function(RUN_OVER)
    page.get_by_text("Segment targets").first.wait_for()
    assert errors == []


def test_the_folds_work_out_their_content_when_opened(server, page):  # noqa: F811
    errors = _console_errors(page)
    page.goto(server)
    _finish_time(page)
    page.wait_for_function(RUN_OVER)
    page.get_by_text("Where the watts go").first.click()
    page.get_by_text("Reynolds number", exact=False).first.wait_for()
    page.locator('[data-testid="stExpander"]', has_text="Where the watts go") \
        .locator(".js-plotly-plot").first.wait_for()
    page.get_by_text(re.compile(r"^The \d+ segments$")).first.click()
    page.locator('[data-testid="stExpander"]', has_text="segments") \
        .locator('[data-testid="stDataFrame"]').first.wait_for()
    assert errors == []
