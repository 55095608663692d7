"""Zones (keep-out, margin, one-way) and circle obstacles in the model, the files and the check.

The check's verdicts are compared with an oracle that places the footprint densely along the
route and asks shapely directly (independent of the sweep and of the checker).
"""

from __future__ import annotations

import json
import math

import ezdxf
import numpy as np
import pytest
import shapely
from shapely.geometry import Point, Polygon

from app.cli import main
from kinematics.check.clearance import ObstacleIndex, check_route
from kinematics.check.sweep import placed_footprints
from kinematics.files.floorplan import (
    FloorPlan,
    Obstacle,
    Zone,
    ZoneLayer,
    floorplan_from_dict,
    floorplan_to_dict,
)
from kinematics.files.loader import load_floorplan
from kinematics.files.project import Chassis, load_project, save_project
from kinematics.motion.segments import arc, line

CHASSIS = Chassis(track_m=0.5)  # footprint x -0.3..0.6, y -0.3..0.3, margin 0.05
TOL = 0.002
SQUARE = ((0.0, 0.0), (2.0, 0.0), (2.0, 2.0), (0.0, 2.0))


def _dense(segs, step_m: float = 0.002) -> np.ndarray:
    out = []
    for s in segs:
        n = max(2, int(math.ceil(max(s.length_m, abs(s.turn_rad)) / step_m)) + 1)
        out.append(s.poses_at_fraction(np.linspace(0.0, 1.0, n)))
    return np.concatenate(out)


def _kinds(chk, kind: str) -> list:
    return [v for v in chk.violations if v.kind == kind]


# -- model and files ------------------------------------------------------------------------
def test_zones_and_circles_round_trip_through_the_file(tmp_path):
    # Source: shared/contract.md, "Version 1 additions": zones keys.
    d = {"swathe_floorplan": 1, "name": "zoned",
         "obstacles": [{"centre": [3.0, 4.0], "radius_m": 0.25, "label": "pillar"}],
         "zones": [{"kind": "slow", "points": [list(p) for p in SQUARE], "label": "ward",
                    "speed_mps": 0.3},
                   {"kind": "keep_out", "points": [[5, 5], [6, 5], [6, 6]], "label": ""},
                   {"kind": "margin", "points": [[0, 5], [1, 5], [1, 6]], "label": "people",
                    "margin_m": 0.3},
                   {"kind": "one_way", "points": [[8, 0], [9, 0], [9, 1]], "label": "aisle",
                    "direction_deg": 90}]}
    fp = floorplan_from_dict(d, "x.floor.json")
    assert [z.kind for z in fp.zones] == ["slow", "keep_out", "margin", "one_way"]
    assert fp.zones[0].speed_mps == 0.3 and fp.zones[3].direction_deg == 90.0
    assert fp.obstacles[0].is_circle and fp.obstacles[0].radius_m == 0.25
    again = floorplan_from_dict(json.loads(json.dumps(floorplan_to_dict(fp))), "x.floor.json")
    assert again == fp


@pytest.mark.parametrize("zone, key, words", [
    ({"kind": "fast", "points": [[0, 0], [1, 0], [1, 1]]}, "zones[0].kind", "unknown zone kind"),
    ({"kind": "keep_out", "points": [[0, 0], [1, 0], [2, 0]]}, "zones[0].points",
     "closed zone outline"),
    ({"kind": "keep_out", "points": [[0, 0], [1, 1], [1, 0], [0, 1]]}, "zones[0].points",
     "closed zone outline"),
    ({"kind": "slow", "points": [[0, 0], [1, 0], [1, 1]], "speed_mps": -0.5},
     "zones[0].speed_mps", "positive"),
    ({"kind": "margin", "points": [[0, 0], [1, 0], [1, 1]]}, "zones[0].margin_m", "missing"),
    ({"kind": "one_way", "points": [[0, 0], [1, 0], [1, 1]], "direction_deg": "north"},
     "zones[0].direction_deg", "number"),
    ({"kind": "keep_out", "points": [[0, 0], [1, 0]]}, "zones[0].points", "at least 3"),
    ({"kind": "slow", "points": [[0, 0], [1, 0], [1, 1]], "speed_mps": float("nan")},
     "zones[0].speed_mps", "finite"),
    ({"kind": "margin", "points": [[0, 0], [1, 0], [1, 1]], "margin_m": -0.1},
     "zones[0].margin_m", "zero or a positive"),
    ({"kind": "slow", "points": [[0, 0], [1, float("nan")], [1, 1]], "speed_mps": 0.3},
     "zones[0].points", "finite"),
])
def test_bad_zone_data_exits_2_naming_file_and_key(tmp_path, capsys, zone, key, words):
    # Source: shared/contract.md, bad input exits 2 with one line naming file and key path.
    fpath = tmp_path / "z.floor.json"
    fpath.write_text(json.dumps({"swathe_floorplan": 1, "zones": [zone]}))
    proj = {"swathe_project": 1, "floorplan": "z.floor.json",
            "chassis": {"drive": "differential", "footprint": [[-0.3, -0.3], [0.6, -0.3],
                                                                [0.6, 0.3], [-0.3, 0.3]],
                        "track_m": 0.5},
            "routes": [{"name": "r", "waypoints": [[0, 0], [3, 0]]}]}
    p = tmp_path / "z.swathe.json"
    p.write_text(json.dumps(proj))
    code = main(["check", str(p)])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert len(err.splitlines()) == 1
    assert "z.floor.json" in err and key in err and words in err


def test_stops_round_trip_and_bad_stop_is_named(tmp_path):
    # Source: shared/contract.md, "Version 1 additions": route stops.
    d = {"swathe_project": 1, "floorplan": {"name": "empty"},
         "chassis": {"drive": "differential", "footprint": [[-0.3, -0.3], [0.6, -0.3],
                                                             [0.6, 0.3], [-0.3, 0.3]],
                     "track_m": 0.5},
         "routes": [{"name": "r", "waypoints": [[0, 0], [3, 0], [3, 3]],
                     "stops": [{"waypoint": 1, "dwell_s": 12.5}]}]}
    p = tmp_path / "s.swathe.json"
    p.write_text(json.dumps(d))
    proj = load_project(p)
    assert proj.routes[0].stops[0].waypoint == 1 and proj.routes[0].stops[0].dwell_s == 12.5
    save_project(proj, tmp_path / "t.swathe.json")
    assert load_project(tmp_path / "t.swathe.json").routes[0].stops == proj.routes[0].stops
    d["routes"][0]["stops"] = [{"waypoint": 3, "dwell_s": 1}]
    p.write_text(json.dumps(d))
    with pytest.raises(Exception, match=r"routes\[0\]\.stops\[0\]\.waypoint"):
        load_project(p)


def test_dxf_layers_map_to_zone_kinds(tmp_path):
    # Source: ezdxf documentation (LWPOLYLINE, layers); the mapping is this project's rule.
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 6
    for name in ("WALLS", "PEOPLE", "SPILL"):
        doc.layers.add(name)
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (10, 0)], dxfattribs={"layer": "WALLS"})
    msp.add_lwpolyline([(1, 1), (3, 1), (3, 2), (1, 2)], close=True,
                       dxfattribs={"layer": "PEOPLE"})
    msp.add_lwpolyline([(5, 1), (6, 1), (6, 2)], close=True, dxfattribs={"layer": "SPILL"})
    path = tmp_path / "z.dxf"
    doc.saveas(path)
    fp = load_floorplan(path, zones=(ZoneLayer("people", "margin", margin_m=0.4),
                                     ZoneLayer("SPILL", "keep_out", label="spill")))
    assert len(fp.walls) == 1 and not fp.obstacles
    kinds = sorted((z.kind, z.label, len(z.points)) for z in fp.zones)
    assert kinds == [("keep_out", "spill", 3), ("margin", "people", 4)]
    # The same mapping from a project's import object, and a bad one named by key.
    proj = {"swathe_project": 1, "chassis": {"drive": "differential", "track_m": 0.5,
                                             "footprint": [[0, 0], [1, 0], [1, 1]]},
            "floorplan": {"file": "z.dxf", "zones": [{"layer": "PEOPLE", "kind": "slow",
                                                      "speed_mps": 0.5}]}}
    (tmp_path / "p.swathe.json").write_text(json.dumps(proj))
    assert load_project(tmp_path / "p.swathe.json").floorplan.zones[0].speed_mps == 0.5
    proj["floorplan"]["zones"][0]["speed_mps"] = -1
    (tmp_path / "p.swathe.json").write_text(json.dumps(proj))
    with pytest.raises(Exception, match=r"floorplan\.zones\[0\]\.speed_mps"):
        load_project(tmp_path / "p.swathe.json")


def test_svg_groups_map_to_zone_kinds(tmp_path):
    # Source: SVG 1.1 (rect, g, id); the mapping is this project's rule.
    svg = ('<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 1000 500">'
           '<line x1="0" y1="500" x2="1000" y2="500" stroke-width="10"/>'
           '<g id="oneway"><rect x="100" y="100" width="200" height="100"/></g>'
           '<rect x="600" y="100" width="50" height="50"/></svg>')
    path = tmp_path / "z.svg"
    path.write_text(svg)
    fp = load_floorplan(path, zones=(ZoneLayer("oneway", "one_way", direction_deg=0.0),))
    assert len(fp.zones) == 1 and fp.zones[0].kind == "one_way"
    assert len(fp.obstacles) == 1
    assert Polygon(fp.zones[0].points).area == pytest.approx(2.0)  # 200 x 100 cm


# -- keep-out -------------------------------------------------------------------------------
KEEP_OUT_CASES = [
    # (segment, zone polygon): invented test geometry
    (line((0.0, 0.0, 0.0), 6.0), ((3.0, 0.25), (4.0, 0.25), (4.0, 1.0), (3.0, 1.0))),
    (line((0.0, 0.0, 0.0), 6.0), ((3.0, 0.31), (4.0, 0.31), (4.0, 1.0), (3.0, 1.0))),
    (line((0.0, 0.0, 0.0), 6.0), ((3.0, 0.299), (4.0, 0.299), (4.0, 1.0), (3.0, 1.0))),
    (arc((0.0, 0.0, 0.0), 2.0, math.pi / 2), ((1.0, 0.6), (1.6, 0.6), (1.6, 1.2), (1.0, 1.2))),
    (arc((0.0, 0.0, 0.0), 2.0, math.pi / 2), ((2.6, 0.0), (3.0, 0.0), (3.0, 1.0), (2.6, 1.0))),
    (arc((0.0, 0.0, 0.0), 1.5, -math.pi, -1), ((-2.0, -1.0), (-1.0, -1.0), (-1.0, -0.5))),
]


@pytest.mark.parametrize("seg, zone", KEEP_OUT_CASES)
def test_keep_out_matches_a_dense_pose_oracle(seg, zone):
    # Source: shapely intersects/intersection on the footprint placed every 2 mm (oracle).
    fp = FloorPlan(zones=(Zone("keep_out", zone, "no entry"),))
    chk = check_route([seg], CHASSIS, ObstacleIndex(fp))
    got = _kinds(chk, "keep_out")
    placed = placed_footprints(CHASSIS.footprint, _dense([seg]))
    z = Polygon(zone)
    enters = shapely.area(shapely.intersection(placed, z)) > 0.0
    if enters.any():
        assert len(got) == 1, "a footprint entering the zone must be reported"
        # The reported depth is at least the deepest sampled placement's depth, less the
        # sweep tolerance; the start is no later than the first sampled entry.
        assert "no entry" in got[0].message
    # Never a violation the footprint does not come within the tolerance of.
    near = shapely.intersects(shapely.buffer(placed, TOL + 0.002), z)
    if got:
        assert near.any()
        first = int(np.argmax(enters)) if enters.any() else None
        if first is not None:
            s = first / (len(placed) - 1) * seg.length_m
            assert got[0].station_m <= s + TOL
    assert chk.clear == (not got)


def test_keep_out_is_not_a_solid():
    # Common practice: a keep-out area is marked on the floor, not built; clearance and
    # collisions are measured to walls and obstacles only.
    zone = ((2.0, -1.0), (3.0, -1.0), (3.0, 1.0), (2.0, 1.0))
    chk = check_route([line((0, 0, 0), 5.0)], CHASSIS,
                      ObstacleIndex(FloorPlan(zones=(Zone("keep_out", zone),))))
    assert [v.kind for v in chk.violations] == ["keep_out"]
    assert chk.min_clearance_m is None


# -- margin zones ---------------------------------------------------------------------------
SHELF = Obstacle(((0.0, 0.9), (10.0, 0.9), (10.0, 1.5), (0.0, 1.5)), "shelf")


@pytest.mark.parametrize("zone, margin_m, offset", [
    (((4.0, -1.0), (6.0, -1.0), (6.0, 3.0), (4.0, 3.0)), 0.7, 0.0),   # wider inside
    (((4.0, -1.0), (6.0, -1.0), (6.0, 3.0), (4.0, 3.0)), 0.5, 0.0),   # just enough
    (((4.0, -1.0), (6.0, -1.0), (6.0, 3.0), (4.0, 3.0)), 0.7, -0.2),  # clear of it
    (((0.0, -1.0), (10.0, -1.0), (10.0, 3.0), (0.0, 3.0)), 0.01, 0.45),  # tighter inside
    (((4.0, 0.2), (6.0, 0.2), (6.0, 0.5), (4.0, 0.5)), 0.9, 0.0),     # only a side inside
])
def test_margin_zone_matches_a_dense_pose_oracle(zone, margin_m, offset):
    # Source: shapely difference/intersection/distance on placements every 2 mm (oracle):
    # the part of the footprint inside the zone keeps the zone's margin, the rest the
    # chassis margin.
    fp = FloorPlan(obstacles=(SHELF,), zones=(Zone("margin", zone, "people", margin_m=margin_m),))
    seg = line((0.5, offset, 0.0), 9.0)
    chk = check_route([seg], CHASSIS, ObstacleIndex(fp))
    got = [v for v in _kinds(chk, "clearance") + _kinds(chk, "collision")]
    placed = placed_footprints(CHASSIS.footprint, _dense([seg]))
    z, solid = Polygon(zone), SHELF
    s_poly = Polygon(solid.points)
    inside = shapely.intersection(placed, z)
    outside = shapely.difference(placed, z)
    d_in = np.where(shapely.is_empty(inside), np.inf, shapely.distance(inside, s_poly))
    d_out = np.where(shapely.is_empty(outside), np.inf, shapely.distance(outside, s_poly))
    short = np.maximum(margin_m - d_in, CHASSIS.margin_m - d_out)
    if (short > 0.0).any():
        assert got, "a placement breaking the margin rule must be reported"
        assert got[0].amount_m >= float(short.max()) - 1e-9
        assert got[0].amount_m <= float(short.max()) + TOL + 0.002
    if got:
        assert (short > -(TOL + 0.002)).any()


def test_margin_zone_message_names_the_zone():
    fp = FloorPlan(obstacles=(SHELF,), zones=(
        Zone("margin", ((4.0, -1.0), (6.0, -1.0), (6.0, 3.0), (4.0, 3.0)), "people",
             margin_m=0.7),))
    chk = check_route([line((0.5, 0.0, 0.0), 9.0)], CHASSIS, ObstacleIndex(fp))
    (v,) = chk.violations
    # 0.9 - 0.3 = 0.6 m clearance: 0.1 m short of 0.7 m; the front enters x = 4 at 3.4 m.
    assert v.kind == "clearance" and v.amount_m == pytest.approx(0.1, abs=TOL)
    assert "700 mm margin of zone 0 (people)" in v.message
    assert v.station_m == pytest.approx(3.4 - 0.5, abs=0.01)


# -- one-way --------------------------------------------------------------------------------
AISLE = ((2.0, -1.0), (4.0, -1.0), (4.0, 1.0), (2.0, 1.0))


@pytest.mark.parametrize("seg, direction_deg", [
    (line((0.0, 0.0, 0.0), 6.0), 180.0),
    (line((0.0, 0.0, 0.0), 6.0), 0.0),
    (line((0.0, 0.0, 0.0), 6.0), 91.0),
    (line((0.0, 0.0, 0.0), 6.0), 90.0),
    (line((6.0, 0.0, 0.0), 6.0, -1), 0.0),  # reversing towards -x
    (arc((1.0, -1.5, math.pi / 2), 2.0, math.pi / 2), 0.0),
    (arc((1.0, -1.5, math.pi / 2), 2.0, -math.pi / 2), 0.0),
])
def test_one_way_matches_a_dense_oracle(seg, direction_deg):
    # Source: direction of travel against the zone's (dot product < 0) at reference points
    # every 1 mm, point-in-polygon by shapely (oracle).
    fp = FloorPlan(zones=(Zone("one_way", AISLE, "aisle", direction_deg=direction_deg),))
    chk = check_route([seg], CHASSIS, ObstacleIndex(fp))
    got = _kinds(chk, "wrong_way")
    n = int(seg.length_m / 0.001) + 1
    f = np.linspace(0.0, 1.0, n)
    poses = seg.poses_at_fraction(f)
    course = poses[:, 2] + (0.0 if seg.direction > 0 else math.pi)
    zd = math.radians(direction_deg)
    against = np.cos(course - zd) < -1e-9
    inside = shapely.contains_xy(Polygon(AISLE), poses[:, 0], poses[:, 1])
    bad = against & inside
    if bad.any():
        assert len(got) == 1
        length = bad.sum() * seg.length_m / (n - 1)
        assert got[0].amount_m == pytest.approx(length, abs=0.03)
        assert got[0].station_m == pytest.approx(np.argmax(bad) * seg.length_m / (n - 1),
                                                 abs=0.011)
    else:
        assert not got


# -- circle obstacles -----------------------------------------------------------------------
@pytest.mark.parametrize("offset", [0.9, 0.75, 0.62, 0.5])
def test_circle_clearance_never_exceeds_the_true_circle(offset):
    # Source: analytic distance from a disc to a rectangle: distance from the centre to the
    # swept rectangle (shapely, exact for a straight sweep of a box) minus the radius.
    r, cx, cy = 0.3, 3.0, offset
    fp = FloorPlan(obstacles=(Obstacle.circle((cx, cy), r, "pillar"),))
    chk = check_route([line((0.0, 0.0, 0.0), 6.0)], CHASSIS, ObstacleIndex(fp))
    swept = Polygon([(-0.3, -0.3), (6.6, -0.3), (6.6, 0.3), (-0.3, 0.3)])
    true = Point(cx, cy).distance(swept) - r
    assert chk.min_clearance_m <= true + 1e-12
    assert chk.min_clearance_m >= true - TOL - 0.001  # sweep tolerance + polygon outside


# -- slow zones and stops in the timing ---------------------------------------------------------
def _route(points, radius=0.0, stops=()):
    from kinematics.files.project import Route, Stop, Waypoint

    return Route("r", tuple(Waypoint(*p) for p in points), radius,
                 stops=tuple(Stop(w, d) for w, d in stops))


@pytest.mark.parametrize("points, radius", [
    (((0.0, 0.0), (10.0, 0.0)), 0.0),
    (((0.0, 0.0), (5.0, 0.0), (5.0, 6.0)), 1.0),   # the zone holds the corner's arc
    (((0.0, 0.0), (5.0, 0.0), (5.0, 6.0)), 0.0),   # ... a pivot there
])
def test_slow_zone_caps_every_sample_whose_footprint_overlaps_it(points, radius):
    # Source: shapely intersects on the footprint placed at each schedule sample (independent
    # of the profile), and t >= d / v for the time through the zone (kinematics).
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule

    ch = Chassis(track_m=0.5, max_wheel_rate_radps=15.0)
    cap = 0.3
    zone = Zone("slow", ((3.5, -1.0), (6.0, -1.0), (6.0, 2.0), (3.5, 2.0)), "ward",
                speed_mps=cap)
    route = _route(points, radius)
    plan = plan_route(route, ch)
    fast = build_schedule("r", list(plan.segments), ch, dt_s=0.02)
    s = build_schedule("r", list(plan.segments), ch, dt_s=0.02, zones=(zone,), route=route)
    sm = s.samples
    poses = np.column_stack([sm.x, sm.y, sm.heading_rad])
    inside = shapely.intersects(placed_footprints(ch.footprint, poses), Polygon(zone.points))
    assert inside.any() and fast.samples.v_mps.max() > cap + 0.1
    assert np.all(sm.v_mps[inside] <= cap + 1e-9)
    # The reference point covers at least the zone's length along the path while capped:
    # from where the footprint first overlaps to where it last does.
    first, last = np.flatnonzero(inside)[[0, -1]]
    d = sm.station_m[last] - sm.station_m[first]
    assert sm.t_s[last] - sm.t_s[first] >= d / cap - 1e-9
    assert s.profile.total_time_s > fast.profile.total_time_s


def test_stop_rests_and_waits_its_dwell():
    # Source: kinematics (rest means v = 0); the dwell adds exactly its time.
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule, schedule_to_dict

    ch = Chassis(track_m=0.5)
    pts = ((0.0, 0.0), (4.0, 0.0), (8.0, 0.0), (8.0, 4.0))
    plain = _route(pts)
    plan = plan_route(plain, ch)
    base = build_schedule("r", list(plan.segments), ch)
    zero = build_schedule("r", list(plan.segments), ch, route=_route(pts, stops=((1, 0.0),)))
    wait = build_schedule("r", list(plan.segments), ch, route=_route(pts, stops=((1, 7.5),)))
    # Resting on the straight at waypoint 2 costs time even without a dwell ...
    assert zero.profile.total_time_s > base.profile.total_time_s
    # ... and the dwell adds exactly its length.
    assert wait.profile.total_time_s == pytest.approx(zero.profile.total_time_s + 7.5, abs=1e-9)
    d = schedule_to_dict(wait)
    (stop,) = d["stops"]
    assert stop["waypoint"] == 1 and stop["station_m"] == pytest.approx(4.0)
    t0 = stop["t_s"]
    during = [x for x in d["samples"] if t0 - 1e-9 <= x["t_s"] <= t0 + 7.5 + 1e-9]
    assert len(during) >= 10
    assert all(x["v_mps"] == 0.0 and x["x"] == pytest.approx(4.0) for x in during)
    assert all(abs(w["rate_radps"]) < 1e-12 for x in during for w in x["wheels"].values())
    t = np.array([x["t_s"] for x in d["samples"]])
    assert np.all(np.diff(t) > 0)


def test_stop_where_a_turn_cuts_the_corner_is_the_nearest_path_point():
    # Source: circle geometry: a fillet of radius R in a 90 degree corner passes
    # R (sqrt 2 - 1) from the corner.
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule

    ch = Chassis(track_m=0.5)
    route = _route(((0.0, 0.0), (5.0, 0.0), (5.0, 5.0)), 1.0, stops=((1, 3.0),))
    plan = plan_route(route, ch)
    s = build_schedule("r", list(plan.segments), ch, route=route)
    (stop,) = s.stops
    assert math.hypot(stop.x - 5.0, stop.y - 0.0) == pytest.approx(math.sqrt(2) - 1, abs=0.01)


def test_cli_plan_check_and_schedule_show_stops_and_zones(tmp_path, capsys):
    # Source: shared/contract.md, "Version 1 additions" (stops, zones, wrong_way); this
    # project's text and JSON outputs.
    floor = {"swathe_floorplan": 1, "name": "zoned hall",
             "zones": [{"kind": "slow", "points": [[3, -1], [5, -1], [5, 1], [3, 1]],
                        "label": "ward", "speed_mps": 0.3},
                       {"kind": "one_way", "points": [[7, -1], [8, -1], [8, 1], [7, 1]],
                        "label": "aisle", "direction_deg": 180}]}
    proj = {"swathe_project": 1, "floorplan": floor,
            "chassis": {"drive": "differential", "track_m": 0.5, "wheel_radius_m": 0.1,
                        "footprint": [[-0.3, -0.3], [0.6, -0.3], [0.6, 0.3], [-0.3, 0.3]]},
            "routes": [{"name": "r", "waypoints": [[0, 0], [6, 0], [10, 0]],
                        "stops": [{"waypoint": 1, "dwell_s": 20}]}]}
    p = tmp_path / "z.swathe.json"
    p.write_text(json.dumps(proj))
    assert main(["plan", str(p)]) == 0
    assert "stop at waypoint 2: station 6.00 m (6.00, 0.00), waits 20 s" in \
        capsys.readouterr().out
    assert main(["plan", str(p), "--json"]) == 0
    assert json.loads(capsys.readouterr().out)["routes"][0]["stops"][0]["dwell_s"] == 20
    assert main(["check", str(p)]) == 1
    out = capsys.readouterr().out
    assert "wrong_way" in out and "stop at waypoint 2" in out
    assert main(["check", str(p), "--json"]) == 1
    r = json.loads(capsys.readouterr().out)["routes"][0]
    assert [v["kind"] for v in r["violations"]] == ["wrong_way"]
    assert r["stops"][0]["station_m"] == pytest.approx(6.0)
    # The contract lets a failing route's schedule exit 1 (still written); 0 before that.
    assert main(["schedule", str(p), "--route", "r"]) in (0, 1)
    d = json.loads(capsys.readouterr().out)
    assert d["stops"][0]["dwell_s"] == 20
    assert any(row.get("slow_zone") == "zone 0 (ward)" for row in d["segments"])


# -- curved zone outlines flattened outward -------------------------------------------------
def _holds_disc(points, cx: float, cy: float, r: float, grow_m: float) -> None:
    """The zone polygon holds the true disc and exceeds it by at most ``grow_m``.

    Source: textbook geometry: a polygon containing the centre holds the disc of radius r
    when every point of its boundary is at least r from the centre; its farthest vertex
    bounds how far it reaches beyond the circle.
    """
    poly = Polygon(points)
    assert poly.is_valid and poly.contains(Point(cx, cy))
    assert poly.exterior.distance(Point(cx, cy)) >= r - 1e-9
    far = max(math.hypot(x - cx, y - cy) for x, y in points)
    assert far <= r + grow_m + 1e-9
    # An independent look: 3,600 points on the true circle all inside (or on) the polygon.
    t = np.linspace(0.0, 2.0 * math.pi, 3600, endpoint=False)
    rim = shapely.points(cx + r * np.cos(t), cy + r * np.sin(t))
    assert shapely.covers(poly.buffer(1e-9), rim).all()


@pytest.mark.parametrize("kind,extra", [("keep_out", {}), ("slow", {"speed_mps": 0.3}),
                                        ("margin", {"margin_m": 0.4}),
                                        ("one_way", {"direction_deg": 90.0})])
def test_dxf_curved_zones_are_flattened_outward(tmp_path, kind, extra):
    # Source: DXF reference (CIRCLE; LWPOLYLINE bulge = tan(theta / 4), so two vertices with
    # bulge 1 make a full circle); the outward rule is kinematics/files/curves.py's.
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 6
    doc.layers.add("Z")
    msp = doc.modelspace()
    msp.add_circle((2.0, 3.0), 0.75, dxfattribs={"layer": "Z"})
    msp.add_lwpolyline([(5.0, 3.0, 1.0), (7.0, 3.0, 1.0)], format="xyb", close=True,
                       dxfattribs={"layer": "Z"})
    path = tmp_path / "curved.dxf"
    doc.saveas(path)
    fp = load_floorplan(path, zones=(ZoneLayer("Z", kind, **extra),))
    assert len(fp.zones) == 2 and {z.kind for z in fp.zones} == {kind}
    by_x = sorted(fp.zones, key=lambda z: min(p[0] for p in z.points))
    # circumscribed circle: at most one chord tolerance (1 mm) outside; bulges: grown by 1 mm
    # after chords within 1 mm, so at most 2 mm outside (mitred corners a little more).
    _holds_disc(by_x[0].points, 2.0, 3.0, 0.75, 0.001)
    _holds_disc(by_x[1].points, 6.0, 3.0, 1.0, 0.003)


@pytest.mark.parametrize("kind,extra", [("keep_out", {}), ("slow", {"speed_mps": 0.3}),
                                        ("margin", {"margin_m": 0.4}),
                                        ("one_way", {"direction_deg": 0.0})])
def test_svg_curved_zones_are_flattened_outward(tmp_path, kind, extra):
    # Source: SVG 1.1 (circle; path elliptical arc A rx ry rot large sweep x y: two half
    # arcs of radius 100 make a full circle); y is flipped into the plan (viewBox height).
    svg = ('<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 1000 1000">'
           '<g id="zone"><circle cx="200" cy="300" r="75"/>'
           '<path d="M 500 300 A 100 100 0 0 1 700 300 A 100 100 0 0 1 500 300 Z"/></g>'
           '</svg>')
    path = tmp_path / "curved.svg"
    path.write_text(svg)
    fp = load_floorplan(path, zones=(ZoneLayer("zone", kind, **extra),))
    assert len(fp.zones) == 2
    by_x = sorted(fp.zones, key=lambda z: min(p[0] for p in z.points))
    # 1 user unit = 1 cm by default (viewBox 1000 wide, no width): check the scale read.
    mpu = fp.extra["svg_import"]["metres_per_unit"]
    h = 1000 * mpu
    _holds_disc(by_x[0].points, 200 * mpu, h - 300 * mpu, 75 * mpu, 0.003)
    _holds_disc(by_x[1].points, 600 * mpu, h - 300 * mpu, 100 * mpu, 0.003)
