"""Sweep and check of a whole train: the tug and every towed trailer.

The tug is checked as any chassis (:mod:`kinematics.check.clearance`). Each trailer's motion
comes from :mod:`kinematics.motion.trailers`; it is not a rotation about a fixed centre, so it
is swept in **chunks**, each as the rigid motion (a rotation about the fixed point carrying the
chunk's first pose to its last, or a translation when the chunk barely turns) that
:mod:`kinematics.check.sweep` sweeps conservatively, grown by how far the true motion strays
from that stand-in:

- the stray is measured at fine samples of the chunk (the trailer's pose against the
  stand-in's pose at the same fraction of progress): the axle's distance plus the farthest
  footprint radius times the heading difference, which bounds every footprint point's
  distance because both are rigid placements;
- between fine samples ``delta`` apart the stray can grow by at most ``delta^2 / 8 * M``
  (the linear-interpolation error bound), ``M`` bounding the second derivative of any
  footprint point's path, true and stand-in, derived along the chain from the tug's speed and
  turn rate on the segment (hitch speed ``P = V + |h| W``, turn rate ``P / d``, and their
  derivatives);
- a chunk grows (doubling, then bisection) while its stray stays within a share of the
  tolerance; the rotation is drawn within the rest.

So each trailer's band CONTAINS its true swept region and exceeds it by at most the tolerance,
the promise the single body makes; the train's band is the union of its bodies' bands, and its
clearance is the least over its bodies (each against its own margin).

The band is swept only when drawn or asked for (traffic, views). The check itself measures
each trailer's clearances without polygons, from certified intervals of its motion
(:mod:`kinematics.check.train_bounds`): lower bounds within half the sweep allowance of the
truth and never above it, the same promise, at a fraction of the sweep's cost. Violations of
a train name their ``body`` ("tug (ward tug)", "trailer 2 (meal cart)"); a hitch angle beyond
a trailer's ``max_hitch_deg`` is a ``jackknife``.

Size: the train check is one argument (a trailer's band in chunks of its motion, each a rigid
stand-in grown by the stray, and the violations, doors and jackknifes read from the check's
intervals as the same chunk records); the band and the results share those records, so they
are kept together.
"""

from __future__ import annotations

import dataclasses
import functools
import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely

from kinematics.check.clearance import ObstacleIndex, check_route
from kinematics.check.contact import nearest_point, overlap_depth, part_name, to_body
from kinematics.check.door_crossing import door_station
from kinematics.check.results import DoorPass, RouteCheck, Violation
from kinematics.check.segment_parts import SweptParts
from kinematics.check.sweep import (
    _QUAD_SEGS,
    DEFAULT_TOLERANCE_M,
    MARGIN_SLACK_M,
    MAX_CHUNK_RAD,
    Footprint,
    _place_one,
    _polys,
    placed_footprints,
    prepare_footprint,
    rotation_parts,
    sweep_allowance,
    translation_parts,
)
from kinematics.check.train_bounds import Hit, TrailerBounds, chain_bounds, trailer_poses
from kinematics.errors import ValidationError
from kinematics.motion.segments import Segment, segment_stations
from kinematics.motion.trailers import TrainBudgetError, TrainTrace, hitch_angles, trace_train

#: Shares of the tolerance: the stray of a chunk (measured plus between-sample slack), and
#: of that the between-sample slack alone.
_STRAY_SHARE = 0.3
_SLACK_SHARE = 0.08
#: Share of the tolerance under which a chunk's turn counts as a translation.
_TINY_TURN_SHARE = 0.125
#: Fine samples per segment at most (the grid step grows past this on very long segments).
_MAX_SAMPLES = 20000
#: Travel of a trailer's sweep window, metres (windows far from every solid and door are
#: swept only when the band is drawn).
WINDOW_M = 1.0
#: Half the travel of any footprint point between the placements probing a window, metres.
PROBE_SLACK_M = 0.03


@functools.lru_cache(maxsize=64)
def _prepared_cached(footprint: tuple) -> Footprint:
    return prepare_footprint(footprint)


def _prepared(footprint: Any) -> Footprint:
    """:func:`prepare_footprint` of a trailer's footprint, kept for footprints given as
    tuples (a project's trailers are checked route after route)."""
    try:
        return _prepared_cached(footprint)
    except TypeError:  # not hashable: a list or an array
        return prepare_footprint(footprint)


def body_name(i: int, chassis: Any) -> str:
    """The name a violation uses for body ``i`` of a train (0 the tug)."""
    if i == 0:
        return f"tug ({chassis.name})"
    return f"trailer {i} ({chassis.trailers[i - 1].name})"


_bounds = chain_bounds


@dataclass
class Chunk:
    """One swept piece of a trailer: on segment ``segment`` from progress ``p0`` to ``p1``."""

    segment: int
    p0: float
    p1: float
    parts: np.ndarray
    poses: np.ndarray  # fine-sample poses of the trailer in the chunk (k, 3)
    order: int = -1    # place in the route's sequence of chunks (gaps where none swept)


def _centre(ax: float, ay: float, bx: float, by: float, phi: float) -> tuple[float, float]:
    """Fixed point of the rotation by ``phi`` carrying ``(ax, ay)`` to ``(bx, by)``: on the
    chord's bisector, half the chord over ``tan(phi / 2)`` from its middle."""
    k = 0.5 / math.tan(0.5 * phi)
    return (0.5 * (ax + bx) - k * (by - ay), 0.5 * (ay + by) + k * (bx - ax))


def _stray(T: np.ndarray, th: np.ndarray, p: np.ndarray, k: int, e: int, r: float,
           tiny: float, slack_u: float, curv: tuple[float, float, float]
           ) -> tuple[float, bool, Any]:
    """Largest distance of the trailer from the rigid stand-in over samples ``k..e`` plus the
    slack between samples, whether the stand-in rotates, and its centre (or translation).

    Each sample is paired with the stand-in placement at the same fraction of progress (its
    stray: the axle's distance plus ``r`` times the heading difference), or, where the
    heading turns one way through the chunk, with the stand-in placement of the same heading
    (its stray: the axle's distance alone; the slack then grows with the stand-in's radius).
    """
    u = (p[k:e + 1] - p[k]) * (1.0 / (p[e] - p[k]))
    phi = float(th[e] - th[k])
    Tk = T[k]
    seg = T[k:e + 1]
    if abs(phi) * r <= tiny:
        v = T[e] - Tk
        dx = seg[:, 0] - Tk[0] - u * v[0]
        dy = seg[:, 1] - Tk[1] - u * v[1]
        dev = np.sqrt(dx * dx + dy * dy) + r * np.abs(th[k:e + 1] - th[k])
        return float(dev.max()) + slack_u, False, v
    qx, qy = _centre(float(Tk[0]), float(Tk[1]), float(T[e, 0]), float(T[e, 1]), phi)
    rx, ry = Tk[0] - qx, Tk[1] - qy
    rel = th[k:e + 1] - th[k]
    best = math.inf
    if e - k > 1 and bool(np.all(np.diff(rel) * phi >= 0.0)):
        # Same heading: only the axle strays; slack dt^2/8 (A + rho (W' + W^2)).
        rho = math.hypot(rx, ry)
        slack_h = curv[0] * (curv[1] + rho * curv[2])
        if slack_h < slack_u:
            c, s = np.cos(rel), np.sin(rel)
            dx = seg[:, 0] - (qx + c * rx - s * ry)
            dy = seg[:, 1] - (qy + s * rx + c * ry)
            best = float(np.sqrt(dx * dx + dy * dy).max()) + slack_h
    a = u * phi
    c, s = np.cos(a), np.sin(a)
    dx = seg[:, 0] - (qx + c * rx - s * ry)
    dy = seg[:, 1] - (qy + s * rx + c * ry)
    dev = np.sqrt(dx * dx + dy * dy) + r * np.abs(rel - a)
    return min(best, float(dev.max()) + slack_u), True, (qx, qy)


def _next_chunk(T: np.ndarray, th: np.ndarray, p: np.ndarray, k: int, n: int, last: int,
                r: float, tiny: float, slack: float, curv: tuple, budget: float
                ) -> tuple[int, tuple]:
    """The end sample of the chunk starting at ``k`` and its stray: grown from the last
    chunk's length, doubling while its stray fits the budget, then bisected between the
    longest that fits and the shortest that does not (one step always fits: its stray is the
    slack alone)."""

    def fits(e: int) -> tuple | None:
        if abs(th[e] - th[k]) > MAX_CHUNK_RAD:
            return None
        info = _stray(T, th, p, k, e, r, tiny, slack, curv)
        return info if info[0] <= budget else None

    good, good_info, bad = k + 1, _stray(T, th, p, k, k + 1, r, tiny, slack, curv), None
    e = min(n, k + max(last, 2))
    while e > good:
        info = fits(e)
        if info is None:
            bad = e
            break
        good, good_info = e, info
        e = min(n, k + 2 * (e - k))
    while bad is not None and bad - good > 1:
        mid = (good + bad) // 2
        info = fits(mid)
        if info is not None:
            good, good_info = mid, info
        else:
            bad = mid
    return good, good_info


@dataclass
class _Grid:
    """Fine samples of one trailer on one segment and the bounds the chunks need."""

    segment: int
    p: np.ndarray
    poses: np.ndarray
    slack: float
    curv: tuple
    speed: float       # bound of any footprint point's speed per unit progress
    still: bool        # the trailer does not move on this segment (one placement)

    @property
    def n(self) -> int:
        return len(self.p) - 1


def _grids(trace: TrainTrace, j: int, fp: Footprint, tol: float) -> list[_Grid]:
    """Per moving segment the fine samples of trailer ``j`` (see the module text)."""
    r_far = [0.0] * trace.n
    r_far[j] = fp.r_far_m
    out = []
    for i in range(len(trace.segments)):
        amount = trace.amount(i)
        if amount <= 0.0:
            continue
        m = trace.traces[i].motion
        P, W, M, A, Wd = _bounds(m, trace.hitches, r_far)[j]
        if P <= 0.0:
            # The trailer does not move on this segment (an on-axle hitch on a pivot).
            pose = trace.poses(i, [0.0])[0, j + 1]
            out.append(_Grid(i, np.array([0.0, amount]), np.vstack([pose, pose]), 0.0,
                             (0.0, 0.0, 0.0), 0.0, True))
            continue
        delta = math.sqrt(8.0 * _SLACK_SHARE * tol / M) if M > 0.0 else amount
        n = min(_MAX_SAMPLES, max(1, math.ceil(amount / delta)))
        dt2 = (amount / n) ** 2 / 8.0
        p = np.linspace(0.0, amount, n + 1)
        poses = trace.poses(i, p)[:, j + 1]
        out.append(_Grid(i, p, poses, dt2 * M, (dt2, A, Wd + W * W), P + fp.r_far_m * W,
                         False))
    return out


def _sweep_range(fp: Footprint, g: _Grid, k0: int, k1: int, tol: float) -> list[Chunk]:
    """The chunks of grid ``g`` from sample ``k0`` to ``k1``."""
    if g.still:
        return [Chunk(g.segment, 0.0, float(g.p[-1]), placed_footprints(fp, g.poses[:1]),
                      g.poses[:1])]
    budget = _STRAY_SHARE * tol
    tiny = _TINY_TURN_SHARE * tol
    poses, p = g.poses, g.p
    T, th = poses[:, :2], poses[:, 2]
    chunks: list[Chunk] = []
    k, last = k0, 1
    while k < k1:
        e, good_info = _next_chunk(T, th, p, k, k1, last, fp.r_far_m, tiny, g.slack, g.curv,
                                   budget)
        last = e - k
        dev = good_info[0]
        placed = _place_one(fp.ring, poses[k])
        grow = dev / math.cos(math.pi / (4 * _QUAD_SEGS))
        if good_info[1]:
            rot_tol = 0.95 * tol - dev - grow
            parts = _polys(rotation_parts(placed, good_info[2], th[e] - th[k], rot_tol),
                           False)
        else:
            parts = _polys(translation_parts(placed, good_info[2], fp.convex), fp.convex)
        parts = parts[~shapely.is_empty(parts)]
        bad_ = ~shapely.is_valid(parts)
        if bad_.any():
            parts[bad_] = shapely.make_valid(parts[bad_])
        if grow > 0.0:
            parts = shapely.buffer(parts, grow, quad_segs=_QUAD_SEGS)
        chunks.append(Chunk(g.segment, float(p[k]), float(p[e]), parts, poses[k:e + 1]))
        k = e
    return chunks


def sweep_trailer(trace: TrainTrace, j: int, footprint: Any,
                  tolerance_m: float = DEFAULT_TOLERANCE_M) -> list[Chunk]:
    """The chunks whose parts' union conservatively contains trailer ``j``'s swept region
    (0-based trailer index) and exceeds it by at most ``tolerance_m``."""
    fp = prepare_footprint(footprint)
    tol = float(tolerance_m)
    chunks: list[Chunk] = []
    for g in _grids(trace, j, fp, tol):
        chunks += _sweep_range(fp, g, 0, g.n, tol)
    return chunks


class _TrailerSweep:
    """One trailer's band in windows of about :data:`WINDOW_M` of travel, each swept only
    when asked for (drawing the band, its union, traffic): the check itself measures the
    trailer's clearances without polygons (:mod:`kinematics.check.train_bounds`)."""

    def __init__(self, trace: TrainTrace, j: int, fp: Footprint, tol: float) -> None:
        self.fp, self.tol = fp, tol
        self._trace, self._j = trace, j
        self._grids: list[_Grid] | None = None
        self._windows: list[tuple[int, int, int]] | None = None
        self.swept: dict[int, list[Chunk]] = {}

    @property
    def grids(self) -> list[_Grid]:
        """Fine samples per segment (built on first use: the check itself needs none)."""
        if self._grids is None:
            self._grids = _grids(self._trace, self._j, self.fp, self.tol)
        return self._grids

    @property
    def windows(self) -> list[tuple[int, int, int]]:
        """The sweep windows: (grid, first sample, last sample)."""
        if self._windows is None:
            self._windows = []
            for gi, g in enumerate(self.grids):
                if g.still:
                    self._windows.append((gi, 0, g.n))
                    continue
                travel = float(np.hypot(*np.diff(g.poses[:, :2], axis=0).T).max()) \
                    if g.n else 0.0
                w = max(4, int(WINDOW_M / travel)) if travel > 0.0 else g.n
                for k0 in range(0, g.n, w):
                    self._windows.append((gi, k0, min(g.n, k0 + w)))
        return self._windows

    def ensure(self, ws: Any) -> None:
        for w in ws:
            if w not in self.swept:
                gi, k0, k1 = self.windows[w]
                self.swept[w] = _sweep_range(self.fp, self.grids[gi], k0, k1, self.tol)

    def swept_chunks(self) -> list[Chunk]:
        """The swept windows' chunks in route order, each numbered in ``order`` so that a
        window not swept leaves a gap (two chunks are consecutive only if their orders
        are)."""
        out, order = [], 0
        for w in range(len(self.windows)):
            got = self.swept.get(w)
            if got is None:
                order += 1
                continue
            for ck in got:
                ck.order = order
                order += 1
                out.append(ck)
        return out

    def all_chunks(self) -> list[Chunk]:
        self.ensure(range(len(self.windows)))
        return self.swept_chunks()

    def segment_parts(self, i: int) -> list[np.ndarray]:
        ws = [w for w, (gi, _k0, _k1) in enumerate(self.windows) if self.grids[gi].segment == i]
        self.ensure(ws)
        return [ck.parts for w in ws for ck in self.swept[w]]


def _chunk_station(stations: np.ndarray, segs: Sequence[Segment], ck: Chunk) -> float:
    seg = segs[ck.segment]
    return float(stations[ck.segment]) + (ck.p0 if seg.kind != "pivot" else 0.0)


def _trailer_station(trace: TrainTrace, j: int, fp: Footprint, ck: Chunk,
                     stations: np.ndarray, segs: Sequence[Segment], x: float, y: float
                     ) -> float:
    """Route station where trailer ``j``, within chunk ``ck``, is placed nearest ``(x, y)``
    (placements every 5 cm of the chunk's progress, then every 1 cm round the nearest; a
    pivot's station is its start)."""
    st = _chunk_station(stations, segs, ck)
    if segs[ck.segment].kind == "pivot" or not ck.p1 > ck.p0:
        return st
    pt = shapely.Point(x, y)

    def nearest(lo: float, hi: float, step: float) -> tuple[np.ndarray, int]:
        n = int(min(2000, max(8, math.ceil((hi - lo) / step))))
        ps = np.linspace(lo, hi, n + 1)
        placed = placed_footprints(fp, trailer_poses(trace, j, ck.segment, ps))
        return ps, int(np.argmin(shapely.distance(placed, pt)))

    ps, w = nearest(ck.p0, ck.p1, 0.05)
    if len(ps) > 9:
        ps, w = nearest(float(ps[max(w - 1, 0)]), float(ps[min(w + 1, len(ps) - 1)]), 0.01)
    return float(stations[ck.segment]) + float(ps[w])


def _part_of(fp: Footprint, poses: np.ndarray, solid: Any) -> str:
    sel = poses[np.linspace(0, len(poses) - 1, min(len(poses), 24)).round().astype(int)]
    placed = placed_footprints(fp, sel)
    dist = shapely.distance(placed, solid)
    w = int(np.argmin(dist))
    if dist[w] > 0.0:
        line = shapely.shortest_line(placed[w], solid)
        px, py = line.coords[0]
    else:
        ov = placed[w].intersection(solid)
        px, py = ov.centroid.x, ov.centroid.y
    bx, by = to_body(sel[w], px, py)
    return part_name(fp, bx, by)


def _first_station(trace: TrainTrace, tj: int, fp: Footprint, ck: Chunk, stations, segs,
                   solid: Any, margin: float, collide: bool) -> float:
    """Route station where trailer ``tj`` first comes within ``margin`` of ``solid`` (or
    touches it) inside chunk ``ck``: placements every 1 cm of the chunk's progress, the
    station of the placement before the first that does (so at most 1 cm early, never
    late); the chunk's start where no placement does (only its band reaches)."""
    st = _chunk_station(stations, segs, ck)
    if segs[ck.segment].kind == "pivot" or not ck.p1 > ck.p0:
        return st
    n = int(min(4000, max(8, math.ceil((ck.p1 - ck.p0) / 0.01))))
    ps = np.linspace(ck.p0, ck.p1, n + 1)
    placed = placed_footprints(fp, trailer_poses(trace, tj, ck.segment, ps))
    d = shapely.distance(placed, solid)
    bad = d <= 0.0 if collide else d < margin - MARGIN_SLACK_M
    if not bad.any():
        return st
    k = int(np.argmax(bad))
    return float(stations[ck.segment]) + float(ps[max(k - 1, 0)])


def _interval_chunk(tb: TrailerBounds, k: int) -> Chunk:
    """Interval ``k`` of a trailer's bounds as a :class:`Chunk` (its stand-in's pieces and
    nine true poses), for the nearest-point, station and part-name helpers (made once per
    interval: the violations, doors and least clearance often ask for the same one)."""
    made = tb.tb.__dict__.setdefault("_interval_chunks", {})
    got = made.get(k)
    if got is not None:
        return got
    seg = int(tb.seg[k])
    p0, p1 = float(tb.pa[k]), float(tb.pb[k])
    parts, _owner = tb.pieces(np.array([k]), solid_only=True)
    poses = tb._poses(np.full(9, seg), np.linspace(p0, p1, 9))
    got = made[k] = Chunk(seg, p0, p1, parts, poses, k)
    return got


def _stretch_violations(tb: TrailerBounds, hits: Sequence[Hit], segs, stations,
                        body: str) -> tuple[list[Violation], list[tuple[float, int, int]]]:
    """One violation per run of consecutive intervals near the same solid; and each run's
    worst clearance with its interval and solid (an overlap depth where it touches)."""
    index, margin, fp, trace, tj = tb.index, tb.margin, tb.fp, tb.trace, tb.j
    by_solid: dict[int, list[Hit]] = {}
    for h in hits:
        by_solid.setdefault(h.solid, []).append(h)
    out, worsts = [], []
    for j, hs in by_solid.items():
        runs: list[list[Hit]] = []
        for h in hs:
            if runs and h.k == runs[-1][-1].k + 1:
                runs[-1].append(h)
            else:
                runs.append([h])
        for run in runs:
            collide = [h for h in run if h.clearance_m <= 0.0]
            chosen = collide or run
            worst = min(chosen, key=lambda h: h.clearance_m)
            c = worst.clearance_m
            if collide:
                depth = tb.depth([h.k for h in collide], j)
                c = -depth if depth > 0.0 else c
            ck = _interval_chunk(tb, chosen[0].k)
            solid = index.geometries[j]
            x, y = nearest_point(ck.parts, solid, bool(collide))
            st = _first_station(trace, tj, fp, ck, stations, segs, solid, margin,
                                bool(collide))
            name = index.solids[j].name
            part = _part_of(fp, _interval_chunk(tb, worst.k).poses, solid)
            if collide:
                amount = -c
                msg = (f"{body}: {part} scrapes {name} by {amount * 1000:.0f} mm at station "
                       f"{st:.2f} m")
            else:
                amount = margin - c
                msg = (f"{body}: {part} passes {name} with {c * 1000:.0f} mm "
                       f"clearance, {amount * 1000:.0f} mm short of the {margin * 1000:.0f} "
                       f"mm margin, from station {st:.2f} m")
            out.append(Violation("collision" if collide else "clearance", ck.segment, st,
                                 x, y, float(amount), msg, name, body))
            worsts.append((float(c), worst.k, j))
    return out, worsts


def _trailer_doors(tb: TrailerBounds, stations, segs) -> dict[int, tuple[float, int, float]]:
    """Per door trailer ``tb.j``'s band crosses (its stand-ins, grown by their stray, reach
    the door's line): least clearance in the door's box, and the segment and route station
    where the trailer comes that near (the tug's station then)."""
    out: dict[int, tuple[float, int, float]] = {}
    index = tb.index
    for q, (k, val, _up) in tb.door_values().items():
        if 0.0 < float(val.min()) and float(val.min()) >= tb.door_caps[q]:
            continue  # another body of the train is as near there: its pass stands
        if not math.isfinite(tb.door_caps[q]):
            # A door the tug does not pass: listed if the trailer's band reaches its line.
            geoms, owner = tb.pieces(k, solid_only=True)
            dl = tb.delta(k)
            if not shapely.dwithin(geoms, index.door_lines[q], dl[owner] + 1e-12).any():
                continue
        w = int(np.argmin(val))
        c = float(val[w])
        kb = int(k[w])
        box = index.door_boxes[q]
        solids = index.within(box, 0.0)
        ck = _interval_chunk(tb, kb)
        st = _chunk_station(stations, segs, ck)
        if len(solids) and math.isfinite(c):
            if c <= 0.0:
                region = tb.placements(k[val <= 0.0].tolist()).intersection(box)
                depth = max(overlap_depth(region, index.geometries[jj]) for jj in solids.tolist())
                c = -depth if depth > 0.0 else c
            local = shapely.intersection(ck.parts, box)
            local = local[~shapely.is_empty(local)]
            if len(local):
                dd = [float(np.min(shapely.distance(local, index.geometries[jj])))
                      for jj in solids.tolist()]
                cj = int(solids[int(np.argmin(dd))])
                x, y = nearest_point(local, index.geometries[cj], c <= 0.0)
                st = _trailer_station(tb.trace, tb.j, tb.fp, ck, stations, segs, x, y)
        out[q] = (c, ck.segment, st)
    return out


def _jackknifes(trace: TrainTrace, chassis: Any, stations) -> tuple[list[Violation], list]:
    """``jackknife`` where a hitch angle passes its trailer's limit; the largest angles."""
    out: list[Violation] = []
    worst = [0.0] * trace.n
    for i, seg in enumerate(trace.segments):
        amount = trace.amount(i)
        n = max(2, min(4000, math.ceil(amount / 0.02) + 1)) if amount > 0.0 else 1
        p = np.linspace(0.0, amount, n)
        m = trace.traces[i].motion
        heads = np.empty((n, trace.n + 1, 3))
        heads[:, 0, 2] = m.th0 + (m.w + 0.5 * m.wd * p) * p
        heads[:, 1:, 2] = trace.headings(i, p)
        ang = np.abs(hitch_angles(heads))
        for j, t in enumerate(chassis.trailers):
            worst[j] = max(worst[j], float(ang[:, j].max()))
            over = ang[:, j] > math.radians(t.max_hitch_deg) + 1e-9
            if not over.any():
                continue
            # One violation per segment and trailer, where the limit is first passed.
            k = int(np.argmax(over))
            prev_over = out and out[-1].body == body_name(j + 1, chassis) and \
                out[-1].segment == i - 1 and bool(over[0])
            if prev_over:
                continue
            st = float(stations[i]) + (float(p[k]) if seg.kind != "pivot" else 0.0)
            deg = math.degrees(float(ang[k:, j][over[k:]].max()))
            how = "reversing" if seg.direction < 0 else (
                "turning on the spot" if seg.kind == "pivot" else "driving")
            body = body_name(j + 1, chassis)
            x, y = (float(v) for v in trace.poses(i, p[k:k + 1])[0, j + 1, :2])
            excess = math.radians(deg - t.max_hitch_deg)
            out.append(Violation(
                "jackknife", i, st, x, y, float(t.drawbar_m * math.sin(min(excess, math.pi / 2))),
                f"{body}: hitch angle reaches {deg:.0f} deg {how}, past its "
                f"{t.max_hitch_deg:g} deg limit, from station {st:.2f} m", "", body, deg))
    return out, [math.degrees(w) for w in worst]


@dataclass
class TrainResult:
    """What a train check adds to a route check: the trace and each trailer's chunks."""

    trace: TrainTrace
    sweeps: list[_TrailerSweep]
    bodies: list[dict]

    @property
    def chunks(self) -> list[list[Chunk]]:
        """Each trailer's chunks along the whole route (the windows the check did not need
        are swept now)."""
        return [sw.all_chunks() for sw in self.sweeps]


class _TrainParts(SweptParts):
    """One segment's swept parts of the whole train: the tug's, then every trailer's, whose
    windows the check did not sweep are swept on first use (drawing, the band's union)."""

    __slots__ = ("_tug", "_i", "_sweeps", "_all")

    def __init__(self, tug: SweptParts, i: int, sweeps: Sequence[_TrailerSweep]) -> None:
        self._tug, self._i, self._sweeps, self._all = tug, i, sweeps, None
        self._union = None
        self._make = None  # the whole train's union is made from all its parts

    @property  # type: ignore[override]
    def parts(self) -> np.ndarray:
        if self._all is None:
            extra = [a for sw in self._sweeps for a in sw.segment_parts(self._i)]
            self._all = np.concatenate([self._tug.parts, *extra]) if extra else \
                self._tug.parts
        return self._all


def check_train(plan_or_segments: Any, chassis: Any, index: ObstacleIndex,
                tolerance_m: float = DEFAULT_TOLERANCE_M, route_name: str = "",
                route: Any = None, tug_check: RouteCheck | None = None) -> RouteCheck:
    """Check a route for a chassis and every trailer it tows (see the module text).

    Without trailers this is :func:`kinematics.check.clearance.check_route`. With trailers the
    result's violations name their ``body``; ``min_clearance_m`` is the least over the
    bodies; ``bodies`` lists each body's least clearance and margin; its swept pieces hold
    every body's parts (per segment), so views draw the whole train's band.
    """
    segs = tuple(getattr(plan_or_segments, "segments", plan_or_segments))
    tug = tug_check if tug_check is not None else check_route(
        plan_or_segments, chassis, index, tolerance_m=tolerance_m, route_name=route_name,
        route=route)
    trailers = tuple(getattr(chassis, "trailers", ()) or ())
    if not trailers or not segs:
        return tug
    try:
        trace = trace_train(segs, trailers)
    except TrainBudgetError as exc:
        raise ValidationError(route_name or getattr(route, "name", ""), "trailers",
                              exc.expected) from None
    stations = segment_stations(segs)
    tug_body = body_name(0, chassis)
    violations = [dataclasses.replace(v, body=v.body or tug_body) for v in tug.violations]
    bodies = [{"body": tug_body, "min_clearance_m": tug.min_clearance_m,
               "margin_m": tug.margin_m}]
    least, at = tug.min_clearance_m, tug.min_clearance_at
    if at is not None:
        at = dict(at, body=tug_body)
    doors = {p.door: p for p in tug.doors}
    fps = [_prepared(t.footprint) for t in trailers]
    margins = [chassis.trailer_margin(j) if hasattr(chassis, "trailer_margin") else
               (t.margin_m if t.margin_m is not None else chassis.margin_m)
               for j, t in enumerate(trailers)]
    # Every trailer's intervals refined together (one round of calls serves them all).
    batch = TrailerBounds(trace, range(len(trailers)), fps, index, margins,
                          0.5 * sweep_allowance(tolerance_m),
                          {k: p.min_clearance_m for k, p in doors.items()})
    sweeps = []
    for j, fp in enumerate(fps):
        margin = margins[j]
        sw = _TrailerSweep(trace, j, fp, sweep_allowance(tolerance_m))
        sweeps.append(sw)
        body = body_name(j + 1, chassis)
        tb = batch.view(j)
        vs, worsts = _stretch_violations(tb, tb.hits(), segs, stations, body)
        violations += vs
        least_j = tb.least()
        if worsts and min(worsts)[0] <= 0.0:
            least_j = min(worsts)
        c_min = None if least_j is None else float(least_j[0])
        bodies.append({"body": body, "min_clearance_m": c_min, "margin_m": margin})
        if c_min is not None and (least is None or c_min < least):
            least = c_min
            _c, bk, bj = least_j
            ck = _interval_chunk(tb, bk)
            x, y = nearest_point(ck.parts, index.geometries[bj], c_min <= 0.0)
            at = {"x": x, "y": y,
                  "station_m": _trailer_station(trace, j, fp, ck, stations, segs, x, y),
                  "segment": ck.segment, "solid": index.solids[bj].name, "body": body}
        for k, (c, si, st) in _trailer_doors(tb, stations, segs).items():
            old = doors.get(k)
            cval = None if not math.isfinite(c) else float(c)
            if old is None:
                door = index.doors[k]
                ci, cst = door_station(segs, stations, [si], door.a, door.b)
                doors[k] = DoorPass(index.door_label(k), cval, k, ci, cst, door.width_m,
                                    None if cval is None else st)
            elif cval is not None and (old.min_clearance_m is None or
                                       cval < old.min_clearance_m):
                doors[k] = dataclasses.replace(old, min_clearance_m=cval,
                                               min_clearance_station_m=st)
    jk, worst = _jackknifes(trace, chassis, stations)
    violations += jk
    for j, w in enumerate(worst):
        bodies[j + 1]["max_hitch_deg"] = w
    violations.sort(key=lambda v: (v.station_m, v.kind))
    parts = tuple(_TrainParts(sp, i, sweeps) for i, sp in enumerate(tug._parts))
    out = dataclasses.replace(
        tug, clear=not violations, min_clearance_m=least, min_clearance_at=at,
        violations=violations, doors=sorted(doors.values(), key=lambda p: (p.station_m,
                                                                           p.door)),
        _parts=parts, _swept=None)
    out.train = TrainResult(trace, sweeps, bodies)
    return out


def train_poses_at_stations(trace: TrainTrace, stations: Sequence[float]) -> np.ndarray:
    """Every body's pose at route stations (a station on a joint takes the later segment;
    pivots are passed over), shape (len(stations), n + 1, 3)."""
    st = np.atleast_1d(np.asarray(stations, dtype=float))
    edges = segment_stations(trace.segments)
    idx = np.clip(np.searchsorted(edges, st, side="right") - 1, 0, len(trace.segments) - 1)
    out = np.empty((st.size, trace.n + 1, 3))
    for i in np.unique(idx).tolist():
        m = idx == i
        seg = trace.segments[i]
        local = st[m] - edges[i] if seg.kind != "pivot" else np.full(int(m.sum()),
                                                                     trace.amount(i))
        out[m] = trace.poses(i, np.clip(local, 0.0, trace.amount(i)))
    return out


def train_poses(check_or_trace: Any, segment: int, progress: Sequence[float]) -> np.ndarray:
    """Every body's pose on ``segment`` at ``progress`` (see :meth:`TrainTrace.poses`)."""
    trace = getattr(getattr(check_or_trace, "train", None), "trace", check_or_trace)
    return trace.poses(segment, progress)


__all__ = ["Chunk", "TrainResult", "body_name", "check_train", "sweep_trailer", "train_poses",
           "train_poses_at_stations"]
