"""The plan command's parser (pacing.cli.plan): every flag in its group, the strategies from
the registry, and the sport choosing which plan runs (the plans themselves:
tests/test_cli_plan_cycling.py and tests/test_cli_plan_running.py)."""

from __future__ import annotations

import argparse

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
