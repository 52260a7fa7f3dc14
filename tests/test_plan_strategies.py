"""The strategy registry (pacing.plan.strategies): one list that the chain, the command line
and the app read, each entry with its published basis, what it needs and where it holds."""

from __future__ import annotations

import pytest
from samples import north_hill_gpx

from pacing.cli import main
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


@pytest.mark.parametrize("sport", SPORTS)
def test_the_command_line_names_every_registered_strategy_when_refusing_one(
        sport, capsys, tmp_path):
    route = tmp_path / "hill.gpx"
    route.write_text(north_hill_gpx(), encoding="utf-8")
    flags = ["--power", "200"] if sport == "cycling" else ["--flat-pace", "5:00"]
    assert main(["plan", str(route), "--sport", sport, "--strategy", "sprint", *flags]) == 2
    refusal = capsys.readouterr().err
    assert all(key in refusal for key in STRATEGIES[sport]), refusal


def test_an_unknown_strategy_names_the_choices():
    with pytest.raises(InputError, match="choose one of equal-effort, even-pace, fastest"):
        strategy_for("running", "negative-split")


def test_a_fastest_plan_blended_with_even_power_says_so(capsys):
    # The demo loop at 228 W with CP 240 W, W′ 3 kJ and a 2 kJ reserve: every correction round
    # of the steady plan breaks the reserve on the simulated ride, so the plan ridden is part
    # steady plan, part even power (tests/test_plan_cycling.py); the user is told, in the JSON
    # notices as on every surface that lists them.
    import json
    from pathlib import Path

    demo = Path(__file__).resolve().parents[1] / "demo_routes" / "01_corravey_hill_loop_40k.gpx"
    main(["plan", str(demo), "--strategy", "fastest", "--power", "228", "--cp", "240",
          "--w-prime", "3000", "--w-prime-reserve", "2000", "--max-power-ratio", "1.15",
          "--json"])
    codes = [notice["code"] for notice in json.loads(capsys.readouterr().out)["notices"]]
    assert "fastest-plan-blended" in codes
