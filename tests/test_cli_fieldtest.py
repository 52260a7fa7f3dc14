"""``pacing fieldtest`` on synthetic test rides (see tests/test_fieldtest_estimate.py for the
forward simulation and the published noise levels it uses)."""

from __future__ import annotations

import json

import numpy as np
import pytest
from test_fieldtest_estimate import POWER_CV, TRUE_AREA, TRUE_ROLLING, simulate_loop_ride

from pacing.cli import main

# CIPM-2007 density at the CLI's default air (20 °C, 50 % RH, 101325 Pa): 1.19931 kg/m³
# ([calc], docs/references.md, "Air"); the rides are simulated in that air.
DEFAULT_DENSITY = 1.19931


def write_ride(path, drag_area=TRUE_AREA, seed=1, lap_powers=None, positions=True):
    options = {} if lap_powers is None else {"lap_powers": lap_powers}
    data = simulate_loop_ride(drag_area=drag_area, air_density=DEFAULT_DENSITY, **options)
    rng = np.random.default_rng(seed)
    power = data["power"] * (1 + POWER_CV * rng.standard_normal(data["time"].size))
    columns = {"time_s": data["time"], "speed_mps": data["speed"], "power_w": power,
               "elevation_m": data["elevation"]}
    if positions:
        columns.update(latitude=data["latitude"], longitude=data["longitude"])
    lines = [",".join(columns)]
    lines += [",".join(repr(float(v)) for v in row) for row in zip(*columns.values(),
                                                                    strict=True)]
    path.write_text("\n".join(lines) + "\n")
    return path, data


@pytest.fixture(scope="module")
def ride_file(tmp_path_factory):
    return write_ride(tmp_path_factory.mktemp("rides") / "hoods.csv")[0]


def run_json(capsys, *args):
    code = main(["fieldtest", *map(str, args), "--json", "--bootstrap", "300"])
    captured = capsys.readouterr()
    assert code == 0, captured.err
    return json.loads(captured.out)


def test_json_has_the_documented_keys_and_recovers_cda(capsys, ride_file):
    result = run_json(capsys, ride_file, "--mass", 80)
    for key in ("cda_m2", "crr", "cda_ci95", "crr_ci95", "laps", "method", "warnings"):
        assert key in result
    assert result["method"] == "loop"
    assert result["laps"] == 6
    assert result["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.02)
    assert result["crr"] == pytest.approx(TRUE_ROLLING, rel=0.10)
    low, high = result["cda_ci95"]
    assert low < result["cda_m2"] < high
    assert len(result["crr_ci95"]) == 2
    assert result["air_density_kg_m3"] == pytest.approx(DEFAULT_DENSITY, rel=2e-3)


@pytest.mark.parametrize("method", ["profile", "regression"])
def test_other_methods(capsys, ride_file, method):
    result = run_json(capsys, ride_file, "--mass", 80, "--method", method)
    assert result["method"] == method
    assert result["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.08)


def test_fixed_crr_and_text_output(capsys, ride_file):
    assert main(["fieldtest", str(ride_file), "--mass", "80", "--crr", "0.005",
                 "--bootstrap", "100"]) == 0
    out = capsys.readouterr().out
    assert "CdA 0.29" in out or "CdA 0.30" in out
    assert "Crr 0.00500 (held fixed)" in out


def test_two_positions(capsys, tmp_path, ride_file):
    aero, _ = write_ride(tmp_path / "aero.csv", drag_area=0.27, seed=2)
    result = run_json(capsys, ride_file, aero, "--mass", 80, "--position", "hoods",
                      "--position", "aero")
    labels = [p["label"] for p in result["positions"]]
    assert labels == ["hoods", "aero"]
    (difference,) = result["differences"]
    assert difference["cda_difference_m2"] == pytest.approx(-0.03, abs=0.006)
    assert difference["significant"] is True


def test_lap_times_without_positions(capsys, tmp_path):
    path, data = write_ride(tmp_path / "nogps.csv", positions=False)
    starts = [float(data["time"][np.argmin(np.abs(data["distance"] - 2000.0 * i))])
              for i in range(7)]
    result = run_json(capsys, path, "--mass", 80, "--laps", ",".join(f"{t:g}" for t in starts))
    assert result["laps"] == 6
    assert result["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.02)


def test_constant_power_laps_warn(capsys, tmp_path):
    path, _ = write_ride(tmp_path / "steady.csv", lap_powers=(250.0,) * 6)
    result = run_json(capsys, path, "--mass", 80)
    assert any("speed variety" in w for w in result["warnings"])
    # the same warnings as data: code, level, SI values and the same text
    warned = [n for n in result["notices"] if n["level"] == "warning"]
    assert [n["text"] for n in warned] == result["warnings"]
    assert all(n["code"].startswith("fieldtest-") for n in warned)


@pytest.fixture(scope="module")
def steady_file(tmp_path_factory):
    """Six laps at one power: CdA and Crr cannot be separated (review finding #12)."""
    return write_ride(tmp_path_factory.mktemp("steady") / "steady.csv",
                      lap_powers=(250.0,) * 6)[0]


def test_inseparable_laps_hold_crr_and_say_so_in_json(capsys, steady_file):
    result = run_json(capsys, steady_file, "--mass", 80)
    assert result["crr_held"] is True and result["crr_fixed"] is False
    assert result["crr_source"] == "typical"
    # Martin et al. (1998), from memory (docs/references.md, "Cycling power balance (Martin
    # et al. 1998)" marks it [mem])
    assert result["crr"] == 0.0032
    assert result["crr_ci95"] is None
    low, high = result["cda_ci95"]
    assert 0 < low < result["cda_m2"] < high
    assert result["cda_change_per_0_001_crr_m2"] < 0
    assert any("held at 0.0032" in w for w in result["warnings"])


def test_inseparable_laps_in_text_show_no_negative_number(capsys, steady_file):
    assert main(["fieldtest", str(steady_file), "--mass", "80", "--bootstrap", "200"]) == 0
    out = capsys.readouterr().out
    assert "Crr 0.00320 (held at a typical value" in out
    results = [line for line in out.splitlines() if not line.startswith("warning:")]
    assert not any(" -0." in line for line in results), results


def test_fallback_crr_is_the_users_typical_value(capsys, steady_file):
    # holding the Crr the ride was simulated with gives back its CdA
    result = run_json(capsys, steady_file, "--mass", 80, "--fallback-crr", TRUE_ROLLING)
    assert result["crr_held"] is True and result["crr"] == TRUE_ROLLING
    assert result["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.02)


def test_varied_laps_fit_crr(capsys, ride_file):
    result = run_json(capsys, ride_file, "--mass", 80)
    assert result["crr_held"] is False and result["crr_source"] == "fitted"


def test_negative_crr_and_undetermined_cda_are_flagged_in_text():
    from pacing.cli.fieldtest import _as_text
    from pacing.fieldtest.estimate import PositionTest, estimate_drag
    from pacing.fieldtest.ride import make_ride
    from pacing.physics.cycling import Rider

    # a power meter reading 40 W low on varied laps: Crr comes out below 0
    data = simulate_loop_ride()
    ride = make_ride(data["time"], data["speed"], data["power"] - 40.0,
                     latitude=data["latitude"], longitude=data["longitude"])
    test = PositionTest("offset", ride, 1.2)
    result = estimate_drag(test, Rider(mass=80.0), bootstrap=200)
    text = _as_text(result, [test], [])
    assert result.rolling_coefficient < 0
    assert "(not physical: below 0; see the warnings)" in text
    # one-power laps fitted jointly (no fallback): the CdA interval reaches below 0
    steady = simulate_loop_ride(lap_powers=(250.0,) * 6)
    rng = np.random.default_rng(1)
    noisy = make_ride(steady["time"], steady["speed"],
                      steady["power"] * (1 + POWER_CV * rng.standard_normal(steady["time"].size)),
                      latitude=steady["latitude"], longitude=steady["longitude"])
    test = PositionTest("steady", noisy, 1.2)
    result = estimate_drag(test, Rider(mass=80.0), bootstrap=200,
                           fallback_rolling_coefficient=None)
    assert result.drag_area_ci95[0] < 0
    assert "(undetermined: the interval reaches below 0" in _as_text(result, [test], [])


def test_negative_power_error_names_the_sample(capsys, tmp_path, ride_file):
    lines = ride_file.read_text().splitlines()
    cells = lines[6].split(",")
    cells[2] = "-30"
    lines[6] = ",".join(cells)
    bad = tmp_path / "negative.csv"
    bad.write_text("\n".join(lines) + "\n")
    assert main(["fieldtest", str(bad), "--mass", "80"]) == 2
    err = capsys.readouterr().err
    assert "power is negative (-30 W) at sample 6 (t = 5 s)" in err
    assert err.count("\n") == 1


def test_help_explains_the_flags_and_json_keys(capsys):
    with pytest.raises(SystemExit) as done:
        main(["fieldtest", "--help"])
    assert done.value.code == 0
    out = capsys.readouterr().out
    for words in ("--fallback-crr", "crr_held", "crr_source", "--mass KG", "different speeds"):
        assert words in out


@pytest.mark.parametrize("args, message", [
    (["missing.csv", "--mass", "80"], "ride file not found"),
    (["{ride}", "--mass", "5"], "--mass must be 20-300 kg"),
    (["{ride}", "--mass", "80", "--humidity", "150"], "--humidity must be 0-100 %"),
    (["{ride}", "--mass", "80", "--laps", "a,b"], "--laps must be times"),
    (["{ride}", "--mass", "80", "--position", "a", "--position", "b"], "one --position per"),
    (["{bad}", "--mass", "80"], "missing column(s) power"),
    (["{ride}", "--mass", "80", "--fallback-crr", "-0.01"], "--fallback-crr must be 0-0.1"),
    (["{ride}", "--mass", "80", "--crr", "nan"], "--crr must be 0-0.1"),
    (["{ride}", "--mass", "80", "--bootstrap", "100000000"],
     "--bootstrap must be a whole number from 0 to 10000"),
    (["{ride}", "--mass", "80", "--bootstrap", "-1"], "--bootstrap must be a whole number"),
    (["{header}", "--mass", "80"], "but no data rows"),
])
def test_errors_are_one_line_with_exit_code_2(capsys, tmp_path, ride_file, args, message):
    bad = tmp_path / "bad.csv"
    bad.write_text("time_s,speed_mps\n0,9\n1,9\n")
    header = tmp_path / "header.csv"
    header.write_text("time_s,speed_mps,power_w\n")
    args = [a.format(ride=ride_file, bad=bad, header=header) for a in args]
    code = main(["fieldtest", *args])
    err = capsys.readouterr().err
    assert code == 2
    assert message in err
    assert err.count("\n") == 1 and "Traceback" not in err


def test_gpx_ride_with_power_and_speed_extensions(capsys, tmp_path):
    data = simulate_loop_ride(air_density=DEFAULT_DENSITY)
    points = []
    for i in range(data["time"].size):
        second = int(data["time"][i])
        stamp = f"2026-05-01T{10 + second // 3600:02d}:{second // 60 % 60:02d}:{second % 60:02d}Z"
        points.append(
            f'<trkpt lat="{data["latitude"][i]:.9f}" lon="{data["longitude"][i]:.9f}">'
            f'<ele>{data["elevation"][i]:.2f}</ele><time>{stamp}</time><extensions>'
            f'<power>{data["power"][i]:.0f}</power><tpx:TrackPointExtension>'
            f'<tpx:speed>{data["speed"][i]:.3f}</tpx:speed></tpx:TrackPointExtension>'
            "</extensions></trkpt>")
    path = tmp_path / "loop.gpx"
    path.write_text('<?xml version="1.0"?><gpx version="1.1" creator="test" '
                    'xmlns="http://www.topografix.com/GPX/1/1" '
                    'xmlns:tpx="http://example.org/TrackPointExtension/v2"><trk><trkseg>'
                    + "".join(points) + "</trkseg></trk></gpx>")
    result = run_json(capsys, path, "--mass", 80)
    assert result["laps"] == 6
    # speed rounded to 1 mm/s, power to 1 W in the file
    assert result["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.02)
    assert result["crr"] == pytest.approx(TRUE_ROLLING, rel=0.10)


def test_notes_of_cleaning_name_their_ride_in_json_and_text(capsys, tmp_path, ride_file):
    # a stop of 5 samples in the middle of the ride: dropped, with a note in both outputs
    lines = ride_file.read_text().splitlines()
    for row in range(300, 305):
        cells = lines[row].split(",")
        cells[1] = "0.0"
        lines[row] = ",".join(cells)
    stopped = tmp_path / "stopped.csv"
    stopped.write_text("\n".join(lines) + "\n")
    expected = ("hoods: dropped 5 samples slower than 1 m/s: 1 stop at t = 299 s (5 s long); "
                "the energy balance restarts after each")
    result = run_json(capsys, stopped, "--mass", 80, "--position", "hoods")
    # the wind estimated from the laps (no --wind-speed) is a note of its own, first
    assert result["notes"][-1] == expected and len(result["notes"]) == 2
    assert result["notes"][0].startswith("wind estimated from the ride: ")
    assert isinstance(result["warnings"], list)
    assert main(["fieldtest", str(stopped), "--mass", "80", "--position", "hoods",
                 "--bootstrap", "0"]) == 0
    assert f"note: {expected}" in capsys.readouterr().out.splitlines()


def test_warnings_in_text_carry_their_level(capsys, steady_file):
    assert main(["fieldtest", str(steady_file), "--mass", "80", "--bootstrap", "200"]) == 0
    warnings = [line for line in capsys.readouterr().out.splitlines()
                if line.startswith("warning: ")]
    assert any("laps lack speed variety" in line and "held at 0.0032" in line
               for line in warnings)


def test_power_dropouts_are_left_out_and_warned_of_after_the_rides_label(capsys, tmp_path,
                                                                         ride_file):
    """0 W logged every fifth second of the simulated ride, written as a spreadsheet in a
    decimal-comma locale writes CSV (";" between columns, common practice)."""
    clean = run_json(capsys, ride_file, "--mass", 80)
    lines = ride_file.read_text().splitlines()
    for row in range(5, len(lines), 5):
        cells = lines[row].split(",")
        cells[2] = "0.0"
        lines[row] = ",".join(cells)
    lost = tmp_path / "lost.csv"
    lost.write_text("\n".join(line.replace(",", ";").replace(".", ",") for line in lines))
    result = run_json(capsys, lost, "--mass", 80, "--position", "hoods")
    # left out, the dropouts move CdA by less than the clean ride's tolerance (2 %)
    assert result["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.02)
    assert result["cda_m2"] == pytest.approx(clean["cda_m2"], abs=0.003)
    (warned,) = [w for w in result["warnings"] if "power dropouts" in w]
    assert warned.startswith("hoods: power dropouts: 23")
    (notice,) = [n for n in result["notices"] if n["code"] == "test-ride-power-dropouts"]
    assert notice["level"] == "warning" and notice["ride"] == "hoods"
    assert notice["values"]["share"] == pytest.approx(0.2, abs=0.002)
    assert main(["fieldtest", str(lost), "--mass", "80", "--position", "hoods",
                 "--bootstrap", "0"]) == 0
    assert any(line.startswith("warning: hoods: power dropouts: ")
               for line in capsys.readouterr().out.splitlines())


# ---------------------------------------------------------------------------------------------
# The wind: estimated when not given, checked when given
# ---------------------------------------------------------------------------------------------


def test_without_a_wind_the_wind_is_estimated_and_reported(capsys, ride_file):
    result = run_json(capsys, ride_file, "--mass", 80)
    wind = result["wind"]
    assert wind["estimated"] is True
    # the ride is simulated in calm air: the estimate is small (at 10 m, m/s)
    assert 0.0 <= wind["speed_mps"] < 0.8
    assert set(wind) == {"estimated", "speed_mps", "speed_at_rider_mps", "from_deg",
                         "speed_ci95", "along_axis_only"}
    assert result["cda_m2"] == pytest.approx(TRUE_AREA, rel=0.02)
    assert not any(n["code"] == "fieldtest-wind-estimated" and n["level"] == "warning"
                   for n in result["notices"])


@pytest.mark.parametrize("flags", [["--wind-speed", "0", "--wind-from", "0"],
                                   ["--no-estimate-wind"]])
def test_a_given_wind_or_no_estimate_fits_as_before(capsys, ride_file, flags):
    result = run_json(capsys, ride_file, "--mass", 80, *flags)
    assert result["wind"] is None
    assert result["notes"] == []


def test_the_text_output_names_the_estimated_wind(capsys, ride_file):
    assert main(["fieldtest", str(ride_file), "--mass", "80", "--bootstrap", "100"]) == 0
    out = capsys.readouterr().out
    assert "wind estimated from the laps: " in out and "m/s at 10 m" in out


def test_a_negative_wind_speed_is_refused(capsys, ride_file):
    assert main(["fieldtest", str(ride_file), "--mass", "80", "--wind-speed", "-1",
                 "--wind-from", "0"]) == 2
    assert "--wind-speed must be 0 m/s or more" in capsys.readouterr().err


def test_pressure_kind_says_what_the_pressure_given_is(capsys, tmp_path):
    """--pressure-kind (shared with plan) is used: at a start 1500 m up, 90 kPa read on a
    station barometer is the pressure there, while 90 kPa as QNH is carried up by the ICAO
    standard atmosphere to about 75 kPa. The air density checked against CoolProp's humid air
    (HAPropsSI, Hyland-Wexler / ASHRAE RP-1485) at 20 °C, 50 % and 90 kPa."""
    coolprop = pytest.importorskip("CoolProp.CoolProp")
    path, _ = write_ride(tmp_path / "high.csv")
    lines = path.read_text().splitlines()
    column = lines[0].split(",").index("elevation_m")
    rows = [line.split(",") for line in lines[1:]]
    for row in rows:
        row[column] = repr(float(row[column]) + 1500.0)
    path.write_text("\n".join([lines[0], *(",".join(row) for row in rows)]) + "\n")

    def density(*flags):
        code = main(["fieldtest", str(path), "--mass", "80", "--json", "--bootstrap", "0",
                     "--wind-speed", "0", "--sea-level-pressure", "90000", *flags])
        captured = capsys.readouterr()
        assert code == 0, captured.err
        return json.loads(captured.out)["air_density_kg_m3"]

    ratio = coolprop.HAPropsSI("W", "T", 293.15, "P", 90000.0, "R", 0.5)
    expected = (1.0 + ratio) / coolprop.HAPropsSI("Vda", "T", 293.15, "P", 90000.0, "R", 0.5)
    station = density("--pressure-kind", "station")
    assert station == pytest.approx(expected, rel=2e-3)
    # as QNH: ICAO p(1500 m)/p(0) = (1 - 0.0065·1500/288.15)^5.25588 = 0.8345 (ICAO Doc 7488),
    # so about 75.1 kPa and a sixth less dense
    assert density() == pytest.approx(station * 0.8345, rel=5e-3)
