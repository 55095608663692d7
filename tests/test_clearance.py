"""Clearance check: closed forms, a dense-placement reference, violations, doors, caching."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import Polygon

from kinematics.analysis.report_text import CHECK_CAUTION as CAUTION
from kinematics.analysis.report_text import format_check_text
from kinematics.check.clearance import (
    ObstacleIndex,
    RouteChecker,
    check_route,
)
from kinematics.check.sweep import placed_footprints, travel_m
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall
from kinematics.files.jsonio import dumps
from kinematics.files.project import Chassis, Route, Waypoint
from kinematics.motion.segments import arc, holonomic_line, line, pivot
from kinematics.plan.planner import plan_route

TOL = 0.002
RECT = ((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3))
CHASSIS = Chassis(name="test tug", footprint=RECT, margin_m=0.05, track_m=0.5)


def door_plan(opening_m: float, thickness_m: float = 0.15) -> FloorPlan:
    """A wall along y = 2 with a door opening centred on x = 0."""
    h = opening_m / 2.0
    walls = (Wall(((-5.0, 2.0), (-h, 2.0)), thickness_m), Wall(((h, 2.0), (5.0, 2.0)),
                                                                  thickness_m))
    return FloorPlan("door test", walls, (), (Door((-h, 2.0), (h, 2.0), "D-1"),))


def test_rectangle_through_door_opening():
    # Source: common plane geometry - a footprint of width w driven straight through the
    # middle of an opening of width W clears each jamb by (W - w) / 2.
    opening = 0.9
    idx = ObstacleIndex(door_plan(opening))
    chk = check_route([line((0.0, 0.0, math.pi / 2), 4.0)], CHASSIS, idx)
    expect = (opening - 0.6) / 2.0
    assert expect - TOL <= chk.min_clearance_m <= expect + 1e-12
    assert chk.clear
    assert [d.label for d in chk.doors] == ["D-1"]
    assert expect - TOL <= chk.doors[0].min_clearance_m <= expect + 1e-12


def _pillar(cx: float, cy: float, r: float, n: int = 256) -> Obstacle:
    a = np.linspace(0.0, 2 * math.pi, n, endpoint=False)
    return Obstacle(tuple(zip(cx + r * np.cos(a), cy + r * np.sin(a))), "pillar")


def test_arc_about_a_pillar_keeps_inner_radius():
    # Source: common plane geometry - on an arc of radius R the inner side of a rectangle of
    # half width w/2 (reference point mid-axle) stays R - w/2 from the centre, so a round
    # pillar of radius p at the centre is cleared by R - w/2 - p (a 256-gon pillar lies
    # between p cos(pi/256) and p from its centre).
    radius, p = 1.5, 0.4
    seg = arc((0.0, 0.0, 0.0), radius, math.pi / 2)
    cx, cy = seg.arc_centre()
    idx = ObstacleIndex(FloorPlan(obstacles=(_pillar(cx, cy, p),)))
    chk = check_route([seg], CHASSIS, idx)
    hi = radius - 0.3 - p * math.cos(math.pi / 256)
    assert radius - 0.3 - p - TOL <= chk.min_clearance_m <= hi + 1e-12


def test_outer_front_corner_radius():
    # Source: common plane geometry - the outer front corner of the rectangle traces a circle
    # of radius sqrt((R + w/2)^2 + front^2) about the arc centre; a small post just outside
    # it, midway round the turn, is cleared by the gap.
    radius, gap = 1.5, 0.03
    seg = arc((0.0, 0.0, 0.0), radius, math.pi / 2)
    cx, cy = seg.arc_centre()
    ro = math.hypot(radius + 0.3, 0.6)
    corner0 = math.atan2(-(radius + 0.3), 0.6)  # the front-right corner, seen from the centre
    ang = corner0 + math.pi / 4
    px, py = cx + (ro + gap) * math.cos(ang), cy + (ro + gap) * math.sin(ang)
    e = 1e-4
    post = Obstacle(((px - e, py - e), (px + e, py - e), (px + e, py + e), (px - e, py + e)))
    chk = check_route([seg], CHASSIS, ObstacleIndex(FloorPlan(obstacles=(post,))))
    assert gap - e * math.sqrt(2) - TOL <= chk.min_clearance_m <= gap + 1e-12
    assert chk.violations[0].kind == "clearance"
    assert "front-right corner" in chk.violations[0].message


def test_collision_starts_where_the_front_reaches_the_wall():
    # Source: common plane geometry - driving +x from x0 with the front at +0.6, the body
    # first touches a wall face at x_f at station x_f - 0.6 - x0; and the margin is first
    # breached margin earlier.
    wall = Wall(((5.0, -2.0), (5.0, 2.0)), 0.2)  # face at x = 4.9
    idx = ObstacleIndex(FloorPlan(walls=(wall,)))
    chk = check_route([line((0.0, 0.0, 0.0), 6.0)], CHASSIS, idx, route_name="into wall")
    kinds = {v.kind: v for v in chk.violations}
    assert set(kinds) == {"collision"}
    v = kinds["collision"]
    assert v.station_m == pytest.approx(4.9 - 0.6, abs=TOL + 1e-9)
    assert v.amount_m == pytest.approx(0.2, abs=0.005)
    assert "wall 0" in v.message and "front" in v.message
    assert chk.min_clearance_m < 0.0 and not chk.clear
    # Stop short of the wall by 3 cm: a clearance violation of 2 cm starting at the end.
    chk = check_route([line((0.0, 0.0, 0.0), 4.27)], CHASSIS, idx)
    (v,) = chk.violations
    assert v.kind == "clearance"
    assert v.amount_m == pytest.approx(0.02, abs=TOL + 1e-9)
    assert v.station_m == pytest.approx(4.9 - 0.6 - 0.05, abs=TOL + 1e-9)


def test_contiguous_stretch_is_one_violation():
    # Source: common practice - one scrape along a wall over several segments is one problem.
    wall = Wall(((-1.0, 0.32), (12.0, 0.32)), 0.02)  # face at y = 0.31: 10 mm clearance
    idx = ObstacleIndex(FloorPlan(walls=(wall,)))
    segs = [line((0.0, 0.0, 0.0), 3.0), line((3.0, 0.0, 0.0), 3.0), line((6.0, 0.0, 0.0), 3.0)]
    chk = check_route(segs, CHASSIS, idx)
    assert len(chk.violations) == 1
    v = chk.violations[0]
    assert v.kind == "clearance" and v.segment == 0 and v.station_m == pytest.approx(0.0)
    assert v.amount_m == pytest.approx(0.04, abs=TOL + 1e-9)
    assert "left side" in v.message


def test_plan_issues_and_blocked_waypoints_are_reported():
    # Source: common practice - a waypoint drawn inside a rack cannot be reached.
    rack = Obstacle(((3.0, -1.0), (4.0, -1.0), (4.0, 1.0), (3.0, 1.0)), "rack")
    idx = ObstacleIndex(FloorPlan(obstacles=(rack,)))
    route = Route("r", (Waypoint(0, 0), Waypoint(3.5, 0.0), Waypoint(3.5, 3.0)))
    plan = plan_route(route, CHASSIS)
    chk = check_route(plan, CHASSIS, idx, route_name="r", route=route)
    blocked = [v for v in chk.violations if v.kind == "waypoint_blocked"]
    # The second waypoint (index 1) is inside; messages count waypoints from 1.
    assert len(blocked) == 1 and "waypoint 2" in blocked[0].message
    assert "rack" in blocked[0].message

    class Issue:
        kind, message, waypoint, segment, x, y, amount_m = ("turn_radius", "too tight", 1, 0,
                                                            1.0, 2.0, 0.3)

    class Plan:
        name = "p"
        segments = (line((0.0, 5.0, 0.0), 1.0),)
        issues = (Issue(),)

    chk = check_route(Plan(), CHASSIS, idx)
    assert [v.kind for v in chk.violations] == ["turn_radius"]
    assert chk.violations[0].amount_m == 0.3 and not chk.clear


def test_json_and_text_follow_the_contract():
    # Source: shared/contract.md, "check --json" keys (project interface contract).
    idx = ObstacleIndex(door_plan(0.62))
    chk = check_route([line((0.0, 0.0, math.pi / 2), 4.0)], CHASSIS, idx, route_name="x")
    d = json.loads(dumps(chk.to_dict()))
    assert {"name", "clear", "min_clearance_m", "violations", "doors"} <= set(d)
    assert d["name"] == "x" and d["clear"] is False
    for v in d["violations"]:
        assert {"kind", "segment", "station_m", "x", "y", "amount_m", "message"} <= set(v)
    assert {"label", "min_clearance_m"} <= set(d["doors"][0])
    text = format_check_text([chk])
    assert CAUTION in text and "ISO 3691-4" in text and "x" in text


# -- against a dense-placement reference ---------------------------------------------------
def dense_clearance(footprint, segs, solids_geoms, step_m):
    """Least distance from footprints placed every ``step_m`` of point travel to the solids.

    The sampled placements are a subset of the true motion, so this is >= the true clearance,
    and every true placement is within step/2 of a sampled one, so it is <= true + step/2.
    """
    best, worst_step = math.inf, 0.0
    for seg in segs:
        n = max(2, math.ceil(travel_m(footprint, seg) / step_m) + 1)
        placed = placed_footprints(footprint, seg.poses_at_fraction(np.linspace(0, 1, n)))
        worst_step = max(worst_step, travel_m(footprint, seg) / (n - 1))
        tree = shapely.STRtree(placed)
        for g in solids_geoms:
            _, dist = tree.query_nearest(g, return_distance=True, all_matches=False)
            best = min(best, float(dist.min()))
    return best, worst_step


@st.composite
def scenes(draw):
    n = draw(st.integers(3, 7))
    if draw(st.booleans()):
        ang = np.linspace(0, 2 * math.pi, n, endpoint=False)
        rad = np.array(draw(st.lists(st.floats(0.1, 0.6), min_size=n, max_size=n)))
        fp = Polygon(np.c_[rad * np.cos(ang), rad * np.sin(ang)])  # star, often non-convex
    else:
        w, fr, rr = draw(st.floats(0.2, 0.8)), draw(st.floats(0.1, 0.8)), draw(st.floats(0, .5))
        fp = Polygon([(-rr, -w / 2), (fr, -w / 2), (fr, w / 2), (-rr, w / 2)])
    kind = draw(st.sampled_from(["line", "arc", "pivot", "holo"]))
    start = (0.0, 0.0, draw(st.floats(-math.pi, math.pi)))
    if kind == "line":
        seg = line(start, draw(st.floats(0.2, 3.0)), draw(st.sampled_from([1, -1])))
    elif kind == "arc":
        seg = arc(start, draw(st.floats(0.1, 2.5)), draw(st.floats(0.2, 3.0))
                  * draw(st.sampled_from([1, -1])), draw(st.sampled_from([1, -1])))
    elif kind == "pivot":
        seg = pivot(start, draw(st.floats(0.2, 3.5)) * draw(st.sampled_from([1, -1])))
    else:
        seg = holonomic_line(start, (draw(st.floats(-2, 2)), draw(st.floats(-2, 2))),
                             draw(st.floats(-1.2, 1.2)))
    obstacles = []
    for _ in range(draw(st.integers(1, 4))):
        cx, cy = draw(st.floats(-4, 4)), draw(st.floats(-4, 4))
        s = draw(st.floats(0.05, 0.8))
        a = draw(st.floats(0, math.pi))
        tri = [(cx + s * math.cos(a + k * 2.1), cy + s * math.sin(a + k * 2.1)) for k in range(3)]
        obstacles.append(Obstacle(tuple(tri), ""))
    return fp, seg, FloorPlan(obstacles=tuple(obstacles))


@settings(max_examples=120, deadline=None)
@given(scenes())
def test_never_more_clearance_than_dense_reference(scene):
    # Source: shapely.STRtree.query_nearest / shapely.distance on densely placed footprints
    # (reference library). reported <= true <= reference and reported >= true - tol >=
    # reference - step/2 - tol.
    fp, seg, plan = scene
    chassis = Chassis(footprint=tuple(fp.exterior.coords[:-1]), margin_m=0.05)
    idx = ObstacleIndex(plan)
    chk = check_route([seg], chassis, idx, tolerance_m=TOL)
    ref, step = dense_clearance(fp, [seg], list(idx.geometries), 0.001)
    if ref > 0.0:
        assert chk.min_clearance_m <= ref + 1e-9
        assert chk.min_clearance_m >= ref - step / 2 - TOL - 1e-9
    else:
        assert chk.min_clearance_m <= 0.0


# -- incremental -----------------------------------------------------------------------------
def test_incremental_recheck_equals_full_check():
    # Source: common practice - a cache must not change the answer.
    fp = FloorPlan(walls=(Wall(((-1, 1.0), (20, 1.0)), 0.1), Wall(((-1, -1.0), (20, -1.0)), 0.1)),
                   obstacles=(Obstacle(((6, 0.3), (6.4, 0.3), (6.4, 0.9), (6, 0.9)), "bin"),),
                   doors=(Door((10.0, -0.95), (10.0, 0.95), "D-9"),))
    idx = ObstacleIndex(fp)
    wps = [Waypoint(0, 0), Waypoint(3, 0.2), Waypoint(6, -0.2), Waypoint(9, 0.1),
           Waypoint(12, -0.2), Waypoint(15, 0.2), Waypoint(18, 0.0)]
    route = Route("r", tuple(wps), turn_radius_m=1.0)
    checker = RouteChecker(CHASSIS, idx)
    first = checker.check(plan_route(route, CHASSIS), "r")
    swept_first = checker.swept_count
    moved = Route("r", (*wps[:4], Waypoint(12, 0.3), *wps[5:]), turn_radius_m=1.0)
    plan2 = plan_route(moved, CHASSIS)
    inc = checker.check(plan2, "r")
    assert checker.swept_count - swept_first < len(plan2.segments)  # some pieces were reused
    full = check_route(plan2, CHASSIS, idx, route_name="r")
    assert json.loads(dumps(inc.to_dict())) == json.loads(dumps(full.to_dict()))
    assert first.to_dict() != full.to_dict()


_NUDGE = st.tuples(st.integers(1, 5), st.floats(-0.4, 0.4), st.floats(-0.4, 0.4))


@settings(max_examples=25, deadline=None)
@given(moves=st.lists(_NUDGE, min_size=1, max_size=5), radius=st.sampled_from([0.0, 1.0]))
def test_warm_planner_and_checker_give_the_fresh_check_after_every_move(moves, radius):
    from kinematics.plan.planner import RoutePlanner

    # Source: common practice - caches must not change the answer: after each move of one
    # waypoint, the check JSON of the warm RoutePlanner + RouteChecker equals that of a
    # fresh plan_route + check_route, with collisions, thin clearances and a door in play.
    fp = FloorPlan(walls=(Wall(((-1, 1.1), (20, 1.1)), 0.1), Wall(((-1, -1.1), (20, -1.1)), 0.1)),
                   obstacles=(Obstacle(((6, 0.3), (6.4, 0.3), (6.4, 0.9), (6, 0.9)), "bin"),
                              Obstacle(((11, -0.9), (11.5, -0.9), (11.5, -0.5), (11, -0.5)),
                                       "cart")),
                   doors=(Door((9.0, -1.05), (9.0, 1.05), "D-9"),))
    idx = ObstacleIndex(fp)
    wps = [Waypoint(0, 0), Waypoint(3, 0.2), Waypoint(6, -0.2), Waypoint(9, 0.1),
           Waypoint(12, -0.2), Waypoint(15, 0.2), Waypoint(18, 0.0)]
    planner, checker = RoutePlanner(), RouteChecker(CHASSIS, idx)
    for step, (k, dx, dy) in enumerate([(0, 0.0, 0.0), *moves]):
        wps[k] = Waypoint(wps[k].x + dx, wps[k].y + dy)
        route = Route("r", tuple(wps), turn_radius_m=radius)
        warm = checker.check(planner.plan(route, CHASSIS), "r", route=route)
        fresh = check_route(plan_route(route, CHASSIS), CHASSIS, idx, route_name="r",
                            route=route)
        assert dumps(warm.to_dict()) == dumps(fresh.to_dict()), step


@pytest.mark.parametrize("drive", ["differential", "bicycle", "mecanum"])
def test_segment_grid_poses_are_poses_along_to_the_last_bit(drive):
    from kinematics.check.clearance import grid_poses
    from kinematics.motion.segments import poses_along

    chassis = {"differential": Chassis(drive="differential", track_m=0.5),
               "bicycle": Chassis(drive="bicycle", wheelbase_m=1.0, max_steer_deg=40.0),
               "mecanum": Chassis(drive="mecanum", wheelbase_m=0.5, track_m=0.5)}[drive]
    rng = np.random.default_rng(3)
    kinds = set()
    for trial in range(20):
        pts = np.cumsum(rng.uniform(-3, 3, (8, 2)), axis=0)
        heads = [None if rng.random() < 0.6 else float(rng.uniform(-180, 180)) for _ in pts]
        if trial % 3 == 0:
            pts[3] = pts[2]  # a repeat: turns on the spot
        route = Route("r", tuple(Waypoint(*p, h) for p, h in zip(pts, heads)),
                      turn_radius_m=float(rng.choice([0.0, 0.7])), reverse=bool(trial % 2))
        for seg in plan_route(route, chassis).segments:
            kinds.add(seg.kind)
            L = seg.length_m
            local = (np.linspace(0.0, L, max(1, int(np.ceil(L / 0.02))) + 1) if L > 0.0
                     else np.zeros(1))
            # Source: kinematics.motion.segments.poses_along, the per-segment reference it replaces.
            assert np.array_equal(grid_poses(seg, local), poses_along([seg], local))
    assert {"line", "arc"} <= kinds or drive == "mecanum"

def _blocked_reference(segs, idx, waypoints):
    """waypoint_blocked by brute force: every segment's own 2 cm grid posed by poses_along,
    the first nearest grid pose by hypot over the whole route, every solid measured. Only the
    route's ends and waypoints the path passes (a grid pose within 1 mm) are judged, by the
    footprint placed there (shared/contract.md: not at a corner a turn cuts)."""
    from kinematics.check.clearance import overlap_depth
    from kinematics.motion.segments import poses_along, segment_stations

    edges = segment_stations(segs)
    seg_i, stations, poses = [], [], []
    for i, sg in enumerate(segs):
        L = sg.length_m
        local = np.linspace(0.0, L, max(1, math.ceil(L / 0.02)) + 1) if L > 0 else np.zeros(1)
        seg_i += [i] * len(local)
        stations += (float(edges[i]) + local).tolist()
        poses.append(poses_along([sg], local))
    poses = np.concatenate(poses)
    out = []
    for k, w in enumerate(waypoints):
        d = np.hypot(poses[:, 0] - w.x, poses[:, 1] - w.y)
        r = int(np.argmin(d))
        if k not in (0, len(waypoints) - 1) and d[r] > 1e-3:
            continue
        placed = placed_footprints(CHASSIS.footprint, [(w.x, w.y, poses[r, 2])])[0]
        depths = [overlap_depth(placed, g) for g in idx.geometries]
        j = int(np.argmax(depths))
        depth = depths[j]
        if depth <= 0.0:
            continue
        out.append((k, seg_i[r], stations[r], depth, idx.solids[j].name))
    return out


_MOVE = st.tuples(st.integers(0, 6), st.floats(-0.8, 0.8), st.floats(-0.8, 0.8),
                  st.booleans())


@settings(max_examples=25, deadline=None)
@given(moves=st.lists(_MOVE, min_size=1, max_size=6), radius=st.sampled_from([0.0, 1.0]))
def test_warm_waypoint_checks_equal_fresh_ones_after_random_moves(moves, radius):
    from kinematics.plan.planner import RoutePlanner

    # Source: common practice - keeping waypoint verdicts between checks must not change
    # them: after every move (some onto or next to the bin, lengthening or shortening the
    # route) the warm checker's waypoint_blocked list equals a fresh checker's, and both
    # equal a brute-force reference (numpy.argmin of numpy.hypot over each segment's own
    # grid posed by kinematics.motion.segments.poses_along; shapely.intersects on every solid).
    bin_ = Obstacle(((6, 0.3), (6.4, 0.3), (6.4, 0.9), (6, 0.9)), "bin")
    fp = FloorPlan(walls=(Wall(((-1, 1.3), (20, 1.3)), 0.1), Wall(((-1, -1.3), (20, -1.3)), 0.1)),
                   obstacles=(bin_, Obstacle(((11, -0.9), (11.5, -0.9), (11.5, -0.5),
                                              (11, -0.5)), "cart")))
    idx = ObstacleIndex(fp)
    wps = [Waypoint(0, 0), Waypoint(3, 0.2), Waypoint(6.2, 0.6), Waypoint(9, 0.1),
           Waypoint(12, -0.2), Waypoint(15, 0.2), Waypoint(18, 0.0)]
    planner, checker = RoutePlanner(), RouteChecker(CHASSIS, idx)
    for step, (k, dx, dy, onto_bin) in enumerate([(0, 0.0, 0.0, False), *moves]):
        w = wps[k]
        wps[k] = Waypoint(6.2 + dx / 8, 0.6 + dy / 2) if onto_bin else Waypoint(w.x + dx,
                                                                                  w.y + dy)
        route = Route("r", tuple(wps), turn_radius_m=radius)
        plan = planner.plan(route, CHASSIS)
        warm = [v for v in checker.check(plan, "r", route=route).violations
                if v.kind == "waypoint_blocked"]
        fresh = [v for v in check_route(plan_route(route, CHASSIS), CHASSIS, idx,
                                        route_name="r", route=route).violations
                 if v.kind == "waypoint_blocked"]
        assert [v.to_dict() for v in warm] == [v.to_dict() for v in fresh], step
        ref = _blocked_reference(plan.segments, idx, wps)
        got = sorted((int(v.message.split()[1]) - 1, v.segment, v.station_m, v.amount_m,
                      v.solid) for v in warm)
        assert got == ref, step
