"""Clearance of a swept footprint from walls and obstacles: the verdict behind ``swathe check``.

Every segment's swept region (:mod:`kinematics.check.sweep`) contains the true region the bare
footprint sweeps and exceeds it by at most the tolerance, so the Euclidean distance from that
region to a solid lies in ``[true - tol, true]``: a reported clearance is never larger than
the true one and at most the tolerance smaller. Solids sit in one ``shapely.STRtree`` built
once per floor plan (:class:`ObstacleIndex`); each swept piece asks the tree only for solids
within the margin of its envelope, so the cost of a check grows with the route and the clutter
near it, not with the size of the building. Where a piece overlaps a solid the clearance is
the negative of an overlap depth estimate (the deepest vertex of the overlap inside either
shape, or the overlap's largest inscribed circle's diameter, whichever is larger).

Violations are grouped into contiguous stretches per solid; the station where a stretch
starts is found by bisection on the swept region of the segment's first part (monotone in
its length), to within the tolerance along the path of the farthest footprint vertex.
:class:`RouteChecker` keeps the result of every unchanged segment (keyed by its exact
values, so a warm checker answers bit for bit as a fresh one), so the interactive canvas
re-sweeps only what moved. A segment with no solid within the margin measures its distance
to the nearest solid only when the bounding box of its swept region comes nearer a solid than
the route's least clearance found so far.

``waypoint_blocked`` places the footprint at each waypoint with the heading of the route pose
nearest it among grid poses that each segment lays out on its own stations (every 2 cm or
finer, both ends included; the first nearest in route order). The grid is per segment rather
than along the whole route so that an unchanged segment keeps it when the route's length
changes elsewhere: the search and the verdicts are then kept by values and a warm checker
gives exactly a fresh one's answer. The reported station is the segment's start station plus
the grid pose's local station; the overlap found is that of a real placement on the path, so a
reported block is never spurious (a tighter placement between grid poses may be missed, as
with any sampled grid).

Messages count waypoints from 1 as the window and the rendered picture do ("waypoint 3" is the
route's third); ``segment`` fields and the segment numbers in messages are 0-based indices
into the plan's segments, as in ``plan --json``.
"""

from __future__ import annotations

import math
from collections import OrderedDict
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import shapely
from numpy.typing import NDArray
from shapely.geometry import LineString, Point
from shapely.geometry.base import BaseGeometry

from kinematics.check.sweep import (
    DEFAULT_TOLERANCE_M,
    Footprint,
    placed_footprints,
    prepare_footprint,
    sub_segment,
    swept_parts,
    travel_m,
    union_parts,
)
from kinematics.files.floorplan import FloorPlan, Solid, check_footprint, solids
from kinematics.files.jsonio import collector_held
from kinematics.motion.arrays import unique_sorted
from kinematics.motion.se2 import sinc_terms
from kinematics.motion.segments import Segment, segment_stations

#: Half-depth (across the door line) and extra length (beyond each jamb) of the box in which
#: a door's clearance is measured, metres.
DOOR_BOX_M = 1.0
DOOR_BOX_ALONG_M = 0.5
#: Placements sampled to name the footprint part nearest a solid.
_PART_SAMPLES = 48

CAUTION = ("Planning aid only, not a safety certification: verify on site and keep the "
           "clearances that ISO 3691-4, ANSI/ITSDF B56.5 and local fire and building codes "
           "require.")


# -- the spatial index ----------------------------------------------------------------------
class ObstacleIndex:
    """The floor plan's solids (walls and obstacles) in one STRtree, plus its doors.

    Build it once per floor plan and pass it to every check.

    Parameters
    ----------
    floorplan : FloorPlan
    """

    def __init__(self, floorplan: FloorPlan) -> None:
        self.floorplan = floorplan
        with collector_held():  # thousands of new objects, none in a cycle
            self.solids: list[Solid] = solids(floorplan)
            self.geometries = np.array([s.geometry for s in self.solids], dtype=object)
            shapely.prepare(self.geometries)
            self.tree = shapely.STRtree(self.geometries)
        self.doors = tuple(floorplan.doors)
        self.door_lines = np.array([LineString([d.a, d.b]) for d in self.doors], dtype=object)
        self.door_boxes = np.array([_door_box(d.a, d.b) for d in self.doors], dtype=object)
        self.door_tree = shapely.STRtree(self.door_lines)

    def __len__(self) -> int:
        return len(self.solids)

    def within(self, geom: BaseGeometry, distance_m: float) -> np.ndarray:
        """Indices of solids within ``distance_m`` of ``geom`` (touching and overlapping too)."""
        if not len(self.solids):
            return np.zeros(0, dtype=int)
        if distance_m > 0.0:
            return self.tree.query(geom, predicate="dwithin", distance=distance_m)
        return self.tree.query(geom, predicate="intersects")

    def nearest(self, geom: BaseGeometry) -> tuple[int | None, float]:
        """Index of the nearest solid and its distance (``None, inf`` for an empty plan)."""
        if not len(self.solids):
            return None, math.inf
        idx, dist = self.tree.query_nearest(geom, return_distance=True, all_matches=False)
        return int(idx[0]), float(dist[0])

    def door_label(self, i: int) -> str:
        return self.doors[i].label or f"door {i}"


def _door_box(a: Sequence[float], b: Sequence[float]) -> BaseGeometry:
    ax, ay = a
    bx, by = b
    w = math.hypot(bx - ax, by - ay)
    ux, uy = (bx - ax) / w, (by - ay) / w
    e = DOOR_BOX_ALONG_M
    line = LineString([(ax - ux * e, ay - uy * e), (bx + ux * e, by + uy * e)])
    return line.buffer(DOOR_BOX_M, cap_style="flat")


# -- results --------------------------------------------------------------------------------
@dataclass(frozen=True)
class Violation:
    """Something on the route that is in the way or cannot be driven.

    Attributes
    ----------
    kind : {"collision", "clearance", "turn_radius", "infeasible", "waypoint_blocked"}
    segment : int or None
        Index of the segment where it starts.
    station_m : float
        Distance along the route where it starts, metres.
    x, y : float
        Where it starts, plan frame, metres.
    amount_m : float
        Overlap depth, missing clearance or missing radius, metres (the worst of the stretch).
    message : str
    solid : str
        Name of the wall or obstacle (empty where none is involved).
    """

    kind: str
    segment: int | None
    station_m: float
    x: float
    y: float
    amount_m: float
    message: str
    solid: str = ""

    def to_dict(self) -> dict:
        d = {"kind": self.kind, "segment": self.segment, "station_m": self.station_m,
             "x": self.x, "y": self.y, "amount_m": self.amount_m, "message": self.message}
        if self.solid:
            d["solid"] = self.solid
        return d


@dataclass(frozen=True)
class DoorPass:
    """A door the swept footprint passes through, with its least clearance near the door."""

    label: str
    min_clearance_m: float
    door: int
    segment: int
    station_m: float
    width_m: float

    def to_dict(self) -> dict:
        return {"label": self.label, "min_clearance_m": self.min_clearance_m,
                "door": self.door, "segment": self.segment, "station_m": self.station_m,
                "width_m": self.width_m}


@dataclass
class RouteCheck:
    """The swept-footprint check of one route.

    ``min_clearance_m`` is ``None`` only when the floor plan has no solids at all.
    ``pieces`` holds one conservative swept region per segment; ``swept`` is their union.
    """

    name: str
    clear: bool
    min_clearance_m: float | None
    min_clearance_at: dict | None
    violations: list[Violation]
    doors: list[DoorPass]
    tolerance_m: float
    margin_m: float
    segments: tuple[Segment, ...] = ()
    sizing: dict | None = None
    _parts: tuple[Any, ...] = field(default=(), repr=False)
    _swept: BaseGeometry | None = field(default=None, repr=False)

    @property
    def pieces(self) -> tuple[BaseGeometry, ...]:
        """One swept region per segment (each made on first use and kept with the segment's
        cached result)."""
        return tuple(p.union for p in self._parts)

    @property
    def piece_parts(self) -> tuple[NDArray[np.object_], ...]:
        """Per segment, the polygons whose union is its swept piece (no union made): what a
        view filling them with a non-zero winding rule needs."""
        return tuple(p.parts for p in self._parts)

    @property
    def swept(self) -> BaseGeometry | None:
        """The union of the swept pieces (computed on first use)."""
        if self._swept is None and self._parts:
            self._swept = union_parts(np.array(self.pieces, dtype=object))
        return self._swept

    def to_dict(self) -> dict:
        """The contract's ``check --json`` route object, plus location, tolerance, sizing."""
        d: dict[str, Any] = {
            "name": self.name,
            "clear": self.clear,
            "min_clearance_m": self.min_clearance_m,
            "violations": [v.to_dict() for v in self.violations],
            "doors": [p.to_dict() for p in self.doors],
            "min_clearance_at": self.min_clearance_at,
            "margin_m": self.margin_m,
            "tolerance_m": self.tolerance_m,
        }
        if self.sizing is not None:
            d["sizing"] = self.sizing
        return d


@dataclass(frozen=True)
class _Hit:
    """One solid closer than the margin to one segment's swept piece."""

    solid: int
    clearance_m: float
    collision: bool
    start_local_m: float
    x: float
    y: float
    part: str


class _Parts:
    """A segment's swept region as polygons whose union it is; the union is made on demand
    (distances and predicates need only the parts)."""

    __slots__ = ("parts", "_union")

    def __init__(self, parts: np.ndarray) -> None:
        self.parts = parts
        self._union: BaseGeometry | None = None

    @property
    def union(self) -> BaseGeometry:
        if self._union is None:
            self._union = union_parts(self.parts)
        return self._union

    def distance(self, solid: BaseGeometry) -> float:
        return float(np.min(shapely.distance(self.parts, solid)))


class _SegmentResult:
    """One segment's swept region, its hits within the margin and its doors.

    ``near`` is the least clearance and its solid among the solids within the margin, or
    ``None`` when there are none; then the clearance to the nearest solid farther away is only
    measured when the route's least clearance needs it (``RouteChecker._least``) and kept in
    ``far``; until then its clearance is known to exceed ``lower_m``.
    """

    __slots__ = ("swept", "hits", "doors", "near", "far", "lower_m", "xy")

    def __init__(self, swept: _Parts, near: tuple[float, int] | None,
                 hits: tuple[_Hit, ...], doors: tuple[tuple[int, float], ...]) -> None:
        self.swept = swept
        self.near = near
        self.hits = hits
        self.doors = doors
        self.far: tuple[float, int | None] | None = None
        self.lower_m = -math.inf
        self.xy: tuple[float, float] | None = None

    @property
    def piece(self) -> BaseGeometry:
        return self.swept.union


# -- geometry helpers -----------------------------------------------------------------------
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


def _signed_clearance(piece: BaseGeometry, solid: BaseGeometry) -> float:
    d = float(shapely.distance(piece, solid))
    if d > 0.0:
        return d
    return -overlap_depth(piece, solid)


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


def _to_body(pose: Sequence[float], x: float, y: float) -> tuple[float, float]:
    c, s = math.cos(pose[2]), math.sin(pose[2])
    dx, dy = x - pose[0], y - pose[1]
    return c * dx + s * dy, -s * dx + c * dy


# -- the checker ----------------------------------------------------------------------------
class RouteChecker:
    """Checks routes for one chassis on one floor plan, keeping per-segment results.

    A segment that is unchanged (equal value) since an earlier check reuses its swept piece,
    its clearances and its door results; only segments that moved are swept again. Results
    are identical to :func:`check_route`.

    Parameters
    ----------
    chassis : Chassis
        Its ``footprint`` and ``margin_m`` are used.
    index : ObstacleIndex
    tolerance_m : float
        How far each swept region may exceed the true one, metres.
    cache_size : int
        Segment results kept (least recently used dropped first).
    """

    def __init__(self, chassis: Any, index: ObstacleIndex,
                 tolerance_m: float = DEFAULT_TOLERANCE_M, cache_size: int = 4000,
                 footprint: Any = None) -> None:
        if not (tolerance_m > 0.0) or not math.isfinite(tolerance_m):
            raise ValueError("tolerance_m must be a positive number")
        pts = footprint if footprint is not None else chassis.footprint
        if not isinstance(pts, Footprint):
            check_footprint(tuple(map(tuple, np.asarray(pts, float).tolist())),
                            getattr(chassis, "name", "chassis"), "chassis.footprint")
        self.footprint = prepare_footprint(pts)
        self.margin_m = float(chassis.margin_m)
        self.tolerance_m = float(tolerance_m)
        self.index = index
        self.cache_size = int(cache_size)
        self._cache: OrderedDict[tuple, _SegmentResult] = OrderedDict()
        self._near: dict[tuple, float] = {}
        self._grids: dict[tuple, tuple[np.ndarray, np.ndarray, tuple]] = {}
        self._wp_near: dict[tuple, tuple[float, int]] = {}
        self._wp_judged: dict[tuple, tuple | None] = {}
        self.swept_count = 0  # segments swept (not taken from the cache), for tests

    # -- per segment ----------------------------------------------------------------------
    @staticmethod
    def cache_key(seg: Segment) -> tuple:
        """The segment's values, exactly: a result is reused only for the very same segment,
        so a warm checker answers bit for bit as a fresh one. The planner starts every piece
        from a pose computed from the waypoints (:meth:`kinematics.plan.planner._Builder.anchor`),
        so segments away from an edit come back exactly equal."""
        x, y, th = seg.start
        return (seg.kind, seg.direction, x, y, th, seg.length_m, seg.turn_rad, seg.course_rad)

    def segment_result(self, seg: Segment) -> _SegmentResult:
        key = self.cache_key(seg)
        hit = self._cache.get(key)
        if hit is not None:
            self._cache.move_to_end(key)
            return hit
        res = self._compute(seg)
        self._cache[key] = res
        if len(self._cache) > self.cache_size:
            self._cache.popitem(last=False)
        return res

    def _compute(self, seg: Segment) -> _SegmentResult:
        self.swept_count += 1
        fp, idx, margin = self.footprint, self.index, self.margin_m
        sw = _Parts(swept_parts(fp, seg, self.tolerance_m))
        parts = sw.parts
        hits: list[_Hit] = []
        best, best_j = math.inf, None
        if len(idx):
            near = unique_sorted(idx.tree.query(parts, predicate="dwithin", distance=margin)[1]
                             if margin > 0.0 else
                             idx.tree.query(parts, predicate="intersects")[1])
            for j in near.tolist():
                solid = idx.geometries[j]
                c = sw.distance(solid)
                if c <= 0.0:
                    c = -overlap_depth(sw.union, solid)
                if c < best:
                    best, best_j = c, j
                if c < margin:
                    hits.append(self._hit(seg, sw, j, c))
        doors = []
        if len(idx.doors):
            crossed = unique_sorted(idx.door_tree.query(parts, predicate="intersects")[1])
            for k in crossed.tolist():
                box = idx.door_boxes[k]
                local = _Parts(shapely.intersection(parts, box))
                local.parts = local.parts[~shapely.is_empty(local.parts)]
                c = math.inf
                for j in idx.within(box, 0.0).tolist():
                    solid = idx.geometries[j]
                    d = local.distance(solid)
                    c = min(c, d if d > 0.0 else -overlap_depth(local.union, solid))
                doors.append((k, c))
        near = None if best_j is None else (best, best_j)
        return _SegmentResult(sw, near, tuple(hits), tuple(doors))

    def _clearance(self, res: _SegmentResult) -> tuple[float, int | None]:
        """Least clearance of a segment's swept region and the solid (``inf, None``: none)."""
        if res.near is not None:
            return res.near
        if res.far is None:
            if not len(self.index):
                res.far = (math.inf, None)
            else:
                ii, dd = self.index.tree.query_nearest(res.swept.parts, return_distance=True,
                                                       all_matches=False)
                k = int(np.argmin(dd))
                res.far = (float(dd[k]), int(ii[1][k]))
        return res.far

    def _least(self, results: list[_SegmentResult]) -> int:
        """Index of the first segment with the least clearance.

        Segments whose clearance is known (a solid within the margin, or measured in an
        earlier check) go first. A segment not yet measured is measured only if some solid
        lies within the least clearance so far of its swept region's bounding box (which
        contains the region, so it is at least as near any solid); otherwise its clearance
        exceeds that least one. The answer is that of measuring every segment.
        """
        known = [i for i, r in enumerate(results) if r.near is not None or r.far is not None]
        rest = [i for i, r in enumerate(results) if r.near is None and r.far is None]
        best, best_i = math.inf, None
        for i in known + rest:
            r = results[i]
            if r.near is None and r.far is None and best_i is not None:
                # Nothing lies within the margin of this one, so it is farther than that.
                if max(r.lower_m, self.margin_m) >= best:
                    continue
                b = shapely.bounds(r.swept.parts)
                box = shapely.box(b[:, 0].min(), b[:, 1].min(), b[:, 2].max(), b[:, 3].max())
                if not len(self.index.tree.query_nearest(box, max_distance=best,
                                                         all_matches=False)):
                    r.lower_m = best
                    continue
            c = self._clearance(r)[0]
            if c < best or (c == best and (best_i is None or i < best_i)):
                best, best_i = c, i
        return 0 if best_i is None else best_i

    def _where_least(self, res: _SegmentResult) -> tuple[float, float]:
        if res.xy is None:
            c, j = self._clearance(res)
            res.xy = ((math.nan, math.nan) if j is None else
                      self._where(res.swept, self.index.geometries[j], c <= 0.0))
        return res.xy

    @staticmethod
    def _where(sw: _Parts | BaseGeometry, solid: BaseGeometry, overlap: bool
               ) -> tuple[float, float]:
        """A point of the swept region nearest the solid, or inside the overlap."""
        if isinstance(sw, _Parts):
            parts = sw.parts
        else:
            parts = np.array([sw], dtype=object)
        if overlap:
            inter = shapely.union_all(shapely.intersection(parts, solid))
            if not inter.is_empty:
                p = inter.representative_point()
                return float(p.x), float(p.y)
        k = int(np.argmin(shapely.distance(parts, solid)))
        line = shapely.shortest_line(parts[k], solid)
        x, y = line.coords[0]
        return float(x), float(y)

    def _violates(self, seg: Segment, j: int, collision: bool, f: float) -> bool:
        solid = self.index.geometries[j]
        g = (placed_footprints(self.footprint, [seg.start]) if f <= 0.0
             else swept_parts(self.footprint, sub_segment(seg, f), self.tolerance_m))
        if collision:
            return bool(np.any(shapely.intersects(g, solid)))
        return float(np.min(shapely.distance(g, solid))) < self.margin_m

    def _hit(self, seg: Segment, piece: _Parts, j: int, c: float) -> _Hit:
        fp, solid = self.footprint, self.index.geometries[j]
        collision = c <= 0.0
        travel = travel_m(fp, seg)
        # Bracket the start with placements, then bisect on the swept first part of the
        # segment, whose clearance can only fall as it grows.
        fr = np.linspace(0.0, 1.0, _PART_SAMPLES + 1)
        poses = seg.poses_at_fraction(fr)
        placed = placed_footprints(fp, poses)
        dist = shapely.distance(placed, solid)
        bad = dist <= 0.0 if collision else dist < self.margin_m
        if bad[0]:
            lo = hi = 0.0
        else:
            k = int(np.argmax(bad)) if bad.any() else len(fr) - 1
            lo, hi = float(fr[k - 1]) if k > 0 else 0.0, float(fr[k])
            if lo > 0.0 and self._violates(seg, j, collision, lo):
                lo = 0.0
            if self._violates(seg, j, collision, 0.0):
                hi = 0.0
            steps = 0
            while (hi - lo) * travel > self.tolerance_m and steps < 40:
                mid = 0.5 * (lo + hi)
                if self._violates(seg, j, collision, mid):
                    hi = mid
                else:
                    lo = mid
                steps += 1
        f_start = hi
        start_geom = _Parts(placed[:1] if f_start <= 0.0
                            else swept_parts(fp, sub_segment(seg, f_start), self.tolerance_m))
        if collision and not np.any(shapely.intersects(start_geom.parts, solid)):
            start_geom = piece
        x, y = self._where(start_geom, solid, collision)
        # The part: the footprint point nearest (or deepest in) the solid at the worst placement.
        if collision:
            areas = shapely.area(shapely.intersection(placed, solid))
            w = int(np.argmax(areas)) if areas.max() > 0.0 else int(np.argmin(dist))
        else:
            w = int(np.argmin(dist))
        pl = placed[w]
        if dist[w] > 0.0:
            # The outline points nearest the solid (a whole side when it runs parallel).
            ring = shapely.get_coordinates(shapely.segmentize(pl.exterior, 0.02))[:-1]
            d_pts = shapely.distance(shapely.points(ring), solid)
            px, py = ring[d_pts <= d_pts.min() + self.tolerance_m].mean(axis=0)
        else:
            ov = pl.intersection(solid)
            px, py = ov.centroid.x, ov.centroid.y
        bx, by = _to_body(poses[w], px, py)
        local = f_start * (seg.length_m if seg.length_m > 0.0 else 0.0)
        return _Hit(j, c, collision, local, x, y, part_name(fp, bx, by))

    # -- whole route ----------------------------------------------------------------------
    def check(self, plan_or_segments: Any, route_name: str = "", route: Any = None,
              waypoints: Sequence[Any] | None = None) -> RouteCheck:
        """Check one planned route.

        Parameters
        ----------
        plan_or_segments : RoutePlan or sequence of Segment
            A plan's ``issues`` (``turn_radius``, ``infeasible``) are passed through.
        route_name : str
        route : Route, optional
            Its waypoints are checked for ``waypoint_blocked``.
        waypoints : sequence of (x, y) or Waypoint, optional
            Instead of ``route``.

        Returns
        -------
        RouteCheck
        """
        segs = tuple(getattr(plan_or_segments, "segments", plan_or_segments))
        issues = tuple(getattr(plan_or_segments, "issues", ()))
        name = route_name or getattr(plan_or_segments, "name", "") or getattr(route, "name", "")
        if waypoints is None and route is not None:
            waypoints = route.waypoints
        results = [self.segment_result(s) for s in segs]
        stations = segment_stations(segs)
        idx = self.index
        violations: list[Violation] = []
        for iss in issues:
            si = iss.segment
            st = float(stations[si]) if si is not None and 0 <= si < len(segs) else 0.0
            violations.append(Violation(iss.kind, si, st, float(iss.x), float(iss.y),
                                        float(iss.amount_m), iss.message))
        violations += self._waypoint_violations(segs, stations, waypoints)
        violations += self._stretches(results, stations)
        violations.sort(key=lambda v: (v.station_m, v.kind))
        # Least clearance over the route.
        min_c, at = None, None
        if len(idx) and results:
            i = self._least(results)
            c, j = self._clearance(results[i])
            x, y = self._where_least(results[i])
            min_c = float(c)
            st = float(stations[i]) + self._station_near(segs[i], x, y)
            at = {"x": x, "y": y, "station_m": st, "segment": i,
                  "solid": idx.solids[j].name if j is not None else ""}
        doors: dict[int, DoorPass] = {}
        for i, r in enumerate(results):
            for k, c in r.doors:
                old = doors.get(k)
                if old is None:
                    doors[k] = DoorPass(idx.door_label(k), c, k, i, float(stations[i]),
                                        idx.doors[k].width_m)
                elif c < old.min_clearance_m:
                    doors[k] = DoorPass(old.label, c, k, old.segment, old.station_m,
                                        old.width_m)
        door_list = sorted(doors.values(), key=lambda p: (p.station_m, p.door))
        door_list = [DoorPass(p.label, float(p.min_clearance_m) if math.isfinite(
            p.min_clearance_m) else None, p.door, p.segment, p.station_m, p.width_m)
            for p in door_list]
        return RouteCheck(name, not violations, min_c, at, violations, door_list,
                          self.tolerance_m, self.margin_m, segs, None,
                          tuple(r.swept for r in results))

    def _station_near(self, seg: Segment, x: float, y: float) -> float:
        """Station along ``seg`` (m from its start) of the placement nearest ``(x, y)``."""
        if seg.length_m <= 0.0:
            return 0.0
        key = (self.cache_key(seg), x, y)
        if key not in self._near:
            if len(self._near) > self.cache_size:
                self._near.clear()
            self._near[key] = self._station_near_now(seg, x, y)
        return self._near[key]

    def _station_near_now(self, seg: Segment, x: float, y: float) -> float:
        n = int(min(400, max(16, math.ceil(travel_m(self.footprint, seg) / 0.01))))
        fr = np.linspace(0.0, 1.0, n + 1)
        placed = placed_footprints(self.footprint, seg.poses_at_fraction(fr))
        d = shapely.distance(placed, Point(x, y))
        return float(fr[int(np.argmin(d))] * seg.length_m)

    def _stretches(self, results: list[_SegmentResult], stations: np.ndarray
                   ) -> list[Violation]:
        """Contiguous runs of segments close to the same solid, one violation each."""
        runs: dict[int, list[tuple[int, _Hit]]] = {}
        done: list[list[tuple[int, _Hit]]] = []
        for i, r in enumerate(results):
            here = {h.solid: h for h in r.hits}
            for j in list(runs):
                if j not in here:
                    done.append(runs.pop(j))
            for j, h in here.items():
                runs.setdefault(j, []).append((i, h))
        done += runs.values()
        out = []
        margin = self.margin_m
        for run in done:
            collide = [(i, h) for i, h in run if h.collision]
            kind = "collision" if collide else "clearance"
            chosen = collide or run
            i0, h0 = chosen[0]
            worst_i, worst = min(chosen, key=lambda ih: ih[1].clearance_m)
            amount = -worst.clearance_m if collide else margin - worst.clearance_m
            st = float(stations[i0]) + h0.start_local_m
            solid = self.index.solids[h0.solid].name
            if collide:
                msg = (f"{worst.part} scrapes {solid} by {amount * 1000:.0f} mm at station "
                       f"{st:.2f} m")
            else:
                msg = (f"{worst.part} passes {solid} with {worst.clearance_m * 1000:.0f} mm "
                       f"clearance, {amount * 1000:.0f} mm short of the "
                       f"{margin * 1000:.0f} mm margin, from station {st:.2f} m")
            out.append(Violation(kind, i0, st, h0.x, h0.y, float(amount), msg, solid))
        return out

    def _segment_grid(self, seg: Segment) -> tuple[np.ndarray, np.ndarray, tuple]:
        """The segment's own station grid (every :data:`_GRID_M` or finer, both ends included;
        a segment of no length has the one pose at its end), its poses, and their bounding box.
        Local to the segment, so an unchanged segment keeps it however the route around it
        changes."""
        key = self.cache_key(seg)
        got = self._grids.get(key)
        if got is None:
            L = float(seg.length_m)
            if L > 0.0:
                local = np.linspace(0.0, L, max(1, int(math.ceil(L / _GRID_M))) + 1)
            else:
                local = np.zeros(1)
            poses = _grid_poses(seg, local)
            lo, hi = poses[:, :2].min(axis=0), poses[:, :2].max(axis=0)
            got = (local, poses, (float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])))
            if len(self._grids) > 4 * self.cache_size:
                self._grids.clear()
            self._grids[key] = got
        return got

    def _judge_waypoints(self, xy: np.ndarray, heading: list[float | None]
                         ) -> list[tuple | None]:
        """For each waypoint ``(x, y)`` with the heading of its placement (``None``: no route):
        ``None`` if clear, ``("inside", solid, depth)`` or ``("overlap", solid, depth)``.
        Kept by those three values; the new ones are judged together."""
        idx = self.index
        keys = [(float(x), float(y), h) for (x, y), h in zip(xy.tolist(), heading)]
        todo = [k for k, key in enumerate(keys) if key not in self._wp_judged]
        if todo:
            sub = xy[todo]
            # Bulk queries with a hair of slack pick the few waypoints worth a closer look;
            # each of those is then judged one by one exactly as a lone query would.
            look = np.zeros(len(todo), dtype=bool)
            look[idx.tree.query(shapely.points(sub), predicate="dwithin",
                                distance=_SLACK_M)[0]] = True
            placed_rows = [j for j, k in enumerate(todo) if heading[k] is not None]
            placed_all = None
            if placed_rows:
                placed_all = placed_footprints(
                    self.footprint, np.array([(*sub[j], heading[todo[j]]) for j in placed_rows]))
                look[np.asarray(placed_rows)[idx.tree.query(
                    placed_all, predicate="dwithin", distance=_SLACK_M)[0]]] = True
            where = {j: n for n, j in enumerate(placed_rows)}
            if len(self._wp_judged) > 4 * self.cache_size:
                self._wp_judged.clear()
            for j, k in enumerate(todo):
                verdict = None
                if look[j]:
                    wx, wy = keys[k][0], keys[k][1]
                    pt = Point(wx, wy)
                    inside = idx.within(pt, 0.0)
                    if len(inside):
                        si = int(inside[0])
                        verdict = ("inside", si, float(shapely.distance(
                            pt, idx.solids[si].geometry.boundary)))
                    elif placed_all is not None and j in where:
                        placed = placed_all[where[j]]
                        worst, wj = 0.0, None
                        for q in idx.within(placed, 0.0).tolist():
                            d = overlap_depth(placed, idx.geometries[q])
                            if d > worst:
                                worst, wj = d, q
                        if wj is not None:
                            verdict = ("overlap", wj, worst)
                self._wp_judged[keys[k]] = verdict
        return [self._wp_judged[key] for key in keys]

    def _waypoint_violations(self, segs: tuple[Segment, ...], stations: np.ndarray,
                             waypoints: Sequence[Any] | None) -> list[Violation]:
        """``waypoint_blocked``: a waypoint inside a solid, or the footprint placed at it with
        the heading of the route's nearest grid pose overlapping one.

        Each segment carries its own grid (:meth:`_segment_grid`); the nearest grid pose of
        the route is the first nearest in route order. Both the search and the verdict are
        kept by values (the segment's, the waypoint's, the heading), so a warm checker gives
        exactly what a fresh one gives while only moved waypoints and segments are looked at
        again.
        """
        if not waypoints or not len(self.index):
            return []
        idx = self.index
        xy = np.array([(float(w.x if hasattr(w, "x") else w[0]),
                        float(w.y if hasattr(w, "y") else w[1])) for w in waypoints])
        seg_of = [0] * len(xy)
        st_of = [0.0] * len(xy)
        heading: list[float | None] = [None] * len(xy)
        if segs:
            keys = [self.cache_key(s) for s in segs]
            grids = [self._segment_grid(s) for s in segs]
            boxes = np.array([g[2] for g in grids])
            tx, ty = xy[:, 0, None], xy[:, 1, None]
            lo_x, lo_y, hi_x, hi_y = boxes[None, :, 0], boxes[None, :, 1], boxes[None, :, 2], \
                boxes[None, :, 3]
            lb = np.hypot(np.maximum(0.0, np.maximum(lo_x - tx, tx - hi_x)),
                          np.maximum(0.0, np.maximum(lo_y - ty, ty - hi_y)))
            ub = np.hypot(np.maximum(np.abs(tx - lo_x), np.abs(tx - hi_x)),
                          np.maximum(np.abs(ty - lo_y), np.abs(ty - hi_y))).min(axis=1)
            # A segment whose box is farther than the nearest far box corner cannot hold the
            # nearest grid pose (a little slack so rounding never drops the one that does).
            ks, iis = np.nonzero(lb <= ub[:, None] * (1.0 + 1e-9) + 1e-12)
            best = [math.inf] * len(xy)
            found = [(0, 0)] * len(xy)
            near = self._wp_near
            if len(near) > 4 * self.cache_size:
                near.clear()
            pts = xy.tolist()
            # Pairs come in waypoint order, then segment order: a strict < keeps the first
            # nearest in route order (first segment, then first row among equal distances).
            for k, i in zip(ks.tolist(), iis.tolist()):
                wx, wy = pts[k]
                key = (keys[i], wx, wy)
                got = near.get(key)
                if got is None:
                    poses = grids[i][1]
                    d = np.hypot(poses[:, 0] - wx, poses[:, 1] - wy)
                    r = int(np.argmin(d))
                    got = near[key] = (float(d[r]), r)
                if got[0] < best[k]:
                    best[k] = got[0]
                    found[k] = (i, got[1])
            for k, (i, r) in enumerate(found):
                seg_of[k] = i
                st_of[k] = float(stations[i]) + float(grids[i][0][r])
                heading[k] = float(grids[i][1][r, 2])
        out = []
        for k, verdict in enumerate(self._judge_waypoints(xy, heading)):
            if verdict is None:
                continue
            what, j, depth = verdict
            wx, wy = float(xy[k, 0]), float(xy[k, 1])
            name = idx.solids[j].name
            if what == "inside":
                msg = f"waypoint {k + 1} at ({wx:.2f}, {wy:.2f}) lies inside {name}"
            else:
                msg = (f"waypoint {k + 1} at ({wx:.2f}, {wy:.2f}): the footprint placed there "
                       f"overlaps {name} by {depth * 1000:.0f} mm")
            out.append(Violation("waypoint_blocked", seg_of[k], st_of[k], wx, wy, depth, msg,
                                 name))
        return out

    @staticmethod
    def _seg_at(stations: np.ndarray, s: float) -> int:
        n = len(stations) - 1
        return int(np.clip(np.searchsorted(stations, s, side="right") - 1, 0, max(n - 1, 0)))


#: Slack of the bulk queries that pick waypoints for a closer look, metres.
_SLACK_M = 1e-6
#: Greatest step of each segment's own station grid for waypoint placements, metres.
_GRID_M = 0.02


def _station_row(sg: Segment) -> tuple[float, ...]:
    """What :func:`_grid_poses` needs of one segment, evaluated as
    :meth:`Segment.poses_at_fraction` evaluates it (a 0-d numpy cos / sin of the start heading
    in the exponential map, ``math.cos`` / ``sin`` of the course on holonomic lines)."""
    # 0: exponential map (lines, arcs), 1: turn on the spot, 2: holonomic line, 3: no length.
    mode = (1 if sg.kind == "pivot" else
            2 if sg.kind == "line" and (sg.course_rad is not None or sg.turn_rad != 0.0) else
            3 if sg.length_m == 0.0 else 0)
    omega = sg.turn_rad / sg.length_m if sg.kind == "arc" and sg.length_m > 0.0 else 0.0
    th = np.asarray(sg.start, dtype=float)[..., 2]
    cc, sc = (math.cos(sg.course), math.sin(sg.course)) if mode == 2 else (0.0, 0.0)
    return (*sg.start, sg.length_m, sg.turn_rad, mode, omega, float(sg.direction),
            float(np.cos(th)), float(np.sin(th)), cc, sc)


def _grid_poses(sg: Segment, local: np.ndarray) -> np.ndarray:
    """:func:`kinematics.motion.segments.poses_along` of one segment at its local stations ``local``
    (edges ``[0, length]``), with the same floating-point operations (the same to the last
    bit; a test compares them) and no per-station look-up of the segment."""
    x0, y0, th0, L, turn, mode, omega, vx, c, s, cc, sc = _station_row(sg)
    out = np.empty((len(local), 3))
    if mode == 3:
        out[:] = (x0, y0, th0)
        return out
    f = (local - 0.0) / L if L > 0.0 else np.ones(len(local))
    t = f * L
    if mode == 1:
        out[:, 0], out[:, 1] = x0, y0
        out[:, 2] = th0 + 1.0 * turn
    elif mode == 2:
        out[:, 0] = x0 + t * cc
        out[:, 1] = y0 + t * sc
        out[:, 2] = th0 + f * turn
    else:
        phi = omega * t
        # On a line phi is 0 everywhere, where sinc_terms gives exactly 1 and 0.
        S, C = sinc_terms(phi) if omega != 0.0 else (1.0, 0.0)
        vy = 0.0
        bx = t * (S * vx - C * vy)
        by = t * (C * vx + S * vy)
        out[:, 0] = x0 + c * bx - s * by
        out[:, 1] = y0 + s * bx + c * by
        out[:, 2] = th0 + phi
    return out


def check_route(plan_or_segments: Any, chassis: Any, index: ObstacleIndex,
                tolerance_m: float = DEFAULT_TOLERANCE_M, route_name: str = "",
                route: Any = None, waypoints: Sequence[Any] | None = None) -> RouteCheck:
    """Swept-footprint check of one route against the solids in ``index``.

    Parameters
    ----------
    plan_or_segments : RoutePlan or sequence of Segment
    chassis : Chassis
        ``footprint`` (bare) and ``margin_m``.
    index : ObstacleIndex
    tolerance_m : float
        The swept region exceeds the true one by at most this, metres; reported clearances
        are in ``[true - tolerance_m, true]``.
    route_name : str
    route : Route, optional
        For ``waypoint_blocked``.
    waypoints : sequence, optional
        Instead of ``route``.

    Returns
    -------
    RouteCheck

    Examples
    --------
    >>> from kinematics.files.floorplan import FloorPlan, Obstacle
    >>> from kinematics.files.project import Chassis
    >>> from kinematics.motion.segments import line
    >>> fp = FloorPlan(obstacles=(Obstacle(((0, 1), (4, 1), (4, 2), (0, 2))),))
    >>> c = check_route([line((0, 0, 0), 3.0)], Chassis(), ObstacleIndex(fp))
    >>> c.clear, round(c.min_clearance_m, 3)
    (True, 0.7)
    """
    checker = RouteChecker(chassis, index, tolerance_m)
    return checker.check(plan_or_segments, route_name=route_name, route=route,
                         waypoints=waypoints)


# -- text report ----------------------------------------------------------------------------
def format_check_text(checks: Sequence[RouteCheck]) -> str:
    """A readable report of route checks for the terminal (``swathe check`` without --json)."""
    out: list[str] = []
    for c in checks:
        if c.min_clearance_m is None:
            least = "no walls or obstacles to measure"
        else:
            least = f"least clearance {c.min_clearance_m * 1000:.0f} mm"
            if c.min_clearance_at:
                a = c.min_clearance_at
                least += (f" at station {a['station_m']:.2f} m ({a['x']:.2f}, {a['y']:.2f})"
                          + (f" to {a['solid']}" if a.get("solid") else ""))
        state = "CLEAR" if c.clear else f"{len(c.violations)} problem(s)"
        out.append(f"Route {c.name!r}: {state}; {least}; margin {c.margin_m * 1000:.0f} mm, "
                   f"tolerance {c.tolerance_m * 1000:.1f} mm")
        for v in c.violations:
            seg = "-" if v.segment is None else str(v.segment)
            out.append(f"  {v.kind:<16} seg {seg:>3}  station {v.station_m:8.2f} m  "
                       f"({v.x:.2f}, {v.y:.2f})  {v.amount_m * 1000:6.0f} mm  {v.message}")
        for p in c.doors:
            cl = "-" if p.min_clearance_m is None else f"{p.min_clearance_m * 1000:.0f} mm"
            out.append(f"  door {p.label!r} ({p.width_m:.3f} m wide) at station "
                       f"{p.station_m:.2f} m: least clearance {cl}")
        if c.sizing:
            for line_ in _sizing_lines(c.sizing):
                out.append("  " + line_)
        out.append("")
    out.append(CAUTION)
    return "\n".join(out) + "\n"


def _sizing_lines(sizing: dict) -> list[str]:
    lines = []
    for key in ("widest", "longest"):
        s = sizing.get(key)
        if s:
            best = s.get("max_m")
            best_txt = "none clears" if best is None else f"{best:.3f} m"
            lines.append(f"{key} footprint that clears: {best_txt} "
                         f"(now {s.get('current_m', 0.0):.3f} m)")
    for d in sizing.get("doors", []) or []:
        need = d.get("width_needed_m")
        need_txt = "-" if need is None else f"{need:.3f} m"
        lines.append(f"door {d.get('label')!r} needs {need_txt} (now {d.get('width_m'):.3f} m)")
    return lines
