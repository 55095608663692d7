"""``swathe find``: exit codes, the JSON keys of the contract, ``-o`` and one-line bad input."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from app.cli import main

# Invented scene: a corridor 2.6 m wide and a room through a 1.2 m door (as tests/test_search).
RECTS = [(-1, -0.5, 12, 0.0), (-1, 2.6, 6.0, 2.8), (7.2, 2.6, 12, 2.8), (-1, 0, -0.5, 7),
         (11.5, 0, 12, 7), (4.0, 2.8, 4.2, 7), (9.0, 2.8, 9.2, 7), (4.0, 6.8, 9.2, 7.0)]
FLOOR = {"swathe_floorplan": 1, "name": "door scene", "walls": [],
         "obstacles": [{"points": [[a, b], [c, b], [c, d], [a, d]], "label": f"block {i}"}
                       for i, (a, b, c, d) in enumerate(RECTS)],
         "doors": [{"a": [6.0, 2.7], "b": [7.2, 2.7], "label": "room door"}]}
CART = {"name": "cart", "drive": "ackermann", "wheelbase_m": 0.8, "track_m": 0.5,
        "max_steer_deg": 35.0, "wheel_radius_m": 0.1, "margin_m": 0.05,
        "footprint": [[-0.25, -0.3], [1.05, -0.3], [1.05, 0.3], [-0.25, 0.3]]}


def write(tmp: Path, waypoints, reverse=False) -> Path:
    (tmp / "door.floor.json").write_text(json.dumps(FLOOR))
    proj = {"swathe_project": 1, "floorplan": "door.floor.json", "chassis": CART,
            "routes": [{"name": "in", "waypoints": waypoints, "turn_radius_m": 0.0,
                        "reverse": reverse}]}
    path = tmp / "p.swathe.json"
    path.write_text(json.dumps(proj))
    return path


def run(args, capsys):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_find_json_keys_and_output_project(tmp_path, capsys):
    # As sketched the turn through the door hits the jamb: check exits 1.
    path = write(tmp_path, [[1.0, 1.3, 0], [3.0, 1.3, 0], [6.6, 5.0, 90]])
    code, _, _ = run(["check", path, "--route", "in"], capsys)
    assert code == 1
    sub = tmp_path / "out"
    sub.mkdir()
    new = sub / "found.swathe.json"
    code, out, err = run(["find", path, "--route", "in", "--json", "--time-limit", "8",
                          "-o", new], capsys)
    assert code == 0, err
    r = json.loads(out)["routes"][0]
    # The contract's keys (shared/contract.md, version 1 additions).
    for key in ("name", "waypoints", "segments", "clear", "min_clearance_m",
                "expanded_nodes", "time_s"):
        assert key in r
    assert r["clear"] is True and r["min_clearance_m"] >= 0.05
    assert r["waypoints"][0][:2] == [1.0, 1.3] and r["waypoints"][-1] == [6.6, 5.0, 90.0]
    assert {s["kind"] for s in r["segments"]} <= {"line", "arc"}
    # The written project (in another folder) loads and its route passes the check.
    code, out, err = run(["check", new, "--route", "in", "--json"], capsys)
    assert code == 0, err
    assert json.loads(out)["routes"][0]["clear"] is True


def test_repair_keeps_the_passing_leg(tmp_path, capsys):
    path = write(tmp_path, [[1.0, 1.3, 0], [3.0, 1.3, 0], [6.6, 5.0, 90]])
    code, out, err = run(["find", path, "--route", "in", "--repair", "--json"], capsys)
    assert code == 0, err
    r = json.loads(out)["routes"][0]
    assert r["legs_searched"] == [1]
    assert r["waypoints"][:2] == [[1.0, 1.3, 0.0], [3.0, 1.3, 0.0]]


def test_no_route_exits_1_with_the_place(tmp_path, capsys):
    # Start facing the west wall 1.2 m ahead with no reversing: no way to turn.
    path = write(tmp_path, [[1.8, 1.3, 180], [6.6, 5.0, 90]])
    code, out, err = run(["find", path, "--route", "in", "--time-limit", "2"], capsys)
    assert code == 1
    assert err.startswith("swathe: route in: no route from waypoint 1 to waypoint 2")
    assert "stopped near (" in err and err.count("\n") == 1


@pytest.mark.parametrize("waypoints,args,place", [
    ([[1.0, 1.3, 0], [5.0, 2.7, 90]], [], "routes[0].waypoints[1]"),   # goal inside a wall
    ([[1.0, 0.2, 0], [6.6, 5.0, 90]], [], "routes[0].waypoints[0]"),   # start overlapping
    ([[1.0, 1.3, 0], [6.6, 5.0, 90]], ["--time-limit", "0"], "--time-limit"),
    ([[1.0, 1.3, 0], [6.6, 5.0, 90]], ["--time-limit", "-3"], "--time-limit"),
])
def test_bad_input_exits_2_with_one_line(tmp_path, capsys, waypoints, args, place):
    path = write(tmp_path, waypoints)
    code, out, err = run(["find", path, "--route", "in", *args], capsys)
    assert code == 2
    assert err.count("\n") == 1 and place in err
    assert "Traceback" not in err
