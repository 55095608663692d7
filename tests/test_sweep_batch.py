"""The vectorised sweep of a whole route (kinematics.check.sweep_batch) and the one-query least
clearance (clearance_pass.least_segment) give the answers of one segment at a time.

Source: the reference is the code's own one-segment path, kept and tested against dense
placements and the oracles in tests/test_sweep.py and tests/test_trust_oracle.py:
kinematics.check.sweep.swept_parts per segment and a checker without the batch
(SegmentCache.compute_many = None), whose least clearance is the minimum over every segment's
shapely distance (checked here directly with shapely.distance as well).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

from kinematics.check.clearance import ObstacleIndex, RouteChecker
from kinematics.check.clearance_pass import clearance_of
from kinematics.check.sweep import SweepBudgetError, prepare_footprint, swept_parts
from kinematics.check.sweep_batch import swept_parts_many
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall
from kinematics.files.project import Chassis, Route, Waypoint
from kinematics.motion.segments import arc, clothoid, holonomic_line, line, pivot
from kinematics.plan.planner import plan_route

SQUARE = [(-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3)]
NOTCHED = [(-0.3, -0.3), (0.6, -0.3), (0.6, 0.0), (0.1, 0.0), (0.1, 0.3), (-0.3, 0.3)]
OFFSET = [(0.2, 0.1), (0.9, 0.1), (0.9, 0.5), (0.2, 0.5)]  # does not hold its reference point


def _random_segments(rng: np.random.Generator, n: int) -> list:
    segs = []
    for _ in range(n):
        st = (rng.uniform(-50, 50), rng.uniform(-50, 50), rng.uniform(-4, 4))
        k = int(rng.integers(5))
        d = int(rng.choice([-1, 1]))
        if k == 0:
            segs.append(line(st, rng.uniform(0.0, 5.0), direction=d))
        elif k == 1:
            r = rng.uniform(0.2, 3.0) * float(rng.choice([1.0, 1e3]))
            segs.append(arc(st, r, rng.uniform(-6.5, 6.5), direction=d))
        elif k == 2:
            segs.append(pivot(st, rng.uniform(-7.0, 7.0)))
        elif k == 3:
            segs.append(clothoid(st, 0.0, rng.uniform(-1.0, 1.0), rng.uniform(0.2, 2.0), d))
        else:
            segs.append(holonomic_line(st, (st[0] + rng.uniform(-3, 3),
                                            st[1] + rng.uniform(-3, 3)),
                                       rng.uniform(-1, 1)))
    segs.append(line((1.0, 2.0, 0.5), 0.0))
    segs.append(pivot((1.0, 2.0, 0.5), 0.0))
    return segs


def test_batch_parts_are_bit_for_bit_the_one_segment_parts():
    rng = np.random.default_rng(3)
    for pts in (SQUARE, NOTCHED, OFFSET):
        fp = prepare_footprint(pts)
        segs = _random_segments(rng, 200)
        for tol in (0.002, 0.0005):
            one = [swept_parts(fp, s, tol) for s in segs]
            many = swept_parts_many(fp, segs, tol)
            for s, a, b in zip(segs, one, many):
                assert len(a) == len(b), s
                for p, q in zip(a, b):
                    assert np.array_equal(shapely.get_coordinates(p),
                                          shapely.get_coordinates(q)), s


def _racks(rng: np.random.Generator, n: int) -> tuple[Obstacle, ...]:
    out = []
    for k in range(n):
        cx, cy = rng.uniform(-2, 40), rng.uniform(-4, 4)
        s = rng.uniform(0.1, 0.4)
        out.append(Obstacle(((cx - s, cy - s), (cx + s, cy - s), (cx + s, cy + s),
                             (cx - s, cy + s)), f"rack {k}"))
    return tuple(out)


def _route(rng: np.random.Generator) -> Route:
    pts = [Waypoint(3.0 * k, rng.uniform(-1.5, 1.5)) for k in range(12)]
    return Route("r", tuple(pts), turn_radius_m=float(rng.uniform(0.5, 1.5)))


def test_batched_check_equals_one_segment_at_a_time():
    rng = np.random.default_rng(11)
    walls = (Wall(((-5.0, -6.0), (45.0, -6.0)), 0.2), Wall(((-5.0, 6.0), (45.0, 6.0)), 0.2))
    doors = (Door((20.0, -6.1), (20.0, 6.1), "gate"),)
    for trial in range(12):
        pts = (SQUARE, NOTCHED, OFFSET)[trial % 3]
        chassis = Chassis(footprint=tuple(pts), margin_m=float(rng.uniform(0.0, 0.3)), track_m=0.5)
        fp = FloorPlan("t", walls, _racks(rng, int(rng.integers(3, 40))),
                       doors if trial % 2 else ())
        idx = ObstacleIndex(fp)
        plan = plan_route(_route(rng), chassis)
        fast = RouteChecker(chassis, idx).check(plan, "r").to_dict()
        slow_checker = RouteChecker(chassis, idx)
        slow_checker.segments.compute_many = None
        slow = slow_checker.check(plan, "r").to_dict()
        assert fast == slow
        # The least clearance is the minimum over every segment's parts (shapely distance).
        if idx.geometries.size:
            res = slow_checker.segments.results(plan.segments)
            truth = min(float(np.min(shapely.distance(r.swept.parts[:, None],
                                                      idx.geometries[None, :])))
                        for r in res)
            got = fast["min_clearance_m"]
            if truth > 0.0:
                assert math.isclose(got, truth, rel_tol=0.0, abs_tol=1e-12)
            else:
                assert got <= 1e-12


def test_warm_checker_after_a_move_answers_as_a_fresh_one():
    rng = np.random.default_rng(5)
    chassis = Chassis(footprint=tuple(SQUARE), margin_m=0.05, track_m=0.5)
    idx = ObstacleIndex(FloorPlan("t", (), _racks(rng, 30), ()))
    route = _route(rng)
    warm = RouteChecker(chassis, idx)
    warm.check(plan_route(route, chassis))
    for k in range(3, 9):
        wps = list(route.waypoints)
        wps[k] = Waypoint(wps[k].x + 0.4, wps[k].y - 0.3)
        moved = Route("r", tuple(wps), turn_radius_m=route.turn_radius_m)
        plan = plan_route(moved, chassis)
        assert warm.check(plan).to_dict() == RouteChecker(chassis, idx).check(plan).to_dict()


def test_least_clearance_segment_is_measured_and_named():
    # Three pillars at known distances from a straight route along y = 0: the nearest, a
    # 0.2 m square at (10, 1.0), leaves 1.0 - 0.2 - 0.3 = 0.5 m (footprint half-width 0.3).
    obs = (Obstacle(((4.8, 1.6), (5.2, 1.6), (5.2, 2.0), (4.8, 2.0)), "far"),
           Obstacle(((9.8, 0.8), (10.2, 0.8), (10.2, 1.2), (9.8, 1.2)), "near"),
           Obstacle(((14.8, -1.9), (15.2, -1.9), (15.2, -1.5), (14.8, -1.5)), "mid"))
    idx = ObstacleIndex(FloorPlan("t", (), obs, ()))
    segs = [line((2.0 * k, 0.0, 0.0), 2.0) for k in range(10)]
    c = RouteChecker(Chassis(footprint=tuple(SQUARE), margin_m=0.05, track_m=0.5), idx).check(segs)
    # Source: analytic, 0.8 m (bottom face of "near") - 0.3 m (half-width).
    assert math.isclose(c.min_clearance_m, 0.5, abs_tol=1e-9)
    assert c.min_clearance_at["solid"] == "obstacle 1 (near)"
    res = RouteChecker(Chassis(footprint=tuple(SQUARE), margin_m=0.05, track_m=0.5), idx)
    res.check(segs)
    # Segments whose box stays farther than 0.5 m from every solid were never measured.
    kept = res.segments.results(segs)
    measured = [r.far is not None for r in kept]
    assert 0 < sum(measured) < len(segs)
    assert clearance_of(kept[c.min_clearance_at["segment"]], idx)[0] == c.min_clearance_m


def test_a_batched_turn_over_the_work_budget_is_refused_as_one_call_is():
    # A 12 m x 7 m body pivoting 1000 rad at a 0.1 mm tolerance is past the sweep work
    # budget (kinematics.check.sweep.sweep_cost): the one-pass sweep must refuse it before
    # sweeping, exactly as the one-segment call does, not build millions of vertices.
    # Source: the budget rule of issue 17 (work checked before allocating); common practice.
    big = [[-6, -3.5], [6, -3.5], [6, 3.5], [-6, 3.5]]
    huge = pivot((0.0, 0.0, 0.0), 1000.0)
    with pytest.raises(SweepBudgetError):
        swept_parts(big, huge, 0.0001)
    with pytest.raises(SweepBudgetError):
        swept_parts_many(prepare_footprint(big), [line((0, 0, 0), 1.0), huge], 0.0001)
