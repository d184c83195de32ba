"""Golden outputs: today's commands print what the recorded ones printed.

The records in ``tests/data/golden/`` were written by ``python tests/golden_commands.py``.
Source of every check value: poise's own output recorded in those files (regression pins,
not published values; the published checks live in the other test files).  Numbers compare to 1e-9 relative (1e-12 absolute near zero), text exactly.  A deliberate
change of numbers regenerates the records and says why in its commit.
"""

from __future__ import annotations

import json
import math

import pytest
from golden_commands import GOLDEN_COMMANDS, GOLDEN_DIR, run_command

RELATIVE_TOLERANCE = 1e-9
ABSOLUTE_TOLERANCE = 1e-12


def differences(expected, actual, path="$"):
    """Every place where two JSON values differ, numbers compared with the tolerance."""
    if isinstance(expected, bool) or isinstance(actual, bool) or expected is None or actual is None:
        return [] if expected == actual else [f"{path}: expected {expected!r}, got {actual!r}"]
    if isinstance(expected, (int, float)) and isinstance(actual, (int, float)):
        if math.isclose(expected, actual, rel_tol=RELATIVE_TOLERANCE, abs_tol=ABSOLUTE_TOLERANCE):
            return []
        return [f"{path}: expected {expected!r}, got {actual!r}"]
    if isinstance(expected, dict) and isinstance(actual, dict):
        found = []
        if list(expected) != list(actual):
            found.append(f"{path}: keys {list(expected)} became {list(actual)}")
        for key in expected.keys() & actual.keys():
            found += differences(expected[key], actual[key], f"{path}.{key}")
        return found
    if isinstance(expected, list) and isinstance(actual, list):
        if len(expected) != len(actual):
            return [f"{path}: {len(expected)} items became {len(actual)}"]
        return [d for i, (e, a) in enumerate(zip(expected, actual)) for d in differences(e, a, f"{path}[{i}]")]
    if expected == actual:
        return []
    if isinstance(expected, str) and isinstance(actual, str):
        return [first_differing_line(expected, actual, path)]
    return [f"{path}: expected {expected!r}, got {actual!r}"]


def first_differing_line(expected: str, actual: str, path: str) -> str:
    """The first line at which two texts differ, for a readable failure message."""
    old, new = expected.splitlines(), actual.splitlines()
    for number, (a, b) in enumerate(zip(old, new), start=1):
        if a != b:
            return f"{path}: line {number}: expected {a!r}, got {b!r}"
    return f"{path}: {len(old)} lines became {len(new)}"


def test_every_command_has_a_record():
    recorded = {path.stem for path in GOLDEN_DIR.glob("*.json")}
    assert recorded == set(GOLDEN_COMMANDS)


@pytest.mark.parametrize("name", sorted(GOLDEN_COMMANDS))
def test_command_output_matches_its_record(name):
    expected = json.loads((GOLDEN_DIR / f"{name}.json").read_text(encoding="utf-8"))
    actual = json.loads(json.dumps(run_command(GOLDEN_COMMANDS[name])))
    found = differences(expected, actual)
    assert not found, "\n".join(found[:20])


def test_the_comparison_catches_a_moved_number():
    # The comparison itself: a change in the ninth significant figure is caught, one in the twelfth is not.
    assert differences({"ph": 7.40000001}, {"ph": 7.4})
    assert not differences({"ph": 7.40000000001}, {"ph": 7.4})
    assert differences("pH 7.40", "pH 7.41")
