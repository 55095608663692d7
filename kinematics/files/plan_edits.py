"""Edits of a floor plan, each a pure function from one :class:`FloorPlan` to the next.

The window's drawing tools (``app/plan_tools.py``) and ``Document.edit_floorplan`` use these,
so every edit is one undoable step and the same edit gives the same model headless. Elements
are addressed as ``(kind, index)`` with kind ``"wall"``, ``"obstacle"``, ``"door"`` or
``"zone"``. Snapping (:func:`snap`) goes to wall ends and obstacle corners within a radius,
else to right angles from the previous point, else to the grid.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace

from kinematics.files.floorplan import (
    ZONE_KINDS,
    ZONE_PARAMETER,
    Door,
    FloorPlan,
    Obstacle,
    Wall,
    Zone,
    zone_polygon,
)
from kinematics.files.validate import MAX_BODY_M

Point = tuple[float, float]
KINDS = ("wall", "obstacle", "door", "zone")
_FIELD = {"wall": "walls", "obstacle": "obstacles", "door": "doors", "zone": "zones"}


def _items(fp: FloorPlan, kind: str) -> tuple:
    if kind not in _FIELD:
        raise ValueError(f"unknown element kind {kind!r}; expected one of {', '.join(KINDS)}")
    return getattr(fp, _FIELD[kind])


def _with(fp: FloorPlan, kind: str, items: Sequence) -> FloorPlan:
    return replace(fp, **{_FIELD[kind]: tuple(items)})


def _pt(p: Sequence[float]) -> Point:
    return (float(p[0]), float(p[1]))


def add_wall(fp: FloorPlan, points: Sequence[Sequence[float]], thickness_m: float = 0.1
             ) -> FloorPlan:
    """A wall polyline (at least two distinct points) of ``thickness_m``."""
    pts = tuple(_pt(p) for p in points)
    if len(set(pts)) < 2 or not thickness_m > 0:
        raise ValueError("a wall needs two different points and a positive thickness")
    return replace(fp, walls=fp.walls + (Wall(pts, float(thickness_m)),))


def add_obstacle(fp: FloorPlan, points: Sequence[Sequence[float]], label: str = ""
                 ) -> FloorPlan:
    """A polygon obstacle (at least three points)."""
    pts = tuple(_pt(p) for p in points)
    if len(set(pts)) < 3:
        raise ValueError("an obstacle needs at least three different points")
    return replace(fp, obstacles=fp.obstacles + (Obstacle(pts, label),))


def add_rectangle(fp: FloorPlan, a: Sequence[float], b: Sequence[float], label: str = ""
                  ) -> FloorPlan:
    """An axis-aligned rectangle obstacle with opposite corners ``a`` and ``b``."""
    (x0, y0), (x1, y1) = _pt(a), _pt(b)
    if x0 == x1 or y0 == y1:
        raise ValueError("a rectangle needs width and depth")
    xa, xb, ya, yb = min(x0, x1), max(x0, x1), min(y0, y1), max(y0, y1)
    return add_obstacle(fp, ((xa, ya), (xb, ya), (xb, yb), (xa, yb)), label)


def add_circle(fp: FloorPlan, centre: Sequence[float], radius_m: float, label: str = ""
               ) -> FloorPlan:
    """A circle obstacle (kept as a circle; flattened outward for the check)."""
    if not radius_m > 0:
        raise ValueError("a circle needs a positive radius")
    return replace(fp, obstacles=fp.obstacles + (Obstacle.circle(_pt(centre), radius_m,
                                                                  label),))


def add_door(fp: FloorPlan, a: Sequence[float], b: Sequence[float], label: str = "",
             snap_m: float = 0.0) -> FloorPlan:
    """A door between jambs ``a`` and ``b``, each moved to the nearest wall end within
    ``snap_m``."""
    pa, pb = _pt(a), _pt(b)
    if snap_m > 0:
        pa = nearest_end(fp, pa, snap_m) or pa
        pb = nearest_end(fp, pb, snap_m) or pb
    if pa == pb:
        raise ValueError("a door needs two different jambs")
    return replace(fp, doors=fp.doors + (Door(pa, pb, label),))


def make_zone(kind: str, points: Sequence[Sequence[float]], label: str = "",
              value: float | None = None) -> Zone:
    """A zone checked by the floor-plan file's rules: a known ``kind``, a closed outline (at
    least three distinct points enclosing an area, not crossing itself) and the number the
    kind needs (``value``: speed in m/s > 0, margin in m >= 0, direction in degrees within
    +-360; ignored for ``keep_out``). Raises :class:`ValueError` saying what is wrong."""
    if kind not in ZONE_KINDS:
        raise ValueError(f"unknown zone kind {kind!r}; expected one of {', '.join(ZONE_KINDS)}")
    pts = tuple(_pt(p) for p in points)
    if len(pts) > 1 and pts[0] == pts[-1]:
        pts = pts[:-1]
    if zone_polygon(pts) is None:
        raise ValueError("a zone needs at least three different points enclosing an area, "
                         "its outline not crossing itself")
    key = ZONE_PARAMETER.get(kind)
    vals: dict[str, float | None] = {}
    if key is not None:
        v = float("nan") if value is None else float(value)
        ok = {"speed_mps": 0.0 < v <= 1000.0, "margin_m": 0.0 <= v <= MAX_BODY_M,
              "direction_deg": -360.0 <= v <= 360.0}[key]
        if not ok:
            raise ValueError({"speed_mps": "a slow zone needs a speed above 0 m/s",
                              "margin_m": "a margin zone needs a margin of 0 m or more",
                              "direction_deg": "a one-way zone needs a direction within "
                                               "+-360 degrees"}[key])
        vals[key] = v
    return Zone(kind, pts, str(label), **vals)


def add_zone(fp: FloorPlan, zone: Zone) -> FloorPlan:
    """Add ``zone`` (checked as :func:`make_zone` checks one)."""
    z = make_zone(zone.kind, zone.points, zone.label, zone.value)
    return replace(fp, zones=fp.zones + (z,))


def set_zone_rule(fp: FloorPlan, index: int, kind: str, value: float | None = None,
                  label: str | None = None) -> FloorPlan:
    """Zone ``index`` with a new kind, number and (unless ``None``) label; its outline kept."""
    items = list(fp.zones)
    old = items[index]
    items[index] = make_zone(kind, old.points, old.label if label is None else label, value)
    return replace(fp, zones=tuple(items))


def delete(fp: FloorPlan, kind: str, index: int) -> FloorPlan:
    items = list(_items(fp, kind))
    del items[index]
    return _with(fp, kind, items)


def relabel(fp: FloorPlan, kind: str, index: int, label: str) -> FloorPlan:
    """A new label for an obstacle, door or zone (walls carry none)."""
    if kind == "wall":
        raise ValueError("walls carry no label")
    items = list(_items(fp, kind))
    items[index] = replace(items[index], label=str(label))
    return _with(fp, kind, items)


def _vertex_points(el: object) -> tuple[Point, ...]:
    if isinstance(el, Door):
        return (el.a, el.b)
    return el.points


def _set_points(el: object, pts: tuple[Point, ...]) -> object:
    if isinstance(el, Door):
        return replace(el, a=pts[0], b=pts[1])
    if isinstance(el, Obstacle) and el.is_circle:
        # A circle's one handle is its centre: moving it moves the circle.
        raise ValueError("a circle is moved by its centre (move_circle)")
    if isinstance(el, Wall) and el.closed:
        pts = pts[:-1] + (pts[0],)
    return replace(el, points=pts)


def move_vertex(fp: FloorPlan, kind: str, index: int, vertex: int, to: Sequence[float]
                ) -> FloorPlan:
    """Move one vertex (a door's jamb 0 or 1); a closed wall's first point moves its last."""
    items = list(_items(fp, kind))
    el = items[index]
    if isinstance(el, Obstacle) and el.is_circle:
        items[index] = Obstacle.circle(_pt(to), el.radius_m, el.label)
        return _with(fp, kind, items)
    pts = list(_vertex_points(el))
    pts[vertex] = _pt(to)
    items[index] = _zone_checked(_set_points(el, tuple(pts)))
    return _with(fp, kind, items)


def _zone_checked(el: object) -> object:
    """``el``, refused (ValueError) when it is a zone whose outline the file would refuse
    (crossing itself, enclosing no area): an edit must never save what cannot be read."""
    if isinstance(el, Zone):
        make_zone(el.kind, el.points, el.label, el.value)
    return el


def insert_vertex(fp: FloorPlan, kind: str, index: int, before: int, at: Sequence[float]
                  ) -> FloorPlan:
    """Insert a vertex before position ``before`` of a wall, obstacle or zone outline."""
    if kind == "door":
        raise ValueError("a door has exactly two jambs")
    items = list(_items(fp, kind))
    pts = list(_vertex_points(items[index]))
    pts.insert(before, _pt(at))
    items[index] = _zone_checked(replace(items[index], points=tuple(pts)))
    return _with(fp, kind, items)


def delete_vertex(fp: FloorPlan, kind: str, index: int, vertex: int) -> FloorPlan:
    """Remove a vertex, refused where the element would be too small (wall 2, outline 3)."""
    items = list(_items(fp, kind))
    el = items[index]
    pts = list(_vertex_points(el))
    least = 2 if kind == "wall" else 3
    if kind == "door" or len(pts) - 1 < least:
        raise ValueError(f"a {kind} needs at least {least} points")
    del pts[vertex]
    items[index] = _zone_checked(replace(el, points=tuple(pts)))
    return _with(fp, kind, items)


def wall_ends(fp: FloorPlan) -> list[Point]:
    """The ends of every open wall and every wall vertex (where doors and new walls snap)."""
    out: list[Point] = []
    for w in fp.walls:
        out += list(w.points)
    return out


def nearest_end(fp: FloorPlan, p: Point, radius_m: float) -> Point | None:
    """The wall vertex nearest ``p`` within ``radius_m``, or ``None``."""
    best, got = radius_m, None
    for q in wall_ends(fp):
        d = math.dist(p, q)
        if d <= best:
            best, got = d, q
    return got


def snap(fp: FloorPlan, p: Sequence[float], radius_m: float, grid_m: float = 0.0,
         previous: Sequence[float] | None = None) -> Point:
    """Where a drawn point lands: a wall vertex or obstacle corner within ``radius_m``; else,
    from ``previous``, the nearest right angle (horizontal or vertical) within ``radius_m``
    of it; else the nearest grid point (``grid_m`` > 0); else ``p`` itself."""
    pt = _pt(p)
    corners = wall_ends(fp) + [q for o in fp.obstacles if not o.is_circle for q in o.points]
    best, got = radius_m, None
    for q in corners:
        d = math.dist(pt, q)
        if d <= best:
            best, got = d, q
    if got is not None:
        return got
    if grid_m > 0:
        pt = (round(pt[0] / grid_m) * grid_m, round(pt[1] / grid_m) * grid_m)
    if previous is not None:
        px, py = _pt(previous)
        if abs(pt[1] - py) <= radius_m and abs(pt[1] - py) <= abs(pt[0] - px):
            return (pt[0], py)
        if abs(pt[0] - px) <= radius_m:
            return (px, pt[1])
    return pt


def element_geometry(fp: FloorPlan, kind: str, index: int) -> object:
    """The shapely geometry of an element: a wall's solid, an obstacle's polygon (a circle's
    true disc), a door's line, a zone's polygon."""
    from shapely.geometry import LineString, Polygon
    from shapely.geometry import Point as SPoint

    from kinematics.files.floorplan import wall_polygon

    el = _items(fp, kind)[index]
    if kind == "wall":
        return wall_polygon(el)
    if kind == "door":
        return LineString([el.a, el.b])
    if kind == "obstacle" and el.is_circle:
        return SPoint(el.centre).buffer(el.radius_m, quad_segs=256)
    return Polygon(el.points)


def gap_m(fp: FloorPlan, a: tuple[str, int], b: tuple[str, int]) -> float:
    """The least distance between two elements (0 where they touch or overlap), metres; a
    circle is measured as the true circle (distance from its centre less its radius)."""
    from shapely.geometry import Point as SPoint

    def circle(ref: tuple[str, int]) -> Obstacle | None:
        el = _items(fp, ref[0])[ref[1]]
        return el if ref[0] == "obstacle" and el.is_circle else None

    ca, cb = circle(a), circle(b)
    if ca is not None and cb is not None:
        return max(0.0, math.dist(ca.centre, cb.centre) - ca.radius_m - cb.radius_m)
    if ca is not None or cb is not None:
        c, other = (ca, b) if ca is not None else (cb, a)
        return max(0.0, float(element_geometry(fp, *other).distance(SPoint(c.centre)))
                   - c.radius_m)
    return float(element_geometry(fp, *a).distance(element_geometry(fp, *b)))
