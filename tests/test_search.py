"""Route finder (Hybrid A*): the hard cases on invented plans, each found route re-checked by an
independent dense-pose shapely sweep, and open-space lengths against OMPL's shortest paths."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from shapely.geometry import box

from kinematics.errors import ValidationError
from kinematics.files.floorplan import FloorPlan, Obstacle
from kinematics.files.project import Chassis, Project, Route, Waypoint
from kinematics.plan.search import FindSettings, RouteFinder, replace_route

# Invented chassis (demo values, not a product's).
CART = Chassis(name="cart", drive="ackermann", wheelbase_m=0.8, track_m=0.5, max_steer_deg=35.0,
               footprint=((-0.25, -0.3), (1.05, -0.3), (1.05, 0.3), (-0.25, 0.3)),
               margin_m=0.05)
TRIKE = Chassis(name="trike", drive="bicycle", wheelbase_m=0.7, max_steer_deg=40.0,
                footprint=((-0.2, -0.3), (0.9, -0.3), (0.9, 0.3), (-0.2, 0.3)), margin_m=0.05)
DIFF = Chassis(name="tote", drive="differential", track_m=0.5,
               footprint=((-0.35, -0.3), (0.65, -0.3), (0.65, 0.3), (-0.35, 0.3)),
               margin_m=0.05)
MEC = Chassis(name="slider", drive="mecanum", wheelbase_m=0.6, track_m=0.5,
              footprint=((-0.4, -0.3), (0.4, -0.3), (0.4, 0.3), (-0.4, 0.3)), margin_m=0.05)


def _boxes(rects):
    return [box(*r) for r in rects]


def _project(rects, chassis, route):
    fp = FloorPlan(name="scene", obstacles=tuple(
        Obstacle(tuple(map(tuple, np.asarray(b.exterior.coords)[:-1].tolist())), f"block {i}")
        for i, b in enumerate(_boxes(rects))))
    return Project(fp, chassis, (route,))


def _route(points, reverse=False, name="r"):
    return Route(name, tuple(Waypoint(*p) for p in points), 0.0, reverse)


def dense_min_distance(result, chassis, rects) -> float:
    """Least distance of the footprint to the solids over dense poses of the found plan.

    Independent of the planner's check: poses every 5 mm and 0.5 deg along each segment
    (``Segment.poses_at_fraction``), the footprint placed by its own rotation here, distances
    by shapely to the boxes built here.
    """
    solids = shapely.union_all(_boxes(rects))
    fp = np.asarray(chassis.footprint, dtype=float)
    least = math.inf
    for s in result.plan.segments:
        n = max(2, int(math.ceil(max(s.length_m / 0.005, abs(s.turn_rad) / math.radians(0.5)))))
        poses = s.poses_at_fraction(np.linspace(0.0, 1.0, n + 1))
        c, sn = np.cos(poses[:, 2])[:, None], np.sin(poses[:, 2])[:, None]
        x = poses[:, :1] + c * fp[None, :, 0] - sn * fp[None, :, 1]
        y = poses[:, 1:2] + sn * fp[None, :, 0] + c * fp[None, :, 1]
        polys = shapely.polygons(np.stack([x, y], axis=-1))
        least = min(least, float(np.min(shapely.distance(polys, solids))))
    return least


def _assert_found(res, chassis, rects, goal):
    assert res.found, res.reason
    assert res.check.clear
    # Source: shapely distance of densely placed footprints (an outside reference for the
    # swept check): the route keeps the margin everywhere it was sampled.
    assert dense_min_distance(res, chassis, rects) >= chassis.margin_m - 1e-9
    end = res.plan.segments[-1].end
    # Goal poses reached exactly: 1 mm and 0.1 deg (the tolerance).
    assert math.hypot(end[0] - goal[0], end[1] - goal[1]) <= 1e-3
    if len(goal) > 2:
        assert abs(math.remainder(end[2] - math.radians(goal[2]), 2 * math.pi)) <= \
            math.radians(0.1)


SETTINGS = FindSettings(time_limit_s=8.0)

# A corridor 2.6 m wide (y 0..2.6) and a room above through a 1.2 m door at x 6.0..7.2.
DOOR_SCENE = [(-1, -0.5, 12, 0.0), (-1, 2.6, 6.0, 2.8), (7.2, 2.6, 12, 2.8),
              (-1, 0, -0.5, 7), (11.5, 0, 12, 7), (4.0, 2.8, 4.2, 7), (9.0, 2.8, 9.2, 7),
              (4.0, 6.8, 9.2, 7.0)]


def test_door_turn_corridor_to_room_ackermann():
    goal = (6.6, 5.0, 90.0)
    r = _route([(1.0, 1.3, 0.0), goal])
    proj = _project(DOOR_SCENE, CART, r)
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    _assert_found(res, CART, DOOR_SCENE, goal)
    assert all(s.direction == 1 for s in res.plan.segments)  # no reversing asked or used
    assert res.time_s <= SETTINGS.time_limit_s


# A closed aisle 2.3 m wide: the trike (radius 0.83 m) cannot U-turn, only turn in three.
AISLE = [(-0.2, -0.2, 7.2, 0.0), (-0.2, 2.3, 7.2, 2.5), (-0.2, 0.0, 0.0, 2.3),
         (7.0, 0.0, 7.2, 2.3)]


def test_three_point_turn_in_dead_end_aisle_with_reversing():
    goal = (2.0, 1.15, 180.0)
    r = _route([(3.0, 1.15, 0.0), goal], reverse=True)
    proj = _project(AISLE, TRIKE, r)
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    _assert_found(res, TRIKE, AISLE, goal)
    dirs = [s.direction for s in res.plan.segments]
    assert -1 in dirs  # it had to back up


def test_no_route_in_dead_end_aisle_without_reversing():
    r = _route([(3.0, 1.15, 0.0), (2.0, 1.15, 180.0)], reverse=False)
    proj = _project(AISLE, TRIKE, r)
    res = RouteFinder(proj, settings=FindSettings(time_limit_s=3.0)).find(r)
    assert not res.found
    assert res.reason.startswith("no route from waypoint 1 to waypoint 2")
    assert res.blocked_at is not None
    assert res.time_s <= 3.0 + 0.5  # the limit is honoured (one expansion of slack)


# Two parked blocks leave a bay 1.1 m wide and 1.8 m deep off an aisle.
BAY = [(-1, -0.2, 10, 0.0), (-1, 5.0, 10, 5.2), (-1, 0, -0.8, 5), (9.8, 0, 10, 5),
       (2.0, 0.0, 3.9, 1.8), (5.0, 0.0, 7.0, 1.8)]


def test_parking_into_bay_with_heading():
    goal = (4.45, 0.35, 90.0)  # backed in: nose out of the bay
    r = _route([(0.5, 3.5, 0.0), goal], reverse=True)
    proj = _project(BAY, CART, r)
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    _assert_found(res, CART, BAY, goal)


def test_differential_in_corridor_just_wider_than_swept_corner():
    # The tote's farthest corner is 0.716 m from its reference point: pivoting needs a disc
    # of 0.766 m with the margin. An L corridor 1.6 m wide leaves 3 cm each way.
    r_far = math.hypot(0.65, 0.3)
    w = 2 * (r_far + 0.05) + 0.07
    rects = [(-1, -0.2, 6 + w, 0.0), (-1, w, 6.0, w + 0.2), (-1, 0, -0.8, w),
             (6 + w, 0, 6 + w + 0.2, 8), (6.0, w, 6.0 + 0.0001 + 0.2, 8)]
    rects[-1] = (5.8, w, 6.0, 8)
    goal = (6 + w / 2, 7.0, 90.0)
    r = _route([(0.5, w / 2, 0.0), goal])
    proj = _project(rects, DIFF, r)
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    _assert_found(res, DIFF, rects, goal)
    assert any(s.kind == "pivot" for s in res.plan.segments)


def test_mecanum_sideways_into_narrow_slot():
    # A slot 0.95 m wide and 0.8 m deep: the slider (0.8 x 0.6 m, diagonal 1.0 m) fits only
    # broadside and cannot turn inside it.
    rects = [(-1, -0.2, 8, 0.0), (-1, 4.0, 8, 4.2), (-1, 0, -0.8, 4), (7.8, 0, 8, 4),
             (0.0, 0.0, 3.0, 0.8), (3.95, 0.0, 7.8, 0.8)]
    goal = (3.475, 0.4, 0.0)
    r = _route([(1.0, 2.5, 0.0), goal])
    proj = _project(rects, MEC, r)
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    _assert_found(res, MEC, rects, goal)


@pytest.mark.parametrize("reverse", [False, True])
def test_open_space_length_is_the_shortest_dubins_or_reeds_shepp(reverse):
    ob = pytest.importorskip("ompl.base")
    rects = [(-20, -20, 20, -19.8), (-20, 19.8, 20, 20)]
    start, goal = (0.0, 0.0, 0.0), (4.0, 3.0, 200.0)
    r = _route([start, goal], reverse=reverse)
    proj = _project(rects, CART, r)
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    _assert_found(res, CART, rects, goal)
    radius = 0.8 / math.tan(math.radians(35.0)) + 0.25
    space = ob.ReedsSheppStateSpace(radius) if reverse else ob.DubinsStateSpace(radius)
    a, b = space.allocState(), space.allocState()
    a.setX(0.0), a.setY(0.0), a.setYaw(0.0)
    b.setX(4.0), b.setY(3.0), b.setYaw(math.radians(200.0))
    # Source: OMPL DubinsStateSpace / ReedsSheppStateSpace distance (the shortest length).
    assert res.plan.length_m == pytest.approx(space.distance(a, b), rel=0.01)


def test_find_passes_interior_waypoints_in_order_with_their_headings():
    rects = [(-1, -0.2, 12, 0.0), (-1, 6.0, 12, 6.2), (-1, 0, -0.8, 6), (11.8, 0, 12, 6),
             (4.0, 0.0, 4.3, 3.8), (8.5, 2.4, 8.8, 6.0)]
    pts = [(1.0, 1.0, 90.0), (6.0, 3.0, 0.0), (10.0, 4.5, 90.0)]
    r = _route(pts)
    proj = _project(rects, CART, r)
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    _assert_found(res, CART, rects, pts[-1])
    # The interior pose is passed exactly: some joint of the plan sits on it.
    joints = [s.start for s in res.plan.segments]
    assert min(math.hypot(j[0] - 6.0, j[1] - 3.0) + abs(math.remainder(j[2], 2 * math.pi))
               for j in joints) <= 1e-6


def test_repair_keeps_passing_legs_and_searches_the_failing_one():
    rects = DOOR_SCENE
    # Leg 1 (corridor) passes; leg 2 turns into the door too tightly as sketched.
    r = _route([(0.5, 1.3, 0.0), (3.0, 1.3, 0.0), (6.6, 5.0, 90.0)])
    proj = _project(rects, CART, r)
    finder = RouteFinder(proj, settings=SETTINGS)
    from kinematics.check.clearance import check_route
    from kinematics.plan.planner import plan_route
    before = check_route(plan_route(r, CART), CART, finder.index, route=r)
    assert not before.clear
    res = finder.repair(r)
    _assert_found(res, CART, rects, (6.6, 5.0, 90.0))
    assert res.legs == (1,)
    assert res.route.waypoints[:2] == (Waypoint(0.5, 1.3, 0.0), Waypoint(3.0, 1.3, 0.0))
    assert replace_route(proj, res.route).routes[0] is res.route


def test_bad_inputs_are_one_line_errors():
    rects = DOOR_SCENE
    inside = _route([(1.0, 1.3, 0.0), (5.0, 2.7, 90.0)])  # goal inside the door wall
    with pytest.raises(ValidationError, match=r"waypoints\[1\].*inside"):
        RouteFinder(_project(rects, CART, inside), settings=SETTINGS).find(inside)
    overlap = _route([(1.0, 0.2, 0.0), (6.6, 5.0, 90.0)])  # start overlapping a wall
    with pytest.raises(ValidationError, match=r"waypoints\[0\].*overlaps"):
        RouteFinder(_project(rects, CART, overlap), settings=SETTINGS).find(overlap)
    ok = _route([(1.0, 1.3, 0.0), (6.6, 5.0, 90.0)])
    for lim in (0.0, -1.0):
        with pytest.raises(ValidationError, match="time-limit"):
            RouteFinder(_project(rects, CART, ok),
                        settings=FindSettings(time_limit_s=lim)).find(ok)


def test_a_fleet_route_is_searched_for_its_own_vehicle_and_keeps_its_keys():
    # Source: shared/contract.md (a route's `chassis` names its fleet vehicle; `stops` index
    # its waypoints); the found route is re-checked by the independent dense sweep above.
    from dataclasses import replace

    from kinematics.files.project import Stop
    from kinematics.plan.search import find_route

    wide = replace(DIFF, name="wide tote",
                   footprint=((-0.5, -0.5), (0.8, -0.5), (0.8, 0.5), (-0.5, 0.5)))
    rects = [(3.0, -3.0, 3.5, 1.2)]  # a post the route must pass beside
    route = replace(_route([(0.0, 0.0, 0.0), (7.0, 0.0, 0.0)]), chassis="wide tote",
                    stops=(Stop(1, 5.0),), transitions="none")
    proj = replace(_project(rects, DIFF, route), others=(wide,))
    res = find_route(proj, "r", FindSettings(time_limit_s=5.0))
    assert res.found, res.reason
    assert res.route.chassis == "wide tote" and res.route.transitions == "none"
    assert res.route.stops == (Stop(len(res.route.waypoints) - 1, 5.0),)
    # Clear for the wide vehicle, not only for the default one.
    assert dense_min_distance(res, wide, rects) >= wide.margin_m - 1e-3
    back = replace_route(proj, res.route)
    assert back.others == (wide,) and back.chassis_for("r") == wide


def test_repair_searches_the_whole_route_when_the_kept_legs_fail_with_the_searched_ones(
        monkeypatch):
    # The legs-only repair is made to come back failing its re-check (as when a kept leg's
    # corner no longer passes beside a searched one); the repair must then search the whole
    # route, say so, and offer a route the independent dense sweep finds clear.
    from kinematics.plan import search as S

    rects = DOOR_SCENE
    r = _route([(0.5, 1.3, 0.0), (3.0, 1.3, 0.0), (6.6, 5.0, 90.0)])
    proj = _project(rects, CART, r)
    finder = RouteFinder(proj, settings=SETTINGS)
    real = S.RouteFinder._offer
    calls = []

    def offer(self, new, t0, total, searched, legs, notes=()):
        calls.append(legs)
        got = real(self, new, t0, total, searched, legs, notes)
        if len(calls) == 1:
            got.found, got.route, got.reason = False, None, "the smoothed route failed its " \
                "re-check: (made to fail here)"
        return got

    monkeypatch.setattr(S.RouteFinder, "_offer", offer)
    res = finder.repair(r)
    assert calls[0] == (1,) and calls[1] == (0, 1)  # failing leg first, then every leg
    _assert_found(res, CART, rects, (6.6, 5.0, 90.0))
    assert res.legs == (0, 1)
    assert any("whole route was searched" in n for n in res.notes)


def test_clinic_door_turn_repair_keeps_off_the_jambs_where_there_is_room():
    # The clinic's doors are 1.2 m and the cart 0.6 m wide: up to 0.3 m a side. The cost's
    # clearance term (0.15 m preferred above the margin) must keep the repaired route well off
    # the jambs, not merely at the margin (a shorter search for a cheaper goal once left it
    # 6 mm above the margin at the pharmacy door).
    from pathlib import Path

    from kinematics.files.loader import load_floorplan

    fp = load_floorplan(Path(__file__).resolve().parent.parent / "sample_floorplans"
                        / "clinic.floor.json")
    sketch = Route("pharmacy-to-room-207", (Waypoint(3.1, 5.0, 90.0), Waypoint(6.0, 10.0, 0.0),
                                            Waypoint(17.75, 14.0, 90.0)))
    finder = RouteFinder(Project(fp, CART, (sketch,)), settings=SETTINGS)
    res = finder.repair(sketch)
    assert res.found, res.reason
    # Source: shapely distances of densely placed footprints to the plan's solids.
    polys = []
    fpa = np.asarray(CART.footprint, dtype=float)
    for s in res.plan.segments:
        n = max(2, int(math.ceil(max(s.length_m / 0.005, abs(s.turn_rad) / math.radians(0.5)))))
        p = s.poses_at_fraction(np.linspace(0.0, 1.0, n + 1))
        c, sn = np.cos(p[:, 2])[:, None], np.sin(p[:, 2])[:, None]
        x = p[:, :1] + c * fpa[None, :, 0] - sn * fpa[None, :, 1]
        y = p[:, 1:2] + sn * fpa[None, :, 0] + c * fpa[None, :, 1]
        polys.append(shapely.polygons(np.stack([x, y], axis=-1)))
    solids = shapely.union_all(finder.index.geometries)
    least = float(np.min(shapely.distance(np.concatenate(polys), solids)))
    assert least >= CART.margin_m + 0.03
