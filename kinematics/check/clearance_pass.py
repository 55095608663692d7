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
from kinematics.check.sweep_batch import swept_parts_many
from kinematics.check.violations import Hit, locate_hit
from kinematics.check.zones import wrong_way
from kinematics.motion.arrays import unique_sorted
from kinematics.motion.segments import Segment


def sweep_segment(fp: Footprint, index: ObstacleIndex, margin: float, tol: float,
                  seg: Segment, parts: np.ndarray | None = None) -> SegmentResult:
    """Sweep one segment and measure it against the solids within the margin and its doors
    (``parts``: its swept parts when already made)."""
    idx = index
    sw = SweptParts(swept_parts(fp, seg, tol) if parts is None else parts,
                    swept_union_maker(fp, seg, tol))
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


def sweep_segments(fp: Footprint, index: ObstacleIndex, margin: float, tol: float,
                   segs: Sequence[Segment]) -> list[SegmentResult]:
    """``[sweep_segment(fp, index, margin, tol, s) for s in segs]``, the same results, with
    the parts of all segments made in one pass (:mod:`kinematics.check.sweep_batch`) and one
    query of each index for all of them: only segments with a solid within the margin, a door
    or a keep-out zone near them are then measured one by one."""
    all_parts = swept_parts_many(fp, segs, tol)
    idx = index
    zones = idx.zones
    if len(segs) <= 1 or len(zones.margin):
        return [sweep_segment(fp, idx, margin, tol, s, p) for s, p in zip(segs, all_parts)]
    busy = np.zeros(len(segs), dtype=bool)
    if len(idx):
        busy |= (_meeting(all_parts, idx.tree, "dwithin", margin) if margin > 0.0
                 else _meeting(all_parts, idx.tree, "intersects"))
    for tree in ((idx.door_tree if len(idx.doors) else None),
                 (zones.keep_out.tree if len(zones.keep_out) else None)):
        if tree is not None:
            busy |= _meeting(all_parts, tree, "intersects")
    return [sweep_segment(fp, idx, margin, tol, s, p) if b else
            SegmentResult(SweptParts(p, swept_union_maker(fp, s, tol)), None, (), (), (),
                          wrong_way(s, zones))
            for s, p, b in zip(segs, all_parts, busy.tolist())]


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


def _meeting(parts_of: Sequence[np.ndarray], tree: shapely.STRtree, predicate: str,
             distance: float | None = None) -> np.ndarray:
    """Whether each segment's parts meet some geometry of ``tree`` (``predicate``, with
    ``distance`` for ``"dwithin"``), with one tree query for all of them."""
    n = len(parts_of)
    hit = np.zeros(n, dtype=bool)
    counts = np.array([len(p) for p in parts_of], dtype=int)
    if not counts.sum():
        return hit
    flat = np.concatenate(parts_of)
    owner = np.repeat(np.arange(n), counts)
    if counts.max() > _MANY_PARTS:
        # Many parts (a clothoid's): first one query of each segment's bounding box, which
        # holds all its parts, so a segment whose box meets nothing has no part meeting
        # anything. Boxes are tested with "intersects" (an exact predicate) or "dwithin"
        # widened by a little more than rounding (GEOS may measure a box a few ulps farther
        # than a part inside it; see _nearest_solid). The answer is the one-query answer.
        full = np.flatnonzero(counts)
        offs = np.r_[0, np.cumsum(counts)][full]
        b = shapely.bounds(flat)
        boxes = shapely.box(np.minimum.reduceat(b[:, 0], offs),
                            np.minimum.reduceat(b[:, 1], offs),
                            np.maximum.reduceat(b[:, 2], offs),
                            np.maximum.reduceat(b[:, 3], offs))
        if predicate == "dwithin":
            near = tree.query(boxes, predicate="dwithin",
                              distance=float(distance) * (1.0 + 1e-9) + 1e-12)[0]
        else:
            near = tree.query(boxes, predicate=predicate)[0]
        live = np.zeros(n, dtype=bool)
        live[full[near]] = True
        sel = live[owner]
        if not sel.all():
            flat, owner = flat[sel], owner[sel]
            if not len(flat):
                return hit
    got = tree.query(flat, predicate=predicate, distance=distance)[0]
    hit[owner[got]] = True
    return hit


def _within_many(results: Sequence[SegmentResult], index: ObstacleIndex, bound: float
                 ) -> list[bool]:
    """Whether some solid lies within ``bound`` of each segment's swept parts, with one tree
    query for all of them (a segment with none is farther than ``bound`` from every solid)."""
    return _meeting([r.swept.parts for r in results], index.tree, "dwithin",
                    max(bound, 0.0)).tolist()


def least_segment(results: Sequence[SegmentResult], index: ObstacleIndex,
                  margin: float) -> int:
    """Index of the first segment with the least clearance.

    Segments whose clearance is known (a solid within the margin, or measured in an
    earlier check) go first. Of the others, the one whose swept region's bounding box comes
    nearest a solid is measured if nothing is known yet; then a segment is measured only if
    its box (which contains the region, so it is at least as near any solid) comes as near a
    solid as the least clearance so far, and a tree query over all those segments' parts at
    once finds a solid within that least clearance of its parts; otherwise its clearance
    exceeds that least one. The answer is that of measuring every segment.
    """
    best, best_i = math.inf, None
    rest = []
    for i, r in enumerate(results):
        if r.near is None and r.far is None:
            rest.append(i)
            continue
        c = clearance_of(r, index)[0]
        if c < best:
            best, best_i = c, i
    # Nothing lies within the margin of the rest, so each is farther than that (and than a
    # bound an earlier check proved); the others are measured nearest box first, and only
    # while their box comes as near a solid as the least clearance so far.
    if best_i is not None:
        rest = [i for i in rest if max(results[i].lower_m, margin) < best]
    rest = [i for i in rest if len(results[i].swept.parts)]
    if not rest:
        return 0 if best_i is None else best_i
    b = shapely.bounds(np.concatenate([results[i].swept.parts for i in rest]))
    offs = np.r_[0, np.cumsum([len(results[i].swept.parts) for i in rest])][:-1]
    boxes = shapely.box(np.minimum.reduceat(b[:, 0], offs), np.minimum.reduceat(b[:, 1], offs),
                        np.maximum.reduceat(b[:, 2], offs), np.maximum.reduceat(b[:, 3], offs))
    got, dist = index.tree.query_nearest(boxes, return_distance=True, all_matches=False)
    lower = np.full(len(rest), math.inf)
    lower[got[0]] = dist
    order = np.lexsort((np.asarray(rest), lower)).tolist()
    if best_i is None:
        # The segment whose box is nearest a solid first, to bound the others.
        k = order[0]
        best, best_i = clearance_of(results[rest[k]], index)[0], rest[k]
    # The segments whose box comes as near a solid as that, and of those the ones with a
    # solid that near their parts (one query for all), are measured; the others are farther.
    todo = [rest[k] for k in order if results[rest[k]].far is None
            and (lower[k] < best or (lower[k] == best and rest[k] < best_i))]
    bound = best
    near = dict(zip(todo, _within_many([results[i] for i in todo], index, bound))) \
        if todo else {}
    for k in order:
        i, lo = rest[k], float(lower[k])
        r = results[i]
        if r.far is None:
            if lo > best:        # its box is farther than the least clearance
                r.lower_m = max(r.lower_m, best)
                continue
            if i not in near:    # as far as the least one at best, and later in the route
                continue
            if not near[i]:      # no solid within ``bound`` of its parts
                r.lower_m = max(r.lower_m, bound)
                continue
        c = clearance_of(r, index)[0]
        if c < best or (c == best and i < best_i):
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
