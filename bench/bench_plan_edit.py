"""Editing a wall on a 20,000-edge floor plan: every route rechecked (target median < 100 ms).

A generated building (bench_check's shelving bays plus walls, about 20,000 edges) with three
routes; each step moves one vertex of a wall next to one route (alternating walls), then does
what the window does after a floor-plan edit: the obstacle index of the new plan
(:meth:`kinematics.check.clearance.RouteChecker.rebased`, which keeps every segment's result the
edit cannot reach) and the check of every route. Baseline, timed in turn with it: the same
edit with a fresh index and fresh checkers (ratio = fresh / incremental).
"""

from __future__ import annotations

import math
import statistics
import sys
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))  # bench_check, run from anywhere
sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from bench_check import CHASSIS, _floorplan, _waypoints  # noqa: E402

from kinematics.check.clearance import ObstacleIndex, RouteChecker  # noqa: E402
from kinematics.files import plan_edits as pe  # noqa: E402
from kinematics.files.floorplan import Wall  # noqa: E402
from kinematics.files.project import Route, Waypoint  # noqa: E402
from kinematics.plan.planner import plan_route  # noqa: E402


def _plan_and_routes():
    fp = _floorplan(20000)
    base = _waypoints(40)
    walls = []
    routes = []
    for k, dy in enumerate((0.0, 12.0, 24.0)):
        wps = tuple(Waypoint(w.x, w.y + dy) for w in base)
        routes.append(Route(f"aisle {k}", wps, turn_radius_m=1.0))
        # A wall alongside each aisle, 2.4 m off its centre line, in 20 pieces.
        for i in range(20):
            x0 = 7.6 * i
            walls.append(Wall(((x0, dy - 4.2), (x0 + 7.0, dy - 4.2)), 0.15))
    fp = replace(fp, walls=tuple(walls))
    return fp, routes


def _edges(fp) -> int:
    return sum(len(o.points) for o in fp.obstacles) + sum(len(w.points) - 1 for w in fp.walls)


def run(quick: bool) -> list[dict]:
    fp, routes = _plan_and_routes()
    plans = [plan_route(r, CHASSIS) for r in routes]
    index = ObstacleIndex(fp)
    checkers = [RouteChecker(CHASSIS, index) for _ in routes]
    for c, pl, r in zip(checkers, plans, routes):
        c.check(pl, route=r)
    steps = 8 if quick else 30
    inc, fresh = [], []
    for k in range(steps):
        w = (k * 7) % len(fp.walls)
        x, y = fp.walls[w].points[1]
        new_fp = pe.move_vertex(fp, "wall", w, 1, (x, y + (0.05 if k % 2 == 0 else -0.05)))
        t0 = time.perf_counter()
        new_index = ObstacleIndex(new_fp)
        checkers = [c.rebased(new_index) for c in checkers]
        for c, pl, r in zip(checkers, plans, routes):
            c.check(pl, route=r)
        inc.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        idx2 = ObstacleIndex(new_fp)
        for pl, r in zip(plans, routes):
            RouteChecker(CHASSIS, idx2).check(pl, route=r)
        fresh.append(time.perf_counter() - t0)
        fp = new_fp
    med, base = statistics.median(inc), statistics.median(fresh)
    return [{"name": f"wall edit, recheck {len(routes)} routes, {_edges(fp)}-edge plan",
             "value": med * 1000, "unit": "ms", "baseline": base * 1000,
             "ratio": base / med if med > 0 else math.inf, "target": "< 100 ms",
             "ok": med < 0.100,
             "spread": f"{min(inc) * 1000:.1f}/{med * 1000:.1f}/{max(inc) * 1000:.1f}"}]


if __name__ == "__main__":
    for row in run("--quick" in sys.argv):
        print(row)
