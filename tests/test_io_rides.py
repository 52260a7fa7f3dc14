"""Reading test rides from CSV and GPX (pacing.io.rides).

Unit factors: 1 mph = 0.44704 m/s and 1 ft = 0.3048 m exactly (international yard and pound,
1959; NIST SP 811 (2008) App. B.8), checked against scipy.constants; 1 km/h = 1/3.6 m/s.
"""

from __future__ import annotations

import io

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from pacing.display.notices import describe_all
from pacing.errors import InputError
from pacing.fieldtest.ride import Ride
from pacing.io.rides import (
    CSV_COLUMNS,
    read_race,
    read_ride,
    read_ride_csv,
    read_ride_gpx,
)

N = 40


def csv_text(columns: dict[str, list]) -> bytes:
    names = list(columns)
    lines = [",".join(names)]
    for row in zip(*columns.values(), strict=True):
        lines.append(",".join("" if v is None else str(v) for v in row))
    return ("\n".join(lines) + "\n").encode()


def canonical(n: int = N) -> dict[str, list]:
    time = np.arange(n, dtype=float)
    return {
        "time_s": list(time),
        "speed_mps": [9.0 + 0.01 * i for i in range(n)],
        "power_w": [200.0 + i for i in range(n)],
        "elevation_m": [100.0 + 0.1 * i for i in range(n)],
        "latitude": [46.0 + 1e-5 * i for i in range(n)],
        "longitude": [7.0] * n,
    }


class TestCsv:
    def test_canonical_columns(self, tmp_path):
        path = tmp_path / "hoods.csv"
        path.write_bytes(csv_text(canonical()))
        ride = read_ride(path)
        assert isinstance(ride, Ride)
        assert ride.name == "hoods"
        np.testing.assert_allclose(ride.speed, canonical()["speed_mps"])
        np.testing.assert_allclose(ride.power, canonical()["power_w"])
        np.testing.assert_allclose(ride.elevation, canonical()["elevation_m"])
        # distance from speed by the trapezoid rule
        assert ride.distance[-1] == pytest.approx(np.trapezoid(ride.speed, ride.time))
        assert ride.notes == ()

    def test_unit_variants_and_aliases(self):
        base = canonical()
        data = csv_text({
            " Time ": base["time_s"],
            "Speed-kmh": [v * 3.6 for v in base["speed_mps"]],
            "Watts": base["power_w"],
            "altitude_ft": [e / 0.3048 for e in base["elevation_m"]],
        })
        ride = read_ride_csv(data)
        np.testing.assert_allclose(ride.speed, base["speed_mps"], rtol=1e-12)
        np.testing.assert_allclose(ride.elevation, base["elevation_m"], rtol=1e-12)
        assert ride.latitude is None

    def test_factors_agree_with_scipy_constants(self):
        assert CSV_COLUMNS["speed"]["speed_mph"] == pytest.approx(sc.mile / sc.hour, rel=1e-15)
        assert CSV_COLUMNS["elevation"]["elevation_ft"] == pytest.approx(sc.foot, rel=1e-15)
        assert CSV_COLUMNS["speed"]["speed_kmh"] == pytest.approx(sc.kilo / sc.hour, rel=1e-15)

    def test_iso_timestamps(self):
        base = canonical()
        stamps = [f"2026-05-01T10:00:{i:02d}Z" for i in range(N)]
        ride = read_ride_csv(csv_text({"timestamp": stamps, "speed": base["speed_mps"],
                                       "power": base["power_w"]}))
        np.testing.assert_allclose(ride.time, np.arange(N))

    def test_speed_from_distance(self):
        data = csv_text({"time_s": list(range(N)), "distance_km": [0.009 * i for i in range(N)],
                         "power_w": [200] * N})
        ride = read_ride_csv(data)
        np.testing.assert_allclose(ride.speed, 9.0)
        assert [n.code for n in ride.notes] == ["test-ride-speed-from-distance"]
        assert describe_all(ride.notes) == ["speed taken from the distance column"]

    def test_missing_column_names_what_is_missing(self):
        base = canonical()
        data = csv_text({"time_s": base["time_s"], "speed_mps": base["speed_mps"]})
        with pytest.raises(InputError, match=r"missing column\(s\) power \(e.g. power_w\); "
                                             r"the file has: time_s, speed_mps"):
            read_ride_csv(data)

    def test_non_number_cell(self):
        base = canonical()
        base["power_w"][5] = "abc"
        with pytest.raises(InputError, match="'power_w' has a non-number 'abc' in data row 6"):
            read_ride_csv(csv_text(base))

    def test_negative_power_names_its_data_row_and_time(self):
        base = canonical()
        base["power_w"][5] = -40.0
        with pytest.raises(InputError, match=r"power is negative \(-40 W\) at sample 6 "
                                             r"\(t = 5 s\)"):
            read_ride_csv(csv_text(base))

    def test_blank_power_cells(self):
        base = canonical()
        base["power_w"][10] = None
        ride = read_ride_csv(csv_text(base))
        assert ride.power[10] == pytest.approx(210.0)
        base["power_w"][10:20] = [None] * 10
        with pytest.raises(InputError, match="power-meter dropout"):
            read_ride_csv(csv_text(base))

    def test_time_going_backwards(self):
        base = canonical()
        base["time_s"][7] = 3.0
        with pytest.raises(InputError, match="time does not increase"):
            read_ride_csv(csv_text(base))

    def test_stops_dropped_with_a_note(self):
        base = canonical()
        base["speed_mps"][15:25] = [0.0] * 10
        ride = read_ride_csv(csv_text(base))
        assert ride.time.size == N - 10
        assert describe_all(ride.notes) == [
            "dropped 10 samples slower than 1 m/s: 1 stop at t = 15 s (10 s long); the energy "
            "balance restarts after each"]

    def test_empty_and_missing_files(self, tmp_path):
        with pytest.raises(InputError, match="empty"):
            read_ride_csv(b"")
        with pytest.raises(InputError, match="not found"):
            read_ride(tmp_path / "nope.csv")
        with pytest.raises(InputError, match="folder"):
            read_ride(tmp_path)

    def test_only_regular_files_are_read(self, tmp_path):
        import os

        fifo = tmp_path / "ride.csv"
        os.mkfifo(fifo)  # reading it would wait forever for a writer
        with pytest.raises(InputError, match="not a regular file"):
            read_ride(fifo)
        if os.path.exists("/dev/zero"):  # endless zeros
            with pytest.raises(InputError, match="not a regular file"):
                read_ride("/dev/zero", kind="csv")


def spreadsheet_text(columns: dict[str, list], separator: str = ";", decimal: str = ",") -> str:
    """The columns as a spreadsheet in a decimal-comma locale writes them (common practice:
    the list separator becomes ";" where "," is the decimal mark)."""
    lines = [separator.join(columns)]
    for row in zip(*columns.values(), strict=True):
        lines.append(separator.join(repr(float(v)).replace(".", decimal) for v in row))
    return "\r\n".join(lines) + "\r\n"


def assert_same_ride(ride: Ride, columns: dict[str, list]) -> None:
    np.testing.assert_allclose(ride.time, columns["time_s"])
    np.testing.assert_allclose(ride.speed, columns["speed_mps"])
    np.testing.assert_allclose(ride.power, columns["power_w"])
    np.testing.assert_allclose(ride.elevation, columns["elevation_m"])


def one_line_refusal(data: bytes, words: str) -> str:
    with pytest.raises(InputError, match=words) as caught:
        read_ride_csv(data)
    message = str(caught.value)
    assert "\n" not in message
    return message


CELLS = ("0", "9", "9,5", "9.5", "", " ", "-1", "nan", "inf", "1e400", "x", '"', '"1,5"',
         "200", "2026-05-01T10:00:00Z", "1.2.3", "\t")
NAMES = ("time_s", "speed_mps", "power_w", "timestamp", "distance_km", "elevation_m", "lat",
         "x", "", "sep=;")


@st.composite
def broken_csv(draw) -> bytes:
    """CSV-like text from cells that break readers: stray quotes, blanks, mixed decimal marks,
    odd separators and line ends, in the encodings spreadsheets write."""
    separator = draw(st.sampled_from([",", ";", "\t", "|", " ", ""]))
    header = draw(st.lists(st.sampled_from(NAMES), max_size=6))
    rows = draw(st.lists(st.lists(st.sampled_from(CELLS), max_size=7), max_size=25))
    newline = draw(st.sampled_from(["\n", "\r\n", "\r"]))
    text = newline.join([separator.join(header)] + [separator.join(row) for row in rows])
    return text.encode(draw(st.sampled_from(["utf-8", "utf-8-sig", "utf-16", "cp1252"])))


class TestHostileCsv:
    """Whatever the bytes, reading ends with a ride or a one-line InputError, never a
    traceback."""

    @settings(max_examples=300, deadline=None)
    @given(broken_csv())
    def test_broken_csv_is_a_ride_or_one_line(self, data):
        try:
            read_ride_csv(data)
        except InputError as error:
            assert "\n" not in str(error)

    @settings(max_examples=200, deadline=None)
    @given(st.binary(max_size=300))
    def test_any_bytes_are_a_ride_or_one_line(self, data):
        try:
            read_ride(data)
        except InputError as error:
            assert "\n" not in str(error)

    @pytest.mark.parametrize("data, words", [
        (b"\r0", "cannot tell the columns apart"),                 # old Mac line ends
        (b'\n"\n"1,5"', "missing column"),                         # a name across lines
        (b'time_s,"speed\n', "does not parse"),                     # an unclosed quote
        (b"time_s,speed_mps,power_w\n0,9\n1,9,200,7\n", "does not parse"),  # ragged rows
    ])
    def test_found_by_the_properties(self, data, words):
        one_line_refusal(data, words)


def gpx_text(n: int = N, speed: bool = True, power: bool = True, version: str = "1.1",
             time: bool = True) -> bytes:
    points = []
    for i in range(n):
        extensions = []
        if power:
            extensions.append(f"<power>{200 + i}</power>")
        if speed and version == "1.1":
            extensions.append(f"<gpxtpx:TrackPointExtension><gpxtpx:speed>{9.0:.2f}"
                              "</gpxtpx:speed></gpxtpx:TrackPointExtension>")
        inner = f"<ele>{100 + 0.1 * i:.1f}</ele>"
        if time:
            inner += f"<time>2026-05-01T10:{i // 60:02d}:{i % 60:02d}Z</time>"
        if speed and version == "1.0":
            inner += "<speed>9.0</speed>"
        if extensions:
            inner += "<extensions>" + "".join(extensions) + "</extensions>"
        # 9 m per second northwards
        points.append(f'<trkpt lat="{46.0 + 9.0 * i / 111195.0:.8f}" lon="7.0">{inner}</trkpt>')
    namespace = f"http://www.topografix.com/GPX/{version.replace('.', '/')}"
    return (
        '<?xml version="1.0" encoding="UTF-8"?>'
        f'<gpx version="{version}" creator="test" xmlns="{namespace}" '
        'xmlns:gpxtpx="http://example.org/xmlschemas/TrackPointExtension/v2">'
        "<trk><trkseg>" + "".join(points) + "</trkseg></trk></gpx>"
    ).encode()


class TestGpx:
    def test_power_and_speed_from_extensions(self):
        ride = read_ride_gpx(gpx_text())
        np.testing.assert_allclose(ride.time, np.arange(N))
        np.testing.assert_allclose(ride.speed, 9.0)
        np.testing.assert_allclose(ride.power, 200 + np.arange(N))
        assert ride.elevation[1] == pytest.approx(100.1)
        assert ride.has_position

    def test_gpx_1_0_speed_element(self):
        ride = read_ride_gpx(gpx_text(version="1.0"))
        np.testing.assert_allclose(ride.speed, 9.0)

    def test_speed_from_positions_when_absent(self):
        ride = read_ride_gpx(gpx_text(speed=False))
        # 9 m per step on the local flat map (mean Earth radius 6371.0088 km, IUGG)
        np.testing.assert_allclose(ride.speed, 9.0, rtol=1e-3)
        assert describe_all(ride.notes) == [
            "speed taken from GNSS positions (noisier than a wheel sensor)"]
        assert ride.notes[0].level == "note"

    def test_no_power(self):
        with pytest.raises(InputError, match="no power values"):
            read_ride_gpx(gpx_text(power=False))

    def test_no_time(self):
        with pytest.raises(InputError, match="needs a <time>"):
            read_ride_gpx(gpx_text(time=False))

    def test_refuses_entities(self):
        evil = (b'<?xml version="1.0"?><!DOCTYPE gpx [<!ENTITY a "aaaa">]>'
                b"<gpx><trk><trkseg></trkseg></trk></gpx>")
        with pytest.raises(InputError, match="refused"):
            read_ride_gpx(evil)

    def test_not_xml_and_no_points(self):
        with pytest.raises(InputError, match="does not parse"):
            read_ride_gpx(b"<gpx><trk>")
        with pytest.raises(InputError, match="no track points"):
            read_ride_gpx(b"<gpx></gpx>")
        with pytest.raises(InputError, match="root element is <html>"):
            read_ride_gpx(b"<html></html>")

    def test_dispatch_by_extension_and_by_content(self, tmp_path):
        path = tmp_path / "aero.gpx"
        path.write_bytes(gpx_text())
        assert read_ride(path).name == "aero"
        assert read_ride(io.BytesIO(gpx_text())).power.size == N
        assert read_ride(io.BytesIO(csv_text(canonical()))).power.size == N
        with pytest.raises(InputError, match="unknown ride file type"):
            read_ride(path, kind="fit")



# ------------------------------------------------------------------ race files (read_race)


class TestRaceFiles:
    def test_a_race_csv_keeps_its_stops(self):
        columns = canonical()
        columns["speed_mps"] = [0.0 if 10 <= i < 20 else 9.0 for i in range(N)]
        race = read_race(csv_text(columns), kind="csv")
        assert race.time.size == N  # the test-ride reader would drop the ten stopped samples
        assert race.speed[15] == 0.0
        assert race.has_position

    def test_a_race_csv_needs_no_speed_when_it_has_a_distance(self):
        columns = {"time_s": list(range(N)), "power_w": [250.0] * N,
                   "distance_km": [0.01 * i for i in range(N)],
                   "cadence": [90] * N, "heart_rate": [150] * N}
        race = read_race(csv_text(columns), kind="csv")
        np.testing.assert_allclose(race.speed, 10.0)
        assert race.cadence[0] == 90 and race.heart_rate[-1] == 150
        assert not race.has_position

    def test_a_race_csv_without_power_is_refused(self):
        columns = canonical()
        del columns["power_w"]
        with pytest.raises(InputError, match="missing column"):
            read_race(csv_text(columns), kind="csv")

    def test_a_race_gpx_with_cadence_and_heart_rate(self):
        text = gpx_text().replace(b"<power>", b"<gpxtpx:cad>88</gpxtpx:cad><gpxtpx:hr>151"
                                              b"</gpxtpx:hr><power>")
        race = read_race(text)
        np.testing.assert_allclose(race.speed, 9.0)
        np.testing.assert_allclose(race.power, 200 + np.arange(N))
        assert race.cadence[3] == 88 and race.heart_rate[3] == 151
        assert race.elevation[1] == pytest.approx(100.1)

    def test_a_race_gpx_without_speed_takes_it_from_the_positions(self):
        race = read_race(gpx_text(speed=False))
        np.testing.assert_allclose(race.speed[1:-1], 9.0, rtol=2e-3)  # WGS84 vs a sphere
        assert race.notes[0].code == "review-ride-speed-from-positions"

    def test_the_test_ride_reader_is_unchanged_for_gpx(self):
        ride = read_ride_gpx(gpx_text(speed=False))
        assert ride.notes[0].code == "test-ride-speed-from-positions"
