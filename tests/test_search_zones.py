"""Route finder and the plan's zones and trailers: keep-out, margin and one-way zones honoured
by the search itself (not only by the final re-check), and a towed trailer kept clear too.

Every found route is judged here by an independent dense-pose shapely oracle built from the
boxes and zone polygons of the test, not by the planner's own check.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from shapely.geometry import Polygon, box
from test_search import CART, _boxes, _route

from kinematics.files.floorplan import FloorPlan, Obstacle, Zone
from kinematics.plan.search import FindSettings, RouteFinder

SETTINGS = FindSettings(time_limit_s=10.0)


def _plan(rects, zones=()):
    return FloorPlan(name="scene", obstacles=tuple(
        Obstacle(tuple(map(tuple, np.asarray(b.exterior.coords)[:-1].tolist())), f"block {i}")
        for i, b in enumerate(_boxes(rects))), zones=tuple(zones))


def _zone(kind, rect, **kw):
    x0, y0, x1, y1 = rect
    return Zone(kind, ((x0, y0), (x1, y0), (x1, y1), (x0, y1)), kind, **kw)


def dense_footprints(plan, footprint, step_m=0.005, step_deg=0.5):
    """Footprints placed every 5 mm and 0.5 deg along each segment, with each pose's
    direction of travel (``Segment.poses_at_fraction``; placement by rotation here)."""
    fp = np.asarray(footprint, dtype=float)
    polys, poses, courses = [], [], []
    for s in plan.segments:
        n = max(2, int(math.ceil(max(s.length_m / step_m,
                                     abs(s.turn_rad) / math.radians(step_deg)))))
        f = np.linspace(0.0, 1.0, n + 1)
        p = s.poses_at_fraction(f)
        c, sn = np.cos(p[:, 2])[:, None], np.sin(p[:, 2])[:, None]
        x = p[:, :1] + c * fp[None, :, 0] - sn * fp[None, :, 1]
        y = p[:, 1:2] + sn * fp[None, :, 0] + c * fp[None, :, 1]
        polys.append(shapely.polygons(np.stack([x, y], axis=-1)))
        poses.append(p)
        if s.kind == "pivot":
            courses.append(np.full(len(f), np.nan))
        else:
            courses.append(p[:, 2] + (0.0 if s.direction > 0 else math.pi)
                           if s.course_rad is None else np.full(len(f), s.course_rad))
    return np.concatenate(polys), np.concatenate(poses), np.concatenate(courses)


def _goal_reached(res, goal):
    end = res.plan.segments[-1].end
    assert math.hypot(end[0] - goal[0], end[1] - goal[1]) <= 1e-3
    assert abs(math.remainder(end[2] - math.radians(goal[2]), 2 * math.pi)) <= \
        math.radians(0.1)


# A room 16 x 7 m; the way from west to east is straight along y = 5.
ROOM = [(-0.2, -0.2, 16.2, 0.0), (-0.2, 7.0, 16.2, 7.2), (-0.2, 0.0, 0.0, 7.0),
        (16.0, 0.0, 16.2, 7.0)]


def test_keep_out_zone_blocking_the_straight_way_is_driven_round():
    keep = (6.0, 3.0, 8.0, 7.0)  # from the north wall down to y 3: the straight way is barred
    goal = (14.5, 5.0, 0.0)
    r = _route([(1.5, 5.0, 0.0), goal])
    from kinematics.files.project import Project
    proj = Project(_plan(ROOM, [_zone("keep_out", keep)]), CART, (r,))
    finder = RouteFinder(proj, settings=SETTINGS)
    from kinematics.check.clearance import check_route
    from kinematics.plan.planner import plan_route
    sketched = check_route(plan_route(r, CART), CART, finder.index, route=r)
    assert any(v.kind == "keep_out" for v in sketched.violations)  # the sketch is barred
    res = finder.find(r)
    assert res.found, res.reason
    assert res.check.clear
    _goal_reached(res, goal)
    polys, _p, _c = dense_footprints(res.plan, CART.footprint)
    # Source: shapely, densely placed footprints: none meets the keep-out polygon, and every
    # one keeps the chassis margin from the walls.
    assert not np.any(shapely.intersects(polys, box(*keep)))
    walls = shapely.union_all(_boxes(ROOM))
    assert float(np.min(shapely.distance(polys, walls))) >= CART.margin_m - 1e-9


# The same room with a pillar in the middle: two passages 2.4 m wide, south and north of it.
PILLAR = ROOM + [(7.0, 2.3, 9.0, 4.7)]
SOUTH = (6.0, 0.0, 10.0, 2.3)
NORTH = (6.0, 4.7, 10.0, 7.0)


def _pillar_find(zone):
    goal = (14.5, 3.5, 0.0)
    r = _route([(1.5, 3.5, 0.0), goal])
    from kinematics.files.project import Project
    proj = Project(_plan(PILLAR, [zone]), CART, (r,))
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    assert res.found, res.reason
    assert res.check.clear
    _goal_reached(res, goal)
    polys, poses, courses = dense_footprints(res.plan, CART.footprint)
    at_pillar = np.abs(poses[:, 0] - 8.0) < 0.5
    side = "north" if np.all(poses[at_pillar, 1] > 3.5) else (
        "south" if np.all(poses[at_pillar, 1] < 3.5) else "both")
    return res, polys, poses, courses, side


@pytest.mark.parametrize("passage,other", [(SOUTH, "north"), (NORTH, "south")])
def test_margin_zone_too_wide_for_one_passage_sends_the_route_through_the_other(passage,
                                                                                other):
    # A margin zone asking 1.0 m in a 2.4 m passage: the 0.6 m cart cannot keep it there
    # (at most 0.9 m each side), so only the other passage is clear.
    need = 1.0
    res, polys, _p, _c, side = _pillar_find(_zone("margin", passage, margin_m=need))
    assert side == other
    walls = shapely.union_all(_boxes(PILLAR))
    zone = box(*passage)
    inside = shapely.intersection(polys, zone)
    has = ~shapely.is_empty(inside)
    # Source: shapely on dense poses: the part of each footprint inside the zone keeps the
    # zone's margin, the rest the chassis margin (the rule of kinematics.check.zones).
    if has.any():
        assert float(np.min(shapely.distance(inside[has], walls))) >= need - 1e-9
    outside = shapely.difference(polys, zone)
    assert float(np.min(shapely.distance(outside, walls))) >= CART.margin_m - 1e-9


def test_margin_zone_smaller_than_the_chassis_margin_lets_the_route_through():
    # A wall leaving one gap of 1.3 m at the north: the cart (0.6 m) keeps 0.35 m each side
    # at most, short of a 0.4 m chassis margin; a margin zone of 0.1 m there allows it.
    from dataclasses import replace

    from kinematics.files.project import Project
    cart = replace(CART, margin_m=0.4)
    rects = ROOM + [(7.0, 0.0, 9.0, 5.7)]  # one passage only, north, y 5.7..7.0
    area = (3.5, 4.0, 12.5, 7.0)  # the gap and the stretch before and after it
    zone = _zone("margin", area, margin_m=0.1)
    goal = (14.5, 3.5, 0.0)
    r = _route([(1.5, 3.5, 0.0), goal])
    proj = Project(_plan(rects, [zone]), cart, (r,))
    res = RouteFinder(proj, settings=SETTINGS).find(r)
    assert res.found, res.reason
    _goal_reached(res, goal)
    polys, _p, _c = dense_footprints(res.plan, cart.footprint)
    walls = shapely.union_all(_boxes(rects))
    outside = shapely.difference(polys, box(*area))
    outside = outside[~shapely.is_empty(outside)]
    # Source: shapely on dense poses (the margin zone's rule as above).
    assert float(np.min(shapely.distance(polys, walls))) >= 0.1 - 1e-9
    assert float(np.min(shapely.distance(outside, walls))) >= 0.4 - 1e-9
    # Without the zone there is no clear route through the gap.
    bare = Project(_plan(rects), cart, (r,))
    assert not RouteFinder(bare, settings=FindSettings(time_limit_s=1.5)).find(r).found


def test_one_way_zone_against_the_route_sends_it_through_the_other_passage():
    # South passage one-way westward (180 deg); the route drives east.
    zone = _zone("one_way", SOUTH, direction_deg=180.0)
    res, _polys, poses, courses, side = _pillar_find(zone)
    assert side == "north"
    # Source: dense poses: wherever the reference point is inside the zone, its direction
    # of travel is within 90 deg of the zone's (shapely point-in-polygon here).
    inz = shapely.contains_xy(Polygon(zone.points), poses[:, 0], poses[:, 1])
    ok = ~np.isnan(courses) & inz
    assert np.all(np.cos(courses[ok] - math.pi) >= -1e-9)


def test_a_waypoint_inside_a_keep_out_zone_is_a_one_line_error():
    from kinematics.errors import ValidationError
    from kinematics.files.project import Project
    r = _route([(1.5, 5.0, 0.0), (7.0, 5.0, 0.0)])
    proj = Project(_plan(ROOM, [_zone("keep_out", (6.0, 3.0, 8.0, 7.0))]), CART, (r,))
    with pytest.raises(ValidationError, match=r"waypoints\[1\].*inside zone 0 \(keep_out\)") as e:
        RouteFinder(proj, settings=SETTINGS).find(r)
    assert "\n" not in str(e.value)


def dense_trailer_footprints(plan, trailer, step_m=0.005):
    """The trailer's footprints every 5 mm of tug travel, its heading integrated here with
    scipy's solve_ivp from the kinematic trailer model (the axle moves only along its
    heading: phi' = (H' . (-sin phi, cos phi)) / drawbar, H the hitch point on the tug's x
    axis), independently of kinematics.motion.trailers. Lines and arcs only."""
    from scipy.integrate import solve_ivp

    fp = np.asarray(trailer.footprint, dtype=float)
    hx, dbar = trailer.hitch_x_m, trailer.drawbar_m
    phi = plan.segments[0].start[2]  # in line with the tug at the start, as the check starts
    out = []
    for s in plan.segments:
        assert s.kind in ("line", "arc")
        L = s.length_m
        kappa = s.turn_rad / L if L > 0 else 0.0

        def rhs(u, y, s=s, kappa=kappa):
            th = s.start[2] + kappa * u
            vx, vy = s.direction * math.cos(th), s.direction * math.sin(th)
            hx_dot = vx - hx * kappa * math.sin(th)
            hy_dot = vy + hx * kappa * math.cos(th)
            return [(-hx_dot * math.sin(y[0]) + hy_dot * math.cos(y[0])) / dbar]

        u = np.linspace(0.0, L, max(2, int(math.ceil(L / step_m)) + 1))
        sol = solve_ivp(rhs, (0.0, L), [phi], t_eval=u, rtol=1e-10, atol=1e-12)
        ph = sol.y[0]
        tug = s.poses_at(u)
        hxy = tug[:, :2] + hx * np.column_stack([np.cos(tug[:, 2]), np.sin(tug[:, 2])])
        axle = hxy - dbar * np.column_stack([np.cos(ph), np.sin(ph)])
        c, sn = np.cos(ph)[:, None], np.sin(ph)[:, None]
        x = axle[:, :1] + c * fp[None, :, 0] - sn * fp[None, :, 1]
        y = axle[:, 1:2] + sn * fp[None, :, 0] + c * fp[None, :, 1]
        out.append(shapely.polygons(np.stack([x, y], axis=-1)))
        phi = float(ph[-1])
    return np.concatenate(out)


def test_tug_with_trailer_through_a_door_turn_keeps_the_trailer_clear():
    from dataclasses import replace

    from kinematics.check.train import check_train
    from kinematics.files.project import Project, Trailer
    # Invented train: the cart as tug, towing a 0.85 m cart on a 0.75 m drawbar.
    cart = Trailer("cart", -0.35, 0.75, ((-0.45, -0.3), (0.4, -0.3), (0.4, 0.3),
                                         (-0.45, 0.3)), None, 60.0)
    tug = replace(CART, name="tug", trailers=(cart,))
    door = 1.5  # corridor 2.6 m wide, a 1.5 m door into the room above
    rects = [(-1, -0.5, 12, 0.0), (-1, 2.6, 6.0, 2.8), (6.0 + door, 2.6, 12, 2.8),
             (-1, 0, -0.5, 7), (11.5, 0, 12, 7), (4.0, 2.8, 4.2, 7), (9.0, 2.8, 9.2, 7),
             (4.0, 6.8, 9.2, 7.0)]
    goal = (6.75, 5.5, 90.0)
    r = _route([(2.5, 1.3, 0.0), goal])
    walls = shapely.union_all(_boxes(rects))
    # The tug alone takes the door so tightly that its trailer cuts the jamb: the scene asks
    # the search to mind the trailer.
    alone = RouteFinder(Project(_plan(rects), CART, (r,)), settings=SETTINGS).find(r)
    assert alone.found
    cut = dense_trailer_footprints(alone.plan, cart)
    assert float(np.min(shapely.distance(cut, walls))) < CART.margin_m
    finder = RouteFinder(Project(_plan(rects), tug, (r,)), settings=SETTINGS)
    res = finder.find(r)
    assert res.found, res.reason
    _goal_reached(res, goal)
    assert check_train(res.plan, tug, finder.index, route=res.route).clear
    # Source: scipy solve_ivp of the kinematic trailer model, shapely distances of dense
    # trailer footprints; and dense tug footprints as above.
    polys = dense_trailer_footprints(res.plan, cart)
    assert float(np.min(shapely.distance(polys, walls))) >= tug.margin_m - 1e-6
    tug_polys, _p, _c = dense_footprints(res.plan, tug.footprint)
    assert float(np.min(shapely.distance(tug_polys, walls))) >= tug.margin_m - 1e-9
