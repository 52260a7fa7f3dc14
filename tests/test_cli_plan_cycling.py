"""Specification of ``pacing plan ROUTE.gpx --power W`` for cycling (pacing.cli.plan_cycling).

Bad input gives one line on stderr and exit code 2. The JSON keys, a contract other tools rely
on (issue 3), and the table: tests/test_cli_plan_cycling_output.py.
"""

from __future__ import annotations

import json
import math

import pytest
from samples import north_hill_gpx

from pacing.cli import main

pytest.importorskip("pacing.io.gpx")

@pytest.fixture(scope="module")
def route(tmp_path_factory):
    """A 6 km course heading north: flat, a 5 % climb, a descent (GPX 1.1)."""
    path = tmp_path_factory.mktemp("routes") / "hill.gpx"
    path.write_text(north_hill_gpx(), encoding="utf-8")
    return str(path)


def _refuse_constant(name):
    raise AssertionError(f"{name} is not valid JSON (RFC 8259 has no NaN or Infinity)")


def run_json(capsys, *argv):
    code = main(["plan", *argv, "--json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out, parse_constant=_refuse_constant)


def test_physics_flags_move_the_result_the_right_way(capsys, route):
    base = run_json(capsys, route, "--power", "250")["finish_time_s"]
    assert run_json(capsys, route, "--power", "300")["finish_time_s"] < base
    assert run_json(capsys, route, "--power", "250", "--mass", "95")["finish_time_s"] > base
    assert run_json(capsys, route, "--power", "250", "--cda", "0.25")["finish_time_s"] < base
    # the course runs due north, so a wind from the north is a headwind throughout
    assert run_json(capsys, route, "--power", "250", "--wind-speed", "5",
                    "--wind-from", "0")["finish_time_s"] > base
    assert run_json(capsys, route, "--power", "250", "--start-speed", "10")["finish_time_s"] < base
    assert run_json(capsys, route, "--power", "250", "--temperature", "35",
                    "--humidity", "90")["finish_time_s"] < base  # thinner air


def test_segment_length_flag_splits_evenly(capsys, route):
    result = run_json(capsys, route, "--power", "250", "--segment-length", "1000")
    assert len(result["segments"]) == 6
    assert [s["start_m"] for s in result["segments"]] == pytest.approx(
        [0, 1000, 2000, 3000, 4000, 5000], abs=30)


@pytest.mark.parametrize(
    ("flags", "words"),
    [
        (["--power", "250", "--mass", "-70"], "--mass"),
        (["--power", "250", "--cda", "0"], "--cda"),
        (["--power", "250", "--cda", "-0.2"], "--cda"),
        (["--power", "250", "--humidity", "120"], "--humidity"),
        (["--power", "250", "--humidity", "-1"], "--humidity"),
        (["--power", "250", "--crr", "-0.01"], "--crr"),
        (["--power", "250", "--efficiency", "1.5"], "--efficiency"),
        (["--power", "-10"], "--power"),
        (["--power", "0"], "--power"),
        (["--power", "250", "--max-descent-speed", "0"], "--max-descent-speed"),
        (["--power", "250", "--max-descent-speed", "-5"], "--max-descent-speed"),
        (["--power", "250", "--max-descent-speed", "inf"], "--max-descent-speed"),
        (["--power", "250", "--coasting-speed", "0"], "--coasting-speed"),
        (["--power", "250", "--coasting-speed", "nan"], "--coasting-speed"),
        (["--power", "nan"], "--power"),
        (["--power", "250", "--start-speed", "-1"], "--start-speed"),
        (["--power", "250", "--wind-speed", "-3"], "--wind-speed"),
        ([], "--power"),
        (["--power", "250", "--strategy", "sideways"], "--strategy"),
    ],
)
def test_bad_input_gives_one_line_and_exit_code_2(capsys, route, flags, words):
    assert main(["plan", route, *flags]) == 2
    captured = capsys.readouterr()
    assert captured.out == ""
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and words in lines[0] and "Traceback" not in captured.err


def test_missing_file_gives_one_line(capsys, tmp_path):
    assert main(["plan", str(tmp_path / "nowhere.gpx"), "--power", "250"]) == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 1


# ------------------------------------------------------------------ review findings 1, 5, 11, 14

def test_tiny_power_walks_the_bike_and_is_flagged_never_nan(capsys, route):
    """Review finding 1: --power 0 printed NaN and a finish of 10^27 hours. 0 is refused (above);
    a power too small to hold walking pace walks the bike: finite numbers, flagged."""
    result = run_json(capsys, route, "--power", "0.5")
    assert math.isfinite(result["finish_time_s"]) and result["finish_time_s"] > 0
    # walked: the flat 2 km and the 5 % climb; the −4 % descent rolls on gravity alone
    assert 4000.0 - 30.0 <= result["walking_distance_m"] < result["distance_m"] - 1500.0
    # walking pace (1 m/s, pacing.physics.cycling.WALKING_SPEED) is the slowest the rider goes
    assert result["average_speed_mps"] >= 0.99
    assert main(["plan", route, "--power", "0.5"]) == 0
    out = capsys.readouterr().out
    assert "nan" not in out.lower() and "walk" in out


def test_a_normal_power_walks_nowhere(capsys, route):
    assert run_json(capsys, route, "--power", "250")["walking_distance_m"] == 0.0


def test_max_descent_speed_caps_the_speed_and_brakes(capsys, route):
    """Review finding 14: --max-descent-speed [m/s] reaches SimulationOptions."""
    free = run_json(capsys, route, "--power", "250")
    capped = run_json(capsys, route, "--power", "250", "--max-descent-speed", "10")
    assert free["max_speed_mps"] > 10.5
    assert capped["max_speed_mps"] <= 10.0 + 1e-9
    assert capped["finish_time_s"] > free["finish_time_s"]


def test_coasting_speed_stops_pedalling_above_it(capsys, route):
    """Review finding 14: --coasting-speed [m/s]: above it the rider stops pedalling, so the
    mean power falls below the planned power and the ride is slower."""
    free = run_json(capsys, route, "--power", "250")
    coasting = run_json(capsys, route, "--power", "250", "--coasting-speed", "9")
    assert coasting["average_power_w"] < free["average_power_w"] - 5.0
    assert coasting["finish_time_s"] > free["finish_time_s"]
    for segment in coasting["segments"]:
        if segment["speed_mps"] < 8.0:  # the climb, ridden below the coasting speed
            assert segment["power_w"] == pytest.approx(250.0, rel=1e-3)


def test_target_time_without_cp_warns_on_one_line(capsys, route):
    """Review finding 11: without CP and W′ the power is not checked against the athlete."""
    assert main(["plan", route, "--strategy", "target-time", "--target-time", "0:12:00"]) == 0
    err = [line for line in capsys.readouterr().err.strip().splitlines()
           if "WBGT" not in line]  # the day's heat caution is always there (issue 16)
    assert len(err) == 1 and "warning" in err[0] and "critical power" in err[0]
    assert main(["plan", route, "--strategy", "target-time", "--target-time", "0:12:00",
                 "--cp", "300", "--w-prime", "20000"]) == 0
    assert [line for line in capsys.readouterr().err.splitlines() if "WBGT" not in line] == []


def test_target_time_beyond_any_rider_is_refused(capsys, route):
    """Review finding 11: 4:30 on these 6 km needs about 2350 W; world-class track sprinters'
    peak power is 1600 ± 116 W for a few seconds (Dorel et al. 2005, Int J Sports Med
    26:739-746), so any plan above 2000 W is refused with one line."""
    code = main(["plan", route, "--strategy", "target-time", "--target-time", "0:04:30"])
    captured = capsys.readouterr()
    assert code == 2 and captured.out == ""
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and "2000 W" in lines[0] and "--target-time" in lines[0]


# moved from tests/test_plan_cycling.py: the strategies through the command line

def test_command_line_fastest_plan_json(capsys, route):
    code = main(["plan", route, "--strategy", "fastest", "--power", "250", "--cp", "270",
                 "--w-prime", "15000", "--w-prime-reserve", "1000", "--max-power-ratio", "1.3",
                 "--json"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    result = json.loads(captured.out)
    assert result["strategy"] == "fastest"
    assert result["time_saved_s"] > 0
    assert result["min_w_prime_balance_j"] >= 1000.0 - 1e-6
    assert result["average_power_w"] == pytest.approx(250.0, abs=0.02)
    for segment in result["segments"]:
        assert {"power_w", "w_prime_balance_j", "ridden_power_w"} <= set(segment)
        assert segment["power_w"] <= 1.3 * 270.0 + 1e-6


def test_command_line_unreachable_target_time_is_one_line(capsys, route):
    code = main(["plan", route, "--strategy", "target-time", "--target-time", "0:06:00",
                 "--cp", "270", "--w-prime", "15000"])
    captured = capsys.readouterr()
    assert code == 2 and captured.out == ""
    lines = captured.err.strip().splitlines()
    assert len(lines) == 1 and "not reachable" in lines[0]


# ------------------------------------------------------------------ issue 14: honest outputs

@pytest.fixture(scope="module")
def flat_route(tmp_path_factory):
    """A flat 10 km course heading east."""
    import numpy as np

    from pacing.course.geometry import synthetic_course
    from pacing.io.gpx import write_gpx

    distance = np.arange(0.0, 10000.1, 10.0)
    path = tmp_path_factory.mktemp("routes") / "flat.gpx"
    # at 100 m with a 1 cm ripple (smoothed away): a file whose heights are all the same reads
    # as one without heights
    ripple = 100.0 + 0.01 * (np.arange(distance.size) % 2)
    path.write_text(write_gpx(synthetic_course(distance, ripple, heading=90.0)))
    return str(path)


@pytest.mark.parametrize("strategy", [[], ["--strategy", "constant"]])
def test_a_constant_plan_above_cp_says_where_w_prime_runs_out(capsys, flat_route, strategy):
    # Issue 14: `--power 250 --cp 200 --w-prime 20000` finished with no word. At a constant
    # power P above CP the critical power model runs out of W′ after W′/(P − CP) = 400 s
    # (Monod & Scherrer 1965, Ergonomics 8(3):329-338; the depletion rate of Skiba et al.
    # 2015's differential balance above CP): the point named lies where the clock passes 400 s.
    # CP measured at the course's 100 m: altitude takes nothing from it (issue 16)
    result = run_json(capsys, flat_route, "--power", "250", "--cp", "200", "--w-prime", "20000",
                      "--segment-length", "100", "--limits-measured-elevation", "100",
                      *strategy)
    where = result["w_prime_exhausted_at_m"]
    assert where is not None
    elapsed = 0.0
    for segment in result["segments"]:
        if segment["start_m"] <= where < segment["end_m"]:
            assert elapsed - 1.0 <= 400.0 <= elapsed + segment["time_s"] + 1.0
            break
        elapsed += segment["time_s"]
    else:
        raise AssertionError(f"{where} m lies in no segment")
    # spent beyond W′: (P − CP)·T − W′, T the finish time, within the standing start's
    # first seconds (less than 250 W while the traction caps the drive force)
    spent = 50.0 * result["finish_time_s"] - 20000.0
    assert -result["min_w_prime_balance_j"] == pytest.approx(spent, rel=0.02)
    warned = [text for text in result["warnings"] if "WBGT" not in text]
    assert len(warned) == 1 and "W′ runs out" in warned[0]
    assert result["warnings"] == [n["text"] for n in result["notices"]
                                  if n["level"] == "warning"]


def test_a_constant_plan_within_cp_runs_out_nowhere(capsys, flat_route):
    result = run_json(capsys, flat_route, "--power", "180", "--cp", "200", "--w-prime", "20000")
    assert result["w_prime_exhausted_at_m"] is None
    assert result["min_w_prime_balance_j"] == pytest.approx(20000.0)  # never below CP
    assert [text for text in result["warnings"] if "WBGT" not in text] == []


def test_walked_climbs_carry_no_crank_power(capsys, tmp_path):
    # issue 14: `--power 100` up a 25 % climb walks, yet showed 197 W in the segment and the
    # mean. A 1 km flat then a 25 % wall of 500 m (horizontal): the wall is walked, its segment
    # carries no crank power and says how far was walked; the flat holds the plan's 100 W.
    import numpy as np

    from pacing.course.geometry import synthetic_course
    from pacing.io.gpx import write_gpx

    x = np.arange(0.0, 1500.1, 10.0)
    course = synthetic_course(x, np.where(x <= 1000.0, 0.0, 0.25 * (x - 1000.0)))
    path = tmp_path / "wall.gpx"
    path.write_text(write_gpx(course))
    result = run_json(capsys, str(path), "--power", "100", "--segment-length", "500")
    flat, wall = result["segments"][1], result["segments"][2]
    assert flat["power_w"] == pytest.approx(100.0, rel=1e-6)  # the ridden pieces only
    assert wall["power_w"] == 0.0
    assert wall["walking_distance_m"] == pytest.approx(wall["end_m"] - wall["start_m"])
    assert result["walking_distance_m"] >= 500.0
    assert result["average_power_w"] < 100.0  # the wall's minutes on foot count as 0 W
    assert result["work_kj"] * 1000 == pytest.approx(
        result["average_power_w"] * result["finish_time_s"])


def test_an_efficiency_below_one_half_is_refused_in_one_line(capsys, route):
    # issue 14: `--efficiency 0.01` reported a mean of 1878 W
    assert main(["plan", route, "--power", "250", "--efficiency", "0.01"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and "--efficiency must be 0.5-1" in err[0]
