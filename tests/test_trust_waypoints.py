"""``waypoint_blocked`` only where the chassis stands on or passes a waypoint, judged by the
footprint (shared/contract.md, version 1 additions)."""

from __future__ import annotations

import math

import numpy as np
from shapely.geometry import Polygon

from kinematics.check.clearance import ObstacleIndex, check_route
from kinematics.files.floorplan import FloorPlan, Obstacle
from kinematics.files.project import Chassis, Route, Waypoint
from kinematics.motion.segments import poses_along
from kinematics.plan.planner import plan_route

CH = Chassis(track_m=0.5)  # footprint x -0.3..0.6, y -0.3..0.3, margin 0.05


def _post(cx: float, cy: float, half: float = 0.05) -> Obstacle:
    return Obstacle(((cx - half, cy - half), (cx + half, cy - half), (cx + half, cy + half),
                     (cx - half, cy + half)), "post")


def _oracle(segs, chassis, solid) -> float:
    """Least distance from the footprint placed every 5 mm along the path to ``solid``
    (shapely; the dense-pose reference)."""
    total = sum(s.length_m for s in segs)
    fp = np.array(chassis.footprint)
    best = math.inf
    for x, y, h in poses_along(segs, np.arange(0.0, total + 1e-9, 0.005)):
        c, s = math.cos(h), math.sin(h)
        q = Polygon(np.column_stack([x + c * fp[:, 0] - s * fp[:, 1],
                                     y + s * fp[:, 0] + c * fp[:, 1]]))
        best = min(best, q.distance(solid))
    return best


def test_a_corner_cut_by_a_fillet_is_not_a_stop():
    # The measured case: a post just outside a 1.2 m fillet's corner. The corner waypoint
    # (5, 0) is r (sqrt 2 - 1) = 0.497 m from the arc (circle geometry), so the chassis never
    # stands there; a footprint placed at the corner would hit the post.
    post = _post(5.1, -0.1)
    route = Route("r", (Waypoint(0, 0), Waypoint(5, 0), Waypoint(5, 5)), turn_radius_m=1.2)
    plan = plan_route(route, CH)
    chk = check_route(plan, CH, ObstacleIndex(FloorPlan(obstacles=(post,))), route=route)
    true = _oracle(plan.segments, CH, Polygon(post.points))
    # Source: dense-pose shapely oracle of the real placements along the path.
    assert true > CH.margin_m
    assert chk.clear and not chk.violations
    assert true - 0.002 <= chk.min_clearance_m <= true + 1e-9
    # The footprint placed at the corner point (heading 45 deg, the arc's middle) would
    # overlap it: that placement is what must not be judged.
    c = math.cos(math.pi / 4)
    corner = Polygon([(5 + c * x - c * y, c * x + c * y) for x, y in CH.footprint])
    assert corner.intersects(Polygon(post.points))
    # The same post at a waypoint the path passes through (no fillet) is reported.
    sharp = Route("r", route.waypoints, turn_radius_m=0.0)
    chk = check_route(plan_route(sharp, CH), CH, ObstacleIndex(FloorPlan(obstacles=(post,))),
                      route=sharp)
    assert any(v.kind == "waypoint_blocked" and "waypoint 2" in v.message
               for v in chk.violations)


def test_the_footprint_is_judged_not_the_waypoint_point():
    # A fork-ahead footprint (x 0.2..1.0) does not hold its reference point: a post around
    # the start waypoint's point is behind the chassis, which is clear there.
    fork = Chassis(footprint=((0.2, -0.3), (1.0, -0.3), (1.0, 0.3), (0.2, 0.3)), track_m=0.5)
    route = Route("r", (Waypoint(0, 0, 0.0), Waypoint(3, 0, 0.0)), turn_radius_m=0.0)
    plan = plan_route(route, fork)
    idx = ObstacleIndex(FloorPlan(obstacles=(_post(0.0, 0.0),)))
    chk = check_route(plan, fork, idx, route=route)
    # Source: shapely distance of the footprint at the start pose to the post: 0.2 - 0.05.
    assert _oracle(plan.segments, fork, Polygon(_post(0.0, 0.0).points)) >= 0.15 - 1e-9
    assert not [v for v in chk.violations if v.kind == "waypoint_blocked"]
    assert chk.clear
    # A post under the footprint placed at the start is reported.
    idx = ObstacleIndex(FloorPlan(obstacles=(_post(0.5, 0.0),)))
    chk = check_route(plan, fork, idx, route=route)
    blocked = [v for v in chk.violations if v.kind == "waypoint_blocked"]
    assert blocked and "waypoint 1" in blocked[0].message
