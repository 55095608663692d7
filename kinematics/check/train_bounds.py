"""A trailer's clearances from certified intervals of its motion (no swept polygons).

The check of a train needs, per trailer: its least clearance, the stretches where it comes
within its margin of a solid (or touches one) and its least clearance inside each door's
box. Sweeping every trailer exactly costs far more than the tug's check (its motion is no
rotation about a fixed centre); here the motion is cut instead into intervals of progress
``[a, b]`` on each segment, and each interval gets two lower bounds of its true swept
region's distance to the solids:

- **Lipschitz**: every footprint point moves at most ``S`` per unit progress (``S = P + r W``
  from the chain's bounds of the axle's speed ``P`` and the turn rate ``W``, ``r`` the
  farthest footprint radius), so a point of the region at progress ``p`` lies within
  ``S (p - a)`` of the placement at ``a`` and within ``S (b - p)`` of the one at ``b``: the
  region's distance is at least ``(d_a + d_b - S (b - a)) / 2``;
- **translation stand-in**: the footprint held at the mean heading ``theta_m`` and moved
  along the chord of the axle's path, swept exactly (both placements and every edge's
  parallelogram). Every true placement lies within ``delta = (b - a)^2 / 8 (A + r T) +
  r |theta_b - theta_a| / 2`` of the stand-in's placement at the same fraction of progress
  (the linear-interpolation error bound ``h^2 / 8 max|f''|``, Burden & Faires, Numerical
  Analysis, sec. 3.1, with ``A`` and ``T`` the chain's bounds of the axle's acceleration and
  of the turn rate's derivative), so the region's distance is at least the stand-in's less
  ``delta``.

The placements at interval ends are true placements, so their distances bound the least
clearance from above. Intervals are halved, all at once in vectorised rounds, while their
lower bound is more than ``eps`` below the least placement distance found (for the least
clearance, and per door for its box), or is undecided between within and clear of the
margin, or between touching and not; a fine interval (``S (b - a) / 2 <= eps`` or ``2 delta
<= eps``) is never halved. So each reported least clearance lies within ``eps`` below the
truth and never above it (the dense-pose oracles in tests/test_train_check.py check both).

Size: one argument over one set of interval arrays (their placements, both bounds, the
halving, and the per-door bounds kept per interval and door); the door part reads and
extends the same arrays every round, so splitting it off would hand a dozen arrays across.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely

from kinematics.check.contact import overlap_depth
from kinematics.check.obstacles import DOOR_BOX_ALONG_M, DOOR_BOX_M, ObstacleIndex
from kinematics.check.sweep import MARGIN_SLACK_M, Footprint, _place
from kinematics.motion.trailers import Hitch, TrainTrace, TugMotion

#: Largest travel of any footprint point over one first-round interval, metres.
COARSE_M = 0.25
#: Rounds of halving at most (each halves every interval it touches; the fine test stops
#: far sooner).
_MAX_ROUNDS = 48
#: Slack of the box-distance test, metres (far above the rounding of any distance).
_BOX_SLACK_M = 1e-9
#: Least growth of a :class:`GrownBoxes` tree, metres.
_MIN_GROW_M = 2.0 ** -10


class GrownBoxes:
    """Pairs (geometry, target) whose bounding boxes come within a distance ``cap`` (per
    geometry) of each other, for targets given by their bounds (a floor plan's solids or
    door lines).

    The targets' boxes grown by ``C`` (the largest cap of a call, rounded up to a power of
    two) sit in an STRtree made once per ``C``; the geometries themselves query it (their
    envelopes), so no grown box is made per geometry. Every pair whose boxes are within
    ``cap`` meets that tree; of its answers the pairs whose boxes are farther apart than
    their own ``cap`` (along an axis or across a corner) are dropped. The distance between
    two boxes is a lower bound of the distance between anything inside them, so no pair left
    out is within ``cap`` (the test allows :data:`_BOX_SLACK_M` for rounding), and each pair
    dropped saves a GEOS distance."""

    def __init__(self, targets: np.ndarray) -> None:
        self.targets = np.asarray(targets, dtype=float).reshape(-1, 4)
        self._trees: dict[int, Any] = {}

    def _tree(self, cap: float) -> Any:
        key = math.ceil(math.log2(max(cap, _MIN_GROW_M)))
        got = self._trees.get(key)
        if got is None:
            c = 2.0 ** key
            t = self.targets
            ok = np.isfinite(t).all(axis=1)
            boxes = np.full(len(t), None, dtype=object)
            boxes[ok] = shapely.box(t[ok, 0] - c, t[ok, 1] - c, t[ok, 2] + c, t[ok, 3] + c)
            got = self._trees[key] = shapely.STRtree(boxes)
        return got

    def pairs(self, geoms: np.ndarray, b: np.ndarray, cap: np.ndarray
              ) -> tuple[np.ndarray, np.ndarray]:
        """``(geometry index, target index)`` of the pairs, ``b`` the geometries' bounds."""
        if not len(geoms) or not len(self.targets):
            return np.zeros(0, dtype=int), np.zeros(0, dtype=int)
        top = float(np.max(cap))
        if math.isfinite(top):
            gi, tj = self._tree(top).query(geoms)
        else:  # an unbounded reach: every pair is a candidate
            gi, tj = (a.ravel() for a in np.meshgrid(np.arange(len(geoms)),
                                                    np.arange(len(self.targets)),
                                                    indexing="ij"))
        tb, bg = self.targets[tj], b[gi]
        dx = np.maximum(np.maximum(tb[:, 0] - bg[:, 2], bg[:, 0] - tb[:, 2]), 0.0)
        dy = np.maximum(np.maximum(tb[:, 1] - bg[:, 3], bg[:, 1] - tb[:, 3]), 0.0)
        lim = cap[gi] + _BOX_SLACK_M
        keep = dx * dx + dy * dy <= lim * lim
        return gi[keep], tj[keep]


def grown_boxes(index: ObstacleIndex, which: str) -> GrownBoxes:
    """The :class:`GrownBoxes` of an index's solids (``"solids"``) or door lines
    (``"doors"``), made once per index."""
    made = index.__dict__.setdefault("_grown_boxes", {})
    got = made.get(which)
    if got is None:
        geoms = index.geometries if which == "solids" else index.door_lines
        got = made[which] = GrownBoxes(shapely.bounds(geoms).reshape(-1, 4))
    return got


def chain_bounds(m: TugMotion, hitches: Sequence[Hitch], r_far: Sequence[float]
                 ) -> list[tuple[float, float, float, float, float]]:
    """Per trailer on one segment, per unit progress: ``(P, W, M, A, T)`` -- bounds of its
    axle's speed, its turn rate, any footprint point's path's second derivative (true or a
    rigid stand-in's, see :mod:`kinematics.check.train`), the axle's acceleration and the
    turn rate's derivative.

    The hitch moves with the body ahead: its velocity plus the body's turn rate times the
    offset, across the body (at right angles for a trailer or a tug driving along its
    heading, so they add as ``hypot``; a holonomic tug's velocity may point anywhere). A
    trailer turns at ``(v_h . n) / d``; its derivatives follow by the product rule."""
    V = m.speed_bound()
    W = m.turn_bound()
    Wd = abs(m.wd)
    A = W * V if m.fixed is None else 0.0  # |d/dp velocity| of the tug's reference point
    out = []
    first = True
    for hz, r in zip(hitches, r_far):
        h = abs(hz.hitch_x_m)
        P = V + h * W if first and m.fixed is not None else math.hypot(V, h * W)
        first = False
        Pd = A + h * (Wd + W * W)
        Wi = P / hz.drawbar_m
        Wid = (Pd + P * Wi) / hz.drawbar_m
        Ai = Pd + 2.0 * P * Wi
        M = Ai + r * (Wid + Wi * Wi) + 1.12 * Wi * (P + r * Wi)
        out.append((P, Wi, M, Ai, Wid))
        V, W, Wd, A = P, Wi, Wid, Ai
    return out


class TrailerPoser:
    """Trailer ``j``'s poses at any (segment, progress) pairs in one vectorised pass: the
    tug's pose in closed form on lines, arcs and pivots (the exponential map of a constant
    twist; clothoids go through :meth:`TrainTrace.poses`), the headings from the same cubic
    Hermite interpolant as :meth:`TrainTrace.headings` over every segment's nodes at once,
    and the hitch chain up to trailer ``j`` only."""

    def __init__(self, trace: TrainTrace, j: int) -> None:
        self.trace, self.j = trace, j
        segs = trace.segments
        ms = [t.motion for t in trace.traces]
        self.start = np.array([s.start for s in segs], dtype=float).reshape(-1, 3)
        self.w = np.array([m.w for m in ms])
        self.direction = np.array([m.direction for m in ms])
        self.fixed = np.array([m.fixed is not None for m in ms])
        self.vel = np.array([m.fixed if m.fixed is not None else (0.0, 0.0) for m in ms]
                            ).reshape(-1, 2)
        self.other = np.array([s.kind == "clothoid" for s in segs])
        amounts = np.array([m.amount for m in ms])
        self.off = np.concatenate([[0.0], np.cumsum(amounts + 1.0)])[:-1]
        counts = np.array([len(t.p) for t in trace.traces])
        self.first = np.concatenate([[0], np.cumsum(counts)])[:-1]
        self.last = self.first + counts - 1
        self.gp = np.concatenate([t.p + o for t, o in zip(trace.traces, self.off)])
        self.th = np.concatenate([t.th[:, :j + 1] for t in trace.traces])
        self.dth = np.concatenate([t.dth[:, :j + 1] for t in trace.traces])

    def __call__(self, seg: np.ndarray, p: np.ndarray, which: np.ndarray | None = None
                 ) -> np.ndarray:
        """Poses at ``(seg, p)``: of trailer ``j``, or per query of trailer ``which`` (each at
        most ``j``)."""
        seg = np.asarray(seg, dtype=int)
        p = np.asarray(p, dtype=float)
        st = self.start[seg]
        w = self.w[seg]
        th = st[:, 2] + w * p
        half = 0.5 * w * p
        ds = self.direction[seg] * p * np.sinc(half / np.pi)
        x = np.where(self.fixed[seg], st[:, 0] + self.vel[seg, 0] * p,
                     st[:, 0] + ds * np.cos(st[:, 2] + half))
        y = np.where(self.fixed[seg], st[:, 1] + self.vel[seg, 1] * p,
                     st[:, 1] + ds * np.sin(st[:, 2] + half))
        odd = self.other[seg]
        if odd.any():
            for i in np.unique(seg[odd]).tolist():
                m = seg == i
                x[m], y[m], th[m] = self.trace.tug_poses(i, p[m]).T
        # Headings: Hermite within each segment's own nodes.
        g = self.off[seg] + p
        k = np.clip(np.searchsorted(self.gp, g, side="right") - 1, self.first[seg],
                    np.maximum(self.last[seg] - 1, self.first[seg]))
        single = self.last[seg] == self.first[seg]
        k1 = np.where(single, k, k + 1)
        h = np.where(single, 1.0, self.gp[k1] - self.gp[k])
        t = np.where(single, 0.0, (g - self.gp[k])) / h
        t2, t3 = t * t, t * t * t
        c0, c1, c2, c3 = 2 * t3 - 3 * t2 + 1, t3 - 2 * t2 + t, -2 * t3 + 3 * t2, t3 - t2
        if which is None:
            out, rows = None, None
        else:
            # Each query follows the chain only as far as its own trailer.
            out, rows = np.empty((len(p), 3)), np.arange(len(p))
            which = np.asarray(which)
        for jj, hz in enumerate(self.trace.hitches[:self.j + 1]):
            hd = c0 * self.th[k, jj] + c1 * h * self.dth[k, jj] + c2 * self.th[k1, jj] + \
                c3 * h * self.dth[k1, jj]
            hx = x + hz.hitch_x_m * np.cos(th)
            hy = y + hz.hitch_x_m * np.sin(th)
            th = hd
            x = hx - hz.drawbar_m * np.cos(th)
            y = hy - hz.drawbar_m * np.sin(th)
            if out is not None:
                m = which == jj
                if m.any():
                    r = rows[m]
                    out[r, 0], out[r, 1], out[r, 2] = x[m], y[m], th[m]
                    go = ~m
                    rows, which = rows[go], which[go]
                    x, y, th = x[go], y[go], th[go]
                    k, k1, h = k[go], k1[go], h[go]
                    c0, c1, c2, c3 = c0[go], c1[go], c2[go], c3[go]
                if not len(rows):
                    break
        return out if out is not None else np.column_stack([x, y, th])


def trailer_poser(trace: TrainTrace, j: int) -> TrailerPoser:
    """The :class:`TrailerPoser` of trailer ``j`` on ``trace`` (made once per trace)."""
    cache = trace.__dict__.setdefault("_posers", {})
    got = cache.get(j)
    if got is None:
        got = cache[j] = TrailerPoser(trace, j)
    return got


def trailer_poses(trace: TrainTrace, j: int, segment: int, progress: np.ndarray
                  ) -> np.ndarray:
    """Trailer ``j``'s poses on one segment (as ``trace.poses(segment, p)[:, j + 1]``)."""
    p = np.atleast_1d(np.asarray(progress, dtype=float))
    return trailer_poser(trace, j)(np.full(len(p), segment), p)


def _door_axes(door: Any) -> tuple[float, float, float, float]:
    """A door's frame: jamb ``a`` and the cosine and sine of the line's direction to ``b``."""
    (ax, ay), (bx, by) = door.a, door.b
    w = math.hypot(bx - ax, by - ay)
    return ax, ay, (bx - ax) / w, (by - ay) / w


@dataclass
class Hit:
    """Interval ``k`` (in route order) within the margin of solid ``solid``: its lower bound
    and, where it overlaps, an overlap depth estimate (negative clearance)."""

    k: int
    solid: int
    clearance_m: float


class TrailerBounds:
    """The intervals of every trailer of a train along a traced plan, refined against
    ``index`` together (one round of vectorised calls serves all trailers; ``jj`` says whose
    each interval is). :meth:`view` gives one trailer's results."""

    def __init__(self, trace: TrainTrace, js: Sequence[int], fps: Sequence[Footprint],
                 index: ObstacleIndex, margins: Sequence[float], eps: float,
                 door_caps: dict[int, float] | None = None) -> None:
        self.trace, self.index = trace, index
        self.js = np.asarray(js, dtype=int)
        self.fps = list(fps)
        self.nt = len(self.fps)
        self.margins = np.asarray(margins, dtype=float)
        self.eps = float(eps)
        self.r_t = np.array([fp.r_far_m for fp in self.fps])
        self.convex_t = np.array([fp.convex for fp in self.fps], dtype=bool)
        # A door's least clearance already found for the tug: a trailer's clearance there
        # needs telling apart only below it.
        self.door_caps = np.full(len(index.doors), math.inf)
        for q, c in (door_caps or {}).items():
            if c is not None and math.isfinite(c):
                self.door_caps[q] = c
        seg, pa, pb, S, A, T, JJ = [], [], [], [], [], [], []
        for t, (j, r) in enumerate(zip(self.js.tolist(), self.r_t.tolist())):
            r_far = [0.0] * trace.n
            r_far[j] = r
            for i in range(len(trace.segments)):
                amount = trace.amount(i)
                if amount <= 0.0:
                    continue
                P, W, _M, Ai, Wd = chain_bounds(trace.traces[i].motion, trace.hitches,
                                                r_far)[j]
                if P <= 0.0:
                    # Still on this segment (an on-axle hitch on a pivot): one placement.
                    edges = np.array([0.0, 0.0])
                    s_ = a_ = t_ = 0.0
                else:
                    s_, a_, t_ = P + r * W, Ai, Wd
                    edges = np.linspace(0.0, amount,
                                        max(1, math.ceil(amount * s_ / COARSE_M)) + 1)
                n = len(edges) - 1
                seg.append(np.full(n, i))
                pa.append(edges[:-1])
                pb.append(edges[1:])
                S.append(np.full(n, s_))
                A.append(np.full(n, a_))
                T.append(np.full(n, t_))
                JJ.append(np.full(n, t))
        self.n_solids = len(index)
        self._solid_boxes = grown_boxes(index, "solids")
        self._door_boxes = grown_boxes(index, "doors")
        self._frame_rows: np.ndarray | None = None
        self._poser = trailer_poser(trace, int(self.js.max())) if self.nt else None
        self.reach = max(4.0 * float(self.margins.max()), 0.5) if self.nt else 0.5
        self._final_doors: dict | None = None
        if not seg:
            self.seg = np.zeros(0, dtype=int)
            self.jj = np.zeros(0, dtype=int)
            self._final_doors = {}
            return
        self.seg, self.jj = np.concatenate(seg), np.concatenate(JJ)
        self.pa, self.pb = np.concatenate(pa), np.concatenate(pb)
        self.S, self.A, self.T = np.concatenate(S), np.concatenate(A), np.concatenate(T)
        # Interval ends shared with the next interval of the same segment and trailer are
        # one placement: the nodes are every start plus the ends that start nothing.
        same = np.append((self.seg[1:] == self.seg[:-1]) & (self.jj[1:] == self.jj[:-1]),
                         False)
        tail = np.nonzero(~same)[0]
        n = len(self.seg)
        node_seg = np.concatenate([self.seg, self.seg[tail]])
        node_jj = np.concatenate([self.jj, self.jj[tail]])
        node_p = np.concatenate([self.pa, self.pb[tail]])
        b_of = np.arange(1, n + 1)                     # the next interval's start node ...
        b_of[tail] = n + np.arange(len(tail))          # ... or an end node of its own
        P = self._poses(node_seg, node_p, node_jj)
        G = self._placed(P, node_jj)
        self.Pa, self.Pb = P[:n], P[b_of]
        self.Ga, self.Gb = G[:n], G[b_of]
        d = self._node_dist(G)
        if self.n_solids:
            while self.reach < 1e6 and bool(np.any(self._per_trailer_min(
                    d, node_jj) >= self.reach)):
                # Nothing within reach of a trailer's placements: measure farther.
                self.reach *= 4.0
                d = self._node_dist(G)
        self.da, self.db = d[:n], d[b_of]
        self.l2 = np.full(len(self.seg), -math.inf)
        self._level_t = np.full(self.nt, self.reach)
        self._door_level = 0.0
        # Door bounds per (interval id, door), kept until the interval is halved.
        self.uid = np.arange(len(self.seg))
        self._next_uid = len(self.seg)
        self._queried = 0
        self._pu = np.zeros(0, dtype=int)
        self._pq = np.zeros(0, dtype=int)
        self._pup = np.zeros(0)
        self._plow = np.zeros(0)
        self._frames: dict[int, tuple] = {}
        self._refine()
        order = np.lexsort((self.pa, self.seg, self.jj))
        for name in ("seg", "jj", "pa", "pb", "S", "A", "T", "Pa", "Pb", "Ga", "Gb", "da",
                     "db", "l2", "uid"):
            setattr(self, name, getattr(self, name)[order])

    def view(self, t: int) -> TrailerView:
        """Trailer ``t`` of the batch (``js[t]`` of the train)."""
        return TrailerView(self, t)

    # -- pieces -------------------------------------------------------------------------
    def __len__(self) -> int:
        return len(self.seg)

    def _per_trailer_min(self, v: np.ndarray, jj: np.ndarray | None = None) -> np.ndarray:
        out = np.full(self.nt, math.inf)
        np.minimum.at(out, self.jj if jj is None else jj, v)
        return out

    def _poses(self, seg: np.ndarray, p: np.ndarray, jj: np.ndarray) -> np.ndarray:
        return self._poser(seg, p, self.js[jj])

    def _near(self, geoms: np.ndarray, cap: np.ndarray | float
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Pairs (geometry, solid) whose bounding boxes come within ``cap`` (per geometry)
        and their exact distances: a box query of the tree then plain distances, several
        times cheaper than the tree's ``dwithin`` predicate on many small pieces."""
        c = np.broadcast_to(np.asarray(cap, dtype=float), (len(geoms),))
        pi, sj = self._solid_boxes.pairs(geoms, shapely.bounds(geoms), c)
        return pi, sj, shapely.distance(geoms[pi], self.index.geometries[sj])

    def _placed(self, poses: np.ndarray, jj: np.ndarray) -> np.ndarray:
        """Each pose's trailer ``jj`` placed there, as polygons."""
        if self.nt == 1 or len({fp.ring.shape for fp in self.fps}) == 1:
            ring = np.stack([fp.ring for fp in self.fps])[jj]       # (n, N, 2)
            c = np.cos(poses[:, 2])[:, None]
            s = np.sin(poses[:, 2])[:, None]
            x = poses[:, 0:1] + c * ring[..., 0] - s * ring[..., 1]
            y = poses[:, 1:2] + s * ring[..., 0] + c * ring[..., 1]
            return shapely.polygons(np.stack([x, y], axis=-1))
        out = np.empty(len(poses), dtype=object)
        for t in np.unique(jj).tolist():
            m = jj == t
            out[m] = shapely.polygons(_place(self.fps[t].ring, poses[m]))
        return out

    def _node_dist(self, geoms: np.ndarray) -> np.ndarray:
        """Each true placement's distance to the nearest solid, capped at the reach."""
        d = np.full(len(geoms), self.reach)
        if not self.n_solids or not len(geoms):
            return d
        pi, _sj, dd = self._near(geoms, self.reach)
        if len(pi):
            np.minimum.at(d, pi, dd)
        return d

    def delta(self, k: np.ndarray | slice = slice(None)) -> np.ndarray:
        """How far the true placements stray from the stand-in (see the module text)."""
        dp = self.pb[k] - self.pa[k]
        turn = np.abs(self.Pb[k, 2] - self.Pa[k, 2])
        jj = self.jj[k]
        r = self.r_t[jj]
        axle = dp * dp / 8.0 * (self.A[k] + r * self.T[k])
        # Convex: chord against arc of a point at radius r turning by phi, the sagitta
        # r (1 - cos(phi / 2)) across and along it |sin(t a) - t sin(a)| <= a^3 / 5
        # (a = phi / 2 <= pi / 4; Taylor with remainder), else a. Otherwise the
        # translation stand-in at the mean heading: r phi / 2.
        a = 0.5 * turn
        along = np.where(a <= math.pi / 4, a ** 3 / 5.0, a)
        return axle + r * np.where(self.convex_t[jj], 1.0 - np.cos(a) + along, a)

    def pieces(self, k: np.ndarray, solid_only: bool = False
               ) -> tuple[np.ndarray, np.ndarray]:
        """The stand-in's pieces of intervals ``k`` and the owner of each piece (a position
        in ``k``); see :meth:`_pieces_of`."""
        return self._pieces_of(self.Pa[k], self.Pb[k], self.jj[k])

    def _pieces_of(self, Pa: np.ndarray, Pb: np.ndarray, jj: np.ndarray
                   ) -> tuple[np.ndarray, np.ndarray]:
        """Pieces of stand-ins from poses ``Pa`` to ``Pb`` of trailers ``jj``: for a convex
        footprint the convex hull of its two true placements (it holds every point part way
        between a footprint point's two placements, see :meth:`delta`); otherwise the
        footprint at the mean heading moved along the chord, as both placements and the
        parallelograms of the leading edges (whose outward normal points along the motion;
        with both placements they make up its swept region exactly, as in
        :func:`kinematics.check.sweep.translation_parts`)."""
        geoms, owners = [], []
        for t in np.unique(jj).tolist():
            sel = np.nonzero(jj == t)[0]
            g, o = self._pieces_one(self.fps[t], Pa[sel], Pb[sel])
            geoms.append(g)
            owners.append(sel[o])
        if not geoms:
            return np.zeros(0, dtype=object), np.zeros(0, dtype=int)
        if len(geoms) == 1:
            return geoms[0], owners[0]
        return np.concatenate(geoms), np.concatenate(owners)

    @staticmethod
    def _pieces_one(fp: Footprint, Pa: np.ndarray, Pb: np.ndarray
                    ) -> tuple[np.ndarray, np.ndarray]:
        if fp.convex:
            both = np.concatenate([_place(fp.ring, Pa), _place(fp.ring, Pb)], axis=1)
            return shapely.convex_hull(shapely.linestrings(both)), np.arange(len(Pa))
        thm = 0.5 * (Pa[:, 2] + Pb[:, 2])
        at_a = _place(fp.ring, np.column_stack([Pa[:, :2], thm]))
        v = (Pb[:, :2] - Pa[:, :2])[:, None, :]
        nxt = np.roll(at_a, -1, axis=1)
        d = nxt - at_a
        lead = d[..., 1] * v[..., 0] - d[..., 0] * v[..., 1]
        keep = lead > 1e-12
        vv = np.broadcast_to(v, at_a.shape)[keep]
        a_, b_ = at_a[keep], nxt[keep]
        quads = np.stack([a_, b_, b_ + vv, a_ + vv], axis=1)
        nk = len(Pa)
        geoms = np.concatenate([shapely.polygons(at_a), shapely.polygons(at_a + v),
                                shapely.polygons(quads)])
        owner = np.concatenate([np.arange(nk), np.arange(nk), np.nonzero(keep)[0]])
        return geoms, owner

    def _standin_dist(self, k: np.ndarray, cap: np.ndarray) -> np.ndarray:
        """The stand-in's swept region's distance to the nearest solid, capped at ``cap``
        (per interval: the level it must be told apart from, plus its stray)."""
        d = cap.copy()
        if not self.n_solids or not len(k):
            return d
        geoms, owner = self.pieces(k)
        pi, _sj, dd = self._near(geoms, cap[owner])
        if len(pi):
            np.minimum.at(d, owner[pi], dd)
        return d

    def _measure_l2(self, k: np.ndarray) -> None:
        """The stand-in bound of intervals ``k`` where it may beat the Lipschitz one."""
        dp = self.pb[k] - self.pa[k]
        dl = self.delta(k)
        k = k[dl < 0.5 * self.S[k] * dp]
        if len(k):
            dl = self.delta(k)
            cap = np.minimum(self.reach, self._level_t[self.jj[k]] + dl + self.eps)
            self.l2[k] = self._standin_dist(k, cap) - dl

    # -- bounds ---------------------------------------------------------------------------
    def lower(self) -> np.ndarray:
        """Each interval's lower bound of its distance to the nearest solid."""
        l1 = 0.5 * (self.da + self.db - self.S * (self.pb - self.pa))
        return np.maximum(l1, self.l2)

    def fine(self) -> tuple[np.ndarray, np.ndarray]:
        """Intervals too fine to halve: for a least clearance (either bound within ``eps``
        of the truth), and for deciding a margin or a touch (the Lipschitz gap within
        ``eps``, so an undecided stretch is never longer than a few millimetres of travel).
        The stand-in's bound counts once it has been measured."""
        dp = self.pb - self.pa
        lip = (0.5 * self.S * dp <= self.eps) | (dp <= 1e-9)
        return lip | ((2.0 * self.delta() <= self.eps) & ~np.isneginf(self.l2)), lip

    def _need(self, doors: bool = True) -> tuple[np.ndarray, np.ndarray]:
        """Intervals to cut, and into how many parts each: about the current bound's slack
        (``min(d_a, d_b)`` less the lower bound; both bounds shrink in proportion to the
        interval) over the room between the placements and the level to tell apart, so an
        interval far from its level is decided in one cut, one near it cut finely."""
        low = self.lower()
        up = np.minimum(self.da, self.db)
        best_t = self._per_trailer_min(up)
        best = best_t[self.jj]
        m = self.margins[self.jj] - MARGIN_SLACK_M
        fine, lip = self.fine()
        thr = np.full(len(low), -math.inf)
        hit = (low < m) & (up >= m) & ~lip     # within the margin or clear: undecided
        thr[hit] = m[hit]
        touch = (low <= 0.0) & (up > 0.0) & ~lip  # touching or not: undecided
        thr[touch] = np.maximum(thr[touch], 0.0)
        least = (best > 0.0) & (low < best - self.eps) & ~fine
        thr[least] = np.maximum(thr[least], best[least] - self.eps)
        if doors:
            door_thr = self._door_need(low)
            door = (door_thr > -math.inf) & ~fine
            thr[door] = np.maximum(thr[door], door_thr[door])
        need = thr > -math.inf
        room = np.maximum(up - thr, self.eps)
        ways = np.clip(np.ceil((up - low) / room), 2, 16).astype(int)
        # The level the stand-in bounds of new parts must be told apart from.
        self._level_t = np.maximum(np.maximum(self.margins, best_t), self._door_level)
        return need, ways

    def _refine(self) -> None:
        """Cut until nothing needs it: first for the least clearances, the margins and
        touching, then with the doors too (their bounds cost the most, so they are asked for
        once the rest is settled)."""
        _ks, up = self._door_ups()
        ok = np.isfinite(up) & (up > 0.0)
        self._door_level = float(up[ok].max()) if ok.any() else 0.0
        first, _w = self._need(doors=False)
        if first.any():
            self._measure_l2(np.nonzero(first)[0])
        for doors in (False, True):
            for _ in range(_MAX_ROUNDS):
                need, ways = self._need(doors)
                if not need.any():
                    break
                k = np.nonzero(need)[0]
                self._split(k, ways[k])

    def _split(self, k: np.ndarray, ways: np.ndarray) -> None:
        """Cut intervals ``k`` into ``ways`` equal parts each (interval k keeps the first;
        the others are appended) and measure the parts."""
        pa, pb = self.pa[k], self.pb[k]
        nk = len(k)
        cnt = ways - 1                                   # new nodes per interval
        owner = np.repeat(np.arange(nk), cnt)
        starts = np.concatenate([[0], np.cumsum(cnt)])[:-1]
        rank = np.arange(len(owner)) - starts[owner] + 1  # 1..ways-1 within its interval
        cuts = pa[owner] + rank / ways[owner] * (pb - pa)[owner]
        kk = k[owner]
        pm = self._poses(self.seg[kk], cuts, self.jj[kk])
        gm = self._placed(pm, self.jj[kk])
        dm = self._node_dist(gm)
        first = starts                                   # the first cut of each interval
        last = starts + cnt - 1
        # Appended part r of an interval runs from its cut r to cut r + 1, or to pb.
        nxt = np.minimum(np.arange(1, len(owner) + 1), len(owner) - 1)
        is_last = np.zeros(len(owner), dtype=bool)
        is_last[last] = True
        ends_p = np.where(is_last, pb[owner], cuts[nxt])
        ends_P = np.where(is_last[:, None], self.Pb[kk], pm[nxt])
        ends_G = np.where(is_last, self.Gb[kk], gm[nxt])
        ends_d = np.where(is_last, self.db[kk], dm[nxt])
        for name in ("seg", "jj", "S", "A", "T"):
            a = getattr(self, name)
            setattr(self, name, np.concatenate([a, a[kk]]))
        n0 = len(self.pa)
        self.pa = np.concatenate([self.pa, cuts])
        self.Pa = np.concatenate([self.Pa, pm])
        self.Ga = np.concatenate([self.Ga, gm])
        self.da = np.concatenate([self.da, dm])
        self.pb = np.concatenate([self.pb, ends_p])
        self.Pb = np.concatenate([self.Pb, ends_P])
        self.Gb = np.concatenate([self.Gb, ends_G])
        self.db = np.concatenate([self.db, ends_d])
        self.pb[k], self.Pb[k], self.Gb[k], self.db[k] = (cuts[first], pm[first], gm[first],
                                                          dm[first])
        self.l2[k] = -math.inf
        self.l2 = np.concatenate([self.l2, np.full(len(owner), -math.inf)])
        n = self._next_uid
        self.uid[k] = np.arange(n, n + nk)
        self.uid = np.concatenate([self.uid, np.arange(n + nk, n + nk + len(owner))])
        self._next_uid = n + nk + len(owner)
        self._measure_l2(np.concatenate([k, np.arange(n0, len(self.pa))]))

    # -- doors ----------------------------------------------------------------------------
    def _door_pairs(self) -> np.ndarray:
        """Bring the (interval, door) pairs up to date -- those whose region may reach the
        door's line: every point of an interval's region lies within ``S (b - a) / 2`` of
        one of its end placements -- and return each pair's interval (pairs of halved
        intervals are dropped, the halves' found)."""
        nd = len(self.index.doors)
        if not nd or not len(self):
            return np.zeros(0, dtype=int)
        km = np.nonzero(self.uid >= self._queried)[0]
        self._queried = self._next_uid
        if len(km):
            reach = 0.5 * self.S[km] * (self.pb[km] - self.pa[km]) + self.delta(km)
            geoms = np.concatenate([self.Ga[km], self.Gb[km]])
            r2 = np.tile(reach, 2)
            pi, q = self._door_boxes.pairs(geoms, shapely.bounds(geoms), r2)
            near = shapely.distance(geoms[pi], self.index.door_lines[q]) <= r2[pi]
            pi, q = pi[near], q[near]
            key = np.unique(self.uid[km[pi % len(km)]] * nd + q)
            self._pu = np.concatenate([self._pu, key // nd])
            self._pq = np.concatenate([self._pq, key % nd])
            self._pup = np.concatenate([self._pup, np.full(len(key), math.nan)])
            self._plow = np.concatenate([self._plow, np.full(len(key), math.nan)])
        pos_of = np.full(self._next_uid, -1)
        pos_of[self.uid] = np.arange(len(self))
        pos = pos_of[self._pu]
        live = pos >= 0
        if not live.all():
            self._pu, self._pq = self._pu[live], self._pq[live]
            self._pup, self._plow = self._pup[live], self._plow[live]
            pos = pos[live]
        return pos

    def _door_frame(self, q: int) -> tuple:
        """Door ``q``'s frame (x along the door line from jamb ``a``, y across it): origin,
        cos and sin of its direction, its box's far end along x, and the solids meeting its
        box drawn in that frame (cached)."""
        got = self._frames.get(q)
        if got is None:
            door = self.index.doors[q]
            ax, ay, c, s = _door_axes(door)
            w = math.hypot(door.b[0] - ax, door.b[1] - ay)
            solids = self.index.within(self.index.door_boxes[q], 0.0)

            def to_frame(xy: np.ndarray) -> np.ndarray:
                dx, dy = xy[:, 0] - ax, xy[:, 1] - ay
                return np.column_stack([c * dx + s * dy, c * dy - s * dx])

            local = shapely.transform(self.index.geometries[solids], to_frame)
            got = (ax, ay, c, s, w + DOOR_BOX_ALONG_M, local)
            self._frames[q] = got
        return got

    def _in_frames(self, q: np.ndarray, P: np.ndarray) -> np.ndarray:
        """Poses ``P`` (one per pair) in their doors' frames."""
        if self._frame_rows is None:
            self._frame_rows = np.array([_door_axes(d) for d in self.index.doors]
                                        ).reshape(-1, 4)
        fr = self._frame_rows[q]
        dx, dy = P[:, 0] - fr[:, 0], P[:, 1] - fr[:, 1]
        c, s = fr[:, 2], fr[:, 3]
        return np.column_stack([c * dx + s * dy, c * dy - s * dx,
                                P[:, 2] - np.arctan2(s, c)])

    def _clipped(self, q: np.ndarray, geoms: np.ndarray, grow: np.ndarray) -> np.ndarray:
        """Per geometry (drawn in its door ``q``'s frame) the distance of its part inside
        the door's box grown by ``grow`` to the solids meeting the box (``inf`` where no
        part lies inside): one rectangle clip per door and growth, one distance call."""
        d = np.full(len(geoms), math.inf)
        cut = np.empty(len(geoms), dtype=object)
        key = q * 64 + np.clip(np.round(np.log2(grow / self.eps + 1e-300)), -30, 33) \
            .astype(int) if len(grow) else q
        for kk in np.unique(key).tolist():
            m = key == kk
            qq = int(q[m][0])
            g_ = float(grow[m][0])
            *_f, x1, _local = self._door_frame(qq)
            cut[m] = shapely.clip_by_rect(geoms[m], -DOOR_BOX_ALONG_M - g_, -DOOR_BOX_M - g_,
                                          x1 + g_, DOOR_BOX_M + g_)
        ok = np.nonzero(~shapely.is_empty(cut))[0]
        if not len(ok):
            return d
        rows, sols = [], []
        for qq in np.unique(q[ok]).tolist():
            local = self._door_frame(qq)[5]
            mine = ok[q[ok] == qq]
            if len(local):
                rows.append(np.repeat(mine, len(local)))
                sols.append(np.tile(local, len(mine)))
        if rows:
            r = np.concatenate(rows)
            np.minimum.at(d, r, shapely.distance(cut[r], np.concatenate(sols)))
        return d

    def _door_ups(self) -> tuple[np.ndarray, np.ndarray]:
        """The pairs' intervals (see :meth:`_door_pairs`) and per (door, trailer), at
        ``q * nt + t``, the least clearance of a true placement in the door's box (no more
        than the door's cap)."""
        ks = self._door_pairs()
        up = np.repeat(self.door_caps, self.nt)
        if not len(ks):
            return ks, up
        pq = self._pq
        new = np.nonzero(np.isnan(self._pup))[0]
        if len(new):
            # A pair whose interval is already no nearer any solid than the door's cap
            # cannot lower the door's clearance: its box bound is not needed.
            far = self.lower()[ks[new]] >= self.door_caps[pq[new]]
            self._pup[new[far]] = math.inf
            new = new[~far]
        if len(new):
            kn = ks[new]
            both = np.concatenate([self._in_frames(pq[new], self.Pa[kn]),
                                   self._in_frames(pq[new], self.Pb[kn])])
            qq = np.tile(pq[new], 2)
            d = self._clipped(qq, self._placed(both, np.tile(self.jj[kn], 2)),
                              np.zeros(len(qq)))
            self._pup[new] = np.minimum(d[:len(new)], d[len(new):])
        np.minimum.at(up, pq * self.nt + self.jj[ks], self._pup)
        return ks, up

    def door_values(self, low: np.ndarray | None = None
                    ) -> dict[tuple[int, int], tuple[np.ndarray, np.ndarray, float]]:
        """Per (door, trailer) the band may reach: the candidate intervals, their lower
        bounds of the clearance inside the door's box, and the least true placement's (an
        upper bound; no more than the door's cap).

        The stand-in's part inside the box grown by its stray (the growth rounded up to
        ``eps`` times a power of two, so one rectangle clip serves many), less the stray,
        bounds the true region's part inside the box from below."""
        low = self.lower() if low is None else low
        ks, up = self._door_ups()
        if not len(ks):
            return {}
        pq = self._pq
        key = pq * self.nt + self.jj[ks]
        lk = low[ks]
        look = lk < up[key] - self.eps
        todo = np.nonzero(look & np.isnan(self._plow))[0]
        if len(todo):
            km = ks[todo]
            dl = self.delta(km)
            grow = self.eps * 2.0 ** np.ceil(np.log2(np.maximum(dl, 1e-6) / self.eps))
            geoms, owner = self._pieces_of(self._in_frames(pq[todo], self.Pa[km]),
                                           self._in_frames(pq[todo], self.Pb[km]),
                                           self.jj[km])
            d = self._clipped(pq[todo][owner], geoms, grow[owner])
            dist = np.full(len(todo), math.inf)
            np.minimum.at(dist, owner, d)
            self._plow[todo] = dist - dl
        val = np.where(look, np.maximum(lk, np.where(np.isnan(self._plow), -math.inf,
                                                      self._plow)), lk)
        out = {}
        for kq in np.unique(key).tolist():
            sel = key == kq
            out[(kq // self.nt, kq % self.nt)] = (ks[sel], val[sel], float(up[kq]))
        return out

    def final_door_values(self) -> dict[tuple[int, int], tuple[np.ndarray, np.ndarray, float]]:
        """:meth:`door_values` of the refined intervals (computed once)."""
        if self._final_doors is None:
            self._final_doors = self.door_values()
        return self._final_doors

    def _door_need(self, low: np.ndarray) -> np.ndarray:
        """Per interval the highest door level it must be told apart from (``-inf`` where
        none: its door bound is within ``eps`` of the door's least true placement)."""
        thr = np.full(len(self), -math.inf)
        if not len(self.index.doors):
            return thr
        for k, val, up in self.door_values(low).values():
            if math.isfinite(up) and up > 0.0:
                bad = val < up - self.eps
                thr[k[bad]] = np.maximum(thr[k[bad]], up - self.eps)
        return thr

    # -- results --------------------------------------------------------------------------
    def per_solid(self, k: np.ndarray, reach: np.ndarray
                  ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Lower bounds of intervals ``k``'s distances to each solid within ``reach`` (per
        interval) of their stand-ins: rows (position in ``k``, solid, lower bound)."""
        if not self.n_solids or not len(k):
            return np.zeros(0, dtype=int), np.zeros(0, dtype=int), np.zeros(0)
        dl = self.delta(k)
        dp = self.pb[k] - self.pa[k]
        geoms, owner = self.pieces(k)
        pi, sj, dd = self._near(geoms, reach[owner] + dl[owner])
        near = dd <= reach[owner[pi]] + dl[owner[pi]]
        pi, sj, dd = pi[near], sj[near], dd[near]
        ns = self.n_solids
        key2 = owner[pi] * ns + sj
        keys, inv = np.unique(key2, return_inverse=True)
        l2 = np.full(len(keys), math.inf)
        np.minimum.at(l2, inv, dd)
        l2 -= dl[keys // ns]
        # The true placements' distances to the same solids (Lipschitz bound).
        pos = keys // ns
        sol = keys % ns
        kk = k[pos]
        g = self.index.geometries[sol]
        l1 = 0.5 * (shapely.distance(self.Ga[kk], g) + shapely.distance(self.Gb[kk], g)
                    - self.S[kk] * dp[pos])
        return pos, sol, np.maximum(l1, l2)

    def hits(self, t: int) -> list[Hit]:
        """Trailer ``t``'s intervals within its margin of a solid (by their per-solid lower
        bound), in route order."""
        if not len(self):
            return []
        low = self.lower()
        m = float(self.margins[t]) - MARGIN_SLACK_M
        k = np.nonzero((low < m) & (self.jj == t))[0]
        if not len(k):
            return []
        pos, sol, lb = self.per_solid(k, np.full(len(k), max(float(self.margins[t]), 0.0)))
        out = []
        sel = lb < m
        for p_, s_, c in zip(pos[sel].tolist(), sol[sel].tolist(), lb[sel].tolist()):
            out.append(Hit(int(k[p_]), int(s_), float(c)))
        out.sort(key=lambda h: (h.k, h.solid))
        return out

    def placements(self, ks: Sequence[int], step_m: float = 0.02, most: int = 80):
        """The union of the true placements about every ``step_m`` of any footprint point's
        travel through intervals ``ks`` (at most ``most`` placements; each union made once,
        a stretch's overlap and its door's often being the same intervals)."""
        key = (tuple(int(v) for v in ks), float(step_m), int(most))
        made = self.__dict__.setdefault("_placements", {})
        got = made.get(key)
        if got is None:
            got = made[key] = self._placements_of(np.asarray(key[0], dtype=int), step_m,
                                                  most)
        return got

    def _placements_of(self, k: np.ndarray, step_m: float, most: int):
        n = np.clip(np.ceil(self.S[k] * (self.pb[k] - self.pa[k]) / step_m), 1, None)
        n = np.maximum(1, (n * min(1.0, most / float(n.sum()))).astype(int))
        own = np.repeat(np.arange(len(k)), n + 1)
        start = np.concatenate([[0], np.cumsum(n + 1)])[:-1]
        f = (np.arange(len(own)) - start[own]) / n[own]
        kk = k[own]
        poses = self._poses(self.seg[kk], self.pa[kk] + f * (self.pb[kk] - self.pa[kk]),
                            self.jj[kk])
        return shapely.union_all(self._placed(poses, self.jj[kk]))

    def depth(self, ks: Sequence[int], solid: int) -> float:
        """Overlap depth estimate of intervals ``ks`` with a solid (of their placements'
        union, :meth:`placements`)."""
        return overlap_depth(self.placements(ks), self.index.geometries[solid])

    def least(self, t: int) -> tuple[float, int, int] | None:
        """Trailer ``t``'s least lower bound over its intervals, the interval and the solid
        nearest it (None without solids)."""
        mine = np.nonzero(self.jj == t)[0]
        if not self.n_solids or not len(mine):
            return None
        low = self.lower()
        k = int(mine[int(np.argmin(low[mine]))])
        _pos, sol, lb = self.per_solid(np.array([k]), np.array([self.reach]))
        if len(lb):
            return float(low[k]), k, int(sol[int(np.argmin(lb))])
        j, _d = self.index.nearest(self.Ga[k])
        return float(low[k]), k, int(j)


class TrailerView:
    """One trailer of a :class:`TrailerBounds` batch, with the names the check uses."""

    def __init__(self, tb: TrailerBounds, t: int) -> None:
        self.tb, self.t = tb, t
        self.trace, self.index = tb.trace, tb.index
        self.j = int(tb.js[t])
        self.fp = tb.fps[t]
        self.margin = float(tb.margins[t])
        self.door_caps = tb.door_caps

    def __getattr__(self, name: str) -> Any:
        # The batch's interval arrays and per-interval methods (indices are the batch's).
        return getattr(self.tb, name)

    def _poses(self, seg: np.ndarray, p: np.ndarray) -> np.ndarray:
        return self.tb._poses(seg, p, np.full(len(p), self.t))

    def hits(self) -> list[Hit]:
        return self.tb.hits(self.t)

    def least(self) -> tuple[float, int, int] | None:
        return self.tb.least(self.t)

    def door_values(self) -> dict[int, tuple[np.ndarray, np.ndarray, float]]:
        return {q: v for (q, t), v in self.tb.final_door_values().items() if t == self.t}


__all__ = ["COARSE_M", "GrownBoxes", "Hit", "TrailerBounds", "TrailerPoser", "TrailerView",
           "chain_bounds", "grown_boxes", "trailer_poser", "trailer_poses"]
