"""The route check behind ``swathe check``: :class:`RouteChecker` and :func:`check_route`.

A check is four pieces, each in its own module:

- :mod:`~kinematics.check.segment_parts`: each segment's swept parts and results, kept by the
  segment's exact values (so a warm checker answers bit for bit as a fresh one and the
  interactive canvas re-sweeps only what moved);
- :mod:`~kinematics.check.clearance_pass`: each segment's piece against the solids and doors
  near it (spatial indexes in :mod:`~kinematics.check.obstacles`), and the route's least
  clearance;
- :mod:`~kinematics.check.violations`: where each hit starts and which footprint part, and one
  violation per stretch of segments near the same solid;
- :mod:`~kinematics.check.waypoints`: ``waypoint_blocked``.

This module puts them together (the terminal report is
:func:`kinematics.analysis.report_text.format_check_text`). The answers
(:mod:`~kinematics.check.results`) and the shared contact geometry
(:mod:`~kinematics.check.contact`) are re-exported here, where callers have always found them.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
import shapely

from kinematics.check.clearance_pass import (
    StationFinder,
    clearance_of,
    door_least_xy,
    least_segment,
    sweep_segment,
    sweep_segments,
    where_least,
)
from kinematics.check.contact import overlap_depth, part_name
from kinematics.check.door_crossing import door_station
from kinematics.check.obstacles import DOOR_BOX_ALONG_M, DOOR_BOX_M, ObstacleIndex
from kinematics.check.results import DoorPass, RouteCheck, Violation
from kinematics.check.segment_parts import SegmentCache, SegmentResult, cache_key
from kinematics.check.sweep import (
    DEFAULT_TOLERANCE_M,
    Footprint,
    SweepBudgetError,
    prepare_footprint,
    sweep_allowance,
)
from kinematics.check.violations import stretches, zone_stretches
from kinematics.check.waypoints import WaypointCheck, grid_poses
from kinematics.errors import ValidationError
from kinematics.files.floorplan import check_footprint
from kinematics.motion.segments import Segment, segment_stations

__all__ = ["DOOR_BOX_ALONG_M", "DOOR_BOX_M", "DoorPass", "ObstacleIndex", "RouteCheck",
           "RouteChecker", "Violation", "check_route", "grid_poses", "overlap_depth",
           "part_name"]


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
    footprint : optional
        Instead of the chassis's footprint.
    """

    cache_key = staticmethod(cache_key)

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
        self._chassis = chassis
        self.margin_m = float(chassis.margin_m)
        self.tolerance_m = float(tolerance_m)
        self.index = index
        self.cache_size = int(cache_size)
        self.segments = SegmentCache(self._sweep, self.cache_size, self._sweep_many)
        self.waypoints = WaypointCheck(self.footprint, index, self.cache_size)
        self._stations = StationFinder(self.footprint, self.cache_size)

    def rebased(self, index: ObstacleIndex) -> RouteChecker:
        """A checker on ``index`` (the same plan after an edit of its walls or obstacles)
        that keeps every segment result the edit cannot reach, so only segments near the
        changed solids are measured again; answers are those of a fresh checker.

        A result is kept when the changed solids (before and after the edit) lie farther from
        its swept region's bounding box than the margin reach, than its measured least
        clearance and than its proven lower bound, and outside the box of every door it
        crosses. Anything else changed (the number of solids, doors, zones) starts afresh.
        """
        new = RouteChecker(self._chassis, index, self.tolerance_m, self.cache_size,
                           self.footprint)
        old = self.index
        if (len(old.solids) != len(index.solids) or old.doors != index.doors
                or old.floorplan.zones != index.floorplan.zones):
            return new
        changed = [j for j, (a, b) in enumerate(zip(old.geometries, index.geometries))
                   if a is not b and not a.equals_exact(b, 0.0)]
        new.waypoints._grids = self.waypoints._grids  # by segment values alone
        if not changed:
            new.segments._results.update(self.segments._results)
            return new
        region = shapely.union_all(np.concatenate([old.geometries[changed],
                                                   index.geometries[changed]]))
        reach = max(self.margin_m, index.zones.widest_margin_m)
        moved = set(changed)
        for key, res in self.segments._results.items():
            b = shapely.bounds(res.swept.parts)
            box = shapely.box(b[:, 0].min(), b[:, 1].min(), b[:, 2].max(), b[:, 3].max())
            d = float(shapely.distance(region, box))
            far = res.far[0] if res.far is not None else -math.inf
            if d <= max(reach, far, res.lower_m) or (res.far is not None and res.far[1] in moved):
                continue
            if any(shapely.intersects(region, index.door_boxes[k]) for k, _c, _j in res.doors):
                continue
            new.segments._results[key] = res
        return new

    @property
    def swept_count(self) -> int:
        """Segments swept (not taken from the cache), for tests."""
        return self.segments.computed

    def _sweep(self, seg: Segment) -> SegmentResult:
        return sweep_segment(self.footprint, self.index, self.margin_m,
                             sweep_allowance(self.tolerance_m), seg)

    def _sweep_many(self, segs: list[Segment]) -> list[SegmentResult]:
        return sweep_segments(self.footprint, self.index, self.margin_m,
                              sweep_allowance(self.tolerance_m), segs)

    def segment_result(self, seg: Segment) -> SegmentResult:
        """The segment's result, from the cache or swept now."""
        return self.segments.result(seg)

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
        try:
            results = self.segments.results(segs)
        except SweepBudgetError:
            # One at a time, to name the segment over the budget.
            results = []
            for i, s in enumerate(segs):
                try:
                    results.append(self.segment_result(s))
                except SweepBudgetError as exc:
                    raise ValidationError(name, f"segment {i}", exc.expected) from None
        stations = segment_stations(segs)
        idx = self.index
        violations: list[Violation] = []
        for iss in issues:
            si = iss.segment
            st = float(stations[si]) if si is not None and 0 <= si < len(segs) else 0.0
            violations.append(Violation(iss.kind, si, st, float(iss.x), float(iss.y),
                                        float(iss.amount_m), iss.message))
        # Stops are waypoints the chassis stands on, whether or not a turn cuts their corner.
        stops = [getattr(st, "waypoint", -1) for st in getattr(route, "stops", None) or ()]
        violations += self.waypoints.violations(segs, stations, waypoints, always=stops)
        violations += stretches(results, stations, idx, self.margin_m)
        violations += zone_stretches(results, stations, idx.zones)
        violations.sort(key=lambda v: (v.station_m, v.kind))
        # Least clearance over the route.
        min_c, at = None, None
        if len(idx) and results:
            i = least_segment(results, idx, self.margin_m)
            c, j = clearance_of(results[i], idx)
            x, y = where_least(results[i], idx)
            min_c = float(c)
            st = float(stations[i]) + self._stations.station_near(segs[i], x, y)
            at = {"x": x, "y": y, "station_m": st, "segment": i,
                  "solid": idx.solids[j].name if j is not None else ""}
        return RouteCheck(name, not violations, min_c, at, violations,
                          _door_passes(results, segs, stations, idx, self._stations),
                          self.tolerance_m,
                          self.margin_m, segs, None, tuple(r.swept for r in results))


def _door_passes(results: Sequence[SegmentResult], segs: Sequence[Segment],
                 stations: np.ndarray, idx: ObstacleIndex,
                 finder: StationFinder) -> list[DoorPass]:
    """Each door some segment's swept parts cross, in route order: the station where the
    reference point crosses the door line (:mod:`kinematics.check.door_crossing`), and the
    least clearance inside the door's box over those segments with its own station (``None``
    where no solid is near the door)."""
    least: dict[int, tuple[float, int, int]] = {}
    near: dict[int, list[int]] = {}
    for i, r in enumerate(results):
        for k, c, j in r.doors:
            near.setdefault(k, []).append(i)
            old = least.get(k)
            if old is None or c < old[0]:
                least[k] = (c, i, j)
    out = []
    for k, (c, i, j) in least.items():
        door = idx.doors[k]
        si, st = door_station(segs, stations, near[k], door.a, door.b,
                              [r.door_memo for r in results])
        if math.isfinite(c) and j >= 0:
            memo = results[i].door_memo
            if ("least", k) not in memo:
                memo[("least", k)] = door_least_xy(results[i], idx, k, j)
            x, y = memo[("least", k)]
            cst = float(stations[i]) + finder.station_near(segs[i], x, y)
            out.append(DoorPass(idx.door_label(k), float(c), k, si, st, door.width_m, cst))
        else:
            out.append(DoorPass(idx.door_label(k), None, k, si, st, door.width_m, None))
    return sorted(out, key=lambda p: (p.station_m, p.door))


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
