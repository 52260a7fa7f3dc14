"""The race review's sentences (pacing.display.review_words): counts and signs read as a coach
would say them."""

from pacing.display.review_words import WORDS


def test_one_stop_is_a_stop_and_two_are_stops():
    one = WORDS["review-stops"]({"count": 1, "speed_mps": 1.0, "duration_s": 72.0}, "metric")
    two = WORDS["review-stops"]({"count": 2, "speed_mps": 1.0, "duration_s": 72.0}, "metric")
    assert one.startswith("1 stop (") and two.startswith("2 stops (")


def test_a_race_quicker_than_the_model_explains_says_so_without_a_minus_sign():
    words = WORDS["review-unexplained"]({"other_s": -26.0, "share": -0.021}, "metric")
    assert "26 s faster than the model explains (2.1 %" in words
    assert "-" not in words.split("(")[0]


def test_a_race_slower_than_the_model_explains_says_so():
    words = WORDS["review-unexplained"]({"other_s": 18.4, "share": 0.018}, "metric")
    assert "18 s slower than the model explains" in words
