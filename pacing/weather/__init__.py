"""The weather of race day and the air it makes along a course."""
