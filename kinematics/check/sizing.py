"""Inverse questions on a checked route: how wide or long may the chassis be, how wide must
each door be.

All three answers come from bisection on the real swept-footprint check
(:mod:`kinematics.check.clearance`), whose clearance is monotone in the quantity searched:

- scaling the footprint about its reference point in ``y`` (width) or ``x`` (length) by a
  larger factor only grows every placement (for a footprint containing its reference point
  the scaled outline contains the smaller one), so "clears by the margin" holds below some
  factor and fails above it;
- widening a door (moving its jambs apart: subtracting a growing rectangle around the
  opening from the solids near it) only removes material, so the clearance near the door
  only grows.

Each bisection stops within 1 mm of width or length. The functions take ``progress``
(called with a fraction in [0, 1]) and ``cancel`` (polled; when it returns true the search
stops with :class:`SizingCancelled`) so the window can run them in a worker thread.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
from shapely.geometry import LineString
from shapely.geometry.base import BaseGeometry

from kinematics.check.contact import overlap_depth
from kinematics.check.obstacles import DOOR_BOX_M, ObstacleIndex
from kinematics.check.results import RouteCheck
from kinematics.check.sweep import (
    DEFAULT_TOLERANCE_M,
    MARGIN_SLACK_M,
    prepare_footprint,
    sweep_allowance,
    swept_segment,
)
from kinematics.motion.segments import Segment

#: Stop bisecting when the bracket is this narrow, metres.
RESOLUTION_M = 0.001
#: Largest scale factor tried for the widest / longest footprint.
MAX_SCALE = 64.0
#: How much wider than now a door may be made while searching, metres.
MAX_DOOR_WIDENING_M = 3.0

Progress = Callable[[float], None] | None
Cancel = Callable[[], bool] | None


class SizingCancelled(Exception):
    """The caller's ``cancel`` callback asked the search to stop."""


@dataclass(frozen=True)
class FootprintSize:
    """The largest scaled footprint that still clears the route by the margin.

    ``max_m`` is ``None`` when not even a sliver of the footprint clears; ``bounded`` is
    false when the largest factor tried still cleared (``max_m`` is then that size).
    """

    dimension: str  # "width" | "length"
    current_m: float
    max_m: float | None
    scale: float | None
    bounded: bool = True

    def to_dict(self) -> dict:
        return {"dimension": self.dimension, "current_m": self.current_m, "max_m": self.max_m,
                "scale": self.scale, "bounded": self.bounded}


@dataclass(frozen=True)
class DoorWidth:
    """The width a door needs for the chassis to pass it with the margin.

    ``width_needed_m`` is ``None`` when widening the door by up to
    ``MAX_DOOR_WIDENING_M`` does not clear (something else near the door is in the way).
    """

    label: str
    door: int
    width_m: float
    width_needed_m: float | None

    def to_dict(self) -> dict:
        return {"label": self.label, "door": self.door, "width_m": self.width_m,
                "width_needed_m": self.width_needed_m}


def _segments(plan_or_segments: Any) -> tuple[Segment, ...]:
    return tuple(getattr(plan_or_segments, "segments", plan_or_segments))


def _poll(cancel: Cancel) -> None:
    if cancel is not None and cancel():
        raise SizingCancelled("sizing cancelled")


def clears(footprint: Any, segments: Sequence[Segment], index: ObstacleIndex, margin_m: float,
           tolerance_m: float = DEFAULT_TOLERANCE_M, order: list[int] | None = None) -> bool:
    """True when the swept footprint keeps at least ``margin_m`` from every solid.

    ``order`` (segment indices) is tried first and updated with the failing segment, so a
    bisection re-tests the segment that failed last time before anything else.
    """
    fp = prepare_footprint(footprint)
    seq = list(range(len(segments)))
    if order:
        seq = [i for i in order if i < len(segments)] + [i for i in seq if i not in order]
    for i in seq:
        piece = swept_segment(fp, segments[i], sweep_allowance(tolerance_m))
        near = index.within(piece, margin_m)
        if len(near) and float(np.min(shapely.distance(piece, index.geometries[near]))) \
                < margin_m - MARGIN_SLACK_M:
            if order is not None:
                if i in order:
                    order.remove(i)
                order.insert(0, i)
            return False
    return True


def _scaled(ring: np.ndarray, axis: int, k: float) -> np.ndarray:
    out = ring.copy()
    out[:, axis] *= k
    return out


def _largest(axis: int, dimension: str, plan_or_segments: Any, chassis: Any,
             index: ObstacleIndex, tolerance_m: float, progress: Progress,
             cancel: Cancel) -> FootprintSize:
    segs = _segments(plan_or_segments)
    ring = prepare_footprint(chassis.footprint).ring
    size0 = float(ring[:, axis].max() - ring[:, axis].min())
    margin = float(chassis.margin_m)
    order: list[int] = []

    def ok(k: float) -> bool:
        _poll(cancel)
        return clears(_scaled(ring, axis, k), segs, index, margin, tolerance_m, order)

    # Expected steps: a few to bracket, then log2(range / resolution).
    expected = 4 + math.log2(max(size0, RESOLUTION_M) / RESOLUTION_M) + 1
    done = 0

    def tick() -> None:
        nonlocal done
        done += 1
        if progress is not None:
            progress(min(0.99, done / expected))

    k_min = RESOLUTION_M / max(size0, RESOLUTION_M)
    if ok(1.0):
        lo, hi = 1.0, 2.0
        tick()
        while ok(hi):
            tick()
            lo, hi = hi, hi * 2.0
            if hi > MAX_SCALE:
                if progress is not None:
                    progress(1.0)
                return FootprintSize(dimension, size0, lo * size0, lo, bounded=False)
        tick()
    else:
        tick()
        if not ok(k_min):
            if progress is not None:
                progress(1.0)
            return FootprintSize(dimension, size0, None, None)
        lo, hi = k_min, 1.0
    expected = done + math.log2(max((hi - lo) * size0, RESOLUTION_M) / RESOLUTION_M) + 1
    while (hi - lo) * size0 > RESOLUTION_M:
        mid = 0.5 * (lo + hi)
        if ok(mid):
            lo = mid
        else:
            hi = mid
        tick()
    if progress is not None:
        progress(1.0)
    return FootprintSize(dimension, size0, lo * size0, lo)


def widest_footprint(plan_or_segments: Any, chassis: Any, index: ObstacleIndex,
                     tolerance_m: float = DEFAULT_TOLERANCE_M, progress: Progress = None,
                     cancel: Cancel = None) -> FootprintSize:
    """The widest footprint (scaled in ``y`` about the reference point) that still clears.

    Parameters
    ----------
    plan_or_segments : RoutePlan or sequence of Segment
    chassis : Chassis
        ``footprint`` and ``margin_m``.
    index : ObstacleIndex
    tolerance_m : float
    progress : callable(float) or None
    cancel : callable() -> bool or None

    Returns
    -------
    FootprintSize
        Within 1 mm of width (below the true limit by at most that plus the tolerance).
    """
    return _largest(1, "width", plan_or_segments, chassis, index, tolerance_m, progress,
                    cancel)


def longest_footprint(plan_or_segments: Any, chassis: Any, index: ObstacleIndex,
                      tolerance_m: float = DEFAULT_TOLERANCE_M, progress: Progress = None,
                      cancel: Cancel = None) -> FootprintSize:
    """The longest footprint (scaled in ``x`` about the reference point) that still clears.

    See :func:`widest_footprint`.
    """
    return _largest(0, "length", plan_or_segments, chassis, index, tolerance_m, progress,
                    cancel)


def _frame(door: Any) -> tuple[float, float, float, float, float, float]:
    """Door midpoint, unit vector along the door line (a -> b) and the one across it."""
    (ax, ay), (bx, by) = door.a, door.b
    w0 = math.hypot(bx - ax, by - ay)
    ux, uy = (bx - ax) / w0, (by - ay) / w0
    mx, my = door.midpoint
    return mx, my, ux, uy, -uy, ux


def _rect(door: Any, along: tuple[float, float], across: tuple[float, float]
          ) -> BaseGeometry:
    """The rectangle ``along`` x ``across`` (metres from the door midpoint) in the door's
    frame."""
    mx, my, ux, uy, nx, ny = _frame(door)
    pts = [(mx + ux * s + nx * t, my + uy * s + ny * t)
           for s, t in ((along[0], across[0]), (along[1], across[0]),
                        (along[1], across[1]), (along[0], across[1]))]
    return shapely.Polygon(pts)


def _jamb_across(door: Any, base: BaseGeometry, end: int) -> tuple[float, float] | None:
    """Across-the-door extent (metres from the door line) of the solid at jamb ``end`` (0 for
    ``a``, 1 for ``b``): the section of the solids just beyond the jamb, or ``None``."""
    mx, my, ux, uy, nx, ny = _frame(door)
    h = door.width_m / 2.0
    sign = -1.0 if end == 0 else 1.0
    for beyond in (0.001, 0.01, 0.05):
        s = sign * (h + beyond)
        px, py = mx + ux * s, my + uy * s
        cut = LineString([(px - nx * DOOR_BOX_M, py - ny * DOOR_BOX_M),
                          (px + nx * DOOR_BOX_M, py + ny * DOOR_BOX_M)]).intersection(base)
        pieces = [g for g in getattr(cut, "geoms", [cut]) if g.length > 0.0]
        if not pieces:
            continue
        spans = []
        for g in pieces:
            t = [(x - px) * nx + (y - py) * ny for x, y in g.coords]
            spans.append((min(t), max(t)))
        # The piece on the door line, else the one nearest it.
        lo, hi = min(spans, key=lambda sp: 0.0 if sp[0] <= 0.0 <= sp[1] else
                     min(abs(sp[0]), abs(sp[1])))
        return lo, hi
    return None


def door_solid_at_width(door: Any, base: BaseGeometry, width_m: float,
                        fallback_depth_m: float = 0.2) -> BaseGeometry:
    """The solids ``base`` near ``door`` with the door opened to ``width_m`` about its
    midpoint.

    Wider than now: a rectangle as wide as the new opening and reaching through the walls at
    the jambs (2 cm past each face) is cut out. Narrower: at each jamb a block is added, as
    deep across the door line as the solid at that jamb is (so a narrowed door is a wall with
    a narrower gap, no deeper than the wall); a jamb with no solid beside it takes a block
    ``fallback_depth_m`` deep, centred on the door line.
    """
    w0 = door.width_m
    ext = [_jamb_across(door, base, e) for e in (0, 1)]
    half = fallback_depth_m / 2.0
    ext = [e if e is not None else (-half, half) for e in ext]
    if width_m >= w0:
        lo = min(e[0] for e in ext) - 0.02
        hi = max(e[1] for e in ext) + 0.02
        return base.difference(_rect(door, (-width_m / 2.0, width_m / 2.0), (lo, hi)))
    h0, h = w0 / 2.0, max(width_m, 0.0) / 2.0
    blocks = [_rect(door, (-h0 - 1e-9, -h), ext[0]), _rect(door, (h, h0 + 1e-9), ext[1])]
    return shapely.union_all([base, *blocks])


def _jamb_depth(door: Any, index: ObstacleIndex) -> float:
    """Thickness of the walls at the jambs, metres (0.2 where no wall ends there)."""
    depth = 0.0
    for s in index.solids:
        if s.kind != "wall":
            continue
        for p in (door.a, door.b):
            if s.geometry.distance(shapely.Point(p)) < 0.05:
                depth = max(depth, index.floorplan.walls[s.index].thickness_m)
    return depth if depth > 0.0 else 0.2


def _door_region(door: Any, extra_m: float) -> BaseGeometry:
    (ax, ay), (bx, by) = door.a, door.b
    w0 = math.hypot(bx - ax, by - ay)
    ux, uy = (bx - ax) / w0, (by - ay) / w0
    line = LineString([(ax - ux * extra_m, ay - uy * extra_m),
                       (bx + ux * extra_m, by + uy * extra_m)])
    return line.buffer(DOOR_BOX_M, cap_style="flat")


def door_widths_needed(plan_or_segments: Any, chassis: Any, index: ObstacleIndex,
                       tolerance_m: float = DEFAULT_TOLERANCE_M, progress: Progress = None,
                       cancel: Cancel = None, doors: Sequence[int] | None = None
                       ) -> list[DoorWidth]:
    """For each door the route passes, the width it needs for the chassis to clear by the
    margin.

    The door is widened (or narrowed) symmetrically about its midpoint
    (:func:`door_solid_at_width`: for a width above the current one an opening is cut through
    the walls at its jambs; below it, jamb blocks as deep as the solid at each jamb are
    added). The clearance between the swept footprint and those solids, within a box around
    the door, is then compared with the margin, so the answer is the width at which the
    check of the plan with the door rebuilt at that width flips, to 1 mm, whatever the
    door's width now (also on an oblique crossing, where it is
    ``2 (half width + margin) / cos(angle) + wall thickness * tan(angle)``).

    Parameters
    ----------
    plan_or_segments, chassis, index, tolerance_m, progress, cancel
        As for :func:`widest_footprint`.
    doors : sequence of int, optional
        Door indices; default every door a swept piece crosses.

    Returns
    -------
    list of DoorWidth
        ``width_needed_m`` within 1 mm (never below what the check needs).
    """
    segs = _segments(plan_or_segments)
    fp = prepare_footprint(chassis.footprint)
    margin = float(chassis.margin_m)
    pieces = [swept_segment(fp, s, sweep_allowance(tolerance_m)) for s in segs]
    if doors is None:
        crossed: set[int] = set()
        for p in pieces:
            if len(index.doors):
                crossed.update(index.door_tree.query(p, predicate="intersects").tolist())
        doors = sorted(crossed)
    out: list[DoorWidth] = []
    for n_done, k in enumerate(doors):
        _poll(cancel)
        door = index.doors[k]
        w0 = door.width_m
        extra = MAX_DOOR_WIDENING_M / 2.0 + 0.5
        region = _door_region(door, extra)
        local = [p.intersection(region) for p in pieces if p.intersects(region)]
        local_geom = shapely.union_all(np.array(local, dtype=object)) if local else None
        near = index.within(region, 0.0)
        base = (shapely.union_all(index.geometries[near]).intersection(region)
                if len(near) else shapely.Polygon())
        depth = _jamb_depth(door, index)

        def clearance(w: float, door: Any = door, base: BaseGeometry = base,
                      local_geom: BaseGeometry | None = local_geom,
                      depth: float = depth) -> float:
            _poll(cancel)
            solid = door_solid_at_width(door, base, w, depth)
            if local_geom is None or solid.is_empty:
                return math.inf
            d = float(local_geom.distance(solid))
            return d if d > 0.0 else -overlap_depth(local_geom, solid)

        lo, hi = 0.0, w0 + MAX_DOOR_WIDENING_M
        if clearance(hi) < margin - MARGIN_SLACK_M:
            out.append(DoorWidth(index.door_label(k), k, w0, None))
        else:
            while hi - lo > RESOLUTION_M:
                mid = 0.5 * (lo + hi)
                if clearance(mid) >= margin - MARGIN_SLACK_M:
                    hi = mid
                else:
                    lo = mid
            out.append(DoorWidth(index.door_label(k), k, w0, hi))
        if progress is not None:
            progress((n_done + 1) / max(len(doors), 1))
    if progress is not None:
        progress(1.0)
    return out


def sizing_dict(plan_or_segments: Any, chassis: Any, index: ObstacleIndex,
                tolerance_m: float = DEFAULT_TOLERANCE_M, progress: Progress = None,
                cancel: Cancel = None) -> dict:
    """All three answers as the ``sizing`` object of the check JSON."""
    def part(lo: float, hi: float) -> Progress:
        if progress is None:
            return None
        return lambda f: progress(lo + (hi - lo) * f)

    wide = widest_footprint(plan_or_segments, chassis, index, tolerance_m, part(0.0, 0.4),
                            cancel)
    long_ = longest_footprint(plan_or_segments, chassis, index, tolerance_m, part(0.4, 0.8),
                              cancel)
    doors = door_widths_needed(plan_or_segments, chassis, index, tolerance_m, part(0.8, 1.0),
                               cancel)
    return {"widest": wide.to_dict(), "longest": long_.to_dict(),
            "doors": [d.to_dict() for d in doors], "resolution_m": RESOLUTION_M}


def attach_sizing(check: RouteCheck, plan_or_segments: Any, project: Any,
                  index: ObstacleIndex, tolerance_m: float = DEFAULT_TOLERANCE_M,
                  progress: Progress = None, cancel: Cancel = None) -> RouteCheck:
    """Compute :func:`sizing_dict` for ``project.chassis`` and store it on ``check.sizing``."""
    check.sizing = sizing_dict(plan_or_segments, project.chassis, index, tolerance_m,
                               progress, cancel)
    return check
