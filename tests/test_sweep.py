"""Swept footprint: closed forms, containment of dense placements and tightness."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely import affinity
from shapely.geometry import Point, Polygon

from kinematics.check.sweep import (
    placed_footprints,
    prepare_footprint,
    swept_route,
    swept_segment,
    travel_m,
)
from kinematics.motion.segments import arc, holonomic_line, line, pivot

TOL = 0.002
RECT = [(-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3)]
ELL = [(-0.3, -0.3), (0.6, -0.3), (0.6, 0.0), (0.0, 0.0), (0.0, 0.3), (-0.3, 0.3)]


def dense_placements(footprint, seg, step_m=0.0005):
    """Footprints placed so no point moves more than ``step_m`` between placements.

    Every true placement is within ``step_m / 2`` (point displacement) of a sampled one, so
    their union lies inside the true swept region and misses it by at most ``step_m / 2``.
    """
    n = max(2, math.ceil(travel_m(footprint, seg) / step_m) + 1)
    poses = seg.poses_at_fraction(np.linspace(0.0, 1.0, n))
    return placed_footprints(footprint, poses), travel_m(footprint, seg) / (n - 1)


def contains_all(g, placed):
    """Every placement lies in ``g`` to within 1e-9 m."""
    grown = g.buffer(1e-9)
    shapely.prepare(grown)
    return bool(np.all(shapely.covers(grown, placed)))


def excess(g, placed):
    """Largest distance from the outline of ``g`` to the union of ``placed``.

    Sampled at the vertices and quarter points of every edge of ``g`` (its edges are pieces
    of placed edges or polylines drawn about arcs, whose largest deviation is at a vertex or
    mid-chord); the nearest placement comes from shapely.STRtree.query_nearest.
    """
    pts = []
    for ring in [g.exterior, *g.interiors] if g.geom_type == "Polygon" else [
            r for p in g.geoms for r in (p.exterior, *p.interiors)]:
        c = np.asarray(ring.coords)
        for f in (0.0, 0.25, 0.5, 0.75):
            pts.append(c[:-1] + f * (c[1:] - c[:-1]))
    tree = shapely.STRtree(placed)
    _, dist = tree.query_nearest(shapely.points(np.concatenate(pts)), return_distance=True,
                                 all_matches=False)
    return float(dist.max())


def test_placed_footprints_match_shapely_affinity():
    # Source: shapely.affinity.rotate / translate (reference library).
    poses = np.array([[1.0, 2.0, 0.7], [-3.0, 0.5, -2.0]])
    got = placed_footprints(ELL, poses)
    for g, (x, y, th) in zip(got, poses):
        ref = affinity.translate(affinity.rotate(Polygon(ELL), th, origin=(0, 0),
                                                 use_radians=True), x, y)
        assert g.symmetric_difference(ref).area < 1e-12


def test_straight_line_area_is_exact():
    # Source: common plane geometry - a rectangle translated along its axis by L covers
    # (length + L) x width.
    g = swept_segment(RECT, line((1.0, 2.0, 0.4), 3.0))
    assert g.area == pytest.approx((0.9 + 3.0) * 0.6, abs=1e-9)


def test_arc_inner_and_outer_swept_radii():
    # Source: common plane geometry - on an arc of radius R about centre C the rectangle's
    # inner side stays at R - w/2 from C (the reference point is mid-axle), and its outer front
    # corner traces the circle of radius sqrt((R + w/2)^2 + front^2).
    radius, half_w, front = 2.0, 0.3, 0.6
    seg = arc((0.0, 0.0, 0.0), radius, math.pi / 2)
    cx, cy = seg.arc_centre()
    g = swept_segment(RECT, seg, TOL)
    inner = g.distance(Point(cx, cy))
    assert radius - half_w - TOL <= inner <= radius - half_w + 1e-12
    far = float(np.max(np.hypot(*(shapely.get_coordinates(g) - (cx, cy)).T)))
    outer = math.hypot(radius + half_w, front)
    assert outer - 1e-12 <= far <= outer + TOL


def test_pivot_sweeps_the_disc_of_the_farthest_corner():
    # Source: common plane geometry - a full turn on the spot sweeps the disc whose radius
    # is the farthest corner's distance from the reference point.
    g = swept_segment(RECT, pivot((0.0, 0.0, 0.0), 2 * math.pi), TOL)
    r = math.hypot(0.6, 0.3)
    assert g.area >= math.pi * r * r - 1e-9
    assert g.area <= math.pi * (r + TOL) ** 2


def test_reverse_arc_sweeps_backwards():
    # Source: common plane geometry - reversing along an arc retraces the forward sweep of
    # the mirrored motion; the swept area equals that of the forward arc to the same turn.
    fwd = swept_segment(RECT, arc((0, 0, 0), 1.5, 1.0, 1), TOL)
    rev = swept_segment(RECT, arc((0, 0, 0), 1.5, 1.0, -1), TOL)
    assert rev.area == pytest.approx(fwd.area, rel=2e-3)
    assert rev.centroid.x < 0.3 < fwd.centroid.x


@pytest.mark.parametrize("footprint", [RECT, ELL])
@pytest.mark.parametrize("seg", [
    line((0.0, 0.0, 0.3), 2.0),
    arc((0.0, 0.0, 0.2), 1.5, 1.3),
    arc((0.0, 0.0, 0.2), 0.2, -2.0, -1),
    arc((0.0, 0.0, 0.0), 0.05, 3.0),
    pivot((1.0, 1.0, 0.5), 4.0),
    holonomic_line((0.0, 0.0, 0.0), (2.0, 1.0), 1.0),
    # Barely turning: a circular stand-in would pivot about a centre ~1e9 m away.
    holonomic_line((0.0, 0.0, 1.0), (0.0, 2.0), 1e-9),
    holonomic_line((0.0, 0.0, 1.0), (1.5, 0.5), 1e-6),
])
def test_contains_dense_placements_and_is_tight(footprint, seg):
    # Source: shapely.covers / shapely.STRtree.query_nearest on densely placed footprints
    # (reference library); the swept region must contain them and exceed their union by no
    # more than the tolerance plus the reference's own sampling shortfall (half a step).
    g = swept_segment(footprint, seg, TOL)
    placed, step = dense_placements(footprint, seg)
    assert g.is_valid
    assert contains_all(g, placed)
    assert excess(g, placed) <= TOL + step / 2 + 1e-9


def test_thin_triangle_turning_along_a_line_is_contained():
    # Source: shapely.covers on dense placements, as above. A case random search found where
    # GEOS's union of the 104 parts dropped 3 cm of one of them.
    tri = [(1.048828125, 0.0), (-0.1961681233002227, 0.0705600040299336),
           (0.0414680127109488, 0.2727467187750697)]
    seg = holonomic_line((0.0, 0.0, 0.0), (-1.75, 0.0), 1.2109375)
    g = swept_segment(tri, seg, TOL)
    placed, step = dense_placements(tri, seg, 0.001)
    assert contains_all(g, placed)
    assert excess(g, placed) <= TOL + step / 2 + 1e-9


@pytest.mark.parametrize(("footprint", "seg"), [
    (RECT, holonomic_line((0.0, 0.0, 0.3), (8.0, 3.0), 1.2)),
    (RECT, holonomic_line((1.0, 0.0, -0.5), (-6.0, 2.0), -0.7)),
    (RECT, holonomic_line((0.0, 0.0, 0.0), (25.0, 0.0), 3.1)),
    (ELL, holonomic_line((0.0, 0.0, 0.3), (24.0, 6.0), 0.7)),
    (ELL, holonomic_line((1.0, 0.0, -0.5), (-40.0, 2.0), -1.2)),
])
def test_turning_holonomic_line_swept_by_grown_translations(footprint, seg):
    # Source: shapely.covers / STRtree.query_nearest on dense placements, as above. Long lines
    # that turn the body are swept as chunks translating the footprint grown by 0.32 of the
    # tolerance at each chunk's middle heading (kinematics.check.sweep docstring); the result
    # must still contain every placement and stay within the tolerance.
    from kinematics.check.sweep import _holonomic_method

    assert _holonomic_method(prepare_footprint(footprint), seg, 0.95 * TOL)[0] == \
        "translations"
    g = swept_segment(footprint, seg, TOL)
    placed, step = dense_placements(footprint, seg, 0.001)
    assert g.is_valid
    assert contains_all(g, placed)
    assert excess(g, placed) <= TOL + step / 2 + 1e-9


def test_swept_route_gives_one_piece_per_segment():
    # Source: common plane geometry - a straight run split in two sweeps the same region.
    segs = [line((0, 0, 0), 1.0), line((1, 0, 0), 2.0)]
    pieces = swept_route(RECT, segs, TOL)
    assert len(pieces) == 2
    whole = swept_segment(RECT, line((0, 0, 0), 3.0), TOL)
    assert shapely.union_all(pieces).symmetric_difference(whole).area < 1e-9


# -- random scenes ----------------------------------------------------------------------
def _convex(draw):
    n = draw(st.integers(3, 8))
    ang = np.sort(np.array(draw(st.lists(st.floats(0, 2 * math.pi), min_size=n, max_size=n,
                                          unique=True))))
    rad = np.array(draw(st.lists(st.floats(0.15, 0.8), min_size=n, max_size=n)))
    cx, cy = draw(st.floats(-0.2, 0.3)), draw(st.floats(-0.2, 0.2))
    pts = np.c_[cx + rad * np.cos(ang), cy + rad * np.sin(ang)]
    return shapely.convex_hull(shapely.multipoints(pts))


def _star(draw):
    n = draw(st.integers(5, 9))
    rad = np.array(draw(st.lists(st.floats(0.1, 0.8), min_size=n, max_size=n)))
    ang = np.linspace(0, 2 * math.pi, n, endpoint=False)
    return Polygon(np.c_[rad * np.cos(ang), rad * np.sin(ang)])


@st.composite
def footprints(draw):
    poly = _convex(draw) if draw(st.booleans()) else _star(draw)
    if not isinstance(poly, Polygon) or poly.area < 0.02 or not poly.is_valid:
        poly = Polygon(RECT)
    return poly


@st.composite
def segments(draw):
    kind = draw(st.sampled_from(["line", "arc", "pivot", "holo"]))
    start = (draw(st.floats(-1, 1)), draw(st.floats(-1, 1)), draw(st.floats(-math.pi, math.pi)))
    direction = draw(st.sampled_from([1, -1]))
    if kind == "line":
        return line(start, draw(st.floats(0.01, 3.0)), direction)
    if kind == "arc":
        turn = draw(st.floats(0.05, 3.5)) * draw(st.sampled_from([1, -1]))
        return arc(start, draw(st.floats(0.05, 3.0)), turn, direction)
    if kind == "pivot":
        return pivot(start, draw(st.floats(-4.0, 4.0)).__add__(1e-3))
    goal = (start[0] + draw(st.floats(-2, 2)), start[1] + draw(st.floats(-2, 2)))
    return holonomic_line(start, goal, draw(st.floats(-1.5, 1.5)))


@settings(max_examples=80, deadline=None)
@given(footprints(), segments())
def test_random_sweeps_contain_and_stay_within_tolerance(fp, seg):
    # Source: shapely.covers / STRtree.query_nearest on dense placements, as above.
    if seg.kind == "line" and seg.turn_rad == 0.0 and seg.length_m == 0.0:
        return
    g = swept_segment(fp, seg, TOL)
    placed, step = dense_placements(fp, seg, 0.001)
    assert contains_all(g, placed)
    assert excess(g, placed) <= TOL + step / 2 + 1e-9


def test_footprint_is_made_counter_clockwise():
    # Source: shapely.Polygon.exterior.is_ccw (reference library).
    fp = prepare_footprint(RECT[::-1])
    assert Polygon(fp.ring).exterior.is_ccw
    assert fp.convex and not prepare_footprint(ELL).convex

