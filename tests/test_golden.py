"""Golden outputs: the command line's JSON and the page's numbers on the demo courses and a
simulated test ride stay what they were when recorded (tests/golden/record.py), to 1e-9.

On the platform of the recording (tests/golden/platform.json: numpy and scipy versions and
the CPU features numpy's vector math uses) every number holds to 1e-9 relative. On another
platform the last bits of exp, log and power differ, and the solvers carry them to about 1e-8
relative in small derived numbers (a gain of 0.3 s from two finish times of 3000 s, a W′
balance of 84 J out of 20 kJ): there a number holds to 1e-9 relative or 1e-4 absolute in SI
units, far below what any output shows (0.1 s, 1 J, 0.01 m/s). Measured on AVX-512 against a
recording without it: at most 2.6e-5 absolute (W′ balance, J; a wind direction, degrees).

This guards moves and refactors: a change here must be a deliberate change of a model, recorded
again on purpose and noted in CHANGELOG.md.
"""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import pytest

GOLDEN = Path(__file__).parent / "golden"
sys.path.insert(0, str(GOLDEN))

from cases import (  # noqa: E402
    app_cases,
    cases,
    platform_fingerprint,
    run_app_case,
    run_case,
    write_ride,
)

TOLERANCE = 1e-9
RECORDED_PLATFORM = json.loads((GOLDEN / "platform.json").read_text())
SAME_PLATFORM = platform_fingerprint() == RECORDED_PLATFORM
ABSOLUTE_TOLERANCE = TOLERANCE if SAME_PLATFORM else 1e-4
RECORDED = json.loads((GOLDEN / "golden.json").read_text())
RECORDED_APP = json.loads((GOLDEN / "golden_app.json").read_text())


def differences(expected, actual, where="") -> list[str]:
    """Where two JSON values differ: numbers beyond 1e-9 relative and ABSOLUTE_TOLERANCE,
    anything else not equal. Keys added to the output since the recording (e.g. "notices")
    are allowed; a recorded key that is gone is a difference."""
    if isinstance(expected, dict) and isinstance(actual, dict):
        found = [f"{where}: keys gone {sorted(set(expected) - set(actual))}"] \
            if set(expected) - set(actual) else []
        for key in expected.keys() & actual.keys():
            found += differences(expected[key], actual[key], f"{where}.{key}")
        return found
    if isinstance(expected, list) and isinstance(actual, list):
        if len(expected) != len(actual):
            return [f"{where}: length {len(expected)} → {len(actual)}"]
        return [d for k, (e, a) in enumerate(zip(expected, actual, strict=True))
                for d in differences(e, a, f"{where}[{k}]")]
    numbers = (int, float)
    if isinstance(expected, numbers) and isinstance(actual, numbers) \
            and not isinstance(expected, bool):
        if math.isclose(expected, actual, rel_tol=TOLERANCE, abs_tol=ABSOLUTE_TOLERANCE):
            return []
        return [f"{where}: {expected!r} → {actual!r}"]
    return [] if expected == actual else [f"{where}: {expected!r} → {actual!r}"]


@pytest.fixture(scope="module")
def ride(tmp_path_factory):
    return write_ride(tmp_path_factory.mktemp("golden") / "ride.csv")


@pytest.mark.parametrize("name", sorted(RECORDED))
def test_command_line_output_is_unchanged(name, request):
    ride = request.getfixturevalue("ride") if name.startswith("fieldtest") else "ride.csv"
    code, output = run_case(cases(ride)[name])
    assert code == 0
    assert differences(RECORDED[name], output) == []


@pytest.mark.parametrize("name", sorted(RECORDED_APP))
def test_page_numbers_are_unchanged(name):
    assert differences(RECORDED_APP[name], run_app_case(*app_cases()[name])) == []


def test_every_case_is_recorded():
    assert set(cases("ride.csv")) == set(RECORDED)
    assert set(app_cases()) == set(RECORDED_APP)
