"""Transition curves end to end: the new chassis limits and route key, continuous-curvature
turns, the profile under rate limits and the sampled schedule."""

from __future__ import annotations

import copy
import json

import pytest

from kinematics.errors import SwatheInputError
from kinematics.files.project import Chassis, Route, Waypoint, load_project, route_transitions
from tests.test_files import PROJECT, _error, _with, _write


# -- files --------------------------------------------------------------------------------------
@pytest.mark.parametrize("key", ["max_steer_rate_dps", "max_wheel_accel_radps2",
                                 "max_yaw_accel_dps2"])
@pytest.mark.parametrize("value,words", [(-1.0, "positive"), (0.0, "positive"),
                                         (1e9, "at most"), (1e-9, "at least"),
                                         ("fast", "number"), (True, "number")])
def test_bad_rate_limits_name_file_and_key(tmp_path, key, value, words):
    # Source: common practice - negative, zero, absurd and wrong-typed limits are refused with
    # one line naming the file and the key path (shared/contract.md, bad input).
    p, e = _error(tmp_path, _with(("chassis", key), value))
    assert e.file == str(p) and e.place == f"chassis.{key}"
    assert words in e.expected
    assert e.message.startswith(f"{p}: chassis.{key}: ")


def test_nan_rate_limit_is_refused(tmp_path):
    # Source: common practice (JSON has no NaN; Python's reader accepts the literal).
    text = json.dumps(PROJECT).replace('"track_m": 0.5', '"track_m": 0.5, '
                                       '"max_wheel_accel_radps2": NaN')
    p = _write(tmp_path, text)
    with pytest.raises(SwatheInputError) as err:
        load_project(p)
    # The JSON reader refuses the literal itself, naming line and column of the key's value.
    col = text.index("NaN") + 1
    assert str(p) in err.value.message and f"line 1, column {col}" in err.value.message


def test_bad_transitions_value_is_refused(tmp_path):
    for value, words in (("spline", "clothoid"), (3, "text")):
        p, e = _error(tmp_path, _with(("routes", 0, "transitions"), value))
        assert e.place == "routes[0].transitions" and words in e.expected


def test_transitions_default_follows_the_chassis(tmp_path):
    # Source: the rule - absent means "clothoid" where the chassis gives one of the new
    # limits, else "none", so existing files keep their meaning.
    proj = load_project(_write(tmp_path, PROJECT))
    assert proj.routes[0].transitions is None
    assert route_transitions(proj.routes[0], proj.chassis) == "none"
    d = copy.deepcopy(PROJECT)
    d["chassis"]["max_wheel_accel_radps2"] = 8.0
    proj = load_project(_write(tmp_path, d))
    assert proj.chassis.max_wheel_accel_radps2 == 8.0
    assert route_transitions(proj.routes[0], proj.chassis) == "clothoid"
    d["routes"][0]["transitions"] = "none"
    proj = load_project(_write(tmp_path, d))
    assert route_transitions(proj.routes[0], proj.chassis) == "none"
    r = Route("r", (Waypoint(0, 0), Waypoint(1, 0)), transitions="clothoid")
    assert route_transitions(r, Chassis(track_m=0.5)) == "clothoid"
