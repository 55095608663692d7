"""Trailers and fleets in the project file: reading, refusing bad data by key, round trip."""

from __future__ import annotations

import copy
import json
import subprocess
import sys
from pathlib import Path

import pytest

from kinematics.errors import SwatheInputError
from kinematics.files.project import load_project, project_from_dict, project_to_dict

CART = [[-0.5, -0.3], [0.5, -0.3], [0.5, 0.3], [-0.5, 0.3]]
TUG = {"name": "tug", "drive": "differential", "track_m": 0.5,
       "footprint": [[-0.3, -0.3], [0.5, -0.3], [0.5, 0.3], [-0.3, 0.3]],
       "trailers": [{"name": "linen cart", "hitch_x_m": -0.4, "drawbar_m": 0.9,
                     "footprint": CART},
                    {"name": "meal cart", "hitch_x_m": -0.6, "drawbar_m": 0.8,
                     "footprint": CART, "margin_m": 0.08, "max_hitch_deg": 70}]}
SMALL = {"name": "small cart", "drive": "differential", "track_m": 0.4,
         "footprint": [[-0.2, -0.2], [0.3, -0.2], [0.3, 0.2], [-0.2, 0.2]]}


def _doc(**over) -> dict:
    d = {"swathe_project": 1, "floorplan": {"swathe_floorplan": 1, "walls": []},
         "chassis": copy.deepcopy(TUG),
         "routes": [{"name": "a", "waypoints": [[0, 0], [5, 0]]}]}
    d.update(over)
    return d


def _place(d: dict) -> str:
    with pytest.raises(SwatheInputError) as ei:
        project_from_dict(d, "p.swathe.json")
    assert ei.value.file == "p.swathe.json"
    return ei.value.place


def test_trailers_read_with_defaults_and_round_trip() -> None:
    p = project_from_dict(_doc(), "p.swathe.json")
    t1, t2 = p.chassis.trailers
    assert (t1.name, t1.hitch_x_m, t1.drawbar_m, t1.margin_m, t1.max_hitch_deg) == \
        ("linen cart", -0.4, 0.9, None, 90.0)
    assert p.chassis.trailer_margin(0) == p.chassis.margin_m
    assert p.chassis.trailer_margin(1) == 0.08 and t2.max_hitch_deg == 70.0
    again = project_from_dict(json.loads(json.dumps(project_to_dict(p))), "p.swathe.json")
    assert again.chassis == p.chassis


@pytest.mark.parametrize("key, value, place", [
    ("drawbar_m", -0.9, "chassis.trailers[0].drawbar_m"),
    ("drawbar_m", 0.0, "chassis.trailers[0].drawbar_m"),
    ("hitch_x_m", "behind", "chassis.trailers[0].hitch_x_m"),
    # A footprint that does not hold its own axle midpoint (the origin).
    ("footprint", [[0.2, -0.3], [1.0, -0.3], [1.0, 0.3], [0.2, 0.3]],
     "chassis.trailers[0].footprint"),
    ("footprint", [[0, 0], [1, 1], [1, 0], [0, 1]], "chassis.trailers[0].footprint"),
    ("max_hitch_deg", 200, "chassis.trailers[0].max_hitch_deg"),
    ("margin_m", -0.01, "chassis.trailers[0].margin_m"),
    ("drawbar_m", float("nan"), "chassis.trailers[0].drawbar_m"),
    ("hitch_x_m", float("nan"), "chassis.trailers[0].hitch_x_m"),
])
def test_bad_trailer_names_key(key, value, place) -> None:
    d = _doc()
    d["chassis"]["trailers"][0][key] = value
    assert _place(d) == place


def test_missing_drawbar_and_duplicate_name() -> None:
    d = _doc()
    del d["chassis"]["trailers"][1]["drawbar_m"]
    assert _place(d) == "chassis.trailers[1].drawbar_m"
    d = _doc()
    d["chassis"]["trailers"][1]["name"] = "linen cart"
    assert _place(d) == "chassis.trailers[1].name"


def test_fleet_routes_name_their_vehicle_and_round_trip() -> None:
    d = _doc(fleet=[SMALL], routes=[{"name": "a", "waypoints": [[0, 0], [5, 0]]},
                                    {"name": "b", "waypoints": [[0, 1], [5, 1]],
                                     "chassis": "small cart"}])
    p = project_from_dict(d, "p.swathe.json")
    assert [c.name for c in p.fleet] == ["tug", "small cart"]
    assert p.chassis_for("a").name == "tug" and p.chassis_for("b").name == "small cart"
    out = project_to_dict(p)
    assert out["chassis"]["name"] == "tug" and [c["name"] for c in out["fleet"]] == \
        ["small cart"] and out["routes"][1]["chassis"] == "small cart"
    # A file with only a fleet keeps only a fleet; its first member is the default vehicle.
    d2 = _doc(fleet=[copy.deepcopy(TUG), SMALL])
    del d2["chassis"]
    p2 = project_from_dict(d2, "p.swathe.json")
    assert p2.fleet_only and p2.chassis.name == "tug"
    out2 = project_to_dict(p2)
    assert "chassis" not in out2 and len(out2["fleet"]) == 2


def test_bad_fleet_references() -> None:
    d = _doc(fleet=[SMALL], routes=[{"name": "a", "waypoints": [[0, 0], [5, 0]],
                                     "chassis": "forklift"}])
    assert _place(d) == "routes[0].chassis"
    d = _doc(fleet=[dict(SMALL, name="tug")])
    assert _place(d) == "fleet[0].name"
    d = _doc(fleet=[dict(SMALL, track_m=-1)])
    assert _place(d) == "fleet[0].track_m"
    d = _doc(fleet=[])
    del d["chassis"]
    assert _place(d) == "fleet"


def test_cli_exits_2_naming_file_and_key(tmp_path: Path) -> None:
    d = _doc()
    d["chassis"]["trailers"][1]["drawbar_m"] = -0.5
    f = tmp_path / "bad.swathe.json"
    f.write_text(json.dumps(d))
    r = subprocess.run([sys.executable, "-m", "app.cli", "check", str(f)], capture_output=True,
                       text=True, cwd=Path(__file__).resolve().parent.parent)
    assert r.returncode == 2
    assert "bad.swathe.json" in r.stderr and "chassis.trailers[1].drawbar_m" in r.stderr
    assert "Traceback" not in r.stderr and len(r.stderr.strip().splitlines()) == 1
    loaded = d.copy()
    loaded["chassis"]["trailers"][1]["drawbar_m"] = 0.5
    f.write_text(json.dumps(loaded))
    assert load_project(f).chassis.trailers[1].drawbar_m == 0.5


@pytest.mark.parametrize("key, value, place", [
    ("drawbar_m", -0.5, "chassis.trailers[1].drawbar_m"),
    ("footprint", [[0.2, -0.3], [1.0, -0.3], [1.0, 0.3], [0.2, 0.3]],
     "chassis.trailers[1].footprint"),
    # The JSON reader refuses the bare NaN token at its line and column, before keys.
    ("hitch_x_m", float("nan"), "NaN is not allowed"),
])
def test_cli_bad_trailer_data_exits_2(tmp_path: Path, key: str, value, place: str) -> None:
    # Source: /work/shared/contract.md exit codes (2: bad input, one line naming file and
    # key path or place). json.dumps writes NaN as a bare token.
    d = _doc()
    d["chassis"]["trailers"][1][key] = value
    f = tmp_path / "carts.swathe.json"
    f.write_text(json.dumps(d))
    r = subprocess.run([sys.executable, "-m", "app.cli", "check", str(f)], capture_output=True,
                       text=True, cwd=Path(__file__).resolve().parent.parent)
    assert r.returncode == 2, r.stderr
    assert "carts.swathe.json" in r.stderr and place in r.stderr
    assert "Traceback" not in r.stderr and len(r.stderr.strip().splitlines()) == 1
