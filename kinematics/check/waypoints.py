"""``waypoint_blocked``: the footprint placed where the chassis stands on or passes a waypoint
overlaps a solid.

Only waypoints the chassis really reaches are judged (shared/contract.md): the route's ends,
waypoints it stops at (``always``), and waypoints the path passes through (a grid pose within
:data:`ON_PATH_M`; pivots sit on their waypoint). A corner waypoint that a fillet or a
Dubins turn cuts is a control point the chassis never stands on: the swept check judges the
path there, and nothing is said about the point. The footprint is judged, not the point, so
a footprint that does not hold its reference point (a fork-ahead one) is judged where it
really is. With no path at all (a route of one waypoint) the point itself is judged.

The footprint is placed at each waypoint with the heading of the route pose nearest it among
grid poses that each segment lays out on its own stations (every :data:`GRID_M` or finer,
both ends included; the first nearest in route order). The grid is per segment rather than
along the whole route so that an unchanged segment keeps it when the route's length changes
elsewhere: the search and the verdicts are then kept by values and a warm checker gives
exactly a fresh one's answer. The reported station is the segment's start station plus the
grid pose's local station; the overlap found is that of a real placement on the path, so a
reported block is never spurious (a tighter placement between grid poses may be missed, as
with any sampled grid).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
import shapely
from shapely.geometry import Point

from kinematics.check.contact import overlap_depth
from kinematics.check.obstacles import ObstacleIndex
from kinematics.check.results import Violation
from kinematics.check.segment_parts import cache_key
from kinematics.check.sweep import Footprint, placed_footprints
from kinematics.motion.se2 import sinc_terms
from kinematics.motion.segments import Segment

#: Slack of the bulk queries that pick waypoints for a closer look, metres.
SLACK_M = 1e-6
#: Greatest step of each segment's own station grid for waypoint placements, metres.
GRID_M = 0.02
#: A waypoint this close to a grid pose is one the path passes through, metres. Paths pass
#: through their waypoints at segment ends, which are grid poses.
ON_PATH_M = 1e-3


class WaypointCheck:
    """Judges a route's waypoints, keeping grids, nearest poses and verdicts by values.

    Parameters
    ----------
    footprint : Footprint
    index : ObstacleIndex
    cache_size : int
        Each kept table is cleared when it grows past four times this.
    """

    def __init__(self, footprint: Footprint, index: ObstacleIndex, cache_size: int) -> None:
        self.footprint = footprint
        self.index = index
        self.cache_size = int(cache_size)
        self._grids: dict[tuple, tuple[np.ndarray, np.ndarray, tuple]] = {}
        self._wp_near: dict[tuple, tuple[float, int]] = {}
        self._wp_judged: dict[tuple, tuple | None] = {}

    def segment_grid(self, seg: Segment) -> tuple[np.ndarray, np.ndarray, tuple]:
        """The segment's own station grid (every :data:`GRID_M` or finer, both ends included;
        a segment of no length has the one pose at its end), its poses, and their bounding box.
        Local to the segment, so an unchanged segment keeps it however the route around it
        changes."""
        key = cache_key(seg)
        got = self._grids.get(key)
        if got is None:
            L = float(seg.length_m)
            if L > 0.0:
                local = np.linspace(0.0, L, max(1, int(math.ceil(L / GRID_M))) + 1)
            else:
                local = np.zeros(1)
            poses = grid_poses(seg, local)
            lo, hi = poses[:, :2].min(axis=0), poses[:, :2].max(axis=0)
            got = (local, poses, (float(lo[0]), float(lo[1]), float(hi[0]), float(hi[1])))
            if len(self._grids) > 4 * self.cache_size:
                self._grids.clear()
            self._grids[key] = got
        return got

    def judge(self, xy: np.ndarray, heading: list[float | None]) -> list[tuple | None]:
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
                                distance=SLACK_M)[0]] = True
            placed_rows = [j for j, k in enumerate(todo) if heading[k] is not None]
            placed_all = None
            if placed_rows:
                placed_all = placed_footprints(
                    self.footprint, np.array([(*sub[j], heading[todo[j]]) for j in placed_rows]))
                look[np.asarray(placed_rows)[idx.tree.query(
                    placed_all, predicate="dwithin", distance=SLACK_M)[0]]] = True
            where = {j: n for n, j in enumerate(placed_rows)}
            if len(self._wp_judged) > 4 * self.cache_size:
                self._wp_judged.clear()
            for j, k in enumerate(todo):
                verdict = None
                if look[j]:
                    wx, wy = keys[k][0], keys[k][1]
                    pt = Point(wx, wy)
                    inside = idx.within(pt, 0.0) if heading[k] is None else ()
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

    def violations(self, segs: tuple[Segment, ...], stations: np.ndarray,
                   waypoints: Sequence[Any] | None,
                   always: Sequence[int] = ()) -> list[Violation]:
        """``waypoint_blocked``: the footprint placed at a waypoint the chassis stands on or
        passes, with the heading of the route's nearest grid pose, overlapping a solid.

        Judged: the first and last waypoint, those in ``always`` (stops), and those within
        :data:`ON_PATH_M` of a grid pose; other waypoints (corners a turn cuts) are not.

        Each segment carries its own grid (:meth:`segment_grid`); the nearest grid pose of
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
            keys = [cache_key(s) for s in segs]
            grids = [self.segment_grid(s) for s in segs]
            boxes = np.array([g[2] for g in grids])
            pairs = candidate_pairs(xy, boxes, limit=BULK_PAIRS)
            if pairs is None:
                best, found = nearest_in_bulk(xy, grids)
            else:
                ks, iis = pairs
                best = [math.inf] * len(xy)
                found = [(0, 0)] * len(xy)
                near = self._wp_near
                if len(near) > 4 * self.cache_size:
                    near.clear()
                pts = xy.tolist()
                # Pairs come in waypoint order, then segment order: a strict < keeps the
                # first nearest in route order (first segment, then first row among equal
                # distances).
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
        judged = list(range(len(xy)))
        if segs:
            stands = {0, len(xy) - 1, *(int(i) for i in always)}
            judged = [k for k in judged if k in stands or best[k] <= ON_PATH_M]
        verdicts = self.judge(xy[judged], [heading[k] for k in judged]) if judged else []
        out = []
        for k, verdict in zip(judged, verdicts):
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


#: Waypoints x segments up to which the candidates come from one dense table; beyond, from
#: a tree of the segments' boxes (the same pairs, memory linear in the route).
DENSE_PAIRS = 40_000
#: Candidate pairs (on a long route) beyond which the nearest grid poses are found in bulk
#: (:func:`nearest_in_bulk`) rather than pair by pair with a cache. A route that passes the
#: same place many times (a patrol loop driven over and over) has pairs growing as the square
#: of its waypoints; in bulk they cost array operations, not Python steps and cache entries.
BULK_PAIRS = 20_000
#: Nearest grid poses proposed per waypoint by the tree in :func:`nearest_in_bulk`.
BULK_K = 8


def nearest_in_bulk(xy: np.ndarray, grids: Sequence[tuple]
                    ) -> tuple[list[float], list[tuple[int, int]]]:
    """Each waypoint's nearest grid pose over all segments' grids: the least distance and
    ``(segment, row)``, the first in route order among equal distances.

    The same answer, to the last bit, as the pair-by-pair search of
    :meth:`WaypointCheck.violations` (which looks only at segments whose box may hold the
    nearest pose, so its nearest is the route's nearest): a k-d tree of every grid pose
    (scipy.spatial.cKDTree, an exact nearest-neighbour search) proposes the :data:`BULK_K`
    nearest, their distances are recomputed with the same ``np.hypot`` of the same
    differences, and the least, first in route order, is kept. Where the proposals may not
    hold every pose that ties (rounding of the tree's distances aside), all poses within a
    hair of the least are asked for instead. Time O(P log P) in the P grid poses, memory
    linear, however many times the route passes the same place.
    """
    from scipy.spatial import cKDTree

    n = len(xy)
    lens = np.array([len(g[1]) for g in grids], dtype=np.int64)
    offs = np.zeros(len(grids) + 1, dtype=np.int64)
    np.cumsum(lens, out=offs[1:])
    allp = np.concatenate([g[1][:, :2] for g in grids])
    tree = cKDTree(allp)
    k = min(BULK_K, len(allp))
    dk, jk = tree.query(xy, k=k)
    dk, jk = dk.reshape(n, k), jk.reshape(n, k)
    bound = dk[:, 0] * (1.0 + 1e-9) + 1e-12
    best: list[float] = []
    found: list[tuple[int, int]] = []
    for w in range(n):
        cand = jk[w]
        if k < len(allp) and dk[w, -1] <= bound[w]:
            cand = np.asarray(tree.query_ball_point(xy[w], bound[w]), dtype=np.int64)
        d = np.hypot(allp[cand, 0] - xy[w, 0], allp[cand, 1] - xy[w, 1])
        least = d.min()
        j = int(cand[d == least].min())
        i = int(np.searchsorted(offs, j, side="right")) - 1
        best.append(float(least))
        found.append((i, j - int(offs[i])))
    return best, found


def _bounds(tx: np.ndarray, ty: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Least and greatest distance from points ``(tx, ty)`` to boxes ``b`` (rows of
    ``xmin, ymin, xmax, ymax``), elementwise (broadcasting)."""
    lo_x, lo_y, hi_x, hi_y = b[..., 0], b[..., 1], b[..., 2], b[..., 3]
    lb = np.hypot(np.maximum(0.0, np.maximum(lo_x - tx, tx - hi_x)),
                  np.maximum(0.0, np.maximum(lo_y - ty, ty - hi_y)))
    ub = np.hypot(np.maximum(np.abs(tx - lo_x), np.abs(tx - hi_x)),
                  np.maximum(np.abs(ty - lo_y), np.abs(ty - hi_y)))
    return lb, ub


#: Waypoints whose candidate pairs are found together in :func:`candidate_pairs`.
_PAIR_CHUNK = 256


def candidate_pairs(xy: np.ndarray, boxes: np.ndarray, limit: int | None = None
                    ) -> tuple[np.ndarray, np.ndarray] | None:
    """Pairs ``(waypoint k, segment i)``, in waypoint order then segment order, of the
    segments whose grid box may hold waypoint ``k``'s nearest grid pose: those whose box is
    no farther than the nearest far box corner (a little slack so rounding never drops the
    one that does).

    A small route compares every waypoint with every box. A long one asks an STRtree of the
    boxes, first for boxes near each waypoint (an upper bound on its nearest far corner),
    then for the boxes within that bound; the bounds of those pairs are computed with the
    same operations, so the pairs are exactly the dense table's, in O(n log n) time and
    memory linear in the route.

    With ``limit``, a long route whose pairs would number more than ``limit`` (one that
    passes the same places over and over) gives ``None`` as soon as that is known.
    """
    n, m = len(xy), len(boxes)
    if n * m <= DENSE_PAIRS:
        lb, ub = _bounds(xy[:, 0, None], xy[:, 1, None], boxes[None, :, :])
        ub = ub.min(axis=1)
        return np.nonzero(lb <= ub[:, None] * (1.0 + 1e-9) + 1e-12)
    tree = shapely.STRtree(shapely.box(boxes[:, 0], boxes[:, 1], boxes[:, 2], boxes[:, 3]))
    x, y = xy[:, 0], xy[:, 1]
    # An upper bound on each waypoint's least far corner: any box's far corner will do;
    # take the nearest box's (one per waypoint, so this step stays linear however many
    # boxes crowd round a waypoint).
    kk, ii = tree.query_nearest(shapely.points(xy), all_matches=False)
    upper = np.full(n, np.inf)
    _, ub = _bounds(x[kk], y[kk], boxes[ii])
    np.minimum.at(upper, kk, ub)
    # Every box within the bound (its envelope meets the square of that half-size), then
    # the dense table's test on those pairs only.
    reach = upper * (1.0 + 1e-9) + 1e-12
    reach = reach * (1.0 + 1e-9) + 1e-9  # never narrower than the test below
    # In chunks of waypoints (every pair of a waypoint falls in its own chunk), so that a
    # route crowding many segments round each waypoint is found out before its pairs fill
    # memory.
    out_k, out_i, count = [], [], 0
    for lo in range(0, n, _PAIR_CHUNK):
        hi = min(n, lo + _PAIR_CHUNK)
        xs, ys, rs = x[lo:hi], y[lo:hi], reach[lo:hi]
        kk, ii = tree.query(shapely.box(xs - rs, ys - rs, xs + rs, ys + rs))
        lb, ub = _bounds(xs[kk], ys[kk], boxes[ii])
        least = np.full(hi - lo, np.inf)
        np.minimum.at(least, kk, ub)
        keep = lb <= least[kk] * (1.0 + 1e-9) + 1e-12
        kk, ii = kk[keep] + lo, ii[keep]
        count += len(kk)
        if limit is not None and count > limit:
            return None
        out_k.append(kk)
        out_i.append(ii)
    kk, ii = np.concatenate(out_k), np.concatenate(out_i)
    order = np.lexsort((ii, kk))
    return kk[order], ii[order]


def _station_row(sg: Segment) -> tuple[float, ...]:
    """What :func:`grid_poses` needs of one segment, evaluated as
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


def grid_poses(sg: Segment, local: np.ndarray) -> np.ndarray:
    """:func:`kinematics.motion.segments.poses_along` of one segment at its local stations ``local``
    (edges ``[0, length]``), with the same floating-point operations (the same to the last
    bit; a test compares them) and no per-station look-up of the segment."""
    if sg.kind == "clothoid":
        return sg.poses_at(local)
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
