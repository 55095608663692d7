"""Where a swept region meets a solid: overlap depth, the nearest point, the footprint part.

Shared by the clearance pass, the violation builder and the waypoint checks. Where a piece
overlaps a solid its clearance is the negative of an overlap depth estimate (the deepest vertex
of the overlap inside either shape, or the overlap's largest inscribed circle's diameter,
whichever is larger).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import shapely
from shapely.geometry.base import BaseGeometry

from kinematics.check.sweep import Footprint


def overlap_depth(a: BaseGeometry, b: BaseGeometry) -> float:
    """How deep two overlapping regions reach into each other, metres (0 if they do not).

    The larger of: the deepest vertex of the overlap inside ``b`` or inside ``a`` (distance to
    the other's outline), and the diameter of the overlap's largest inscribed circle (a
    shape crossing a thin wall overlaps it by the wall's thickness).
    """
    inter = a.intersection(b)
    if inter.is_empty or inter.area <= 0.0:
        return 0.0
    pts = shapely.points(shapely.get_coordinates(inter))
    deep = max(float(shapely.distance(pts, a.boundary).max()),
               float(shapely.distance(pts, b.boundary).max()))
    inscribed = 0.0
    for part in getattr(inter, "geoms", [inter]):
        if part.geom_type == "Polygon" and part.area > 0.0:
            tol = max(1e-5, 1e-3 * math.sqrt(part.area))
            inscribed = max(inscribed, 2.0 * shapely.maximum_inscribed_circle(part, tol).length)
    return max(deep, inscribed)


def nearest_point(parts: np.ndarray, solid: BaseGeometry, overlap: bool
                  ) -> tuple[float, float]:
    """A point of the region made of ``parts`` nearest the solid, or inside the overlap."""
    if overlap:
        inter = shapely.union_all(shapely.intersection(parts, solid))
        if not inter.is_empty:
            p = inter.representative_point()
            return float(p.x), float(p.y)
    k = int(np.argmin(shapely.distance(parts, solid)))
    line = shapely.shortest_line(parts[k], solid)
    x, y = line.coords[0]
    return float(x), float(y)


def part_name(footprint: Footprint, bx: float, by: float) -> str:
    """Name the part of the footprint at body-frame point ``(bx, by)``: "front-left corner",
    "rear", "right side", ... by which third of the footprint's extent it lies in."""
    xmin, ymin = footprint.ring.min(axis=0)
    xmax, ymax = footprint.ring.max(axis=0)
    fx = (bx - xmin) / max(xmax - xmin, 1e-12)
    fy = (by - ymin) / max(ymax - ymin, 1e-12)
    along = "front" if fx > 2.0 / 3.0 else ("rear" if fx < 1.0 / 3.0 else "")
    side = "left" if fy > 2.0 / 3.0 else ("right" if fy < 1.0 / 3.0 else "")
    if along and side:
        return f"{along}-{side} corner"
    if along:
        return along
    if side:
        return f"{side} side"
    return "body"


def to_body(pose: Sequence[float], x: float, y: float) -> tuple[float, float]:
    """Plan point ``(x, y)`` in the body frame of ``pose``."""
    c, s = math.cos(pose[2]), math.sin(pose[2])
    dx, dy = x - pose[0], y - pose[1]
    return c * dx + s * dy, -s * dx + c * dy
