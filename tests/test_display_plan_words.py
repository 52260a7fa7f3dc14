"""Sentences for the plans' notices (pacing.display.plan_words).

Every code the plans make has words in both unit systems; paces are M:SS per km or per mile
with 1 mi = 1609.344 m exactly (international mile, NIST SP 811 (2008), Appendix B.8); no
sentence shows "nan" or "inf", whatever the values.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import pytest

from pacing.display.notices import describe
from pacing.display.plan_words import WORDS, distance, pace
from pacing.notices import Notice

ROOT = Path(__file__).resolve().parents[1]
CODE = re.compile(r"\b(?:warning|note|Notice)\(\s*\"([a-z0-9-]+)\"")
NOT_A_NUMBER = re.compile(r"\b(nan|inf|infinity)\b", re.IGNORECASE)

MILE = 1609.344
"""The international mile [m] (NIST SP 811 (2008), Appendix B.8), written out here."""

SAMPLES = {
    "fastest-plan-blended": {},
    "running-grade-beyond-cost-model": {"count": 3, "lowest_grade": -0.45, "highest_grade": 0.45},
    "running-descent-capped": {"ratio": 1.2, "share": 0.18},
    "running-descent-capped-at-level": {"ratio": 1.2, "share": 0.07},
    "even-pace-at-same-effort": {"speed_mps": 1000.0 / 275.0, "later_s": -12.4,
                                 "peak_effort_ratio": 1.31, "overdrawn_balance_m": -35.0},
    "even-pace-effort-on-average": {"mean_effort_ratio": 1.0, "peak_effort_ratio": 1.26},
    "even-pace-within-limits": {"speed_mps": 1000.0 / 275.0, "later_s": 41.0},
    "d-prime-recovery-by-analogy": {},
    "limits-reached": {"limits": ["w-prime-reserve", "max-power"]},
    "w-prime-exhausted": {"distance_m": 3800.0, "lowest_balance_j": -2400.0},
    "d-prime-exhausted": {"distance_m": 3800.0, "lowest_balance_m": -12.0},
    "walking": {"walking_distance_m": 350.0, "distance_m": 40000.0},
    "target-time-unchecked": {"power_w": 312.0},
}
"""Values of each plan notice as the core makes them (SI, keys ending with the unit)."""


def codes_made_by_the_plans() -> set[str]:
    """Every code written as warning("…"), note("…") or Notice("…") in pacing/plan/."""
    found = set()
    for path in (ROOT / "pacing" / "plan").glob("*.py"):
        found |= set(CODE.findall(path.read_text(encoding="utf-8")))
    return found


def clock(seconds: float) -> str:
    """M:SS of a time, rounded to the nearest second (halves up)."""
    minutes, rest = divmod(math.floor(seconds + 0.5), 60)
    return f"{minutes}:{rest:02d}"


def test_every_code_of_the_plans_has_words_and_a_sample():
    # codes of the race-day conditions (pacing/plan/race_day.py) have their words in
    # pacing.display.weather_words; every other code of the plans has them here
    from pacing.display.notices import WORDS as ALL_WORDS
    from pacing.display.weather_words import WORDS as WEATHER_WORDS

    assert codes_made_by_the_plans() - set(WEATHER_WORDS) <= set(WORDS)
    assert codes_made_by_the_plans() <= set(ALL_WORDS)
    assert set(SAMPLES) == set(WORDS)


@pytest.mark.parametrize("code", sorted(SAMPLES))
@pytest.mark.parametrize("system", ["metric", "imperial"])
def test_every_code_reads_as_one_line_in_both_systems(code, system):
    sentence = describe(Notice(code, SAMPLES[code]), system)
    assert sentence and "\n" not in sentence
    assert sentence == WORDS[code](SAMPLES[code], system)
    assert not NOT_A_NUMBER.search(sentence)


@pytest.mark.parametrize("speed", [1000.0 / 275.0, 3.0, 1000.0 / 299.6, 0.5, 5.5, 12.0])
def test_metric_pace_is_the_clock_of_1000_m_over_the_speed(speed):
    assert pace(speed, "metric") == f"{clock(1000.0 / speed)} /km"


@pytest.mark.parametrize("speed", [1000.0 / 275.0, 3.0, 0.5, 5.5, 12.0])
def test_imperial_pace_is_the_clock_of_a_mile_over_the_speed(speed):
    assert pace(speed, "imperial") == f"{clock(MILE / speed)} /mi"


def test_a_four_minute_mile_reads_four_minutes():
    # 1609.344 m in 240 s (NIST SP 811 mile): 6.7056 m/s, 2:29 per km
    assert pace(MILE / 240.0, "imperial") == "4:00 /mi"
    assert pace(MILE / 240.0, "metric") == "2:29 /km"


def test_sentences_give_paces_and_distances_in_the_chosen_units():
    metric = WORDS["even-pace-within-limits"](SAMPLES["even-pace-within-limits"], "metric")
    imperial = WORDS["even-pace-within-limits"](SAMPLES["even-pace-within-limits"], "imperial")
    assert "(4:35 /km)" in metric
    assert f"({clock(MILE * 275.0 / 1000.0)} /mi)" in imperial  # 442.57 s: 7:23 per mile
    exhausted = SAMPLES["d-prime-exhausted"]
    assert "3.80 km" in WORDS["d-prime-exhausted"](exhausted, "metric")
    assert f"{3800.0 / MILE:.2f} mi" in WORDS["d-prime-exhausted"](exhausted, "imperial")
    assert distance(MILE, "imperial") == "1.00 mi"


def test_the_even_pace_at_the_same_effort_says_sooner_or_later():
    values = dict(SAMPLES["even-pace-at-same-effort"])
    sentence = WORDS["even-pace-at-same-effort"](values, "metric")
    assert "finish 12 s sooner" in sentence
    assert "spending more than D′ (its balance falls to -35 m)" in sentence
    values.update(later_s=7.6, overdrawn_balance_m=None)
    sentence = WORDS["even-pace-at-same-effort"](values, "metric")
    assert "finish 8 s later" in sentence and "spending more" not in sentence


def test_words_a_coach_follows():
    # issue 18: "flat-equivalent speed" and "overdrawing D′" were not a coach's words
    capped = WORDS["running-descent-capped-at-level"](
        SAMPLES["running-descent-capped-at-level"], "metric")
    assert capped == ("descent speed capped at 1.2 × the speed of the same effort on the "
                      "flat, on 7% of the course")
    for code, values in SAMPLES.items():
        for system in ("metric", "imperial"):
            words = WORDS[code](values, system)
            assert "flat-equivalent" not in words and "overdraw" not in words


EXTREMES = [0.0, 5e-324, 1e-12, -1e6, 1e12, math.nan, math.inf, -math.inf]
"""Values no plan should make, and a saved or hand-written plan might carry."""


@pytest.mark.parametrize("extreme", EXTREMES)
@pytest.mark.parametrize("code", sorted(SAMPLES))
@pytest.mark.parametrize("system", ["metric", "imperial"])
def test_no_sentence_shows_nan_or_inf_for_extreme_values(code, extreme, system):
    values = {key: extreme if isinstance(value, int | float) else value
              for key, value in SAMPLES[code].items()}
    sentence = WORDS[code](values, system)
    assert not NOT_A_NUMBER.search(sentence), sentence


@pytest.mark.parametrize("speed", [0.0, -2.0, math.nan, math.inf, 5e-324])
def test_a_pace_without_a_usable_speed_is_a_dash(speed):
    assert pace(speed, "metric") == "– /km"
    assert pace(speed, "imperial") == "– /mi"
