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


# One invented chassis for each drive (demo values), sized to pass the 1.2 m door.
FP = [[-0.3, -0.3], [0.6, -0.3], [0.6, 0.3], [-0.3, 0.3]]
DRIVES = {
    "ackermann": CART,
    "bicycle": {"name": "trike", "drive": "bicycle", "wheelbase_m": 0.7, "max_steer_deg": 40.0,
                "wheel_radius_m": 0.1, "margin_m": 0.05,
                "footprint": [[-0.2, -0.3], [0.9, -0.3], [0.9, 0.3], [-0.2, 0.3]]},
    "differential": {"name": "tote", "drive": "differential", "track_m": 0.5,
                     "wheel_radius_m": 0.1, "margin_m": 0.05, "footprint": FP},
    "mecanum": {"name": "slider", "drive": "mecanum", "wheelbase_m": 0.5, "track_m": 0.5,
                "wheel_radius_m": 0.1, "margin_m": 0.05, "footprint": FP},
    "swerve": {"name": "swerver", "drive": "swerve", "wheelbase_m": 0.5, "track_m": 0.5,
               "wheel_radius_m": 0.1, "margin_m": 0.05, "footprint": FP},
}


def write(tmp: Path, waypoints, reverse=False, chassis=None) -> Path:
    (tmp / "door.floor.json").write_text(json.dumps(FLOOR))
    proj = {"swathe_project": 1, "floorplan": "door.floor.json",
            "chassis": CART if chassis is None else chassis,
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
    ([[1.0, 1.3, 0], [6.6, 5.0, 90]], ["--time-limit", "nan"], "--time-limit"),
])
def test_bad_input_exits_2_with_one_line(tmp_path, capsys, waypoints, args, place):
    path = write(tmp_path, waypoints)
    code, out, err = run(["find", path, "--route", "in", *args], capsys)
    assert code == 2
    assert err.count("\n") == 1 and place in err
    assert "Traceback" not in err


@pytest.mark.parametrize("drive", sorted(DRIVES))
@pytest.mark.parametrize("repair", [False, True])
def test_find_and_repair_for_every_drive(tmp_path, capsys, drive, repair):
    # Corridor to room through the door; the sketch (a straight line into the wall beside the
    # door and up) fails, so repair has to search too.
    path = write(tmp_path, [[1.0, 1.3, 0], [4.5, 1.3, 0], [6.6, 5.0, 90]],
                 chassis=DRIVES[drive])
    args = ["find", path, "--route", "in", "--json", "--time-limit", "20"]
    code, out, err = run(args + (["--repair"] if repair else []), capsys)
    assert code == 0, err
    r = json.loads(out)["routes"][0]
    assert r["clear"] is True
    end = r["segments"][-1]["end"]
    # The goal pose reached to 1 mm and 0.1 deg (the tolerance).
    assert abs(end["x"] - 6.6) <= 1e-3 and abs(end["y"] - 5.0) <= 1e-3
    assert abs((end["heading_deg"] - 90.0 + 180.0) % 360.0 - 180.0) <= 0.1
    # Source: the project's own check run afresh on the found route (exit 0 = clear).
    o = tmp_path / "found.swathe.json"
    assert run(args + (["--repair"] if repair else []) + ["-o", o], capsys)[0] == 0
    assert run(["check", o], capsys)[0] == 0
