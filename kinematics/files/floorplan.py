"""The floor plan: walls, obstacles, doors and zones, and the solid geometry they make.

A wall is a polyline with a thickness centred on the line (closed when its last point equals
its first); an obstacle is a polygon, or a circle (kept as a circle, and flattened outward, its
polygon circumscribing the circle, for the check); a door is the opening between two jambs,
kept for reporting (the solid geometry comes from walls and obstacles). A zone is a polygon
with its own rule for the route (not a solid): ``keep_out`` (no part of the footprint may
enter), ``slow`` (``speed_mps`` caps the speed while any part of the footprint is inside),
``margin`` (``margin_m`` replaces the chassis margin for the part of the footprint inside) and
``one_way`` (the reference point may cross it only within 90 degrees of ``direction_deg``).
Native files are ``*.floor.json`` (``shared/contract.md``); DXF and SVG importers produce the
same model.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import Any

import numpy as np
import shapely
from shapely.geometry import LinearRing, LineString, Polygon
from shapely.geometry.base import BaseGeometry
from shapely.validation import explain_validity

from kinematics.errors import GeometryError
from kinematics.files.jsonio import write_json
from kinematics.files.validate import (
    MAX_BODY_M,
    MAX_COORD_M,
    MAX_REPAIR_POINTS,
    Reader,
    join,
    point_lists,
    raise_bad_point,
)

FORMAT_VERSION = 1
Point = tuple[float, float]


@dataclass(frozen=True)
class Wall:
    """A wall line of ``thickness_m``, centred on the polyline ``points``."""

    points: tuple[Point, ...]
    thickness_m: float = 0.1

    @property
    def closed(self) -> bool:
        return len(self.points) > 2 and self.points[0] == self.points[-1]

    @cached_property
    def polygon(self) -> Polygon | None:
        """The wall's solid (:func:`wall_polygon`), made once per wall value."""
        return wall_polygon(self)


#: Smallest circle obstacle read, metres (1 mm).
MIN_CIRCLE_M = 1.0e-3
#: How far the polygon of a circle obstacle may stand outside the circle, metres.
CIRCLE_TOLERANCE_M = 0.00025


def circumscribed_circle(centre: Point, radius_m: float,
                         tolerance_m: float = CIRCLE_TOLERANCE_M) -> tuple[Point, ...]:
    """A regular polygon round the circle: every side touches it, no vertex is more than
    ``tolerance_m`` outside it (:func:`kinematics.files.curves.circle_points_outside`), so a
    distance measured to the polygon never exceeds the distance to the circle."""
    from kinematics.files.curves import circle_points_outside

    pts = circle_points_outside((float(centre[0]), float(centre[1])), float(radius_m),
                                tolerance_m)[:-1]
    return tuple((float(x), float(y)) for x, y in pts.tolist())


@dataclass(frozen=True)
class Obstacle:
    """A solid polygon (racking, a bed bay, a pillar), implicitly closed.

    A circle obstacle (a pillar) keeps ``centre`` and ``radius_m``; its ``points`` are then
    the circumscribed polygon (:func:`circumscribed_circle`), which the check uses.
    """

    points: tuple[Point, ...]
    label: str = ""
    centre: Point | None = None
    radius_m: float | None = None

    @classmethod
    def circle(cls, centre: Point, radius_m: float, label: str = "") -> Obstacle:
        """A circle obstacle, flattened outward for the check."""
        c = (float(centre[0]), float(centre[1]))
        return cls(circumscribed_circle(c, radius_m), label, c, float(radius_m))

    @property
    def is_circle(self) -> bool:
        return self.centre is not None and self.radius_m is not None

    @cached_property
    def polygon(self) -> BaseGeometry | None:
        """The obstacle's solid (:func:`obstacle_polygon`), made once per obstacle (the
        reader fills it while it validates, so a loaded plan never builds it twice)."""
        return obstacle_polygon(self)


ZONE_KINDS = ("keep_out", "slow", "margin", "one_way")
#: The extra number each zone kind needs.
ZONE_PARAMETER = {"slow": "speed_mps", "margin": "margin_m", "one_way": "direction_deg"}


@dataclass(frozen=True)
class Zone:
    """A polygon with its own rule (see the module docstring); not a solid."""

    kind: str
    points: tuple[Point, ...]
    label: str = ""
    speed_mps: float | None = None
    margin_m: float | None = None
    direction_deg: float | None = None

    @property
    def name(self) -> str:
        return self.label or self.kind.replace("_", "-")

    @property
    def value(self) -> float | None:
        """The zone's number: speed, margin or direction (``None`` for keep-out)."""
        key = ZONE_PARAMETER.get(self.kind)
        return None if key is None else getattr(self, key)


@dataclass(frozen=True)
class Door:
    """A door opening between jambs ``a`` and ``b``."""

    a: Point
    b: Point
    label: str = ""

    @property
    def width_m(self) -> float:
        return math.dist(self.a, self.b)

    @property
    def midpoint(self) -> Point:
        return ((self.a[0] + self.b[0]) / 2.0, (self.a[1] + self.b[1]) / 2.0)


@dataclass(frozen=True)
class FloorPlan:
    """Everything solid on one level, in metres, plan frame (x right, y up)."""

    name: str = ""
    walls: tuple[Wall, ...] = ()
    obstacles: tuple[Obstacle, ...] = ()
    doors: tuple[Door, ...] = ()
    source: str = ""
    extra: dict = field(default_factory=dict, compare=False)
    zones: tuple[Zone, ...] = ()

    def bounds(self) -> tuple[float, float, float, float]:
        """``(xmin, ymin, xmax, ymax)`` of all walls, obstacles and doors; zeros if empty."""
        xs: list[float] = []
        ys: list[float] = []
        for w in self.walls:
            h = w.thickness_m / 2.0
            xs += [p[0] - h for p in w.points] + [p[0] + h for p in w.points]
            ys += [p[1] - h for p in w.points] + [p[1] + h for p in w.points]
        for o in self.obstacles:
            xs += [p[0] for p in o.points]
            ys += [p[1] for p in o.points]
        for d in self.doors:
            xs += [d.a[0], d.b[0]]
            ys += [d.a[1], d.b[1]]
        for z in self.zones:
            xs += [p[0] for p in z.points]
            ys += [p[1] for p in z.points]
        if not xs:
            return (0.0, 0.0, 0.0, 0.0)
        return (min(xs), min(ys), max(xs), max(ys))


@dataclass(frozen=True)
class Solid:
    """One piece of solid geometry with where it came from, for messages."""

    geometry: Polygon
    kind: str  # "wall" | "obstacle"
    index: int
    label: str = ""

    @property
    def name(self) -> str:
        base = f"{self.kind} {self.index}"
        return f"{base} ({self.label})" if self.label else base


def _dedupe(points: tuple[Point, ...]) -> list[Point]:
    out: list[Point] = []
    for p in points:
        if not out or p != out[-1]:
            out.append(p)
    return out


def wall_polygon(wall: Wall) -> Polygon | None:
    """The solid of one wall: the polyline buffered by half the thickness.

    Flat caps (a wall ends where its line ends) and mitred joins (square corners), as walls
    are drawn. Returns ``None`` for a wall with no length.
    """
    pts = _dedupe(wall.points)
    if len(pts) < 2:
        return None
    half = wall.thickness_m / 2.0
    if wall.closed and len(pts) >= 4:
        geom = LinearRing(pts[:-1])
    else:
        geom = LineString(pts)
    poly = geom.buffer(half, cap_style="flat", join_style="mitre", mitre_limit=10.0)
    if poly.is_empty:
        return None
    return poly


def obstacle_polygon(obstacle: Obstacle) -> Polygon | None:
    """The solid of one obstacle, repaired if its outline crosses itself."""
    pts = _dedupe(obstacle.points)
    if len(pts) >= 2 and pts[0] == pts[-1]:
        pts = pts[:-1]
    if len(pts) < 3:
        return None
    poly = Polygon(pts)
    if not poly.is_valid:
        # Repair grows fast with crossings (200 random points: half a minute): past the
        # budget take the convex hull, which holds the outline (clearances only shrink).
        poly = (shapely.make_valid(poly) if len(pts) <= MAX_REPAIR_POINTS
                else poly.convex_hull)
    if poly.is_empty or poly.area <= 0:
        return None
    return poly


def solids(fp: FloorPlan) -> list[Solid]:
    """Every wall and obstacle of ``fp`` as a shapely polygon with its origin."""
    out: list[Solid] = []
    for i, w in enumerate(fp.walls):
        g = w.polygon
        if g is not None:
            out.append(Solid(g, "wall", i, ""))
    for i, o in enumerate(fp.obstacles):
        g = o.polygon
        if g is None:
            continue
        if isinstance(g, Polygon):
            out.append(Solid(g, "obstacle", i, o.label))
        else:
            for part in getattr(g, "geoms", [g]):
                if isinstance(part, Polygon) and part.area > 0:
                    out.append(Solid(part, "obstacle", i, o.label))
    return out


# -- file form ------------------------------------------------------------------------------
def floorplan_from_dict(d: Any, file: str, place: str = "", source: str = "") -> FloorPlan:
    """Build a :class:`FloorPlan` from the parsed ``*.floor.json`` object ``d``.

    ``place`` prefixes key paths (an inline floor plan inside a project is at ``floorplan``).
    Raises :class:`~kinematics.errors.ValidationError` naming ``file`` and the key path.
    """
    r = Reader(file)
    d = r.obj(d, place)
    if not place:
        r.version(d, "swathe_floorplan", FORMAT_VERSION)
    elif "swathe_floorplan" in d:
        v = d["swathe_floorplan"]
        if isinstance(v, int) and not isinstance(v, bool) and v > FORMAT_VERSION:
            raise r.fail(join(place, "swathe_floorplan"),
                         f"format version {v} is newer than this Swathe reads")
    name = r.text(d.get("name", ""), join(place, "name"))
    walls = []
    for i, w in enumerate(r.lst(d.get("walls", []), join(place, "walls"))):
        wp = join(join(place, "walls"), i)
        w = r.obj(w, wp)
        pts = r.points(r.get(w, "points", wp), join(wp, "points"), 2)
        t = r.number(w.get("thickness_m", 0.1), join(wp, "thickness_m"), positive=True,
                     maximum=MAX_BODY_M)
        if len(_dedupe(pts)) < 2:
            raise r.fail(join(wp, "points"), "expected a wall line of non-zero length")
        walls.append(Wall(pts, t))
    obstacles = _read_obstacles(r, r.lst(d.get("obstacles", []), join(place, "obstacles")),
                                join(place, "obstacles"))
    doors = []
    for i, dr in enumerate(r.lst(d.get("doors", []), join(place, "doors"))):
        dp = join(join(place, "doors"), i)
        dr = r.obj(dr, dp)
        a = r.point(r.get(dr, "a", dp), join(dp, "a"))
        b = r.point(r.get(dr, "b", dp), join(dp, "b"))
        if a == b:
            raise r.fail(dp, "expected two different jamb points a and b")
        doors.append(Door(a, b, r.text(dr.get("label", ""), join(dp, "label"))))
    zones = tuple(zone_from_dict(z, r, join(join(place, "zones"), i))
                  for i, z in enumerate(r.lst(d.get("zones", []), join(place, "zones"))))
    known = {"swathe_floorplan", "name", "walls", "obstacles", "doors", "zones"}
    extra = r.extras(d, known, place)
    return FloorPlan(name, tuple(walls), tuple(obstacles), tuple(doors), source or file, extra,
                     zones)


def zone_polygon(points: tuple[Point, ...]) -> Polygon | None:
    """The zone's polygon (implicitly closed), or ``None`` when it encloses no area or its
    outline crosses itself."""
    pts = _dedupe(points)
    if len(pts) >= 2 and pts[0] == pts[-1]:
        pts = pts[:-1]
    if len(pts) < 3:
        return None
    poly = Polygon(pts)
    if not poly.is_valid or poly.area <= 0:
        return None
    return poly


def zone_from_dict(z: Any, r: Reader, zp: str) -> Zone:
    """One zone object at key path ``zp``, checked (kind, outline, its number)."""
    z = r.obj(z, zp)
    kind = _zone_kind(r, z, zp)
    pts = r.points(r.get(z, "points", zp), join(zp, "points"), 3)
    poly = zone_polygon(pts)
    if poly is None:
        raise r.fail(join(zp, "points"), "expected a closed zone outline: at least 3 "
                     "distinct points enclosing an area, not crossing itself")
    label = r.text(z.get("label", ""), join(zp, "label"))
    return Zone(kind, pts, label, **_zone_values(r, z, zp, kind))


def _zone_kind(r: Reader, z: dict, zp: str) -> str:
    kind = r.text(r.get(z, "kind", zp), join(zp, "kind"))
    if kind not in ZONE_KINDS:
        raise r.fail(join(zp, "kind"), f"unknown zone kind {kind!r}; expected one of "
                     + ", ".join(ZONE_KINDS))
    return kind


def _zone_values(r: Reader, z: dict, zp: str, kind: str) -> dict[str, float | None]:
    """The number the zone kind needs (speed, margin or direction), checked."""
    vals: dict[str, float | None] = {"speed_mps": None, "margin_m": None, "direction_deg": None}
    key = ZONE_PARAMETER.get(kind)
    if key == "speed_mps":
        vals[key] = r.number(r.get(z, key, zp), join(zp, key), positive=True, maximum=1000.0)
    elif key == "margin_m":
        vals[key] = r.number(r.get(z, key, zp), join(zp, key), non_negative=True,
                             maximum=MAX_BODY_M)
    elif key == "direction_deg":
        vals[key] = r.number(r.get(z, key, zp), join(zp, key), minimum=-360.0, maximum=360.0)
    return vals


@dataclass(frozen=True)
class ZoneLayer:
    """An import rule: closed outlines on drawing layer (DXF) or group id (SVG) ``layer``
    become zones of ``kind`` with the given number; the label is ``label`` or the layer."""

    layer: str
    kind: str
    label: str = ""
    speed_mps: float | None = None
    margin_m: float | None = None
    direction_deg: float | None = None

    def zone(self, points: tuple[Point, ...]) -> Zone:
        return Zone(self.kind, points, self.label or self.layer, self.speed_mps,
                    self.margin_m, self.direction_deg)


def zone_layers_from(value: Any, file: str, place: str) -> tuple[ZoneLayer, ...]:
    """Read an import object's ``zones`` list:
    ``[{"layer": "PEOPLE", "kind": "margin", "margin_m": 0.3, "label"?: ...}, ...]``."""
    r = Reader(file)
    out = []
    for i, z in enumerate(r.lst(value, place)):
        zp = join(place, i)
        z = r.obj(z, zp)
        layer = r.text(r.get(z, "layer", zp), join(zp, "layer"))
        if any(o.layer.lower() == layer.lower() for o in out):
            raise r.fail(join(zp, "layer"), f"layer {layer!r} is already given a zone kind")
        kind = _zone_kind(r, z, zp)
        label = r.text(z.get("label", ""), join(zp, "label"))
        out.append(ZoneLayer(layer, kind, label, **_zone_values(r, z, zp, kind)))
    return tuple(out)


def zone_to_dict(z: Zone) -> dict:
    """The file object of one zone."""
    d: dict[str, Any] = {"kind": z.kind, "points": [list(p) for p in z.points],
                         "label": z.label}
    key = ZONE_PARAMETER.get(z.kind)
    if key is not None:
        d[key] = getattr(z, key)
    return d


class _Places:
    """``places[k]`` is the key path of obstacle ``k``'s points, made only when asked."""

    def __init__(self, place: str) -> None:
        self.place = place

    def __getitem__(self, k: int) -> str:
        return join(join(self.place, k), "points")


def _read_obstacles(r: Reader, items: list, place: str) -> list[Obstacle]:
    """The obstacles of a floor-plan file, read and checked with array operations.

    Each obstacle's polygon is built once here (:func:`obstacle_polygons`) and kept on the
    obstacle for the solids. A mistake is reported as a one-by-one read in file order reports
    it: the first obstacle whose structure, points, label or area is wrong, in that order
    within an obstacle.
    """
    pts_lists: list[list] = []
    labels: list[str] = []
    pending: Exception | None = None
    label_error = False
    circles: dict[int, Obstacle] = {}
    for i, o in enumerate(items):
        # The common case in two type tests; anything else is read by the Reader, which
        # names the place of the mistake.
        pts = o.get("points") if type(o) is dict else None
        label = o.get("label", "") if pts is not None else None
        if type(o) is dict and ("centre" in o or "radius_m" in o):
            op = join(place, i)
            try:
                circle = _read_circle(r, o, op)
            except Exception as exc:  # noqa: BLE001 - re-raised below, after earlier ones
                pending = exc
                break
            circles[len(pts_lists)] = circle
            pts_lists.append([list(q) for q in circle.points])
            labels.append(circle.label)
            continue
        if type(pts) is list and len(pts) >= 3 and type(label) is str:
            pts_lists.append(pts)
            labels.append(label)
            continue
        op = join(place, i)
        try:
            o = r.obj(o, op)
            pts = r.lst(r.get(o, "points", op), join(op, "points"), 3)
        except Exception as exc:  # noqa: BLE001 - re-raised below, after earlier obstacles
            pending = exc
            break
        pts_lists.append(pts)
        try:
            labels.append(r.text(o.get("label", ""), join(op, "label")))
        except Exception as exc:  # noqa: BLE001 - its points come first, then this
            pending, label_error = exc, True
            break
    places = _Places(place)
    coords, offsets, bad = point_lists(r, pts_lists, places)
    n_ok = len(offsets) - 1
    polys = obstacle_polygons(coords, offsets)
    # An obstacle whose label is wrong is reported for that before its area.
    for k, poly in enumerate(polys[:n_ok - 1] if label_error and bad is None else polys):
        if poly is TANGLED:
            raise r.fail(places[k], f"the outline crosses itself and has more than "
                                    f"{MAX_REPAIR_POINTS} points; expected an outline that "
                                    "does not cross itself (or a short one to repair)")
        if poly is None:
            raise r.fail(places[k], "expected a polygon with non-zero area")
    if bad is not None:
        raise_bad_point(r, pts_lists[bad], places[bad])
    if pending is not None:
        raise pending
    rows = list(map(tuple, coords.tolist()))
    offs = offsets.tolist()
    out = []
    for k, (a, b, label, poly) in enumerate(zip(offs, offs[1:], labels, polys)):
        ob = circles.get(k) or Obstacle(tuple(rows[a:b]), label)
        ob.__dict__["polygon"] = poly  # the cached_property's slot: built once
        out.append(ob)
    return out


def _read_circle(r: Reader, o: dict, op: str) -> Obstacle:
    """A circle obstacle ``{"centre", "radius_m", "label"}`` (its ``points`` are not read:
    they are the polygon round the circle, made again from centre and radius)."""
    c = r.point(r.get(o, "centre", op), join(op, "centre"), MAX_COORD_M - 2.0 * MAX_BODY_M)
    rad = r.number(r.get(o, "radius_m", op), join(op, "radius_m"), positive=True,
                   minimum=MIN_CIRCLE_M, maximum=MAX_BODY_M)
    label = r.text(o.get("label", ""), join(op, "label"))
    return Obstacle.circle(c, rad, label)


def obstacle_polygons(coords: np.ndarray, offsets: np.ndarray) -> list[BaseGeometry | None]:
    """:func:`obstacle_polygon` of many outlines at once: outline ``k`` is
    ``coords[offsets[k]:offsets[k + 1]]``. The same polygons (the same vertices) as one by one:
    repeated points dropped, a closing point dropped, repaired where the outline crosses
    itself, ``None`` below three points or without area."""
    n = len(offsets) - 1
    out: list[BaseGeometry | None] = [None] * n
    if n == 0 or len(coords) == 0:
        return out
    counts = np.diff(offsets)
    owner = np.repeat(np.arange(n), counts)
    keep = np.ones(len(coords), dtype=bool)
    keep[1:] = ~((coords[1:] == coords[:-1]).all(axis=1) & (owner[1:] == owner[:-1]))
    # The last kept row of each outline; dropped when it repeats the first (a closed outline).
    rows = np.where(keep, np.arange(len(coords)), -1)
    nonempty = counts > 0
    starts = offsets[:-1][nonempty]
    last = np.maximum.reduceat(rows, starts)
    first = starts
    n_kept = np.add.reduceat(keep.astype(np.int64), starts)
    closing = (n_kept >= 2) & (coords[last] == coords[first]).all(axis=1)
    keep[last[closing]] = False
    n_kept = n_kept - closing
    ids = np.flatnonzero(nonempty)
    full = np.zeros(n, dtype=np.int64)
    full[ids] = n_kept
    make = np.flatnonzero(full >= 3)
    if not len(make):
        return out
    sel = keep & (full[owner] >= 3)
    # Consecutive ring numbers for the outlines that have one.
    ring_of = np.full(n, -1, dtype=np.int64)
    ring_of[make] = np.arange(len(make))
    rings = shapely.linearrings(coords[sel], indices=ring_of[owner[sel]])
    polys = shapely.polygons(rings)
    valid = shapely.is_valid(polys)
    tangled = []
    for j in np.flatnonzero(~valid).tolist():
        if shapely.get_num_coordinates(polys[j]) - 1 > MAX_REPAIR_POINTS:
            tangled.append(j)  # too many points to repair within budget: the reader refuses
            continue
        polys[j] = shapely.make_valid(polys[j])
    ok = ~shapely.is_empty(polys) & (shapely.area(polys) > 0)
    for j, k in enumerate(make.tolist()):
        if ok[j]:
            out[k] = polys[j]
    for j in tangled:
        out[int(make[j])] = TANGLED
    return out


TANGLED = Polygon()
"""Stands for an outline that crosses itself with more than :data:`MAX_REPAIR_POINTS`
points (returned by :func:`obstacle_polygons`, refused by the reader)."""


def floorplan_to_dict(fp: FloorPlan) -> dict:
    """The ``*.floor.json`` object for ``fp`` (unknown keys it was read with are kept)."""
    d: dict[str, Any] = {"swathe_floorplan": FORMAT_VERSION, "name": fp.name}
    d["walls"] = [{"points": [list(p) for p in w.points], "thickness_m": w.thickness_m}
                  for w in fp.walls]
    d["obstacles"] = [_obstacle_to_dict(o) for o in fp.obstacles]
    d["doors"] = [{"a": list(dr.a), "b": list(dr.b), "label": dr.label} for dr in fp.doors]
    if fp.zones:
        d["zones"] = [zone_to_dict(z) for z in fp.zones]
    for k, v in fp.extra.items():
        d.setdefault(k, v)
    return d


def _obstacle_to_dict(o: Obstacle) -> dict:
    if o.is_circle:
        # The polygon is written too, so a reader that knows no circles still sees a solid
        # that covers the circle; this reader rebuilds it from centre and radius.
        return {"centre": list(o.centre), "radius_m": o.radius_m, "label": o.label,
                "points": [list(p) for p in o.points]}
    return {"points": [list(p) for p in o.points], "label": o.label}


def save_floorplan(fp: FloorPlan, path: str | Path) -> None:
    """Write ``fp`` as ``*.floor.json``, atomically."""
    write_json(path, floorplan_to_dict(fp))


def check_footprint(points: tuple[Point, ...], file: str, place: str) -> Polygon:
    """The footprint polygon, or a :class:`GeometryError` if it is not a simple polygon."""
    pts = _dedupe(points)
    if len(pts) >= 2 and pts[0] == pts[-1]:
        pts = pts[:-1]
    if len(pts) < 3:
        raise GeometryError(file, place, "expected a footprint polygon of at least 3 points")
    poly = Polygon(pts)
    if not poly.is_valid:
        raise GeometryError(file, place, "expected a simple polygon; the footprint outline "
                                         f"crosses itself ({explain_validity(poly)})")
    if poly.area <= 0:
        raise GeometryError(file, place, "expected a footprint with non-zero area")
    return poly
