"""Corner fillets: lengths, tangency and fit against plane geometry and shapely."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from kinematics.motion.segments import joint_gaps, path_length
from kinematics.plan.fillet import (
    deflections,
    fillet_segments,
    fit_radii,
    layout_fillets,
    tangent_lengths,
)

coord = st.floats(-20.0, 20.0, allow_nan=False, allow_infinity=False)
polylines = st.lists(st.tuples(coord, coord), min_size=2, max_size=8)


def _clean(pts) -> np.ndarray | None:
    """Polylines with legs >= 1 cm and no corner within 1 degree of a reversal."""
    p = np.asarray(pts, dtype=float)
    d = np.diff(p, axis=0)
    if np.any(np.hypot(d[:, 0], d[:, 1]) < 0.01):
        return None
    cosang = (d[:-1] * d[1:]).sum(1) / (np.hypot(*d[:-1].T) * np.hypot(*d[1:].T))
    if np.any(cosang < math.cos(math.radians(179.0))):
        return None
    return p


def _unsigned_deflections(p: np.ndarray) -> np.ndarray:
    """Deflection magnitudes from the dot product, independent of the module's atan2 form."""
    d = np.diff(p, axis=0)
    c = (d[:-1] * d[1:]).sum(1) / (np.hypot(*d[:-1].T) * np.hypot(*d[1:].T))
    return np.arccos(np.clip(c, -1.0, 1.0))


@settings(max_examples=150)
@given(polylines, st.floats(0.05, 3.0))
def test_fillet_length_equals_legs_minus_tangents_plus_arcs(pts, radius):
    p = _clean(pts)
    assume(p is not None)
    lay = layout_fillets(p, radius)
    assume(lay.fits)
    segs = fillet_segments(p, radius, lay)
    a = _unsigned_deflections(p)
    legs = shapely.LineString(p).length  # Source: shapely LineString.length (polyline length)
    # Source: tangent length T = R tan(I/2) and arc length L = R I of a simple circular
    # curve (Wolf & Ghilani, Elementary Surveying, chapter on horizontal curves; from memory).
    turning = a > 1e-12
    expected = legs - np.sum(2 * radius * np.tan(a[turning] / 2)) + np.sum(radius * a[turning])
    assert path_length(segs) == pytest.approx(expected, rel=1e-9, abs=1e-9)
    assert lay.length_m == pytest.approx(expected, rel=1e-9, abs=1e-9)
    # Source: definition of a continuous path (kinematics.motion.segments.joint_gaps is zero).
    if len(segs) > 1:
        assert np.all(joint_gaps(segs) < 1e-9)
    end = segs[-1].end
    assert math.hypot(end[0] - p[-1, 0], end[1] - p[-1, 1]) < 1e-9
    assert segs[0].start[:2] == pytest.approx(tuple(p[0]), abs=1e-12)
    # Source: common plane geometry - zero-length arcs are not drawn.
    assert all(s.length_m > 0 for s in segs)


@settings(max_examples=100)
@given(polylines, st.floats(0.05, 3.0))
def test_fillet_arcs_are_tangent_to_both_legs_and_inside_the_corner(pts, radius):
    p = _clean(pts)
    assume(p is not None)
    lay = layout_fillets(p, radius)
    assume(lay.fits)
    segs = fillet_segments(p, radius, lay)
    arcs = [s for s in segs if s.kind == "arc"]
    corners = [k for k in range(len(p) - 2) if lay.radius_m[k] > 0]
    assert len(arcs) == len(corners)
    for s, k in zip(arcs, corners):
        c = shapely.Point(s.arc_centre())
        leg_in = shapely.LineString(p[k:k + 2])
        leg_out = shapely.LineString(p[k + 1:k + 3])
        # Source: shapely.distance; a circle tangent to a line is at distance R from it.
        assert shapely.distance(c, leg_in) == pytest.approx(radius, rel=1e-7, abs=1e-9)
        assert shapely.distance(c, leg_out) == pytest.approx(radius, rel=1e-7, abs=1e-9)
        # Inside the corner: the centre is on the side the route turns to (cross product).
        u = p[k + 1] - p[k]
        w = np.array(s.arc_centre()) - p[k]
        assert np.sign(u[0] * w[1] - u[1] * w[0]) == np.sign(s.turn_rad)
        assert s.radius_m == pytest.approx(radius, rel=1e-12)


def test_right_angle_worked_example():
    # Source: common plane geometry - a 90 degree corner filleted with R = 1 between legs of
    # 2 m: tangent 1 m on each leg, arc pi/2, total 4 - 2 + pi/2.
    segs = fillet_segments([[0, 0], [2, 0], [2, 2]], 1.0)
    assert [s.kind for s in segs] == ["line", "arc", "line"]
    assert path_length(segs) == pytest.approx(2.0 + math.pi / 2, abs=1e-12)
    assert segs[1].arc_centre() == pytest.approx((1.0, 1.0), abs=1e-12)


def test_deflection_signs_and_reversal_tangent():
    # Source: common plane geometry - a left turn is counter-clockwise (positive).
    a = deflections([[0, 0], [1, 0], [1, 1], [2, 1], [2, 1 - 1]])
    assert np.degrees(a) == pytest.approx([90.0, -90.0, -90.0])
    # Source: tan(I/2) -> infinity as I -> 180 degrees: no circle is tangent to both halves.
    assert np.isinf(tangent_lengths([math.pi], 1.0)[0])
    assert tangent_lengths([math.pi], 0.0)[0] == 0.0


def test_shortfall_names_the_leg_and_the_amount():
    # Two right angles 1 m apart with R = 1 need 2 m on the middle leg: short by 1 m.
    lay = layout_fillets([[0, 0], [4, 0], [4, 1], [0, 1]], 1.0)
    assert not lay.fits
    (s,) = lay.shortfalls
    assert (s.leg, s.corners) == (1, (1, 2))
    assert (s.leg_m, s.need_m, s.short_m) == pytest.approx((1.0, 2.0, 1.0))
    with pytest.raises(ValueError, match="leg 1"):
        fillet_segments([[0, 0], [4, 0], [4, 1], [0, 1]], 1.0)


@settings(max_examples=150)
@given(polylines, st.floats(0.05, 5.0))
def test_fit_radii_fits_and_is_tight(pts, radius):
    p = _clean(pts)
    assume(p is not None)
    r = fit_radii(p, radius)
    lay = layout_fillets(p, r)
    assert lay.fits
    assert np.all(r <= radius + 1e-12) and np.all(r >= 0)
    # Every shrunk corner has a leg that is now exactly full (it could not be any larger).
    full = np.zeros(len(p) - 1)
    full[:-1] += lay.tangent_m
    full[1:] += lay.tangent_m
    at_capacity = np.isclose(full, lay.leg_m, rtol=1e-9, atol=1e-9)
    for k in np.flatnonzero(r < radius - 1e-12):
        if abs(lay.deflection_rad[k]) < 1e-12:
            continue
        assert at_capacity[k] or at_capacity[k + 1]
    # Source: the fillet length formula again, now with per-corner radii.
    segs = fillet_segments(p, r, lay)
    a = _unsigned_deflections(p)
    t = r * np.tan(a / 2)
    expected = shapely.LineString(p).length - 2 * t.sum() + (r * a).sum()
    assert path_length(segs) == pytest.approx(expected, rel=1e-9, abs=1e-9)
