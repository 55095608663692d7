"""Swept-footprint check speed: building size, a naive reference, interactive recheck.

(a) Check of a 40-waypoint, ~150 m route on generated floor plans of 100 and 20,000 obstacle
    edges with the same clutter near the route: the ratio of times shows the cost does not
    grow with the building (target < 1.5).
(b) The swept check against the reference a competent user would write, measured in the same
    run: footprints placed every 1 cm along the same route and tested against the same
    STRtree (solids within the margin of any placement, then their least distance; no union).
    Target >= 20x faster. Every figure is the median of interleaved runs (min/median/max
    printed).
(c) Replan + recheck after moving one waypoint on a 5,000-edge plan with a
    :class:`kinematics.plan.planner.RoutePlanner` and a warm
    :class:`~kinematics.check.clearance.RouteChecker`
    (median, target < 8 ms); baseline: the full plan and check of the same moved route from
    scratch, timed in turn with it (ratio = full / incremental).
"""

from __future__ import annotations

import math
import statistics
import sys
import time
from pathlib import Path

import numpy as np
import shapely

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from scenes import interleaved, row, spread  # noqa: E402

from kinematics.check.clearance import ObstacleIndex, RouteChecker  # noqa: E402
from kinematics.check.sweep import placed_footprints  # noqa: E402
from kinematics.files.floorplan import FloorPlan, Obstacle  # noqa: E402
from kinematics.files.project import Chassis, Route, Waypoint  # noqa: E402
from kinematics.motion.segments import path_length, poses_along  # noqa: E402
from kinematics.plan.planner import RoutePlanner, plan_route  # noqa: E402

CHASSIS = Chassis(name="bench tug", footprint=((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3),
                                               (-0.3, 0.3)), margin_m=0.05, track_m=0.5)


def _waypoints(n: int = 40) -> list[Waypoint]:
    """A meander through an open hall: legs of about 3.8 m, gentle turns."""
    pts = []
    for k in range(n):
        x = 3.8 * k
        y = 2.0 * math.sin(0.7 * k)
        pts.append(Waypoint(x, y))
    return pts


def _square(cx: float, cy: float, s: float, label: str = "") -> Obstacle:
    return Obstacle(((cx - s, cy - s), (cx + s, cy - s), (cx + s, cy + s), (cx - s, cy + s)),
                    label)


def _floorplan(edges: int, seed: int = 1) -> FloorPlan:
    """25 racks near the route (the same in every plan), the rest far away in the building."""
    rng = np.random.default_rng(seed)
    near = []
    for k in range(25):
        x = 3.8 * (k * 39 / 24) + 1.9
        side = 1 if k % 2 else -1
        near.append(_square(x, 2.0 * math.sin(0.7 * (x / 3.8)) + side * 1.6, 0.3, f"rack {k}"))
    far = []
    n_far = max(0, edges // 4 - len(near))
    side = math.sqrt(n_far) if n_far else 1.0
    for k in range(n_far):
        i, j = divmod(k, int(math.ceil(side)))
        # A grid of shelving bays in the rest of the building, below the hall.
        far.append(_square(-200 + 3.0 * i + rng.uniform(-0.5, 0.5),
                           -20 - 3.0 * j + rng.uniform(-0.5, 0.5), 0.4))
    return FloorPlan(f"generated, {edges} edges", (), tuple(near + far), ())


def _placed_clearance(segs, index: ObstacleIndex, margin_m: float, step_m: float = 0.01
                      ) -> float:
    """Least clearance by placements every ``step_m`` tested against the STRtree."""
    total = path_length(segs)
    poses = poses_along(segs, np.arange(0.0, total + step_m, step_m))
    placed = placed_footprints(CHASSIS.footprint, poses)
    ip, js = index.tree.query(placed, predicate="dwithin", distance=margin_m)
    if len(ip):
        return float(np.min(shapely.distance(placed[ip], index.geometries[js])))
    d = index.tree.query_nearest(placed, return_distance=True, all_matches=False)[1]
    return float(np.min(d))


def run(quick: bool) -> list[dict]:
    rows: list[dict] = []
    route = Route("bench", tuple(_waypoints(40)), turn_radius_m=1.0)
    plan = plan_route(route, CHASSIS)
    length = plan.length_m
    repeats = 5 if quick else 15

    # (a) building size; the two plans are timed in turn so load on the machine hits both.
    indexes = {edges: ObstacleIndex(_floorplan(edges)) for edges in (100, 20000)}
    t = interleaved({edges: (lambda idx=idx: RouteChecker(CHASSIS, idx).check(plan))
                     for edges, idx in indexes.items()}, repeats)
    m = {k: statistics.median(v) for k, v in t.items()}
    rows.append(row(f"check {length:.0f} m route, 100-edge plan", m[100] * 1000, "ms",
                    spread_txt=spread(t[100], 1e3)))
    ratio = m[20000] / m[100]
    rows.append(row("check, 20000-edge vs 100-edge plan", m[20000] * 1000, "ms",
                    m[100] * 1000, ratio, "< 1.5", ratio < 1.5, spread(t[20000], 1e3)))

    # (b) the honest reference: 1 cm placements against the tree (shorter route in quick
    # mode); the two clearances agree within the tolerance and the 1 cm sampling.
    idx = ObstacleIndex(_floorplan(100))
    sub = Route("bench", tuple(_waypoints(10 if quick else 40)), turn_radius_m=1.0)
    sub_plan = plan_route(sub, CHASSIS)
    t = interleaved({"swept": lambda: RouteChecker(CHASSIS, idx).check(sub_plan),
                     "placed": lambda: _placed_clearance(sub_plan.segments, idx,
                                                         CHASSIS.margin_m)},
                    3 if quick else 7)
    ms, mp = statistics.median(t["swept"]), statistics.median(t["placed"])
    rows.append(row(f"swept check vs 1 cm placements + STRtree ({sub_plan.length_m:.0f} m)",
                    ms * 1000, "ms", mp * 1000, mp / ms, ">= 20", mp / ms >= 20,
                    spread(t["swept"], 1e3)))

    # (c) replan + recheck after moving one waypoint, warm planner and checker, 5,000-edge
    # plan; the full plan + check from scratch of the same moved route is timed in turn.
    idx = ObstacleIndex(_floorplan(5000))
    planner = RoutePlanner()
    checker = RouteChecker(CHASSIS, idx)
    checker.check(planner.plan(route, CHASSIS))
    # The window also asks for waypoint checks (route=...): a second warm checker for those.
    checker_wp = RouteChecker(CHASSIS, idx)
    checker_wp.check(planner.plan(route, CHASSIS), route=route)
    wps = list(route.waypoints)
    rng = np.random.default_rng(7)
    samples, plans, checks, full, with_wp, wp_checks = [], [], [], [], [], []
    for _ in range(30 if quick else 100):
        k = int(rng.integers(5, 35))
        moved = list(wps)
        w = wps[k]
        moved[k] = Waypoint(w.x + rng.uniform(-0.3, 0.3), w.y + rng.uniform(-0.3, 0.3))
        r2 = Route("bench", tuple(moved), turn_radius_m=1.0)
        t0 = time.perf_counter()
        p2 = planner.plan(r2, CHASSIS)
        t1 = time.perf_counter()
        checker.check(p2, "bench")
        t2 = time.perf_counter()
        RouteChecker(CHASSIS, idx).check(plan_route(r2, CHASSIS), "bench")
        t3 = time.perf_counter()
        checker_wp.check(p2, "bench", route=r2)
        wp_checks.append(time.perf_counter() - t3)
        with_wp.append(t1 - t0 + wp_checks[-1])
        samples.append(t2 - t0)
        plans.append(t1 - t0)
        checks.append(t2 - t1)
        full.append(t3 - t2)
    inc, base = statistics.median(samples), statistics.median(full)
    rows.append(row("replan + recheck after moving a waypoint", inc * 1000, "ms",
                    base * 1000, base / inc, "< 8 ms", inc * 1000 < 8.0,
                    spread(samples, 1e3)))
    rows.append({"name": "  of which replan (warm planner)", "value":
                 statistics.median(plans) * 1000, "unit": "ms", "baseline": None,
                 "ratio": None, "target": None})
    rows.append({"name": "  of which recheck (warm checker)", "value":
                 statistics.median(checks) * 1000, "unit": "ms", "baseline": None,
                 "ratio": None, "target": None})
    rows.append({"name": "  same, with waypoint checks (as the window)", "value":
                 statistics.median(with_wp) * 1000, "unit": "ms", "baseline": None,
                 "ratio": None, "target": None})
    rows.append({"name": "  of which recheck with waypoint checks", "value":
                 statistics.median(wp_checks) * 1000, "unit": "ms", "baseline": None,
                 "ratio": None, "target": "~6 ms"})
    return rows


if __name__ == "__main__":
    for row in run(quick="--quick" in sys.argv):
        print(row)
