"""The schedule and rider rows (pacing.team.schedule): times add up, notes name drop-outs."""

from __future__ import annotations

import pytest

from pacing.team.plan import plan_team
from pacing.team.race import race_on_track
from pacing.team.riders import Team, TeamRider
from pacing.team.schedule import plan_notices, rider_rows, turn_rows

TEAM = Team(tuple(TeamRider(name, 80.0, 0.20, cp, 20000.0)
                  for name, cp in zip("ABCD", (450.0, 400.0, 410.0, 380.0), strict=True)))


@pytest.fixture(scope="module")
def plan():
    return plan_team(TEAM, race_on_track(4000.0, 250.0, 1.2, counts_rider=3))


def test_turn_times_add_up_to_the_finish_time(plan):
    rows = turn_rows(plan.team, plan.ride)
    assert sum(r.duration_s for r in rows) == pytest.approx(plan.ride.finish_time)
    assert rows[0].start_m == 0.0 and rows[-1].end_m == 4000.0
    assert all(r.speed_mps > 0 and r.power_w > 0 for r in rows)


def test_time_in_front_adds_up_to_the_finish_time(plan):
    rows = rider_rows(plan.team, plan.ride)
    assert sum(r.lead_time_s for r in rows) == pytest.approx(plan.ride.finish_time)
    assert sorted(r.name for r in rows) == ["A", "B", "C", "D"]


def test_every_drop_out_gets_a_note_with_its_distance(plan):
    rows = rider_rows(plan.team, plan.ride)
    dropped = [r for r in rows if r.dropped_at_m is not None]
    notes = [n for n in plan_notices(plan) if n.code == "team-rider-drops"]
    assert len(notes) == len(dropped)
    for note, row in zip(notes, dropped, strict=True):
        assert note.values == {"name": row.name, "distance_m": row.dropped_at_m}
