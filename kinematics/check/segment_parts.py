"""Per-segment results of a route check, kept by the segment's exact values.

A segment's swept region is held as the polygons whose union it is (:class:`SweptParts`; the
union is made only when asked for: distances and predicates need only the parts). Its
:class:`SegmentResult` adds the solids within the margin (as hits), the doors it crosses and
its least clearance. :class:`SegmentCache` keeps these results (least recently used dropped
first) keyed by the segment's values, so a warm checker answers bit for bit as a fresh one and
the interactive canvas re-sweeps only what moved. The planner starts every piece from a pose
computed from the waypoints (:meth:`kinematics.plan.planner._Builder.anchor`), so segments
away from an edit come back exactly equal.
"""

from __future__ import annotations

import math
from collections import OrderedDict
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry.base import BaseGeometry

from kinematics.check.sweep import union_parts
from kinematics.motion.segments import Segment


@dataclass(frozen=True)
class Hit:
    """One solid closer than the margin to one segment's swept piece."""

    solid: int
    clearance_m: float
    collision: bool
    start_local_m: float
    x: float
    y: float
    part: str
    margin_m: float | None = None  # the margin this hit falls short of (None: the chassis's)
    zone: str = ""                 # the margin zone that set it


class SweptParts:
    """A segment's swept region as polygons whose union it is; the union is made on demand."""

    __slots__ = ("parts", "_union", "_make")

    def __init__(self, parts: np.ndarray, make_union: Callable[[], BaseGeometry] | None = None
                 ) -> None:
        self.parts = parts
        self._union: BaseGeometry | None = None
        # A way to the same union cheaper than unioning the parts (a clothoid's kept union).
        self._make = make_union

    @property
    def union(self) -> BaseGeometry:
        if self._union is None:
            self._union = self._make() if self._make is not None else union_parts(self.parts)
        return self._union

    def union_near(self, solid: BaseGeometry) -> BaseGeometry:
        """The union of the parts whose bounding boxes come within ``reach`` of the solid's,
        where ``reach`` is the solid's bounding-box diagonal plus twice the largest part's:
        for :func:`~kinematics.check.contact.overlap_depth`, which then gives what it gives
        on the whole union wherever the overlap lies less than ``reach`` deep in the union.
        A part farther away cannot meet the solid, and a point of the solid lying ``r``
        inside the union lies as deep in the near union while ``r <= reach`` (the dropped
        parts are all more than ``reach`` from it). Unioning only these keeps a long
        segment's collision as cheap as a short one's (a 10 km line swept as thousands of
        parts cost over 15 s to union whole)."""
        if self._union is not None or self._make is not None or len(self.parts) <= 64:
            return self.union
        b = shapely.bounds(self.parts)
        sx0, sy0, sx1, sy1 = solid.bounds
        size = np.hypot(b[:, 2] - b[:, 0], b[:, 3] - b[:, 1])
        reach = math.hypot(sx1 - sx0, sy1 - sy0) + 2.0 * float(size.max())
        near = ((b[:, 0] <= sx1 + reach) & (b[:, 2] >= sx0 - reach)
                & (b[:, 1] <= sy1 + reach) & (b[:, 3] >= sy0 - reach))
        if near.all():
            return self.union
        return union_parts(self.parts[near])

    def distance(self, solid: BaseGeometry) -> float:
        """Least distance from any part to ``solid`` (0 where one touches or overlaps it)."""
        return float(np.min(shapely.distance(self.parts, solid)))


class SegmentResult:
    """One segment's swept region, its hits within the margin and its doors.

    ``near`` is the least clearance and its solid among the solids within the margin, or
    ``None`` when there are none; then the clearance to the nearest solid farther away is only
    measured when the route's least clearance needs it
    (:func:`kinematics.check.clearance_pass.least_segment`) and kept in ``far``; until then its
    clearance is known to exceed ``lower_m``. ``xy`` keeps where that least clearance is.
    ``doors`` holds ``(door, least clearance in its box, that solid or -1)`` per door line
    the swept parts cross; ``door_memo`` keeps door answers computed from them.
    """

    __slots__ = ("swept", "hits", "doors", "near", "far", "lower_m", "xy", "keep_out",
                 "wrong_way", "door_memo")

    def __init__(self, swept: SweptParts, near: tuple[float, int] | None,
                 hits: tuple[Hit, ...], doors: tuple[tuple[int, float, int], ...],
                 keep_out: tuple[Hit, ...] = (), wrong_way: tuple = ()) -> None:
        self.swept = swept
        self.near = near
        self.hits = hits
        self.doors = doors
        self.keep_out = keep_out    # hits whose ``solid`` indexes the keep-out zones
        self.wrong_way = wrong_way  # kinematics.check.zones.WrongWay stretches
        self.far: tuple[float, int | None] | None = None
        self.lower_m = -math.inf
        self.xy: tuple[float, float] | None = None
        #: Door answers that depend on this segment and the door alone, kept with it
        #: (where the reference point crosses a door line; where its door clearance is).
        self.door_memo: dict = {}

    @property
    def piece(self) -> BaseGeometry:
        return self.swept.union


def cache_key(seg: Segment) -> tuple:
    """The segment's values, exactly: a result is reused only for the very same segment."""
    x, y, th = seg.start
    return (seg.kind, seg.direction, x, y, th, seg.length_m, seg.turn_rad, seg.course_rad)


class SegmentCache:
    """Segment results by :func:`cache_key`, made by ``compute`` on a miss.

    Parameters
    ----------
    compute : callable
        Makes the result of a segment not seen before.
    cache_size : int
        Results kept (least recently used dropped first).
    compute_many : callable, optional
        Makes the results of many segments at once (the same as ``compute`` of each).
    """

    def __init__(self, compute: Callable[[Segment], SegmentResult], cache_size: int,
                 compute_many: Callable[[list[Segment]], list[SegmentResult]] | None = None
                 ) -> None:
        self.compute = compute
        self.compute_many = compute_many
        self.cache_size = int(cache_size)
        self._results: OrderedDict[tuple, SegmentResult] = OrderedDict()
        self.computed = 0  # results made (not taken from the cache), for tests

    def result(self, seg: Segment) -> SegmentResult:
        key = cache_key(seg)
        hit = self._results.get(key)
        if hit is not None:
            self._results.move_to_end(key)
            return hit
        self.computed += 1
        res = self.compute(seg)
        self._results[key] = res
        if len(self._results) > self.cache_size:
            self._results.popitem(last=False)
        return res

    def results(self, segs: Sequence[Segment]) -> list[SegmentResult]:
        """``[self.result(s) for s in segs]``, the segments not kept made in one
        ``compute_many`` call."""
        if self.compute_many is None:
            return [self.result(s) for s in segs]
        keys = [cache_key(s) for s in segs]
        new: dict[tuple, Segment] = {}
        for k, s in zip(keys, segs):
            if k not in self._results and k not in new:
                new[k] = s
        made = dict(zip(new, self.compute_many(list(new.values())))) if new else {}
        self.computed += len(made)
        out = []
        for k in keys:
            res = self._results.get(k)
            if res is None:
                res = made[k]
                self._results[k] = res
                if len(self._results) > self.cache_size:
                    self._results.popitem(last=False)
            else:
                self._results.move_to_end(k)
            out.append(res)
        return out
