"""Clothoid segments: closed-form poses against numerical integration of the heading."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.special import fresnel

from kinematics.motion.segments import Segment, arc, clothoid, clothoid_poses, line


def _quad_pose(start, k0, k1, length, direction, s):
    """Pose at distance s by scipy.integrate.quad of cos / sin of the heading."""
    c = (k1 - k0) / length

    def th(u):
        return start[2] + direction * (k0 * u + 0.5 * c * u * u)

    opts = dict(epsabs=1e-13, epsrel=1e-12, limit=400)
    x = start[0] + direction * quad(lambda u: math.cos(th(u)), 0.0, s, **opts)[0]
    y = start[1] + direction * quad(lambda u: math.sin(th(u)), 0.0, s, **opts)[0]
    return np.array([x, y, th(s)])


CASES = [
    # (start, k0, k1, length, direction)
    ((0.0, 0.0, 0.0), 0.0, 1.0, 2.0, 1),
    ((1.0, -2.0, 0.7), 0.8, 0.0, 1.5, 1),
    ((0.0, 0.0, -1.2), 0.0, -2.5, 0.9, 1),
    ((3.0, 4.0, 2.0), -0.5, 1.5, 3.0, -1),
    ((0.0, 0.0, 0.0), 1.0, 1.0 + 1e-7, 4.0, 1),   # nearly an arc: quadrature branch
    ((0.0, 0.0, 0.3), 2.0, 1.999, 6.0, -1),
    ((0.0, 0.0, 0.0), 0.0, 0.3, 25.0, 1),          # long and gentle
]


@pytest.mark.parametrize("start,k0,k1,length,direction", CASES)
def test_clothoid_poses_match_quadrature(start, k0, k1, length, direction):
    # Source: scipy.integrate.quad of x' = cos(th), y' = sin(th), th linear curvature
    # (the definition of the Euler spiral, DLMF 7.2 / Meek & Walton 1992); 1e-9 m per the issue.
    seg = clothoid(start, k0, k1, length, direction)
    st = np.linspace(0.0, length, 23)
    got = seg.poses_at(st)
    for s, g in zip(st, got):
        want = _quad_pose(start, k0, k1, length, direction, s)
        assert np.hypot(*(g[:2] - want[:2])) < 1e-9
        assert abs(g[2] - want[2]) < 1e-12


def test_unit_spiral_is_the_fresnel_integrals():
    # Source: scipy.special.fresnel; with curvature pi * s the clothoid from the origin is
    # (C(s), S(s)) exactly (DLMF 7.2.7-7.2.8, heading pi s^2 / 2).
    seg = clothoid((0.0, 0.0, 0.0), 0.0, math.pi * 2.0, 2.0)
    s = np.linspace(0.0, 2.0, 41)
    S, C = fresnel(s)
    got = seg.poses_at(s)
    assert np.max(np.abs(got[:, 0] - C)) < 1e-12
    assert np.max(np.abs(got[:, 1] - S)) < 1e-12
    assert np.allclose(got[:, 2], math.pi * s * s / 2.0, atol=1e-12)


def test_limits_are_arc_and_line():
    # Source: common practice - a clothoid of equal end curvatures is an arc, of zero a line.
    a = arc((0.5, 0.2, 0.4), 2.0, 1.3)
    c = clothoid((0.5, 0.2, 0.4), 0.5, 0.5, a.length_m)
    assert np.allclose(c.end, a.end, atol=1e-12)
    ln = line((1.0, 1.0, 0.3), 2.0)
    assert np.allclose(clothoid((1.0, 1.0, 0.3), 0.0, 0.0, 2.0).end, ln.end, atol=1e-12)


def test_clothoid_fields_and_dict():
    c = clothoid((0.0, 0.0, 0.0), 0.2, -0.6, 2.0)
    assert math.isclose(c.turn_rad, 2.0 * (0.2 - 0.6) / 2.0)
    assert c.radius_m is None
    assert math.isclose(c.min_radius_m, 1.0 / 0.6)
    assert math.isclose(c.sharpness, -0.4)
    d = c.to_dict()
    assert d["kind"] == "clothoid"
    assert d["curvature_start_per_m"] == 0.2 and d["curvature_end_per_m"] == -0.6
    with pytest.raises(ValueError):
        Segment("clothoid", (0, 0, 0), 1.0, 5.0, 1, kappa0=0.0, kappa1=1.0)


def test_public_pose_function_matches_segment():
    c = clothoid((1.0, 2.0, 0.5), 0.1, 0.9, 3.0)
    s = np.array([0.0, 1.0, 3.0])
    assert np.array_equal(clothoid_poses((1.0, 2.0, 0.5), 0.1, 0.9, 3.0, 1, s), c.poses_at(s))


# -- sweep ------------------------------------------------------------------------------------
SWEEP_CASES = [
    ((0.0, 0.0, 0.0), 0.0, 1.2, 1.5, 1),
    ((1.0, 0.5, 0.8), 0.9, -0.4, 2.0, 1),
    ((0.0, 0.0, 2.0), 0.0, -0.8, 1.2, -1),
]


CONVEX = [(-0.35, -0.3), (0.65, -0.3), (0.65, 0.3), (-0.35, 0.3)]
NOT_CONVEX = [(-0.3, -0.25), (0.6, -0.25), (0.6, 0.25), (0.1, 0.1), (-0.3, 0.25)]


@pytest.mark.parametrize("fp", [CONVEX, NOT_CONVEX], ids=["convex", "not-convex"])
@pytest.mark.parametrize("start,k0,k1,length,direction", SWEEP_CASES)
def test_clothoid_sweep_is_conservative_against_dense_union(start, k0, k1, length, direction,
                                                             fp):
    # Source: shapely union of the footprint placed every 1 mm along the clothoid (poses by
    # scipy.integrate.quad above), the dense-pose oracle the issue names; the sweep must
    # contain it and exceed it by at most the 2 mm tolerance.
    import shapely

    from kinematics.check.sweep import placed_footprints, swept_segment

    seg = clothoid(start, k0, k1, length, direction)
    tol = 0.002
    band = swept_segment(fp, seg, tol)
    st = np.linspace(0.0, length, int(length / 0.001) + 1)
    poses = np.array([_quad_pose(start, k0, k1, length, direction, s) for s in st[::50]])
    assert np.max(np.abs(seg.poses_at(st[::50]) - poses)) < 1e-9
    dense = shapely.union_all(placed_footprints(fp, seg.poses_at(st)))
    assert dense.difference(band).area < 1e-9            # contains the truth
    assert band.hausdorff_distance(dense) <= tol + 2e-4   # and is tight (densify rounding)
    assert band.difference(dense.buffer(tol)).area < 1e-9


def test_sweep_of_equal_curvature_clothoid_matches_arc():
    # Source: common practice - a clothoid with k0 == k1 is an arc, whose sweep is exact but
    # for the stated tolerance.
    from kinematics.check.sweep import swept_segment

    fp = [(-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3)]
    a = swept_segment(fp, arc((0, 0, 0), 1.0, 1.2))
    c = swept_segment(fp, clothoid((0, 0, 0), 1.0, 1.0, 1.2))
    assert a.symmetric_difference(c).area < 0.002 * 5.0
