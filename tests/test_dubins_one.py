"""The one-pair Dubins path (kinematics.plan.dubins_one) against OMPL and the array version."""

import math

import numpy as np
import pytest
from test_dubins import _grid_pairs, _ompl_lengths, _random_pairs

from kinematics.plan import dubins
from kinematics.plan.dubins_one import shortest_one
from kinematics.plan.search import word_poses


def _ours(a, b, r):
    rr = np.broadcast_to(r, (len(a),))
    return [shortest_one(a[i], b[i], float(rr[i])) for i in range(len(a))]


def test_lengths_match_ompl_random():
    ob = pytest.importorskip("ompl.base")
    a, b, r = _random_pairs(23, 400)
    got = np.array([g[0] for g in _ours(a, b, r)])
    # Source: ompl.base.DubinsStateSpace(r).distance (OMPL 1.7), one pair at a time.
    np.testing.assert_allclose(got, _ompl_lengths(ob.DubinsStateSpace, a, b, r), atol=1e-6)


def test_lengths_and_words_match_the_array_version_on_ties():
    a, b = _grid_pairs()
    got = _ours(a, b, 1.0)
    ref = dubins.shortest(a, b, 1.0)
    # Source: kinematics.plan.dubins.shortest (itself checked against OMPL) on poses where
    # circles touch and words tie: the same length to rounding.
    np.testing.assert_allclose([g[0] for g in got], ref.length_m, atol=1e-9)


def test_pieces_reach_the_goal():
    a, b, r = _random_pairs(5, 300)
    for i, (length, w, pieces) in enumerate(_ours(a, b, r)):
        end = word_poses(a[i], dubins.WORDS[w], pieces, float(r[i]), 0.05)[-1]
        # Source: the problem statement (the path ends at the goal pose; heading mod 2 pi),
        # the pieces laid by the closed-form arc/straight motion.
        assert math.hypot(end[0] - b[i, 0], end[1] - b[i, 1]) < 1e-8
        assert abs(math.remainder(end[2] - b[i, 2], 2 * math.pi)) < 1e-8
        assert sum(pieces) == pytest.approx(length, abs=1e-9)
