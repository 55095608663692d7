"""Door entries: the station where the reference point crosses the door line, and the station
of the least clearance at the door, against plane geometry worked by hand."""

from __future__ import annotations

import math

import pytest

from kinematics.check.clearance import ObstacleIndex, check_route
from kinematics.check.door_crossing import crossing_fraction, door_station
from kinematics.files.floorplan import Door, FloorPlan, Obstacle
from kinematics.files.project import Chassis
from kinematics.motion.segments import arc, line, segment_stations

FOOT = ((-0.3, -0.3), (0.3, -0.3), (0.3, 0.3), (-0.3, 0.3))


def _wall_with_door(x: float, y0: float, y1: float) -> FloorPlan:
    """A 0.1 m wall across x = ``x`` with an opening from y0 to y1 and a door there."""
    a = Obstacle(((x - 0.05, y0 - 5.0), (x + 0.05, y0 - 5.0), (x + 0.05, y0),
                  (x - 0.05, y0)), "south jamb")
    b = Obstacle(((x - 0.05, y1), (x + 0.05, y1), (x + 0.05, y1 + 5.0),
                  (x - 0.05, y1 + 5.0)), "north jamb")
    return FloorPlan(obstacles=(a, b), doors=(Door((x, y0), (x, y1), "pharmacy"),))


def test_straight_crossing_station_is_where_the_reference_point_crosses():
    # A route from (0, 0) heading +x in two lines (2 m, then 8 m) crosses the door line
    # x = 6.5 at station 6.5 (textbook geometry: a straight run crosses x = c at distance c),
    # not at 2.0 where its segment starts.
    fp = _wall_with_door(6.5, -0.5, 0.7)
    segs = [line((0.0, 0.0, 0.0), 2.0), line((2.0, 0.0, 0.0), 8.0)]
    chk = check_route(segs, Chassis(footprint=FOOT, margin_m=0.05), ObstacleIndex(fp))
    (d,) = chk.doors
    assert d.label == "pharmacy"
    assert d.segment == 1
    assert d.station_m == pytest.approx(6.5, abs=1e-9)
    # The least clearance at the door: the right side (y = -0.3) passes the south jamb end
    # (y = -0.5) with 0.2 m; the body's side runs along the jamb end from when its front
    # reaches x = 6.45 until its rear leaves x = 6.55 (stations 6.15 .. 6.85).
    # Source: textbook geometry (distance between parallel lines)
    assert d.min_clearance_m == pytest.approx(0.2, abs=0.002)
    assert 6.15 - 0.01 <= d.min_clearance_station_m <= 6.85 + 0.01
    js = chk.to_dict()["doors"][0]
    assert js["station_m"] == pytest.approx(6.5, abs=1e-9)
    assert js["min_clearance_station_m"] == pytest.approx(d.min_clearance_station_m)


@pytest.mark.parametrize("theta_deg", [20.0, 35.0, 60.0])
def test_slanted_crossing_station(theta_deg):
    # A line from the origin at angle theta meets the vertical line x = c after c / cos(theta)
    # at height c tan(theta). Source: textbook trigonometry (right triangle).
    th = math.radians(theta_deg)
    c = 3.0
    y = c * math.tan(th)
    fp = _wall_with_door(c, y - 0.8, y + 0.8)
    segs = [line((0.0, 0.0, th), 1.0), line((math.cos(th), math.sin(th), th), 10.0)]
    chk = check_route(segs, Chassis(footprint=FOOT, margin_m=0.05), ObstacleIndex(fp))
    (d,) = chk.doors
    assert d.station_m == pytest.approx(c / math.cos(th), abs=1e-9)
    assert d.segment == 1


def test_arc_crossing_station():
    # A quarter arc of radius R about (0, R) from the origin heading +x; the door line is the
    # ray from the centre at angle -90 + phi (phi measured from the start): the arc meets it
    # after R * phi. Source: textbook geometry (arc length = radius x angle).
    r, phi = 2.0, math.radians(50.0)
    cx, cy = 0.0, r
    ang = -math.pi / 2 + phi
    a = (cx + (r - 0.7) * math.cos(ang), cy + (r - 0.7) * math.sin(ang))
    b = (cx + (r + 0.7) * math.cos(ang), cy + (r + 0.7) * math.sin(ang))
    segs = [arc((0.0, 0.0, 0.0), r, math.pi / 2)]
    f = crossing_fraction(segs[0], a, b)
    assert f is not None
    assert f * segs[0].length_m == pytest.approx(r * phi, abs=1e-6)
    # Through a checked plan (the door's solids are two small posts beside its jambs).
    posts = tuple(Obstacle(((p[0] - 0.05, p[1] - 0.05), (p[0] + 0.05, p[1] - 0.05),
                            (p[0] + 0.05, p[1] + 0.05), (p[0] - 0.05, p[1] + 0.05)))
                  for p in (a, b))
    chk = check_route(segs, Chassis(footprint=FOOT, margin_m=0.05),
                      ObstacleIndex(FloorPlan(obstacles=posts, doors=(Door(a, b, "x"),))))
    assert chk.doors[0].station_m == pytest.approx(r * phi, abs=1e-6)


def test_door_line_extension_is_not_a_crossing_and_nearest_approach_is_used():
    # The reference runs beside the door line's extension (y = 0 at x = 5, door from
    # y = 0.25 to 1.25): not a crossing; the route's nearest approach to the door line is
    # the station 5.0 where it passes x = 5 (textbook geometry: foot of the perpendicular).
    segs = [line((0.0, 0.0, 0.0), 10.0)]
    assert crossing_fraction(segs[0], (5.0, 0.25), (5.0, 1.25)) is None
    i, st = door_station(segs, segment_stations(segs), [0], (5.0, 0.25), (5.0, 1.25))
    assert i == 0
    assert st == pytest.approx(5.0, abs=0.01)


def test_cli_text_names_the_crossing_station(tmp_path, capsys):
    import json

    from app.cli import main

    fp = {"swathe_floorplan": 1, "walls": [
        {"points": [[6.5, -5.5], [6.5, -0.5]], "thickness_m": 0.1},
        {"points": [[6.5, 0.7], [6.5, 5.7]], "thickness_m": 0.1}],
        "doors": [{"a": [6.5, -0.5], "b": [6.5, 0.7], "label": "pharmacy"}]}
    proj = {"swathe_project": 1, "floorplan": fp,
            "chassis": {"name": "t", "drive": "differential",
                        "footprint": [list(p) for p in FOOT], "margin_m": 0.05,
                        "wheel_radius_m": 0.1, "track_m": 0.5},
            "routes": [{"name": "r", "waypoints": [[0, 0, 0], [2, 0], [10, 0]]}]}
    p = tmp_path / "p.swathe.json"
    p.write_text(json.dumps(proj))
    assert main(["check", str(p)]) == 0
    out = capsys.readouterr().out
    # Source: textbook geometry (the straight run meets x = 6.5 at station 6.5)
    assert "door 'pharmacy'" in out
    assert "crossed at station 6.50 m" in out


def test_a_warm_checker_gives_the_fresh_door_answers():
    # The checker keeps door answers with each unchanged segment; after an edit that moves
    # one segment its answers must equal a fresh check's. Source: common practice (a cache
    # must not change an answer); the fresh values are checked above against geometry.
    from kinematics.check.clearance import RouteChecker

    fp = _wall_with_door(6.5, -0.5, 0.7)
    ch = Chassis(footprint=FOOT, margin_m=0.05)
    idx = ObstacleIndex(fp)
    warm = RouteChecker(ch, idx)
    for y in (0.0, 0.1, -0.05, 0.1):
        segs = [line((0.0, 0.0, 0.0), 2.0), line((2.0, 0.0, math.atan2(y, 8.0)),
                                                 math.hypot(8.0, y))]
        got = warm.check(segs).doors
        fresh = check_route(segs, ch, idx).doors
        assert [d.to_dict() for d in got] == [d.to_dict() for d in fresh]
        # The crossing: x = 6.5 reached 4.5 m along the slanted second line (4.5 / cos).
        assert got[0].station_m == pytest.approx(2.0 + 4.5 * math.hypot(8.0, y) / 8.0,
                                                 abs=1e-9)


def test_a_train_door_entry_keeps_the_tug_crossing_and_the_least_body():
    # A tug towing a wider cart straight through a door: the door's station is where the
    # tug's reference point crosses the door line (x = 6.5 -> station 6.5, textbook
    # geometry); the least clearance is the cart's (half-width 0.4 vs the tug's 0.3, so
    # 0.6 - 0.4 = 0.2 m from jambs 1.2 m apart, distance between parallel lines), and its
    # station lies where the cart is in the door's box. Source: textbook geometry.
    from kinematics.check.train import check_train
    from kinematics.files.project import Trailer

    cart = ((-0.4, -0.4), (0.3, -0.4), (0.3, 0.4), (-0.4, 0.4))
    tug = Chassis(footprint=FOOT, margin_m=0.05, track_m=0.5,
                  trailers=(Trailer("cart", -0.35, 0.8, cart),))
    fp = _wall_with_door(6.5, -0.6, 0.6)
    segs = [line((0.0, 0.0, 0.0), 2.0), line((2.0, 0.0, 0.0), 9.0)]
    chk = check_train(segs, tug, ObstacleIndex(fp), 0.002, "r")
    (d,) = chk.doors
    assert d.station_m == pytest.approx(6.5, abs=1e-9) and d.segment == 1
    assert d.min_clearance_m == pytest.approx(0.2, abs=0.003)
    # The cart's axle is 0.35 + 0.8 = 1.15 m behind the tug's reference point and its body
    # runs from 0.4 behind to 0.3 ahead of its axle, so its side is beside the jamb ends
    # (x 6.45..6.55) while the tug is at stations 6.45 - 0.3 + 1.15 = 7.30 to
    # 6.55 + 0.4 + 1.15 = 8.10.
    assert 7.30 - 0.011 <= d.min_clearance_station_m <= 8.10 + 0.011
    # The route's least clearance is the cart's too, placed on that same stretch (it was the
    # start of the trailer's swept chunk, 2.0).
    at = chk.min_clearance_at
    assert at["body"] == "trailer 1 (cart)"
    assert chk.min_clearance_m == pytest.approx(0.2, abs=0.003)
    assert 7.30 - 0.011 <= at["station_m"] <= 8.10 + 0.011
