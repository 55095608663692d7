"""The JSON of ``plan``, ``check`` and ``schedule`` on every sample is what it was captured as.

The fixture (``tests/fixtures/cli_outputs.json.gz``, written by ``tests/golden_outputs.py``)
was captured before the analysis and the route check moved into their own modules; moving code
must not change a number. Only keys added since are tolerated: the contract lets outputs gain
keys, never lose or change one. Regenerate the fixture only for a change that explains the
difference (and say which in the commit).
"""

from __future__ import annotations

import pytest

from tests.golden_outputs import capture, differences, load


@pytest.fixture(scope="module")
def outputs():
    return load(), capture()


def test_every_sample_is_in_the_fixture(outputs):
    expected, actual = outputs
    assert sorted(actual) == sorted(expected)


@pytest.mark.parametrize("what", ["plan", "check", "schedule"])
def test_outputs_unchanged_but_for_added_keys(outputs, what):
    # Source: /work/shared/contract.md ("add keys freely, never rename or drop one") and the
    # outputs captured before the refactor.
    expected, actual = outputs
    diffs: list[str] = []
    for name in sorted(expected):
        if name in actual:
            diffs.extend(differences(expected[name][what], actual[name][what], f"{name}:{what}"))
    assert not diffs, "\n".join(diffs[:20])


def test_differences_tolerates_added_keys_only():
    assert differences({"a": 1.0}, {"a": 1.0, "b": 2}) == []
    assert differences({"a": 1.0}, {"a": 1.0000000001}) != []
    assert differences({"a": [1, 2]}, {"a": [1]}) != []
    assert differences({"a": 1}, {}) != []
    assert differences({"a": 1}, {"a": 1.0}) != []
