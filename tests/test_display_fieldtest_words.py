"""The sentences of the fieldtest notices (pacing.display.fieldtest_words): every code speaks in
both unit systems, in one line, with its unit words, and a plausible number never turns into
'nan'."""

from __future__ import annotations

import pytest
from words_samples import SampleValues

from pacing.display.fieldtest_words import WORDS

SYSTEMS = ("metric", "imperial")


@pytest.mark.parametrize("system", SYSTEMS)
@pytest.mark.parametrize("code", sorted(WORDS))
def test_every_code_speaks_one_line_in_both_systems(code, system):
    sentence = WORDS[code](SampleValues(), system)
    assert sentence.strip() and "\n" not in sentence
    assert "nan" not in sentence.lower().split() and "None" not in sentence


def test_there_is_something_to_say():
    assert WORDS


class TestRideWords:
    """The sentences of reading and cleaning a ride (pacing.fieldtest.ride)."""

    DROPOUTS = {"count": 240, "zero_count": 238, "share": 0.2017, "longest_s": 3.0,
                "speed_mps": 4.0}

    def test_power_dropouts_give_count_share_longest_gap_and_speed(self):
        words = WORDS["test-ride-power-dropouts"]
        assert words(self.DROPOUTS, "metric") == (
            "power dropouts: 240 samples without a real power reading (20 % of the ride, 238 "
            "of them logged as 0 W while pedalling faster than 4 m/s), the longest gap "
            "between readings 3 s; left out of the energy balance and bridged from the "
            "readings on either side: check the power meter's battery and pairing")
        # 1 mph = 0.44704 m/s exactly (NIST SP 811 (2008), App. B.8): 4 m/s = 8.9 mph
        assert "faster than 8.9 mph" in words(self.DROPOUTS, "imperial")

    def test_blank_readings_alone_say_nothing_of_0_w(self):
        values = {**self.DROPOUTS, "count": 2, "zero_count": 0, "share": 0.01}
        sentence = WORDS["test-ride-power-dropouts"](values, "imperial")
        assert "(1 % of the ride)" in sentence and "0 W" not in sentence

    def test_stops_name_where_and_how_long(self):
        words = WORDS["test-ride-stops-dropped"]
        one = {"count": 5, "speed_mps": 1.0, "stretch_count": 1, "duration_s": 5.0,
               "longest_s": 5.0, "times_s": (300.0,)}
        assert words(one, "metric") == ("dropped 5 samples slower than 1 m/s: 1 stop at "
                                        "t = 300 s (5 s long); the energy balance restarts "
                                        "after each")
        many = {"count": 90, "speed_mps": 1.0, "stretch_count": 7, "duration_s": 95.0,
                "longest_s": 40.0, "times_s": (10.0, 20.0, 30.0, 40.0, 50.0)}
        assert ("7 stops at t = 10, 20, 30, 40, 50, … s (95 s in all, the longest 40 s)"
                in words(many, "imperial"))
        # 1 m/s = 2.2 mph (NIST SP 811 (2008), App. B.8)
        assert "slower than 2.2 mph" in words(many, "imperial")


class TestWindWords:
    """The sentences of the wind estimate (pacing.fieldtest.wind_estimate, race_fit)."""

    ESTIMATED = {"speed_mps": 3.3, "speed_at_rider_mps": 2.0, "from_deg": 250.0,
                 "along_axis_only": False, "speed_ci95_low_mps": 3.1,
                 "speed_ci95_high_mps": 3.5}

    def test_the_estimated_wind_gives_both_heights_and_its_interval(self):
        assert WORDS["fieldtest-wind-estimated"](self.ESTIMATED, "metric") == (
            "wind estimated from the ride: 3.3 m/s at 10 m (95 % interval 3.1 m/s to 3.5 m/s), "
            "2.0 m/s at rider height, from 250°; CdA and Crr are fitted in that wind")
        # 1 mph = 0.44704 m/s exactly (NIST SP 811 (2008), App. B.8): 3.3 m/s = 7.4 mph
        assert "7.4 mph at 10 m" in WORDS["fieldtest-wind-estimated"](self.ESTIMATED,
                                                                      "imperial")

    def test_an_out_and_back_says_only_the_wind_along_the_road_was_told(self):
        values = {**self.ESTIMATED, "along_axis_only": True}
        del values["speed_ci95_low_mps"], values["speed_ci95_high_mps"]
        sentence = WORDS["fieldtest-wind-estimated"](values, "metric")
        assert "interval" not in sentence and "only the part along the road" in sentence

    @pytest.mark.parametrize("reason, words", [
        ("one-heading", "goes one way only"),
        ("no-heading", "no headings or positions"),
        ("correlation", "correlation 0.990"),
    ])
    def test_why_the_wind_cannot_be_told_from_drag(self, reason, words):
        values = {"reason": reason, "heading_spread": 0.0, "correlation": 0.99}
        sentence = WORDS["fieldtest-wind-inseparable"](values, "metric")
        assert sentence.startswith("the wind cannot be told from drag: ") and words in sentence

    def test_a_wind_interval_too_wide_is_named(self):
        values = {"reason": "interval", "speed_ci95_low_mps": 1.0, "speed_ci95_high_mps": 9.0,
                  "limit_mps": 2.0, "correlation": 0.9}
        assert "1.0 m/s to 9.0 m/s, is wider than 2 m/s" in WORDS[
            "fieldtest-wind-inseparable"](values, "metric")

    def test_what_a_race_fit_left_out(self):
        values = {"braking_s": 12.0, "stops_s": 31.0, "coasting_s": 240.0, "share": 0.079}
        assert WORDS["race-fit-excluded"](values, "metric") == (
            "left out of the drag fit: 12 s braking, 31 s stopped or not recorded, 240 s "
            "coasting (8 % of the race)")
