"""More curved outlines flattened outward: DXF ellipses and splines, SVG Bezier curves. Each
clearance to the flattened solid is never larger than to the true curve, and at most the
2 mm conservative band smaller; the true curves come from references outside the readers."""

from __future__ import annotations

import math

import ezdxf
import numpy as np
import pytest
import shapely
from scipy.interpolate import BSpline
from shapely.geometry import LineString, Polygon

from kinematics.files.curves import CURVE_EXCESS_M
from kinematics.files.dxf_import import import_dxf
from kinematics.files.floorplan import solids
from kinematics.files.svg_import import import_svg

# A flattened curve stands at most CURVE_EXCESS_M (0.5 mm) outside the true one
# (kinematics/files/curves.py); the rest of the check's 2 mm is the swept band's.
FLAT_M = CURVE_EXCESS_M
assert FLAT_M == 0.0005  # README: flattened curves stand at most 0.5 mm outside


def _gaps(fp, pts: np.ndarray) -> np.ndarray:
    """Distance from each point to the nearest solid of ``fp`` (shapely)."""
    geoms = np.array([s.geometry for s in solids(fp)], dtype=object)
    p = shapely.points(pts)
    return np.min(shapely.distance(p[:, None], geoms[None, :]), axis=1)


@pytest.mark.parametrize("units,scale", [(4, 1000.0), (6, 1.0)])
def test_dxf_ellipse_solid_is_never_reported_farther(tmp_path, units, scale):
    # A closed, rotated ELLIPSE on an obstacle layer is a solid.
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = units
    doc.layers.add("FIXTURES")
    a, ratio, rot = 0.6, 0.4, math.radians(25.0)
    major = (a * math.cos(rot) * scale, a * math.sin(rot) * scale, 0.0)
    doc.modelspace().add_ellipse((3.0 * scale, 2.0 * scale), major, ratio,
                                 dxfattribs={"layer": "FIXTURES"})
    path = tmp_path / "ellipse.dxf"
    doc.saveas(path)
    fp = import_dxf(path)
    # Source: the parametric ellipse c + a cos(t) u + b sin(t) v (textbook analytic
    # geometry), sampled at 200,000 parameters: its chords lie within 1e-9 m of the curve.
    t = np.linspace(0.0, 2.0 * math.pi, 200_001)
    b = a * ratio
    u, v = np.array([math.cos(rot), math.sin(rot)]), np.array([-math.sin(rot), math.cos(rot)])
    curve = np.array([3.0, 2.0]) + np.outer(a * np.cos(t), u) + np.outer(b * np.sin(t), v)
    true_ring = LineString(curve)
    rng = np.random.default_rng(11)
    ang = rng.uniform(0.0, 2.0 * math.pi, 400)
    rad = rng.uniform(0.0005, 0.4, 400)
    # Probe points outside along the outward normal b cos(t) u + a sin(t) v.
    base = np.array([3.0, 2.0]) + np.outer(a * np.cos(ang), u) + np.outer(b * np.sin(ang), v)
    normal = np.column_stack([b * np.cos(ang) * u[0] + a * np.sin(ang) * v[0],
                              b * np.cos(ang) * u[1] + a * np.sin(ang) * v[1]])
    normal /= np.linalg.norm(normal, axis=1)[:, None]
    probes = base + normal * rad[:, None]
    true = shapely.distance(shapely.points(probes), true_ring)
    got = _gaps(fp, probes)
    assert np.all(got <= true + 1e-9)
    assert np.all(got >= true - FLAT_M - 1e-9)


def test_dxf_spline_wall_is_conservative_on_both_faces(tmp_path):
    # An open SPLINE on a wall layer is a wall line of the import thickness along the curve.
    ctrl = [(0.0, 0.0), (2.0, 1.5), (4.0, -1.0), (6.0, 1.0), (8.0, 0.0)]
    thickness = 0.1
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 6
    doc.layers.add("WALLS")
    sp = doc.modelspace().add_open_spline([(x, y, 0.0) for x, y in ctrl], degree=3,
                                          dxfattribs={"layer": "WALLS"})
    knots = np.array(list(sp.knots), dtype=float)
    path = tmp_path / "spline.dxf"
    doc.saveas(path)
    fp = import_dxf(path, wall_thickness_m=thickness)
    # Source: scipy.interpolate.BSpline (de Boor's algorithm) on the drawing's own control
    # points and knots, sampled at 100,000 parameters, is the true centreline.
    bs = BSpline(knots, np.array(ctrl), 3)
    t = np.linspace(knots[3], knots[-4], 100_001)
    centre = bs(t)
    line = LineString(centre)
    d1 = bs.derivative()(t)
    nrm = np.column_stack([-d1[:, 1], d1[:, 0]]) / np.linalg.norm(d1, axis=1)[:, None]
    rng = np.random.default_rng(5)
    k = rng.integers(5_000, 95_000, 300)  # away from the wall's flat ends
    off = rng.uniform(0.003, 0.3, 300) * rng.choice((-1.0, 1.0), 300)
    probes = centre[k] + nrm[k] * (np.sign(off) * thickness / 2 + off)[:, None]
    # True distance from a probe to the wall band: to the centreline less half the thickness.
    true = shapely.distance(shapely.points(probes), line) - thickness / 2
    keep = true > 0.002  # a probe whose normal meets the curve again nearer is still valid
    got = _gaps(fp, probes[keep])
    assert keep.sum() > 250
    assert np.all(got <= true[keep] + 1e-9)
    assert np.all(got >= true[keep] - FLAT_M - 1e-9)


@pytest.mark.parametrize("mpu", [0.001, 0.01])
def test_svg_bezier_solid_is_never_reported_farther(tmp_path, mpu):
    # A closed path of a cubic and a quadratic Bezier is a solid.
    k = 1.0 / mpu
    p0, c1, c2, p1, q1 = (1.0, 1.0), (2.0, 3.0), (4.0, 2.5), (5.0, 1.5), (3.0, -1.0)
    d = (f"M {p0[0] * k} {p0[1] * k} C {c1[0] * k} {c1[1] * k} {c2[0] * k} {c2[1] * k} "
         f"{p1[0] * k} {p1[1] * k} Q {q1[0] * k} {q1[1] * k} {p0[0] * k} {p0[1] * k} Z")
    path = tmp_path / "blob.svg"
    path.write_text(f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {10 * k} {10 * k}">'
                    f'<path d="{d}"/></svg>')
    fp = import_svg(path, metres_per_unit=mpu)
    # Source: the Bernstein form of Bezier curves (textbook; SVG 1.1 section 8.3), sampled
    # at 20,000 parameters per curve; SVG's y runs down, so plan y = 10 - y.
    s = np.linspace(0.0, 1.0, 20_001)[:, None]
    P = [np.array(v) for v in (p0, c1, c2, p1)]
    cubic = ((1 - s) ** 3 * P[0] + 3 * (1 - s) ** 2 * s * P[1] + 3 * (1 - s) * s ** 2 * P[2]
             + s ** 3 * P[3])
    Q = [np.array(v) for v in (p1, q1, p0)]
    quad = (1 - s) ** 2 * Q[0] + 2 * (1 - s) * s * Q[1] + s ** 2 * Q[2]
    outline = np.vstack([cubic, quad[1:]])
    outline[:, 1] = 10.0 - outline[:, 1]
    true_poly = Polygon(outline)
    assert true_poly.is_valid  # a simple outline
    rng = np.random.default_rng(3)
    x0, y0, x1, y1 = true_poly.bounds
    pts = np.column_stack([rng.uniform(x0 - 0.4, x1 + 0.4, 3000),
                           rng.uniform(y0 - 0.4, y1 + 0.4, 3000)])
    true = shapely.distance(shapely.points(pts), true_poly)
    keep = (true > 0.0005) & (true < 0.4)
    got = _gaps(fp, pts[keep])
    assert keep.sum() > 500
    assert np.all(got <= true[keep] + 1e-9)
    assert np.all(got >= true[keep] - FLAT_M - 1e-9)
