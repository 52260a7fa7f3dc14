"""Import contracts, checked by walking the package (DEVELOPERS.md, "Layout"):

- the numeric core (course, weather, physics, physiology, plan, compare, fieldtest, review,
  team and the top-level modules) imports only the standard library, numpy and scipy, never
  the edges (io, store, cli, display, ui) nor their libraries (GPX parsing, tables, web app, plots,
  database); named exceptions: pyproj for geodesics in pacing.course.geometry, threadpoolctl
  in the fastest plan's SLSQP polish (pacing.plan.fastest, now pacing.plan.slsqp_polish) and
  numba (with its llvmlite) in pacing.kernels, the one module that knows about compiled
  kernels; importing the core does not import numba;
- pure ui modules (views and helpers without widgets) never import streamlit;
- every name is imported from the module that defines it: no package re-exports names.

Imports inside functions count too: the check reads the source, not what happens to load.
"""

from __future__ import annotations

import ast
import json
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
CORE_PACKAGES = ("course", "weather", "physics", "physiology", "plan", "compare", "fieldtest",
                 "review", "team")
CORE_TOP_MODULES = ("__init__", "athlete", "constants", "errors", "kernels", "notices")
EDGE_PACKAGES = ("pacing.io", "pacing.store", "pacing.store_migrations", "pacing.cli",
                 "pacing.display", "ui")
CORE_LIBRARIES = {"numpy", "scipy"}
CORE_EXCEPTIONS = {"pacing.course.geometry": {"pyproj"}, "pacing.plan.fastest": {"threadpoolctl"},
                   "pacing.plan.slsqp_polish": {"threadpoolctl"},
                   "pacing.kernels": {"numba", "llvmlite"}}
STREAMLIT_UI_MODULES = {"ui.comparison", "ui.fieldtest_panel", "ui.library_panel", "ui.sections",
                        "ui.widgets", "ui.review_panel", "ui.team_panel", "ui.race_day_panel"}
EDGE_LIBRARIES = ["gpxpy", "pandas", "streamlit", "plotly", "sqlalchemy", "openpyxl",
                  "matplotlib", "defusedxml", "alembic"]


def module_name(path: Path) -> str:
    parts = path.relative_to(ROOT).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def core_modules() -> list[Path]:
    package = ROOT / "pacing"
    paths = [package / f"{name}.py" for name in CORE_TOP_MODULES]
    for name in CORE_PACKAGES:
        paths += sorted((package / name).glob("*.py"))
    return paths


def imported_modules(path: Path) -> list[str]:
    """Every module an import statement in the file names (top level and inside functions)."""
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found += [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom) and node.level == 0 and node.module:
            found.append(node.module)
            if node.module in ("pacing", "ui"):
                found += [f"{node.module}.{alias.name}" for alias in node.names]
    return found


def is_standard_library(name: str) -> bool:
    return name.split(".")[0] in sys.stdlib_module_names


def test_every_core_package_is_walked():
    walked = {module_name(p).split(".")[1] for p in core_modules() if "." in module_name(p)}
    packages = {p.name for p in (ROOT / "pacing").iterdir()
                if p.is_dir() and (p / "__init__.py").exists()}
    assert packages - walked == {"io", "store", "store_migrations", "cli", "display"}


@pytest.mark.parametrize("path", core_modules(), ids=module_name)
def test_the_core_imports_only_numpy_scipy_and_itself(path):
    name = module_name(path)
    allowed = CORE_LIBRARIES | CORE_EXCEPTIONS.get(name, set())
    wrong = [m for m in imported_modules(path)
             if not is_standard_library(m)
             and not (m == "pacing" or m.startswith("pacing."))
             and m.split(".")[0] not in allowed]
    wrong += [m for m in imported_modules(path)
              if any(m == edge or m.startswith(edge + ".") for edge in EDGE_PACKAGES)]
    assert wrong == []


@pytest.mark.parametrize("path", sorted((ROOT / "ui").glob("*.py")), ids=module_name)
def test_pure_ui_modules_never_import_streamlit(path):
    if module_name(path) in STREAMLIT_UI_MODULES:
        return
    assert "streamlit" not in {m.split(".")[0] for m in imported_modules(path)}


def defined_names(path: Path) -> set[str]:
    names = set()
    for node in ast.parse(path.read_text(encoding="utf-8")).body:
        if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef | ast.ClassDef):
            names.add(node.name)
        elif isinstance(node, ast.Assign | ast.AnnAssign):
            targets = node.targets if isinstance(node, ast.Assign) else [node.target]
            names |= {n.id for t in targets for n in ast.walk(t) if isinstance(n, ast.Name)}
    return names


def project_files() -> list[Path]:
    folders = ("pacing", "ui", "tests", "bench")
    return [p for folder in folders for p in (ROOT / folder).rglob("*.py")
            if "store_migrations" not in p.parts] + [ROOT / "app.py"]


def test_names_are_imported_from_the_module_that_defines_them():
    modules = {module_name(p): p for folder in ("pacing", "ui")
               for p in (ROOT / folder).rglob("*.py")}
    defined = {name: defined_names(path) for name, path in modules.items()}
    wrong = []
    for path in project_files():
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if not (isinstance(node, ast.ImportFrom) and node.level == 0 and node.module
                    and node.module in modules):
                continue
            for alias in node.names:
                submodule = f"{node.module}.{alias.name}" in modules
                if not submodule and alias.name not in defined[node.module]:
                    wrong.append(f"{path.relative_to(ROOT)}: {node.module}.{alias.name}")
    assert wrong == []


def test_package_init_files_hold_no_imports():
    wrong = [module_name(p) for p in (ROOT / "pacing").rglob("__init__.py")
             if module_name(p) not in ("pacing.store_migrations", "pacing.cli")
             and any(isinstance(n, ast.Import | ast.ImportFrom)
                     for n in ast.parse(p.read_text(encoding="utf-8")).body)]
    assert wrong == []


def test_importing_the_whole_core_loads_no_edge_library():
    names = [module_name(p) for p in core_modules()]
    probe = ("import importlib, json, sys\n"
             f"for name in {names!r}: importlib.import_module(name)\n"
             f"print(json.dumps([m for m in {EDGE_LIBRARIES!r} if m in sys.modules]))")
    result = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                            timeout=300, cwd=ROOT)
    assert result.returncode == 0, result.stderr
    assert json.loads(result.stdout) == []


def test_importing_the_whole_core_does_not_import_numba():
    # numba costs a few tenths of a second: pacing.kernels imports it on first need only
    names = [module_name(p) for p in core_modules()]
    probe = ("import importlib, json, sys\n"
             f"for name in {names!r}: importlib.import_module(name)\n"
             "print(json.dumps([m for m in ('numba', 'llvmlite') if m in sys.modules]))")
    result = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True,
                            timeout=300, cwd=ROOT)
    assert result.returncode == 0, result.stderr
    assert json.loads(result.stdout) == []
