"""Flattening curves into polylines: how many chords keep a curve within a sagitta.

Shared by the DXF and SVG readers. A chord spanning an angle ``dtheta`` of a circle of radius
``r`` has sagitta ``r (1 - cos(dtheta / 2))`` (circle geometry).

Chords lie inside the curve they replace, so a solid flattened that way is smaller than the
real one and a clearance to it reads too large. The readers therefore flatten *outward*: a
circle becomes a circumscribed polygon (:func:`circle_points_outside`), and any other curved
outline is grown by its flattening tolerance (:func:`grow_outline`, :func:`grown_thickness`),
which covers both faces of a curved wall. The flattened solid then contains the true one and
exceeds it by at most twice the tolerance (one tolerance for a circle).
"""

from __future__ import annotations

import math

import numpy as np

MAX_CHORDS = 100_000
"""More chords than this for one curve means a nonsense radius; the file is refused."""

FLATTEN_TOLERANCE_M = 0.00025
"""Chord tolerance of curved outlines in plan metres. Curved outlines are grown by it, so a
flattened solid exceeds the true one by at most twice this, :data:`CURVE_EXCESS_M`."""

CURVE_EXCESS_M = 2.0 * FLATTEN_TOLERANCE_M
"""How far a flattened curve (a reader's, or a circle obstacle's) may stand outside the true
curve, metres (0.5 mm). The check keeps this much of its tolerance back for it
(:func:`kinematics.check.sweep.sweep_allowance`), so a clearance to a drawn curve is still at
most the stated tolerance below the truth."""

def chord_count(radius: float, sweep_rad: float, sagitta: float) -> int:
    """Chords needed so an arc of ``radius`` sweeping ``sweep_rad`` deviates by <= ``sagitta``.

    A chord spanning ``dtheta`` has sagitta ``r (1 - cos(dtheta / 2))`` (circle geometry),
    so ``dtheta <= 2 acos(1 - s / r)``.

    Examples
    --------
    >>> chord_count(1.0, math.pi, 0.005)  # half circle of 1 m to 5 mm
    16
    """
    sweep = abs(sweep_rad)
    if radius <= 0 or sweep == 0:
        return 1
    if not (math.isfinite(radius) and math.isfinite(sweep) and sweep <= 4.0 * math.pi):
        raise ValueError(f"an arc of radius {radius:g} and sweep {sweep:g} rad is not usable")
    if sagitta >= radius:
        return max(1, math.ceil(sweep / math.pi))
    step = 2.0 * math.acos(1.0 - sagitta / radius)
    n = sweep / step
    if not n < MAX_CHORDS:
        raise ValueError(f"an arc of radius {radius:g} is too large to flatten")
    return max(1, math.ceil(n - 1e-12))


def arc_points(centre: tuple[float, float], radius: float, start_rad: float, sweep_rad: float,
               sagitta: float) -> np.ndarray:
    """Points on a circular arc (counter-clockwise for positive sweep), ends included."""
    n = chord_count(radius, sweep_rad, sagitta)
    t = start_rad + sweep_rad * np.linspace(0.0, 1.0, n + 1)
    return np.column_stack([centre[0] + radius * np.cos(t), centre[1] + radius * np.sin(t)])


def circle_points_outside(centre: tuple[float, float], radius: float,
                          sagitta: float) -> np.ndarray:
    """A closed polygon circumscribing the circle (last point repeats the first).

    Every edge is tangent to the circle at its midpoint, so the polygon contains the circle;
    its vertices lie at ``r / cos(dtheta / 2)``, at most ``sagitta`` outside the circle
    (circle geometry). Use it for a round solid (a pillar) so that a clearance measured to the
    polygon is never larger than the clearance to the circle.

    Examples
    --------
    >>> pts = circle_points_outside((0.0, 0.0), 0.15, 0.001)
    >>> bool(np.all(np.hypot(pts[:, 0], pts[:, 1]) >= 0.15))
    True
    """
    if not (math.isfinite(radius) and radius > 0 and sagitta > 0):
        raise ValueError(f"a circle of radius {radius:g} is not usable")
    # Vertex overshoot r (1 / cos(h) - 1) <= s  <=>  cos(h) >= r / (r + s): the chord count
    # of a circle of radius r + s to sagitta s gives exactly that half-step h.
    n = max(3, chord_count(radius + sagitta, 2.0 * math.pi, sagitta))
    step = 2.0 * math.pi / n
    rv = radius / math.cos(step / 2.0)
    t = step * np.arange(n + 1)
    pts = np.column_stack([centre[0] + rv * np.cos(t), centre[1] + rv * np.sin(t)])
    pts[-1] = pts[0]
    return pts


def grow_outline(points: np.ndarray, tolerance: float) -> np.ndarray:
    """The closed outline ``points`` grown outward by ``tolerance`` (mitred corners).

    An outline whose chords stay within ``tolerance`` of a curved boundary lies inside it by at
    most that much; grown by it, the outline contains the curved solid again. Returns the
    grown ring without its closing point, or ``points`` unchanged when they do not form a
    valid polygon (the floor plan's own check reports those).
    """
    from shapely.geometry import Polygon

    ring = np.asarray(points, dtype=float)
    if len(ring) > 1 and np.array_equal(ring[0], ring[-1]):
        ring = ring[:-1]
    if len(ring) < 3 or tolerance <= 0:
        return ring
    poly = Polygon(ring)
    if not poly.is_valid or poly.area <= 0:
        return ring
    grown = poly.buffer(tolerance, join_style="mitre", mitre_limit=4.0)
    if grown.geom_type != "Polygon" or grown.is_empty:
        return ring
    out = np.asarray(grown.exterior.coords, dtype=float)[:-1]
    return out


def grown_thickness(thickness: float, tolerance: float) -> float:
    """Thickness of a wall drawn as a curve, widened so both faces cover the true curve.

    The chords lie within ``tolerance`` of the curve on one side or the other, so a band
    ``tolerance`` wider on each face holds the true band on both faces.
    """
    return thickness + 2.0 * tolerance
