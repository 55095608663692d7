"""Swept parts of many segments in one vectorised pass, the same polygons as one call each.

:func:`kinematics.check.sweep.swept_parts` costs a few dozen small numpy and shapely calls per
segment (~0.2 ms), which on a long route is most of a check. :func:`swept_parts_many` builds
the parts of every plain line (constant heading) and every arc and pivot of a route at once:
footprint placements, the rotation pieces of :func:`kinematics.check.sweep.rotation_parts`
(monotone edge pieces, their circumscribed and inscribed arcs) and the hulls or leading-edge
parallelograms of :func:`kinematics.check.sweep.translation_parts`, each with a handful of
array calls over all segments. Every coordinate is computed by the same floating-point
operations in the same order as the one-segment functions (elementwise IEEE arithmetic and
numpy's ``sin``/``cos``/``hypot``/``arctan2`` do not depend on how many values an array
holds), and the parts keep their order, so the result is bit for bit that of one call per
segment: the method, its conservative bound and its tolerance are unchanged (module
docstring of :mod:`kinematics.check.sweep`). Other kinds (clothoids, holonomic lines) are
swept one at a time by :func:`~kinematics.check.sweep.swept_parts`.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import shapely
from numpy.typing import NDArray

from kinematics.check.sweep import (
    _ARC_SHARE,
    MAX_CHUNK_RAD,
    Footprint,
    _check_budget,
    _edge_rotation_rings_many,
    _place,
    arc_steps,
    monotone_pieces_many,
    swept_parts,
)
from kinematics.motion.segments import Segment


def _batch_kind(seg: Segment, convex: bool) -> str:
    """``"rot"``, ``"hull"``, ``"quads"`` or ``""`` (swept one at a time), as
    :func:`kinematics.check.sweep.segment_parts` branches."""
    if seg.kind == "pivot" or (seg.kind == "arc" and seg.curvature != 0.0):
        return "rot"
    if seg.kind == "line" and seg.course_rad is None and seg.turn_rad == 0.0:
        return "hull" if convex else "quads"
    return ""


def swept_parts_many(fp: Footprint, segs: Sequence[Segment], tolerance_m: float
                     ) -> list[NDArray[np.object_]]:
    """``[swept_parts(fp, s, tolerance_m) for s in segs]``, bit for bit, in one pass."""
    if not tolerance_m > 0.0:
        raise ValueError("tolerance_m must be > 0")
    tol = _ARC_SHARE * float(tolerance_m)
    out: list = [None] * len(segs)
    groups: dict[str, list[int]] = {"rot": [], "hull": [], "quads": []}
    for i, s in enumerate(segs):
        kind = _batch_kind(s, fp.convex)
        if kind:
            if kind == "rot":
                # The same work budget as one call (a huge turn is refused, not swept).
                _check_budget(fp, s, tolerance_m)
            groups[kind].append(i)
        else:
            out[i] = swept_parts(fp, s, tolerance_m)
    pending: list[tuple[int, NDArray[np.object_]]] = []
    if groups["hull"]:
        pending += _hulls(fp, [segs[i] for i in groups["hull"]], groups["hull"])
    if groups["quads"]:
        pending += _quads(fp, [segs[i] for i in groups["quads"]], groups["quads"])
    if groups["rot"]:
        pending += _rotations(fp, [segs[i] for i in groups["rot"]], groups["rot"], tol)
    if pending:
        for i, geoms in _finish_many(pending):
            out[i] = geoms
    return out


def _starts(segs: Sequence[Segment]) -> NDArray[np.float64]:
    return np.array([s.start for s in segs], dtype=float).reshape(-1, 3)


def _moves(segs: Sequence[Segment], starts: NDArray[np.float64]) -> NDArray[np.float64]:
    """The translation ``v`` of each plain line (as :func:`segment_parts` computes it)."""
    d = np.array([s.direction * s.length_m for s in segs], dtype=float)
    return np.stack([d * np.cos(starts[:, 2]), d * np.sin(starts[:, 2])], axis=-1)


def _hulls(fp: Footprint, segs: Sequence[Segment], ids: list[int]
           ) -> list[tuple[int, NDArray[np.object_]]]:
    """Convex footprint on plain lines: the hull of the start and end placements."""
    starts = _starts(segs)
    placed = _place(fp.ring, starts)
    end = placed + _moves(segs, starts)[:, None, :]
    pts = np.concatenate([placed, end], axis=1)
    k, v = pts.shape[:2]
    hulls = shapely.convex_hull(shapely.multipoints(pts.reshape(-1, 2),
                                                    indices=np.repeat(np.arange(k), v)))
    return [(i, hulls[j:j + 1]) for j, i in enumerate(ids)]


def _quads(fp: Footprint, segs: Sequence[Segment], ids: list[int]
           ) -> list[tuple[int, NDArray[np.object_]]]:
    """Simple footprint on plain lines: both placements and the leading edges'
    parallelograms (:func:`kinematics.check.sweep.translation_parts`)."""
    starts = _starts(segs)
    a = _place(fp.ring, starts)                                      # (K, N, 2)
    v = _moves(segs, starts)
    end = a + v[:, None, :]
    places = shapely.polygons(np.stack([a, end], axis=1).reshape(-1, *a.shape[1:]))
    b = np.roll(a, -1, axis=1)
    d = b - a
    lead = d[..., 1] * v[:, None, 0] - d[..., 0] * v[:, None, 1]
    moving = np.hypot(v[:, 0], v[:, 1]) > 1e-12
    keep = (lead > 1e-12) & moving[:, None]
    vv = v[:, None, :]
    quads = np.stack([a, b, b + vv, a + vv], axis=2)                 # (K, N, 4, 2)
    polys = shapely.polygons(quads[keep])
    counts = keep.sum(axis=1)
    offs = np.r_[0, np.cumsum(counts)]
    return [(i, np.concatenate([places[2 * j:2 * j + 2], polys[offs[j]:offs[j + 1]]]))
            for j, i in enumerate(ids)]


def _rotations(fp: Footprint, segs: Sequence[Segment], ids: list[int], tol: float
               ) -> list[tuple[int, NDArray[np.object_]]]:
    """Arcs and pivots: :func:`kinematics.check.sweep.rotation_parts` of every segment."""
    ring = fp.ring
    starts = _starts(segs)
    placed0 = _place(ring, starts)                                   # (K, N, 2)
    q = np.array([s.start[:2] if s.kind == "pivot" else s.arc_centre() for s in segs],
                 dtype=float)
    phi = np.array([s.turn_rad for s in segs], dtype=float)
    rel = placed0 - q[:, None, :]
    r_max = np.hypot(rel[..., 0], rel[..., 1]).max(axis=1)
    m = np.array([max(1, math.ceil(abs(p) / MAX_CHUNK_RAD - 1e-12)) for p in phi.tolist()])
    phi_c = phi / m
    n = np.array([arc_steps(r, p, tol) for r, p in zip(r_max.tolist(), phi_c.tolist())])
    moving = np.abs(phi_c) * r_max > 1e-12
    # Placements k = 0..m of every segment, rotated by k phi_c about its centre.
    pseg = np.repeat(np.arange(len(segs)), m + 1)
    pk = np.concatenate([np.arange(mi + 1) for mi in m.tolist()])
    places = shapely.polygons(_rotate_many(rel[pseg], pk * phi_c[pseg]) + q[pseg][:, None, :])
    # Monotone leading pieces of every segment (sweep._monotone_pieces, the same order).
    pc, owner = monotone_pieces_many(rel, np.copysign(1.0, phi), moving)
    # Each piece swept by one chunk (rings of 2n + 3 vertices), then rotated to chunk k.
    per_piece: list = [None] * len(pc)
    for nn in sorted(set(n[owner].tolist())):
        sel = np.flatnonzero(n[owner] == nn)
        chunk0 = _edge_rotation_rings_many(pc[sel], phi_c[owner[sel]], nn)
        own = owner[sel]
        reps = m[own]
        rsel = np.repeat(np.arange(len(sel)), reps)
        rk = np.concatenate([np.arange(r) for r in reps.tolist()])
        ang = rk * phi_c[own[rsel]]
        polys = shapely.polygons(_rotate_many(chunk0[rsel], ang) + q[own[rsel]][:, None, :])
        offs = np.r_[0, np.cumsum(reps)]
        for j, p in enumerate(sel.tolist()):
            per_piece[p] = polys[offs[j]:offs[j + 1]]
    pieces_of = np.r_[0, np.cumsum(np.bincount(owner, minlength=len(segs)))]
    poffs = np.r_[0, np.cumsum(m + 1)]
    res = []
    for j, i in enumerate(ids):
        parts = [places[poffs[j]:poffs[j + 1]]]
        mine = per_piece[pieces_of[j]:pieces_of[j + 1]]
        if mine:
            # rotation_parts lists chunk by chunk, each chunk's pieces in order.
            grid = np.stack(mine)                                    # (pieces, m)
            parts.append(grid.T.reshape(-1))
        res.append((i, np.concatenate(parts)))
    return res


def _rotate_many(p: NDArray[np.float64], ang: NDArray[np.float64]) -> NDArray[np.float64]:
    """``sweep._rotate(p[k], ang[k])`` for every ``k`` (the same operations)."""
    c = np.cos(ang)[:, None]
    s = np.sin(ang)[:, None]
    out = np.empty_like(p)
    out[..., 0] = c * p[..., 0] - s * p[..., 1]
    out[..., 1] = s * p[..., 0] + c * p[..., 1]
    return out


def _finish_many(pending: list[tuple[int, NDArray[np.object_]]]
                 ) -> list[tuple[int, NDArray[np.object_]]]:
    """:func:`kinematics.check.sweep._finish_parts` (no growth) of every segment's parts,
    with one emptiness and one validity test over all of them."""
    flat = np.concatenate([g for _, g in pending])
    counts = np.array([len(g) for _, g in pending])
    keep = ~shapely.is_empty(flat)
    bad = keep & ~shapely.is_valid(flat)
    if bad.any():
        flat = flat.copy()
        flat[bad] = shapely.make_valid(flat[bad])
    offs = np.r_[0, np.cumsum(counts)]
    return [(i, flat[offs[k]:offs[k + 1]][keep[offs[k]:offs[k + 1]]])
            for k, (i, _) in enumerate(pending)]
