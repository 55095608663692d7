"""The `swathe` command's promise (shared/contract.md): outputs, exit codes, one-line errors."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from app.cli import main

CHASSIS = {"name": "test tug", "drive": "differential",
           "footprint": [[-0.3, -0.3], [0.6, -0.3], [0.6, 0.3], [-0.3, 0.3]],
           "margin_m": 0.05, "wheel_radius_m": 0.1, "track_m": 0.5,
           "max_speed_mps": 1.0, "max_accel_mps2": 0.5, "max_wheel_rate_radps": 15.0,
           "max_lateral_accel_mps2": 0.5}
# A 2.0 m wide corridor along y = 0..2 from x = 0 to 12 (invented test geometry).
FLOOR = {"swathe_floorplan": 1, "name": "test corridor",
         "walls": [{"points": [[0, 0], [12, 0]], "thickness_m": 0.1},
                   {"points": [[0, 2], [12, 2]], "thickness_m": 0.1}],
         "obstacles": [{"points": [[6, 1.3], [6.4, 1.3], [6.4, 1.95], [6, 1.95]],
                        "label": "parked cart"}],
         "doors": [{"a": [10, 0], "b": [10, 2], "label": "D-1"}]}


def write_project(tmp: Path, routes: list[dict], chassis: dict | None = None) -> Path:
    (tmp / "corridor.floor.json").write_text(json.dumps(FLOOR))
    proj = {"swathe_project": 1, "floorplan": "corridor.floor.json",
            "chassis": chassis or CHASSIS, "routes": routes}
    path = tmp / "t.swathe.json"
    path.write_text(json.dumps(proj))
    return path


CLEAR = {"name": "clear", "waypoints": [[1, 0.6, 0], [11, 0.6, 0]], "turn_radius_m": 0.0}
BLOCKED = {"name": "blocked", "waypoints": [[1, 1.2, 0], [11, 1.2, 0]], "turn_radius_m": 0.0}


def run(args, capsys):
    code = main([str(a) for a in args])
    out = capsys.readouterr()
    return code, out.out, out.err


def test_plan_json_keys(tmp_path, capsys):
    # Source: shared/contract.md, `plan --json`.
    p = write_project(tmp_path, [CLEAR])
    code, out, err = run(["plan", p, "--json"], capsys)
    assert code == 0, err
    d = json.loads(out)
    r = d["routes"][0]
    assert {"name", "drive", "length_m", "segments"} <= set(r)
    assert r["length_m"] == pytest.approx(10.0, abs=1e-9)
    seg = r["segments"][0]
    assert {"kind", "start", "end", "length_m", "radius_m", "turn_deg", "direction"} <= set(seg)
    assert sum(s["length_m"] for s in r["segments"]) == pytest.approx(r["length_m"])


def test_check_exit_codes_and_json(tmp_path, capsys):
    # Source: shared/contract.md, `check`: exit 0 all clear, 1 any violation.
    p = write_project(tmp_path, [CLEAR, BLOCKED])
    code, out, err = run(["check", p, "--route", "clear", "--json"], capsys)
    assert code == 0, err
    r = json.loads(out)["routes"][0]
    assert r["clear"] is True
    # The footprint's half width is 0.3 and the wall face is at y = 0.05: 0.6 - 0.3 - 0.05.
    assert r["min_clearance_m"] == pytest.approx(0.25, abs=0.002)
    assert r["min_clearance_m"] <= 0.25 + 1e-9
    code, out, err = run(["check", p, "--json"], capsys)
    assert code == 1
    routes = {r["name"]: r for r in json.loads(out)["routes"]}
    assert not routes["blocked"]["clear"]
    kinds = {v["kind"] for v in routes["blocked"]["violations"]}
    assert "collision" in kinds
    for v in routes["blocked"]["violations"]:
        assert {"kind", "segment", "station_m", "x", "y", "amount_m", "message"} <= set(v)
    assert [d["label"] for d in routes["clear"]["doors"]] == ["D-1"]
    code, out, _ = run(["check", p, "--route", "blocked"], capsys)
    assert code == 1 and "collision" in out.lower()


def test_schedule_csv_and_json(tmp_path, capsys):
    # Source: shared/contract.md, `schedule`.
    p = write_project(tmp_path, [CLEAR])
    out_csv = tmp_path / "s.csv"
    code, _, err = run(["schedule", p, "--route", "clear", "--format", "csv", "-o", out_csv],
                       capsys)
    assert code == 0, err
    header = out_csv.read_text().splitlines()[0].split(",")
    assert {"index", "kind", "t0_s", "duration_s", "left_rate_radps",
            "right_rate_radps"} <= set(header)
    code, out, err = run(["schedule", p, "--route", "clear", "--format", "json"], capsys)
    assert code == 0, err
    d = json.loads(out)
    assert d["route"] == "clear" and d["drive"] == "differential"
    assert set(d["segments"][0]["wheels"]) == {"left", "right"}
    assert d["samples"][0]["t_s"] == 0.0


def test_render_writes_png(tmp_path, capsys):
    p = write_project(tmp_path, [CLEAR, BLOCKED])
    png = tmp_path / "r.png"
    code, _, err = run(["render", p, "-o", png], capsys)
    assert code == 0, err
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    plots = tmp_path / "plots.png"
    code, _, err = run(["render", p, "-o", png, "--route", "clear", "--plots", plots,
                        "--plots-against", "distance"], capsys)
    assert code == 0, err
    assert plots.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


BAD_CASES = [
    ("broken JSON", '{"swathe_project": 1,\n "floorplan": ', "line 2"),
    ("wrong type", {"track_m": "wide"}, "chassis.track_m"),
    ("negative size", {"track_m": -0.5}, "chassis.track_m"),
    ("unknown drive", {"drive": "hovercraft"}, "chassis.drive"),
    ("bow-tie footprint", {"footprint": [[0, 0], [1, 1], [1, 0], [0, 1]]}, "chassis.footprint"),
]


@pytest.mark.parametrize("label,change,place", BAD_CASES, ids=[c[0] for c in BAD_CASES])
def test_bad_input_exits_2_naming_file_and_place(tmp_path, capsys, label, change, place):
    # Source: shared/contract.md, "Bad input ... exits 2 with one message on stderr that names
    # the file, the place in it ... No traceback."
    p = write_project(tmp_path, [CLEAR])
    if isinstance(change, str):
        p.write_text(change)
    else:
        d = json.loads(p.read_text())
        d["chassis"].update(change)
        p.write_text(json.dumps(d))
    before = p.read_bytes()
    for cmd in (["plan", p], ["check", p], ["schedule", p, "--route", "clear"],
                ["render", p, "-o", tmp_path / "x.png"]):
        code, out, err = run(cmd, capsys)
        assert code == 2, (label, cmd, err)
        assert str(p) in err and place in err, err
        assert "Traceback" not in err and len(err.strip().splitlines()) == 1
    assert p.read_bytes() == before  # the input is never touched


def test_other_bad_input(tmp_path, capsys):
    p = write_project(tmp_path, [CLEAR])
    code, _, err = run(["plan", tmp_path / "missing.swathe.json"], capsys)
    assert code == 2 and "missing.swathe.json" in err and "not found" in err
    code, _, err = run(["schedule", p, "--route", "nope"], capsys)
    assert code == 2 and "nope" in err
    d = json.loads(p.read_text())
    d["routes"][0]["waypoints"] = [[1, 1]]
    p.write_text(json.dumps(d))
    code, _, err = run(["plan", p], capsys)
    assert code == 2 and "routes[0].waypoints" in err
    d["routes"][0]["waypoints"] = [[1, 1], [2, 2]]
    d["floorplan"] = "gone.floor.json"
    p.write_text(json.dumps(d))
    code, _, err = run(["check", p], capsys)
    assert code == 2 and "gone.floor.json" in err
    p.write_text('{"swathe_project": 1, "floorplan": {}, "chassis": {"drive": "differential",'
                 ' "footprint": [[0,0],[1,0],[1,1]], "track_m": NaN}}')
    code, _, err = run(["plan", p], capsys)
    assert code == 2 and "NaN" in err
    p.write_text('{"swathe_project": 99}')
    code, _, err = run(["plan", p], capsys)
    assert code == 2 and "newer" in err


def test_console_script_runs_in_a_subprocess(tmp_path):
    p = write_project(tmp_path, [CLEAR])
    for module in ("app.cli", "app"):  # python -m app is the same command
        r = subprocess.run([sys.executable, "-m", module, "plan", str(p), "--json"],
                           capture_output=True, text=True,
                           cwd=Path(__file__).resolve().parents[1])
        assert r.returncode == 0, r.stderr
        assert json.loads(r.stdout)["routes"][0]["name"] == "clear"


def test_waypoint_inside_an_obstacle_is_reported(tmp_path, capsys):
    # Source: shared/contract.md, violation kind `waypoint_blocked`; the parked cart in FLOOR
    # covers x 6.0..6.4, y 1.3..1.95, so a waypoint at (6.2, 1.6) is inside it.
    route = {"name": "into-cart", "waypoints": [[1, 1.0, 0], [6.2, 1.6], [11, 1.0]],
             "turn_radius_m": 0.0}
    p = write_project(tmp_path, [route])
    code, out, err = run(["check", p, "--json"], capsys)
    assert code == 1, err
    kinds = [v for v in json.loads(out)["routes"][0]["violations"]
             if v["kind"] == "waypoint_blocked"]
    assert kinds and "waypoint" in kinds[0]["message"]
    assert kinds[0]["x"] == pytest.approx(6.2, abs=0.01)
