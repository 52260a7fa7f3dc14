"""The plan command's parser (pacing.cli.plan): every flag in its group, the strategies from
the registry, and the sport choosing which plan runs (the plans themselves:
tests/test_cli_plan_cycling.py and tests/test_cli_plan_running.py)."""

from __future__ import annotations

import argparse
import json

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from samples import hill_road_gpx

from pacing.cli.plan import CYCLING_STRATEGIES, RUNNING_STRATEGIES, add_plan_flags
from pacing.plan.strategies import STRATEGIES


def parser() -> argparse.ArgumentParser:
    made = argparse.ArgumentParser()
    add_plan_flags(made)
    return made


def groups() -> dict[str, set[str]]:
    return {g.title: {a.dest for a in g._group_actions} for g in parser()._action_groups}


def test_each_sport_has_its_group_of_flags():
    found = groups()
    assert {"power", "strategy", "target_time", "cp", "w_prime"} <= found["cycling plan"]
    assert {"flat_pace", "body_mass", "critical_speed", "d_prime"} <= found["running plan"]
    assert {"temperature", "humidity", "wind_speed", "wind_from"} <= found["air and wind"]


def test_the_strategies_are_the_registry_s():
    assert CYCLING_STRATEGIES == tuple(STRATEGIES["cycling"])
    assert RUNNING_STRATEGIES == tuple(STRATEGIES["running"])
    help_text = next(a.help for a in parser()._actions if a.dest == "strategy")
    assert all(key in help_text for key in (*CYCLING_STRATEGIES, *RUNNING_STRATEGIES))


def test_cycling_is_the_default_sport():
    assert parser().parse_args(["route.gpx"]).sport == "cycling"


# ------------------------------------------------------------------ issue 14: fuzzing the flags

FUZZ_VALUES = st.one_of(
    st.sampled_from(["0", "-1", "1e-300", "1e308", "-1e308", "nan", "inf", "-inf", "60",
                     "0.5", "2000", "1e6", "9" * 300]),
    st.floats(allow_nan=False, allow_infinity=False, width=32).map(repr),
)
"""Numbers a user may type: ordinary, edge, absurd and not numbers at all."""


def _refuse_constant(name):
    raise AssertionError(f"{name} is not valid JSON (RFC 8259 has no NaN or Infinity)")


def run_quietly(argv):
    """(exit code, stdout, stderr) of the command line run in this process."""
    import contextlib
    import io

    from pacing.cli import main

    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = main(argv)
        except SystemExit as stop:  # argparse's usage errors
            code = int(stop.code or 0)
    return code, out.getvalue(), err.getvalue()


def check_the_outcome(code, out, err):
    """Exit 0 or 2; one line on stderr on error; strictly valid JSON on success."""
    assert code in (0, 2), (code, err)
    assert "Traceback" not in err
    said = [line for line in err.splitlines() if not line.startswith("pacing: warning: ")]
    if code == 2:  # one line of refusal (after any one-line warnings about the flags)
        assert out == "" and len(said) == 1 and ": error: " in said[0], err
        assert len(said[0]) < 400, err  # nothing typed is echoed back in bulk
    else:
        json.loads(out, parse_constant=_refuse_constant)
        assert "overflow" not in err and "invalid value" not in err, err


CYCLING_FLAGS = ("--power", "--mass", "--cda", "--crr", "--efficiency", "--drafting",
                 "--start-speed", "--max-descent-speed", "--coasting-speed", "--cp", "--w-prime",
                 "--w-prime-reserve", "--max-power-ratio")
RUNNING_FLAGS = ("--body-mass", "--height", "--critical-speed", "--d-prime", "--cda")
AIR_FLAGS = ("--temperature", "--humidity", "--wind-speed", "--sea-level-pressure",
             "--wind-height", "--roughness", "--segment-length")


@pytest.fixture(scope="module")
def small_course(tmp_path_factory):
    """A 3 km road with one 30 m hill (tests/samples.py)."""
    path = tmp_path_factory.mktemp("fuzz") / "hill.gpx"
    path.write_bytes(hill_road_gpx(3.0, 30.0))
    return str(path)


@settings(max_examples=40, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(sport=st.sampled_from(["cycling", "running"]),
       strategy=st.sampled_from([None, "constant", "fastest", "target-time", "equal-effort",
                                 "even-pace"]),
       flags=st.dictionaries(st.sampled_from(CYCLING_FLAGS + RUNNING_FLAGS + AIR_FLAGS),
                             FUZZ_VALUES, max_size=4),
       clock=st.sampled_from(["4:30", "1:00:00", "0:10", "9" * 300, "-5", "99:59"]))
def test_any_numbers_give_exit_0_or_2_one_line_or_strict_json(small_course, sport, strategy,
                                                              flags, clock):
    argv = ["plan", small_course, "--sport", sport, "--json", "--wind-from", "250"]
    if sport == "cycling":
        argv += ["--power", "250"] if "--power" not in flags else []
        argv += ["--target-time", clock] if strategy == "target-time" else []
    else:
        argv += ["--flat-pace", clock]
    if strategy is not None:
        argv += ["--strategy", strategy]
    for flag, value in flags.items():
        argv += [f"{flag}={value}"]
    check_the_outcome(*run_quietly(argv))
