"""Server time of the web app on the demo course (Streamlit AppTest, headless). Prints; never
asserts (timed assertions stay out of the tests: the machines are shared and noisy).

What "server time" means here: the wall time of one run of app.py by Streamlit's own script
runner (``streamlit.testing.v1.AppTest.run``: the same ScriptRunner ``streamlit run`` uses,
with the widget states of a session), from the rerun request until the last element of the
page is sent. It includes every import app.py triggers (numpy, pandas, plotly, pacing, …) and
every computation and figure; it leaves out Streamlit's own start-up (the server has imported
streamlit before the first visitor arrives), the websocket and the browser's drawing. The
browser row (``--browser``, needs /usr/bin/chromium and playwright) adds those: a fresh
``streamlit run`` server per sample, the time from navigating to the page until its finish time
is shown (the target's row), and beside it until the run is over and the page's figures are
drawn (a session's first page sends the course's figures after the headline, app.py).

Rows (min and median of interleaved samples; the targets of issue 15 beside them):

- first page, fresh server process: the default page (demo course, even power) in a new
  Python process (imports paid, caches empty); target ≤ 1 s. Beside it the same page for
  another session of the now warm process (what a second visitor waits).
- rerun after one input, fastest plan: the page on "Quickest within my limits", the average
  power set to a value not seen before (a new plan is worked out); target ≤ 0.2 s. Beside it
  the same change to a value seen before (the plan is cached: what the page itself costs).
- setups panel on: the comparison switched on after an input it depends on changed (a new
  comparison is worked out); target ≤ 1 s. Beside it a rerun with the panel on and nothing new
  (the comparison is computed once per change of its inputs, not on every rerun).

Each sample runs in a new Python process of its own (the pages measured are interleaved, each
with its own ui package). Then, with ``--changes``, the server time of each kind of widget
change (the older table).

Run: .venv/bin/python bench/bench_app.py [--runs 5] [--browser] [--changes]
     [--app app.py /tmp/before/app.py]
"""

from __future__ import annotations

import argparse
import json
import os
import signal
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from collections.abc import Callable
from pathlib import Path

from streamlit.testing.v1 import AppTest

ROOT = Path(__file__).resolve().parents[1]
APP = str(ROOT / "app.py")
FIRST_PAGE_TARGET = 1.0
"""First page of a fresh server process, server time [s] (issue 15)."""
BROWSER_TARGET = 2.5
"""First page in a browser [s] (issue 15)."""
FASTEST_RERUN_TARGET = 0.2
"""Rerun after one input with the fastest plan [s] (issue 15)."""
SETUPS_TARGET = 1.0
"""Setups panel switched on [s] (issue 15)."""
FIRST_PAGE = "first page, fresh server process"
FASTEST = "rerun after one input, fastest plan"
SETUPS = "setups panel on (new comparison)"
BROWSER = "first page in chromium, fresh server: headline"
BROWSER_DONE = "  same, run over and its 3 figures drawn"
BROWSER_SOCKET = "  of which Streamlit's JavaScript (websocket open)"
BROWSER_TITLE = "  of which until the title is shown"
TARGETS = {FIRST_PAGE: FIRST_PAGE_TARGET, FASTEST: FASTEST_RERUN_TARGET,
           SETUPS: SETUPS_TARGET, BROWSER: BROWSER_TARGET}
"""The rows that have a target."""


def timed(action: Callable[[], object]) -> float:
    start = time.perf_counter()
    action()
    return time.perf_counter() - start


def _started(app: str, approach: str | None = None) -> AppTest:
    page = AppTest.from_file(app, default_timeout=300)
    page.run()
    if approach is not None:
        page.radio(key="approach").set_value(approach).run()
    return page


def _warm_up_over() -> None:
    """Wait for the page's background warm-up of the numeric kernels (a thread it starts once
    per process after its first page, app.py kernels_warm_up), so the rows that follow measure
    the page, not the page sharing the cores with the warm-up."""
    for thread in threading.enumerate():
        if thread.name.startswith("pacing-kernels"):
            thread.join()


class Powers:
    """Average powers never asked before [W] (every sample works out a new plan)."""

    def __init__(self, start: float) -> None:
        self.next = start

    def __call__(self) -> float:
        self.next += 1.0
        return self.next


def fastest_rerun(page: AppTest, powers: Powers) -> tuple[float, float]:
    """(new power, a power seen before): server time of each rerun [s]."""
    seen = page.number_input(key="mean_power:metric").value
    new = timed(lambda: page.number_input(key="mean_power:metric").set_value(powers()).run())
    cached = timed(lambda: page.number_input(key="mean_power:metric").set_value(seen).run())
    return new, cached


def setups_on(page: AppTest, powers: Powers) -> tuple[float, float]:
    """(panel switched on after a new power, a rerun with the panel on and nothing new) [s]."""
    page.toggle(key="show_setups").set_value(False).run()
    page.number_input(key="mean_power:metric").set_value(powers()).run()
    switched = timed(lambda: page.toggle(key="show_setups").set_value(True).run())
    again = timed(page.run)
    return switched, again


FIRST_PAGE_FIGURES = 3
"""Figures on the first page: the course's profile and map, the race along the course."""


def browser_first_page(app: str, environment: dict[str, str]) -> dict[str, float] | None:
    """Seconds from navigating to a freshly started server, in headless chromium, until the
    finish time is shown (BROWSER), the run is over and the first page's figures are drawn
    (BROWSER_DONE), the page's websocket opens (BROWSER_SOCKET: what the browser waits for
    Streamlit's JavaScript) and the title is shown (BROWSER_TITLE: the script's first
    element, after app.py's imports); None without chromium or playwright."""
    chromium = Path("/usr/bin/chromium")
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        return None
    if not chromium.exists():
        return None
    import socket
    import urllib.request

    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        port = probe.getsockname()[1]
    server = subprocess.Popen(
        [sys.executable, "-m", "streamlit", "run", app, "--server.port", str(port),
         "--server.address", "127.0.0.1", "--server.headless", "true",
         "--browser.gatherUsageStats", "false", "--server.fileWatcherType", "none"],
        cwd=ROOT, env=environment, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
        start_new_session=True)
    url = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline:
            try:
                with urllib.request.urlopen(f"{url}/_stcore/health", timeout=2) as reply:
                    if reply.status == 200:
                        break
            except OSError:
                time.sleep(0.2)
        with sync_playwright() as playwright:
            browser = playwright.chromium.launch(
                executable_path=str(chromium), headless=True,
                args=["--no-sandbox", "--disable-gpu", "--no-first-run"])
            try:
                tab = browser.new_page(viewport={"width": 1400, "height": 1000})
                tab.set_default_timeout(120_000)
                opened: list[float] = []
                tab.on("websocket", lambda _: opened.append(time.perf_counter() - start))
                start = time.perf_counter()
                tab.goto(url)
                tab.get_by_text("Race plan").first.wait_for()
                title = time.perf_counter() - start
                tab.locator('[data-testid="stMetric"]', has_text="Finish time").first \
                    .wait_for()
                headline = time.perf_counter() - start
                tab.wait_for_function(
                    "() => !document.querySelector('[data-testid=\"stStatusWidget\"] button')"
                    " && !document.querySelector('[data-testid=\"stSpinner\"]')")
                tab.wait_for_function(
                    "n => document.querySelectorAll('.js-plotly-plot .main-svg').length > 0"
                    " && document.querySelectorAll('.js-plotly-plot').length >= n",
                    arg=FIRST_PAGE_FIGURES)
                return {BROWSER: headline, BROWSER_DONE: time.perf_counter() - start,
                        BROWSER_SOCKET: opened[0] if opened else float("nan"),
                        BROWSER_TITLE: title}
            finally:
                browser.close()
    finally:
        os.killpg(server.pid, signal.SIGTERM)
        try:
            server.wait(timeout=10)
        except subprocess.TimeoutExpired:  # e.g. still compiling its kernels
            os.killpg(server.pid, signal.SIGKILL)
            server.wait(timeout=10)


def changes_table(app: str) -> None:
    """The server time of each kind of widget change, once each (the older table)."""
    page = _started(app)
    changes = [
        ("power 250 W (new inputs)", lambda: page.number_input(key="mean_power:metric")
         .set_value(250.0).run()),
        ("power back to default (cached)", lambda: page.number_input(key="mean_power:metric")
         .set_value(240.0).run()),
        ("wind 20 km/h (new inputs)", lambda: page.number_input(key="wind_speed:metric")
         .set_value(20.0).run()),
        ("units imperial", lambda: page.radio(key="units").set_value("imperial").run()),
        ("units metric", lambda: page.radio(key="units").set_value("metric").run()),
        ("segments every 5 km (new inputs)", lambda: page.radio(key="split_mode")
         .set_value("fixed length").run()),
        ("segments by terrain (cached)", lambda: page.radio(key="split_mode")
         .set_value("by terrain").run()),
        ("smoothing window 150 m (new course)", lambda: page.number_input(
            key="smooth_window:metric").set_value(150.0).run()),
        ("target time 1:15:00 (new inputs)", lambda: (
            page.radio(key="approach").set_value("Reach a finish time").run(),
            page.text_input(key="target_time").set_value("1:15:00").run())),
        ("quickest within limits (new inputs)", lambda: page.radio(key="approach")
         .set_value("Quickest within my limits").run()),
        ("back to even power (cached)", lambda: page.radio(key="approach")
         .set_value("Even power").run()),
        ("sport running (new inputs)", lambda: page.radio(key="sport").set_value("running")
         .run()),
        ("sport cycling (cached)", lambda: page.radio(key="sport").set_value("cycling").run()),
    ]
    print(f"\n{'change (once each)':52s} {'server time':>9s}")
    for name, action in changes:
        seconds = timed(action)
        problem = " (exception)" if page.exception else ""
        print(f"{name:52s} {seconds:7.3f} s{problem}")


def one_sample(app: str, browser: bool) -> dict:
    """One sample of every row, in this (fresh) process: {"rows": {name: seconds},
    "failures": [...], "ready": the page's caption on its numeric kernels at the end, or ""}."""
    rows: dict[str, float] = {}
    first = AppTest.from_file(app, default_timeout=300)
    cpu = time.process_time()
    rows[FIRST_PAGE] = timed(first.run)
    rows["  its CPU time (all threads)"] = (
        time.process_time() - cpu)
    rows["  kernels ready, counted from its end (2 s + warm-up)"] = timed(_warm_up_over)
    rows["first page, another session (server warm)"] = timed(lambda: _started(app))
    fastest_page = _started(app, "Quickest within my limits")
    rows[FASTEST], rows["  same, the plan for it cached (page alone)"] = fastest_rerun(
        fastest_page, Powers(240.0))
    setups_page = _started(app)
    rows[SETUPS], rows["  rerun with the panel on, nothing new"] = setups_on(
        setups_page, Powers(240.0))
    if browser:
        seconds = browser_first_page(app, dict(os.environ))
        if seconds is not None:
            rows.update(seconds)
    failures = [name for name, page in (("first page", first), ("fastest plan", fastest_page),
                                        ("setups", setups_page)) if page.exception]
    ready = [c.value for c in setups_page.caption if "kernels" in c.value]
    return {"rows": rows, "failures": failures, "ready": ready[0] if ready else ""}


def in_child(app: str, browser: bool, environment: dict[str, str]) -> dict:
    """`one_sample` in a new Python process (imports paid, caches empty, this page's own ui
    package)."""
    command = [sys.executable, __file__, "--one-sample", "--app", app]
    done = subprocess.run(command + (["--browser"] if browser else []), capture_output=True,
                          text=True, env=environment, check=True, cwd=ROOT)
    return json.loads(done.stdout.strip().splitlines()[-1])


def report(app: str, samples: list[dict]) -> None:
    """The rows of one page: min, median and the median's ratio to its target."""
    print(f"\n{app}: server time, {len(samples)} interleaved samples "
          f"({os.cpu_count()} cores)")
    print(f"{'what':52s} {'min':>9s} {'median':>9s}  median / target")
    for name in samples[0]["rows"]:
        values = [s["rows"][name] for s in samples if name in s["rows"]]
        low, middle = min(values), statistics.median(values)
        target = TARGETS.get(name)
        ratio = "" if target is None else f"{middle / target:8.2f}x of {target:g} s"
        print(f"{name:52s} {low:7.3f} s {middle:7.3f} s  {ratio}")
    ready = samples[-1]["ready"]
    if ready:
        print(f"(the page's last caption on its kernels: {ready!r})")
    failures = sorted({f for s in samples for f in s["failures"]})
    if failures:
        print(f"EXCEPTION in the page: {', '.join(failures)}")


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--runs", type=int, default=5, help="samples per row")
    parser.add_argument("--app", nargs="+", default=[APP],
                        help="the page(s) to measure, interleaved (default app.py); e.g. a "
                             "copy of an older app.py with its ui/ beside it, for before/after")
    parser.add_argument("--browser", action="store_true",
                        help="also the first page in headless chromium (fresh server each)")
    parser.add_argument("--changes", action="store_true",
                        help="also the server time of each kind of widget change")
    parser.add_argument("--one-sample", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    apps = [str(Path(app).resolve()) for app in args.app]
    if args.one_sample:
        print(json.dumps(one_sample(apps[0], args.browser)))
        return
    with tempfile.TemporaryDirectory() as folder:
        # the library panel opens a library: a scratch one, never the user's
        environment = dict(os.environ, PACING_DATABASE_URL=str(Path(folder) / "bench.db"))
        samples: dict[str, list[dict]] = {app: [] for app in apps}
        for _ in range(args.runs):
            for app in apps:
                samples[app].append(in_child(app, args.browser, environment))
        for app in apps:
            report(app, samples[app])
        if args.changes:
            os.environ["PACING_DATABASE_URL"] = environment["PACING_DATABASE_URL"]
            changes_table(apps[0])


if __name__ == "__main__":
    main()
