"""The sentences of the course notices (pacing.display.course_words): every code speaks in both
unit systems, in one line, with its unit words; a value that is not a number reads "–".

Conversions checked against the international mile (1609.344 m) and foot (0.3048 m), NIST SP 811
(2008), Appendix B.8, written out here.
"""

from __future__ import annotations

import pytest
from words_samples import SampleValues

from pacing.display.course_words import WORDS
from pacing.display.notices import describe
from pacing.notices import note, warning

SYSTEMS = ("metric", "imperial")
MILE = 1609.344
FOOT = 0.3048


@pytest.mark.parametrize("system", SYSTEMS)
@pytest.mark.parametrize("code", sorted(WORDS))
def test_every_code_speaks_one_line_in_both_systems(code, system):
    sentence = WORDS[code](SampleValues(), system)
    assert sentence.strip() and "\n" not in sentence
    assert "nan" not in sentence.lower().split() and "None" not in sentence


@pytest.mark.parametrize("code", sorted(WORDS))
def test_values_that_are_not_numbers_read_as_a_dash(code):
    sentence = WORDS[code](SampleValues(float("nan")), "metric")
    assert "nan" not in sentence.lower() and "inf" not in sentence.lower().split()


def test_a_gap_is_named_by_where_and_how_long_in_each_system():
    gap = warning("course-gap-joined", at_m=7_500.0, length_m=12_700.0, duration_s=2_663.0)
    assert describe(gap, "metric").startswith(
        "gap in the recording at 7.5 km: 12.7 km with no points over 0:44:23; joined")
    assert f"at {7_500.0 / MILE:.1f} mi: {12_700.0 / MILE:.1f} mi" in describe(gap, "imperial")
    dropped = warning("course-gap-dropped", at_m=1_500.0, length_m=500_000.0, duration_s=1.0)
    assert "500.0 km with no points over 0:00:01; left out of the course" in describe(dropped)
    jump = warning("course-gap-joined", at_m=1_500.0, length_m=500_000.0, duration_s=0.0)
    assert "and no time passing (a jump)" in describe(jump)
    untimed = warning("course-gap-joined", at_m=1_500.0, length_m=900.0)
    assert "0.9 km with no points; joined" in describe(untimed)


def test_the_grade_limit_and_the_cleaning_in_words():
    cut = warning("grade-limit-cut", at_m=1_000.0, height_m=23.0, max_grade=0.25,
                  steepest_grade=0.30)
    assert describe(cut) == ("the grade limit of 25 % changed the profile by up to 23 m from "
                             "1.0 km (steepest grade in the smoothed profile 30 %): a step or "
                             "spike in the recorded heights, or a short climb steeper than the "
                             "limit")
    kept = note("steep-grade-kept", at_m=1_100.0, length_m=500.0, steepest_grade=0.30,
                max_grade=0.25)
    assert describe(kept) == ("0.5 km steeper than the grade limit of 25 %, from 1.1 km (up to "
                              "30 %), kept as real climbing: too long to be recording noise")
    assert f"by up to {23.0 / FOOT:.0f} ft" in describe(cut, "imperial")
    cleaned = note("elevation-cleaned", raw_ascent_m=957.0, ascent_m=474.0,
                   smoothing_removed_m=482.0, limit_removed_m=1.0)
    assert describe(cleaned) == ("climbing 474 m after cleaning, 957 m in the raw track: "
                                 "smoothing removed 482 m (recording noise), the grade limit "
                                 "1 m")


def test_the_old_warnings_keep_their_words():
    # the sentences the command line printed before they became notices
    assert describe(warning("elevation-points-missing", count=2, total=4)) == (
        "2 of 4 track points had no elevation; their heights were interpolated from the "
        "neighbouring points")
    assert describe(warning("elevation-missing")) == (
        "GPX file has no elevation data: the course is treated as flat")
    assert "all 501 elevations in the file are 0 m" in describe(
        warning("elevation-constant", elevation_m=0.0, count=501))
