"""The floor plan: walls, obstacles and doors, and the solid geometry they make.

A wall is a polyline with a thickness centred on the line (closed when its last point equals
its first); an obstacle is a polygon; a door is the opening between two jambs, kept for
reporting (the solid geometry comes from walls and obstacles). Native files are
``*.floor.json`` (``shared/contract.md``); DXF and SVG importers produce the same model.
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
from kinematics.files.validate import MAX_BODY_M, Reader, join, point_lists, raise_bad_point

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


@dataclass(frozen=True)
class Obstacle:
    """A solid polygon (racking, a bed bay, a pillar), implicitly closed."""

    points: tuple[Point, ...]
    label: str = ""

    @cached_property
    def polygon(self) -> BaseGeometry | None:
        """The obstacle's solid (:func:`obstacle_polygon`), made once per obstacle (the
        reader fills it while it validates, so a loaded plan never builds it twice)."""
        return obstacle_polygon(self)


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
        poly = shapely.make_valid(poly)
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
    known = {"swathe_floorplan", "name", "walls", "obstacles", "doors"}
    extra = r.extras(d, known, place)
    return FloorPlan(name, tuple(walls), tuple(obstacles), tuple(doors), source or file, extra)


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
    for i, o in enumerate(items):
        # The common case in two type tests; anything else is read by the Reader, which
        # names the place of the mistake.
        pts = o.get("points") if type(o) is dict else None
        label = o.get("label", "") if pts is not None else None
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
        if poly is None:
            raise r.fail(places[k], "expected a polygon with non-zero area")
    if bad is not None:
        raise_bad_point(r, pts_lists[bad], places[bad])
    if pending is not None:
        raise pending
    rows = list(map(tuple, coords.tolist()))
    offs = offsets.tolist()
    out = []
    for a, b, label, poly in zip(offs, offs[1:], labels, polys):
        ob = Obstacle(tuple(rows[a:b]), label)
        ob.__dict__["polygon"] = poly  # the cached_property's slot: built once
        out.append(ob)
    return out


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
    for j in np.flatnonzero(~valid).tolist():
        polys[j] = shapely.make_valid(polys[j])
    ok = ~shapely.is_empty(polys) & (shapely.area(polys) > 0)
    for j, k in enumerate(make.tolist()):
        if ok[j]:
            out[k] = polys[j]
    return out


def floorplan_to_dict(fp: FloorPlan) -> dict:
    """The ``*.floor.json`` object for ``fp`` (unknown keys it was read with are kept)."""
    d: dict[str, Any] = {"swathe_floorplan": FORMAT_VERSION, "name": fp.name}
    d["walls"] = [{"points": [list(p) for p in w.points], "thickness_m": w.thickness_m}
                  for w in fp.walls]
    d["obstacles"] = [{"points": [list(p) for p in o.points], "label": o.label}
                      for o in fp.obstacles]
    d["doors"] = [{"a": list(dr.a), "b": list(dr.b), "label": dr.label} for dr in fp.doors]
    for k, v in fp.extra.items():
        d.setdefault(k, v)
    return d


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
