"""The clearance pass: each segment's swept piece against the solids and doors near it, and
the route's least clearance from those pieces.

Every segment's swept region (:mod:`kinematics.check.sweep`) contains the true region the bare
footprint sweeps and exceeds it by at most the tolerance, so the Euclidean distance from that
region to a solid lies in ``[true - tol, true]``: a reported clearance is never larger than
the true one and at most the tolerance smaller. :func:`sweep_segment` asks the obstacle index
only for solids within the margin of the piece's parts; each closer than the margin becomes a
hit (:func:`kinematics.check.violations.locate_hit`). A door's clearance is measured inside its
box (:func:`kinematics.check.obstacles.door_box`).

A segment with no solid within the margin measures its distance to the nearest solid only when
the bounding box of its swept region comes nearer a solid than the route's least clearance
found so far (:func:`least_segment`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import shapely
from shapely.geometry import Point

from kinematics.check.contact import nearest_point, overlap_depth
from kinematics.check.obstacles import ObstacleIndex
from kinematics.check.segment_parts import SegmentResult, SweptParts, cache_key
from kinematics.check.sweep import (
    MARGIN_SLACK_M,
    Footprint,
    placed_footprints,
    swept_parts,
    swept_union_maker,
    travel_m,
)
from kinematics.check.violations import Hit, locate_hit
from kinematics.check.zones import wrong_way
from kinematics.motion.arrays import unique_sorted
from kinematics.motion.segments import Segment


def sweep_segment(fp: Footprint, index: ObstacleIndex, margin: float, tol: float,
                  seg: Segment) -> SegmentResult:
    """Sweep one segment and measure it against the solids within the margin and its doors."""
    idx = index
    sw = SweptParts(swept_parts(fp, seg, tol), swept_union_maker(fp, seg, tol))
    parts = sw.parts
    hits: list[Hit] = []
    best, best_j = math.inf, None
    zones = idx.zones
    # Margin zones meeting the piece replace the chassis margin inside them.
    rule = zones.margin_rule(parts, margin) if len(zones.margin) else None
    reach = margin if rule is None else rule.reach_m
    if len(idx) and _any_near(idx, parts, reach):
        near = unique_sorted(idx.tree.query(parts, predicate="dwithin", distance=reach)[1]
                             if reach > 0.0 else
                             idx.tree.query(parts, predicate="intersects")[1])
        for j in near.tolist():
            solid = idx.geometries[j]
            c = sw.distance(solid)
            if c <= 0.0:
                c = -overlap_depth(sw.union_near(solid), solid)
            if c < best:
                best, best_j = c, j
            if rule is not None and c > 0.0:
                if rule.of_union(parts, solid).short_m > MARGIN_SLACK_M:
                    hits.append(locate_hit(fp, idx, margin, tol, seg, sw, j, c, rule))
            elif c < margin - MARGIN_SLACK_M:
                hits.append(locate_hit(fp, idx, margin, tol, seg, sw, j, c))
    keep_out = []
    for k in zones.keep_out.touching(parts):
        zone = zones.keep_out.geometries[k]
        c = -overlap_depth(sw.union_near(zone), zone)
        keep_out.append(locate_hit(fp, zones.keep_out, 0.0, tol, seg, sw, k, min(c, 0.0)))
    doors = []
    if len(idx.doors):
        crossed = unique_sorted(idx.door_tree.query(parts, predicate="intersects")[1])
        for k in crossed.tolist():
            box = idx.door_boxes[k]
            local = SweptParts(_clip(parts, box))
            local.parts = local.parts[~shapely.is_empty(local.parts)]
            c, cj = math.inf, -1
            for j in idx.within(box, 0.0).tolist():
                solid = idx.geometries[j]
                d = local.distance(solid)
                d = d if d > 0.0 else -overlap_depth(local.union, solid)
                if d < c:
                    c, cj = d, j
            doors.append((k, c, cj))
    near_ = None if best_j is None else (best, best_j)
    return SegmentResult(sw, near_, tuple(hits), tuple(doors), tuple(keep_out),
                         wrong_way(seg, zones))


def _any_near(idx: ObstacleIndex, parts: np.ndarray, reach: float) -> bool:
    """Whether any solid lies within ``reach`` of the parts' bounding box (which holds every
    part, so where none does no part has a solid within ``reach``): one query instead of one
    per part for the many parts of a clothoid far from every solid."""
    if len(parts) <= _MANY_PARTS:
        return True
    env = shapely.box(*shapely.total_bounds(parts))
    return bool(len(idx.tree.query(env, predicate="dwithin", distance=max(reach, 0.0))))


def _clip(parts: np.ndarray, box) -> np.ndarray:
    """``shapely.intersection(parts, box)``, computed only for the parts that cross the box's
    edge: a part whose bounding box misses the box's is empty there, and one inside it is
    itself (a clothoid's many parts are mostly one or the other)."""
    b = shapely.bounds(parts)
    x0, y0, x1, y1 = box.bounds
    out = np.full(len(parts), None, dtype=object)
    meet = (b[:, 0] <= x1) & (b[:, 2] >= x0) & (b[:, 1] <= y1) & (b[:, 3] >= y0)
    out[~meet] = shapely.Polygon()
    idx = np.flatnonzero(meet)
    shapely.prepare(box)
    inside = shapely.contains_properly(box, parts[idx])
    out[idx[inside]] = parts[idx[inside]]
    cut = idx[~inside]
    if cut.size:
        out[cut] = shapely.intersection(parts[cut], box)
    return out


def door_least_xy(res: SegmentResult, index: ObstacleIndex, k: int, j: int
                  ) -> tuple[float, float]:
    """Where, inside door ``k``'s box, the segment's swept region comes nearest solid ``j``."""
    box = index.door_boxes[k]
    local = _clip(res.swept.parts, box)
    local = local[~shapely.is_empty(local)]
    solid = index.geometries[j]
    overlap = bool(np.min(shapely.distance(local, solid)) <= 0.0)
    return nearest_point(local, solid, overlap)


def clearance_of(res: SegmentResult, index: ObstacleIndex) -> tuple[float, int | None]:
    """Least clearance of a segment's swept region and the solid (``inf, None``: none)."""
    if res.near is not None:
        return res.near
    if res.far is None:
        if not len(index):
            res.far = (math.inf, None)
        else:
            res.far = _nearest_solid(res.swept.parts, index)
    return res.far


#: Parts above which :func:`_nearest_solid` narrows the solids first.
_MANY_PARTS = 8


def _nearest_solid(parts: np.ndarray, index: ObstacleIndex) -> tuple[float, int]:
    """``(distance, solid)`` of the part nearest any solid: the first such part, and the
    solid the index's nearest query names for it.

    With many parts (a clothoid's) one nearest query per part costs more than the answer
    needs: the solids within the middle part's nearest distance ``U`` of the parts' bounding
    box hold every part's nearest solid that is no farther than ``U``, and so the least one;
    distances to those alone pick the same first part."""
    if len(parts) <= _MANY_PARTS:
        ii, dd = index.tree.query_nearest(parts, return_distance=True, all_matches=False)
        k = int(np.argmin(dd))
        return float(dd[k]), int(ii[1][k])
    _, du = index.tree.query_nearest(parts[len(parts) // 2], return_distance=True,
                                     all_matches=False)
    env = shapely.box(*shapely.total_bounds(parts))
    # Widened by a little more than rounding: GEOS may measure the box a few ulps farther
    # from that solid than the part inside it (bench/fuzz.py seed 21 found an empty query).
    reach = float(du[0]) * (1.0 + 1e-9) + 1e-12
    cand = index.tree.query(env, predicate="dwithin", distance=reach)
    if len(cand) == 0:
        ii, dd = index.tree.query_nearest(parts, return_distance=True, all_matches=False)
        k = int(np.argmin(dd))
        return float(dd[k]), int(ii[1][k])
    dd = shapely.distance(parts[:, None], index.geometries[cand][None, :]).min(axis=1)
    k = int(np.argmin(dd))
    jj, dk = index.tree.query_nearest(parts[k], return_distance=True, all_matches=False)
    return float(dk[0]), int(jj[0])


def least_segment(results: Sequence[SegmentResult], index: ObstacleIndex,
                  margin: float) -> int:
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
            if max(r.lower_m, margin) >= best:
                continue
            b = shapely.bounds(r.swept.parts)
            box = shapely.box(b[:, 0].min(), b[:, 1].min(), b[:, 2].max(), b[:, 3].max())
            if not len(index.tree.query_nearest(box, max_distance=best, all_matches=False)):
                r.lower_m = best
                continue
        c = clearance_of(r, index)[0]
        if c < best or (c == best and (best_i is None or i < best_i)):
            best, best_i = c, i
    return 0 if best_i is None else best_i


def where_least(res: SegmentResult, index: ObstacleIndex) -> tuple[float, float]:
    """Where the segment's least clearance is (kept on the result; NaN with no solid)."""
    if res.xy is None:
        c, j = clearance_of(res, index)
        res.xy = ((math.nan, math.nan) if j is None else
                  nearest_point(res.swept.parts, index.geometries[j], c <= 0.0))
    return res.xy


class StationFinder:
    """Station along a segment of the placement nearest a point, kept by values."""

    def __init__(self, fp: Footprint, cache_size: int) -> None:
        self.footprint = fp
        self.cache_size = int(cache_size)
        self._near: dict[tuple, float] = {}

    def station_near(self, seg: Segment, x: float, y: float) -> float:
        """Station along ``seg`` (m from its start) of the placement nearest ``(x, y)``."""
        if seg.length_m <= 0.0:
            return 0.0
        key = (cache_key(seg), x, y)
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
