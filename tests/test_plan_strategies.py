"""The strategy registry (pacing.plan.strategies): one list that the chain, the command line
and the app read, each entry with its published basis, what it needs and where it holds."""

from __future__ import annotations

import pytest

from pacing.cli.plan import CYCLING_STRATEGIES, RUNNING_STRATEGIES
from pacing.errors import InputError
from pacing.plan.strategies import SPORTS, STRATEGIES, strategy_for


def entries():
    return [s for sport in STRATEGIES.values() for s in sport.values()]


def test_every_sport_has_its_strategies():
    assert set(STRATEGIES) == set(SPORTS) == {"cycling", "running"}


@pytest.mark.parametrize("strategy", entries(), ids=lambda s: f"{s.sport}-{s.key}")
def test_every_strategy_says_what_it_is_and_what_it_needs(strategy):
    assert strategy.title and strategy.source and strategy.validity
    assert strategy.needs
    assert strategy.key == strategy.key.lower() and " " not in strategy.key
    assert callable(strategy.make) and callable(strategy.targets) and callable(strategy.notices)


def test_the_command_line_offers_exactly_the_registered_strategies():
    assert tuple(STRATEGIES["cycling"]) == CYCLING_STRATEGIES
    assert tuple(STRATEGIES["running"]) == RUNNING_STRATEGIES


def test_an_unknown_strategy_names_the_choices():
    with pytest.raises(InputError, match="choose one of equal-effort, even-pace, fastest"):
        strategy_for("running", "negative-split")
