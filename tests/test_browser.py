"""The web app in a real browser: Debian's chromium driven by Playwright against
``streamlit run app.py`` on a free localhost port.

Load the page, upload a GPX, change a value, wait for the new numbers (not only the spinner),
download the CSV and take a screenshot. Skipped when /usr/bin/chromium is missing, unless
CI=true (then it fails). Never run `playwright install`: it downloads browsers.
"""

from __future__ import annotations

import io
import os
import re
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pandas as pd
import pytest
from samples import hill_road_gpx

pytestmark = [pytest.mark.browser, pytest.mark.slow]

ROOT = Path(__file__).resolve().parents[1]
CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_FLAGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
]
START_TIMEOUT = 60.0
"""Seconds for the server to answer its health check."""
CONTENT_TIMEOUT_MS = 90_000
"""Milliseconds to wait for page content."""


def _require_browser() -> None:
    if CHROMIUM.exists():
        return
    if os.environ.get("CI", "").lower() == "true":
        pytest.fail(f"{CHROMIUM} is missing on CI")
    pytest.skip(f"{CHROMIUM} is missing")


def _free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    _require_browser()
    port = _free_port()
    log_path = tmp_path_factory.mktemp("streamlit") / "server.log"
    log = open(log_path, "w")  # noqa: SIM115 (closed in the finally below)
    process = subprocess.Popen(
        [sys.executable, "-m", "streamlit", "run", str(ROOT / "app.py"),
         "--server.port", str(port), "--server.address", "127.0.0.1",
         "--server.headless", "true", "--browser.gatherUsageStats", "false",
         "--server.fileWatcherType", "none"],
        cwd=ROOT, stdout=log, stderr=subprocess.STDOUT, start_new_session=True,
    )
    url = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + START_TIMEOUT
        while True:
            if process.poll() is not None:
                pytest.fail(f"streamlit exited with code {process.returncode}; see {log_path}")
            try:
                with urllib.request.urlopen(f"{url}/_stcore/health", timeout=2) as reply:
                    if reply.status == 200:
                        break
            except OSError:
                pass
            if time.monotonic() > deadline:
                pytest.fail(f"streamlit did not answer within {START_TIMEOUT:.0f} s")
            time.sleep(0.5)
        yield url
    finally:
        try:
            os.killpg(process.pid, signal.SIGTERM)
            process.wait(timeout=10)
        except (ProcessLookupError, subprocess.TimeoutExpired):
            os.killpg(process.pid, signal.SIGKILL)
            process.wait(timeout=10)
        log.close()


@pytest.fixture
def page(tmp_path):
    _require_browser()
    sync_api = pytest.importorskip("playwright.sync_api")
    with sync_api.sync_playwright() as playwright:
        context = playwright.chromium.launch_persistent_context(
            user_data_dir=str(tmp_path / "profile"), executable_path=str(CHROMIUM),
            headless=True, args=CHROMIUM_FLAGS, accept_downloads=True,
            viewport={"width": 1400, "height": 1000},
        )
        try:
            context.set_default_timeout(CONTENT_TIMEOUT_MS)
            yield context.pages[0] if context.pages else context.new_page()
        finally:
            context.close()


def _metric_value(page, label: str) -> str:
    metric = page.locator('[data-testid="stMetric"]', has_text=label).first
    return metric.locator('[data-testid="stMetricValue"]').inner_text().strip()


def _wait_idle(page) -> None:
    """Wait until the app has finished its rerun (the status widget says nothing is running)."""
    page.wait_for_function(
        "() => !document.querySelector('[data-testid=\"stStatusWidget\"] button')"
        " && !document.querySelector('[data-testid=\"stSpinner\"]')",
        timeout=CONTENT_TIMEOUT_MS)


def test_coach_workflow_in_chromium(server, page, tmp_path):
    page.goto(server)
    # content, not just the spinner: the finish time of the demo course
    page.get_by_text("Finish time", exact=True).wait_for()
    _wait_idle(page)
    assert re.fullmatch(r"\d+:\d\d:\d\d", _metric_value(page, "Finish time"))
    assert _metric_value(page, "Distance").endswith("km")

    # upload a GPX
    gpx = tmp_path / "hill road.gpx"
    gpx.write_bytes(hill_road_gpx(6.0))
    page.locator('input[type="file"][accept*=".gpx"]').set_input_files(str(gpx))
    page.wait_for_function(
        "() => [...document.querySelectorAll('[data-testid=\"stMetricValue\"]')]"
        ".some(e => e.innerText.trim().startsWith('6.0'))", timeout=CONTENT_TIMEOUT_MS)
    _wait_idle(page)
    page.get_by_text("Finish time", exact=True).wait_for()
    before = _metric_value(page, "Finish time")

    # change a value: the average power
    power = page.get_by_role("spinbutton", name="Average power [W]")
    power.fill("320")
    power.press("Enter")
    page.wait_for_function(
        "(old) => { const m = [...document.querySelectorAll('[data-testid=\"stMetric\"]')]"
        ".find(e => e.innerText.includes('Finish time'));"
        " return m && !m.innerText.includes(old); }", arg=before, timeout=CONTENT_TIMEOUT_MS)
    _wait_idle(page)
    after = _metric_value(page, "Finish time")
    assert after < before

    # download the CSV: the segment table of the uploaded course
    with page.expect_download() as download_info:
        page.get_by_role("button", name="Table · CSV").click()
    target = tmp_path / "targets.csv"
    download_info.value.save_as(str(target))
    # the plan's warnings come first as "# " comment lines (pacing.io.exports.table_to_csv)
    table = pd.read_csv(io.BytesIO(target.read_bytes()), comment="#")
    assert "Target power [W]" in table.columns
    assert table["To [km]"].iloc[-1] == pytest.approx(6.0, abs=0.1)

    # screenshot, kept for a human look
    shot = tmp_path / "app.png"
    page.set_viewport_size({"width": 1400, "height": 4600})  # the app scrolls inside its frame
    page.wait_for_timeout(1500)
    page.screenshot(path=str(shot), full_page=True)
    assert shot.stat().st_size > 10_000
    keep = os.environ.get("PACING_SCREENSHOT_DIR")
    if keep:
        shutil.copy(shot, Path(keep) / "app.png")
