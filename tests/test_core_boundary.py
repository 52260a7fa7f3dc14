"""The numeric core imports only numpy and scipy (pyproj too, in pacing.course): never the
edge libraries (GPX parsing, tables, web app, plots, database). DEVELOPERS.md, Conventions."""

from __future__ import annotations

import importlib.util
import json
import subprocess
import sys

CORE_MODULES = ["pacing.cycling", "pacing.course", "pacing.air", "pacing.wind",
                "pacing.simulate", "pacing.physiology", "pacing.strategy", "pacing.running",
                "pacing.compare", "pacing.fieldtest", "pacing.conditions", "pacing.targets",
                "pacing.athlete", "pacing.constants", "pacing.errors", "pacing.segments",
                "pacing.running_plans", "pacing.ride", "pacing.virtual_elevation",
                "pacing.sensitivity", "pacing.plan_request", "pacing.segment_model",
                "pacing.strategy_solver", "pacing.drag_fit", "pacing.even_pace",
                "pacing.prediction", "pacing.elevation", "pacing.lagrange_solver"]
"""Modules of the numeric core (DEVELOPERS.md: all of pacing/ but io/, store, cli/); those not
written yet are left out."""
EDGE_LIBRARIES = ["gpxpy", "pandas", "streamlit", "plotly", "sqlalchemy"]


def edge_libraries_loaded_by(modules: list[str]) -> list[str]:
    """Edge libraries in sys.modules after importing `modules` in a fresh interpreter."""
    probe = ("import importlib, json, sys\n"
             f"for name in {modules!r}: importlib.import_module(name)\n"
             f"print(json.dumps([m for m in {EDGE_LIBRARIES!r} if m in sys.modules]))")
    result = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                            timeout=300)
    assert result.returncode == 0, result.stderr
    return json.loads(result.stdout)


def test_core_modules_do_not_import_edge_libraries():
    present = [m for m in CORE_MODULES if importlib.util.find_spec(m) is not None]
    assert "pacing.course" in present and "pacing.cycling" in present
    if not edge_libraries_loaded_by(present):  # one interpreter for all: the fast path
        return
    culprits = {m: found for m in present if (found := edge_libraries_loaded_by([m]))}
    raise AssertionError(f"core modules import edge libraries: {culprits}")


def test_the_probe_would_notice_an_edge_import():
    assert edge_libraries_loaded_by(["pacing.io.gpx"]) == ["gpxpy"]
