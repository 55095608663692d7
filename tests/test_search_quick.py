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
