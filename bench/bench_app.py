"""Server time of the web app: how long a rerun takes after each kind of widget change on the
demo course (Streamlit AppTest, headless). Prints; never asserts. Target: under 1 s per change
once the course and the plan for the inputs are cached; the first computation of a new plan
is shown separately ("new inputs").

Run: .venv/bin/python bench/bench_app.py
"""

from __future__ import annotations

import statistics
import time
from pathlib import Path

from streamlit.testing.v1 import AppTest

APP = str(Path(__file__).resolve().parents[1] / "app.py")
TARGET = 1.0


def timed(action) -> float:
    start = time.perf_counter()
    action()
    return time.perf_counter() - start


def main() -> None:
    app = AppTest.from_file(APP, default_timeout=300)
    first = timed(app.run)
    print(f"first load (imports, course, plan): {first:6.2f} s")
    plain = [timed(app.run) for _ in range(3)]
    print(f"rerun with nothing changed:          {statistics.median(plain):6.2f} s")

    changes = [
        ("power 250 W (new inputs)", lambda: app.number_input(key="mean_power:metric")
         .set_value(250.0).run()),
        ("power back to default (cached)", lambda: app.number_input(key="mean_power:metric")
         .set_value(240.0).run()),
        ("wind 20 km/h (new inputs)", lambda: app.number_input(key="wind_speed:metric")
         .set_value(20.0).run()),
        ("units imperial", lambda: app.radio(key="units").set_value("imperial").run()),
        ("units metric", lambda: app.radio(key="units").set_value("metric").run()),
        ("segments every 5 km (new inputs)", lambda: app.radio(key="split_mode")
         .set_value("fixed length").run()),
        ("segments by terrain (cached)", lambda: app.radio(key="split_mode")
         .set_value("by terrain").run()),
        ("smoothing window 150 m (new course)", lambda: app.number_input(
            key="smooth_window:metric").set_value(150.0).run()),
        ("target time 1:15:00 (new inputs)", lambda: (
            app.radio(key="approach").set_value("Reach a finish time").run(),
            app.text_input(key="target_time").set_value("1:15:00").run())),
        ("quickest within limits (new inputs)", lambda: app.radio(key="approach")
         .set_value("Quickest within my limits").run()),
        ("back to even power (cached)", lambda: app.radio(key="approach")
         .set_value("Even power").run()),
        ("sport running (new inputs)", lambda: app.radio(key="sport").set_value("running")
         .run()),
        ("sport cycling (cached)", lambda: app.radio(key="sport").set_value("cycling").run()),
    ]
    print(f"{'change':40s} {'server time':>12s}  {'ratio to 1 s target':>20s}")
    for name, action in changes:
        seconds = timed(action)
        problem = " (exception)" if app.exception else ""
        print(f"{name:40s} {seconds:10.2f} s  {seconds / TARGET:18.2f}x{problem}")


if __name__ == "__main__":
    main()
