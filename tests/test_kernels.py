"""Specification of the compiled kernels' machinery (pacing.kernels).

References: CPython's own math.hypot is the reference of `cpython_hypot` (its algorithm is the
one in CPython's Modules/mathmodule.c, vector_norm; Borges 2019, arXiv:1904.09481); numba's
documented behaviour (NUMBA_DISABLE_JIT returns the plain functions, NUMBA_CACHE_DIR holds the
cache) is the reference of the compiled families. No timing is checked here (bench/ does that).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest

from pacing import kernels
from pacing.errors import InputError

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture
def fresh_policy(monkeypatch):
    """No family loaded and numba importable, whatever ran before in this process."""
    monkeypatch.setattr(kernels, "_families", {})
    monkeypatch.setattr(kernels, "_numba_importable", True)
    monkeypatch.delenv(kernels.POLICY_VARIABLE, raising=False)
    return monkeypatch


# ---------------------------------------------------------------- the policy

def test_auto_runs_small_jobs_as_python_and_large_ones_compiled(fresh_policy):
    assert kernels.policy() == "auto"
    assert not kernels.use_compiled(1)
    assert not kernels.use_compiled(kernels.COMPILED_WORK_THRESHOLD - 1)
    assert kernels.use_compiled(kernels.COMPILED_WORK_THRESHOLD)


def test_auto_runs_everything_compiled_once_kernels_are_loaded(fresh_policy):
    fresh_policy.setattr(kernels, "_families", {("some.module", ("f",)): object()})
    assert kernels.loaded()
    assert kernels.use_compiled(1)


@pytest.mark.parametrize(("value", "small", "large"), [
    ("compiled", True, True), ("python", False, False), ("auto", False, True),
    (" Python ", False, False), ("", False, True)])
def test_the_policy_variable_decides(fresh_policy, value, small, large):
    fresh_policy.setenv(kernels.POLICY_VARIABLE, value)
    assert kernels.use_compiled(1) is small
    assert kernels.use_compiled(10 * kernels.COMPILED_WORK_THRESHOLD) is large


def test_an_unknown_policy_is_refused_in_one_line(fresh_policy):
    fresh_policy.setenv(kernels.POLICY_VARIABLE, "fast")
    with pytest.raises(InputError, match="PACING_KERNELS must be one of auto, compiled, python"):
        kernels.use_compiled(1)


def test_without_numba_everything_runs_as_python_without_an_error(fresh_policy):
    fresh_policy.setattr(kernels, "_numba_importable", False)
    fresh_policy.setenv(kernels.POLICY_VARIABLE, "compiled")
    assert not kernels.use_compiled(10**9)
    assert kernels.warm_up() >= 0.0


# ---------------------------------------------------------------- CPython's hypot

SPECIAL = [(0.0, 0.0), (3.0, 4.0), (-3.0, 4.0), (0.0, -2.5), (1e-310, 3e-310), (5e-324, 0.0),
           (1e308, 1e308), (1.7e308, 1e300), (math.inf, math.nan), (math.nan, 1.0),
           (-math.inf, 2.0), (2.0 ** 1023, 1.0), (2.0 ** -1022, 2.0 ** -1040)]


def same_float(a, b):
    return (math.isnan(a) and math.isnan(b)) or (a == b and math.copysign(1, a)
                                                 == math.copysign(1, b))


def random_legs(count=20_000, seed=7):
    rng = np.random.default_rng(seed)
    scale = np.exp(rng.uniform(-40.0, 40.0, count))
    return (rng.normal(8.0, 3.0, count) * scale).tolist(), (rng.normal(0.0, 3.0, count)
                                                           * scale).tolist()


def test_cpython_hypot_is_cpython_s_math_hypot_bit_for_bit():
    # reference: the running interpreter's math.hypot, on special and random legs
    xs, ys = random_legs()
    for x, y in [*SPECIAL, *zip(xs, ys, strict=True)]:
        assert same_float(kernels.cpython_hypot(x, y), math.hypot(x, y)), (x, y)


def test_fused_hypot_is_cpython_s_math_hypot_bit_for_bit():
    xs, ys = random_legs(seed=9)
    for x, y in [*SPECIAL, *zip(xs, ys, strict=True)]:
        assert same_float(kernels.fused_hypot(x, y), math.hypot(x, y)), (x, y)


@pytest.mark.parametrize("name", ["cpython_hypot", "fused_hypot"])
def test_compiled_hypots_are_cpython_s_math_hypot_bit_for_bit(name):
    # the compiled replacements (fused products, exponent bits) against the interpreter
    pytest.importorskip("numba")
    family = kernels.compiled(vars(kernels), kernels._HYPOT_KERNELS)
    xs, ys = random_legs(seed=8)
    for x, y in [*SPECIAL, *zip(xs, ys, strict=True)]:
        assert same_float(getattr(family, name)(x, y), math.hypot(x, y)), (x, y)


# ---------------------------------------------------------------- compiled families

MODULE = '''
from math import hypot

prange = range
WEIGHT = 2.0


def leg(x, y):
    return hypot(x, y)


def total(xs, ys):
    result = 0.0
    for i in prange(len(xs)):
        result += WEIGHT * leg(xs[i], ys[i])
    return result
'''


def load_module(tmp_path, name="kernel_sample"):
    path = tmp_path / f"{name}.py"
    path.write_text(MODULE, encoding="utf-8")
    sys.path.insert(0, str(tmp_path))
    try:
        __import__(name)
    finally:
        sys.path.remove(str(tmp_path))
    return sys.modules.pop(name)


def test_a_family_calls_its_own_compiled_helpers_and_gives_the_plain_results(tmp_path,
                                                                            monkeypatch):
    numba = pytest.importorskip("numba")
    module = load_module(tmp_path)
    family = kernels.compiled(vars(module), ("leg", "total"))
    xs, ys = random_legs(50)
    assert family.total(np.array(xs), np.array(ys)) == module.total(xs, ys)
    assert family.leg(3.0, 4.0) == 5.0
    assert module.leg is not family.leg and not hasattr(module.leg, "py_func")
    if not numba.config.DISABLE_JIT:
        assert isinstance(family.total, numba.core.registry.CPUDispatcher)
        assert kernels.compiled(vars(module), ("leg", "total")) is family  # built once


def run_python(code, **environment):
    import os

    env = {**os.environ, **environment}
    result = subprocess.run([sys.executable, "-c", textwrap.dedent(code)], capture_output=True,
                            text=True, timeout=600, cwd=ROOT, env=env)
    assert result.returncode == 0, result.stderr
    return json.loads(result.stdout.strip().splitlines()[-1])


def test_numba_caches_a_family_where_numba_cache_dir_says(tmp_path):
    # numba's documented NUMBA_CACHE_DIR: index (.nbi) and data (.nbc) files land there
    numba = pytest.importorskip("numba")
    if numba.config.DISABLE_JIT:
        pytest.skip("NUMBA_DISABLE_JIT=1: nothing is compiled, nothing cached")
    (tmp_path / "src").mkdir()
    (tmp_path / "src" / "kernel_sample.py").write_text(MODULE, encoding="utf-8")
    code = f"""
        import json, sys
        sys.path.insert(0, {str(tmp_path / "src")!r})
        import numpy as np, kernel_sample
        from pacing import kernels
        family = kernels.compiled(vars(kernel_sample), ("leg", "total"))
        print(json.dumps(family.total(np.ones(3), np.zeros(3))))
    """
    cache = tmp_path / "cache"
    assert run_python(code, NUMBA_CACHE_DIR=str(cache), PYTHONDONTWRITEBYTECODE="1") == 6.0
    written = {p.suffix for p in cache.rglob("*") if p.is_file()}
    assert {".nbi", ".nbc"} <= written


def test_importing_the_simulation_does_not_import_numba():
    assert run_python("""
        import json, sys
        import pacing.plan.simulate, pacing.compare.sensitivity, pacing.kernels
        print(json.dumps("numba" in sys.modules))
    """) is False


def test_a_small_simulation_in_auto_does_not_load_numba():
    assert run_python("""
        import json, sys
        import numpy as np
        from pacing.course.geometry import synthetic_course
        from pacing.physics.cycling import Rider
        from pacing.plan.simulate import simulate
        from pacing.weather.conditions import still_air
        course = synthetic_course(np.arange(0.0, 1001.0, 10.0), np.zeros(101))
        simulate(course, 250.0, Rider(), still_air(course, 1.2))
        print(json.dumps("numba" in sys.modules))
    """, PACING_KERNELS="auto") is False


def test_warm_up_loads_the_kernels_and_says_how_long_it_took():
    seconds, loaded = run_python("""
        import json
        from pacing import kernels
        seconds = kernels.warm_up()
        print(json.dumps([seconds, kernels.loaded()]))
    """, PACING_KERNELS="auto")
    assert seconds > 0.0 and loaded is True


def test_warm_up_under_the_python_policy_loads_nothing():
    seconds, imported = run_python("""
        import json, sys
        from pacing import kernels
        seconds = kernels.warm_up()
        print(json.dumps([seconds, "numba" in sys.modules]))
    """, PACING_KERNELS="python")
    assert 0.0 <= seconds < 0.5 and imported is False
