"""The route finder's shortcuts: the clearance grid's quick proof of a collision, the poses of a
Dubins / Reeds-Shepp word, and the planner's cache the heuristic fills."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from test_search import BAY, CART, DOOR_SCENE, _boxes, _project, _route

from kinematics.motion.segments import poses_along
from kinematics.plan import dubins, reeds_shepp
from kinematics.plan.planner import plan_route
from kinematics.plan.search import (
    SAFETY_M,
    FindSettings,
    RouteFinder,
    segment_poses,
    word_poses,
)


def _finder(rects, reverse=False):
    r = _route([(1.0, 1.3, 0.0), (6.6, 5.0, 90.0)], reverse=reverse)
    f = RouteFinder(_project(rects, CART, r), settings=FindSettings(time_limit_s=5.0))
    f.grid(r)
    return f


@pytest.mark.parametrize("rects", [DOOR_SCENE, BAY])
def test_surely_blocked_only_where_the_footprint_is_within_the_margin(rects):
    f = _finder(rects)
    solids = shapely.union_all(_boxes(rects))
    fp = np.asarray(CART.footprint, dtype=float)
    rng = np.random.default_rng(7)
    x0, y0, x1, y1 = shapely.total_bounds(solids)
    poses = np.c_[rng.uniform(x0, x1, 3000), rng.uniform(y0, y1, 3000),
                  rng.uniform(-math.pi, math.pi, 3000)]
    blocked = np.array([f._surely_blocked(p[None, :]) for p in poses])
    c, s = np.cos(poses[:, 2])[:, None], np.sin(poses[:, 2])[:, None]
    x = poses[:, :1] + c * fp[None, :, 0] - s * fp[None, :, 1]
    y = poses[:, 1:2] + s * fp[None, :, 0] + c * fp[None, :, 1]
    d = shapely.distance(shapely.polygons(np.stack([x, y], axis=-1)), solids)
    # Source: shapely distance of the placed footprint (outside the finder's grid): a pose the
    # grid calls blocked really is nearer the solids than the margin the search keeps.
    assert blocked.sum() > 300  # the test means something: many poses are proved blocked
    assert np.all(d[blocked] < CART.margin_m + SAFETY_M)


def test_word_poses_follow_the_planners_segments():
    rng = np.random.default_rng(3)
    for mod in (dubins, reeds_shepp):
        a = np.c_[rng.uniform(-4, 4, (40, 2)), rng.uniform(-3, 3, 40)]
        b = np.c_[rng.uniform(-4, 4, (40, 2)), rng.uniform(-3, 3, 40)]
        batch = mod.shortest(a, b, 1.3)
        letters = reeds_shepp.LETTERS if mod is reeds_shepp else dubins.WORDS
        for i in range(40):
            w = letters[batch.word[i]]
            segs = dubins.pieces_to_segments(a[i], w, batch.params[i], 1.3)
            got = word_poses(a[i], w, batch.params[i], 1.3, 0.05)
            # Source: kinematics.plan.dubins.pieces_to_segments (the planner's pieces) laid
            # by the segments' own closed-form motion: the same poses at the same stations.
            st = [0.0]
            for piece in batch.params[i]:
                if abs(piece) >= 1e-12:
                    n = max(2, math.ceil(abs(piece) / 0.05) + 1)
                    st.extend(st[-1] + np.linspace(0.0, abs(piece), n)[1:])
            ref = poses_along(segs, np.minimum(st, sum(s.length_m for s in segs)))
            np.testing.assert_allclose(got[:, :2], ref[:, :2], atol=1e-9)
            assert np.all(np.abs(np.remainder(got[:, 2] - ref[:, 2] + math.pi, 2 * math.pi)
                                 - math.pi) < 1e-9)
            assert math.hypot(*(got[-1, :2] - b[i, :2])) < 1e-8
            assert len(segment_poses(segs, 0.05)) >= 2


def test_cached_connections_are_the_planners_own():
    # The heuristic puts its Reeds-Shepp words into the planner's cache; a connection planned
    # through that cache must equal the one planned without it.
    r = _route([(0.5, 3.5, 0.0), (4.45, 0.35, 90.0)], reverse=True)
    proj = _project(BAY, CART, r)
    f = RouteFinder(proj, settings=FindSettings(time_limit_s=5.0))
    res = f.find(r)
    assert res.found
    assert len(f._quick) > 50
    for a in list(f._quick)[::7]:
        sub = _route([(a[0], a[1], math.degrees(a[2])), (4.45, 0.35, 90.0)], reverse=True)
        # Source: PieceCache's contract (kinematics.plan.planner): the plan is the same with
        # or without it; here compared segment by segment.
        assert plan_route(sub, CART, cache=f._cache).segments == plan_route(sub, CART).segments


def test_grid_distance_is_the_octile_distance_in_open_space():
    from kinematics.plan.heuristics import ClearanceGrid

    g = ClearanceGrid(np.array([], dtype=object), (0.0, 0.0, 6.0, 4.0), 0.1, 0.3)
    d = g.distance_to(1.0, 1.0)
    i, j = np.meshgrid(np.arange(g.nx), np.arange(g.ny), indexing="ij")
    a, b = np.abs(i - 10), np.abs(j - 10)
    # Source: the octile distance, the shortest 8-connected grid path between two cells
    # (max + (sqrt 2 - 1) min steps; common practice in grid path finding).
    np.testing.assert_allclose(d, 0.1 * (np.maximum(a, b) + (math.sqrt(2) - 1) * np.minimum(a, b)),
                               atol=1e-9)


def test_grid_distance_goes_round_a_wall_and_bounds_hold():
    from kinematics.plan.heuristics import ClearanceGrid

    wall = shapely.box(2.9, 0.0, 3.1, 3.0)  # a wall from the floor to y = 3 in a 6 x 4 room
    g = ClearanceGrid(np.array([wall], dtype=object), (0.0, 0.0, 6.0, 4.0), 0.1, 0.3)
    d = g.distance_to(1.0, 1.0)
    far = d[g.cell_of(5.0, 1.0)]
    # Source: plane geometry: round the wall's end (its corner grown by the free radius
    # 0.3 m, at about (3, 3.3)) the path is at least the two straight legs, and the
    # 8-connected grid path is at most 8 % (octile vs Euclid) longer than that.
    legs = 2 * math.hypot(2.0, 2.3)
    assert legs - 0.3 <= far <= legs * 1.09
    rng = np.random.default_rng(4)
    x, y = rng.uniform(0, 6, 500), rng.uniform(0, 4, 500)
    true = shapely.distance(shapely.points(x, y), wall)
    lo = np.array([g.lower_bound(a, b) for a, b in zip(x, y)])
    hi = np.array([g.upper_bound(a, b) for a, b in zip(x, y)])
    # Source: shapely distance to the wall: the grid's bounds bracket it.
    assert np.all(lo <= true + 1e-12) and np.all(true <= hi + 1e-12)


@pytest.mark.parametrize("reverse", [False, True])
def test_connections_are_the_planners_own(reverse):
    # A forward-only steered route's connections are laid from the Dubins word directly
    # (RouteFinder._plain_dubins); they must be the planner's connection between those poses.
    f = _finder(DOOR_SCENE, reverse=reverse)
    r = _route([(1.0, 1.3, 0.0), (6.6, 5.0, 90.0)], reverse=reverse)
    assert (f._plain_dubins(r) is not None) == (not reverse)
    rng = np.random.default_rng(9)
    for _ in range(60):
        a = (*rng.uniform(0, 8, 2), rng.uniform(-math.pi, math.pi))
        b = (*rng.uniform(0, 8, 2), rng.uniform(-math.pi, math.pi))
        got = f.connect(r, a, b)
        ref = f._planned(r, a, b)
        # Source: kinematics.plan.planner.plan_route (the route's own planner) between the
        # same two poses: the same pieces to rounding, ending at the same pose.
        assert len(got) == len(ref)
        for p, q in zip(got, ref):
            assert p.kind == q.kind and p.direction == q.direction
            assert p.length_m == pytest.approx(q.length_m, abs=1e-9)
            assert p.curvature == pytest.approx(q.curvature, abs=1e-12)
            np.testing.assert_allclose(p.end, q.end, atol=1e-9)
