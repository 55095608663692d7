"""Violations from the clearance pass's hits: where each starts, which part, one per stretch.

A :class:`~kinematics.check.segment_parts.Hit` is one solid closer than the margin to one
segment's swept piece. :func:`locate_hit` finds where on the segment it starts: bracketed by
placements of the footprint, then bisected on the swept region of the segment's first part
(monotone in its length), to within the tolerance along the path of the farthest footprint
vertex; and it names the footprint part nearest (or deepest in) the solid. :func:`stretches`
groups contiguous segments near the same solid into one ``collision`` or ``clearance``
violation each.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import shapely

from kinematics.check.contact import nearest_point, part_name, to_body
from kinematics.check.obstacles import ObstacleIndex
from kinematics.check.results import Violation
from kinematics.check.segment_parts import Hit, SegmentResult, SweptParts
from kinematics.check.sweep import (
    MARGIN_SLACK_M,
    Footprint,
    placed_footprints,
    sub_segment,
    swept_parts,
    travel_m,
)
from kinematics.check.zones import MarginRule, ZoneIndex
from kinematics.motion.segments import Segment

#: Placements sampled to name the footprint part nearest a solid.
PART_SAMPLES = 48


def _violates(fp: Footprint, solid: object, margin: float, tol: float, seg: Segment,
              collision: bool, f: float, rule: MarginRule | None = None) -> bool:
    """Whether the first fraction ``f`` of the segment (a placement at ``f = 0``) collides
    with ``solid`` or comes within ``margin`` of it (or breaks ``rule``, where margin zones
    set the margin)."""
    g = (placed_footprints(fp, [seg.start]) if f <= 0.0
         else swept_parts(fp, sub_segment(seg, f), tol))
    if collision:
        return bool(np.any(shapely.intersects(g, solid)))
    if rule is not None:
        return rule.of_union(g, solid).short_m > MARGIN_SLACK_M
    return float(np.min(shapely.distance(g, solid))) < margin - MARGIN_SLACK_M


#: Most placements :func:`_placements_bracket` tries in one bracket.
DENSE_PLACEMENTS = 400


def _placements_bracket(fp: Footprint, solid: object, margin: float, tol: float, seg: Segment,
                        collision: bool, lo: float, hi: float, travel: float,
                        rule: MarginRule | None) -> tuple[float, float, object | None]:
    """The bracket ``[lo, hi]`` of a hit's start narrowed by placements of the footprint
    between them, spaced so the farthest vertex moves at most ``tol`` from one to the next,
    and the first placement that violates (it closes the bracket). Sweeping a clothoid's
    first part costs a whole new set of parts per bisection step (its shape differs each
    time), a row of placements one vectorised distance. Where no placement in the bracket
    violates (the sweep between two does), or the bracket needs more than
    :data:`DENSE_PLACEMENTS`, the bracket is returned as it was with ``None``."""
    n = max(2, math.ceil((hi - lo) * travel / tol) + 1)
    if n > DENSE_PLACEMENTS:
        return lo, hi, None
    fr = np.linspace(lo, hi, n + 1)[1:]
    placed = placed_footprints(fp, seg.poses_at_fraction(fr))
    if collision:
        bad = shapely.distance(placed, solid) <= 0.0
    elif rule is not None:
        bad = rule.each(placed, solid) > MARGIN_SLACK_M
    else:
        bad = shapely.distance(placed, solid) < margin - MARGIN_SLACK_M
    if not bad.any():
        return lo, hi, None
    k = int(np.argmax(bad))
    return (float(fr[k - 1]) if k > 0 else lo), float(fr[k]), placed[k]


def locate_hit(fp: Footprint, index: ObstacleIndex, margin: float, tol: float, seg: Segment,
               piece: SweptParts, j: int, c: float, rule: MarginRule | None = None) -> Hit:
    """The :class:`Hit` of solid ``j`` at clearance ``c`` on ``seg`` (swept as ``piece``).

    ``index`` needs only ``geometries`` (keep-out zones use this too). With ``rule``, the
    margin is that of the margin zone the nearer region lies in (:class:`MarginRule`)."""
    solid = index.geometries[j]
    collision = c <= 0.0
    travel = travel_m(fp, seg)
    # Bracket the start with placements, then bisect on the swept first part of the
    # segment, whose clearance can only fall as it grows.
    fr = np.linspace(0.0, 1.0, PART_SAMPLES + 1)
    poses = seg.poses_at_fraction(fr)
    placed = placed_footprints(fp, poses)
    dist = shapely.distance(placed, solid)
    if collision:
        bad = dist <= 0.0
    elif rule is not None:
        bad = rule.each(placed, solid) > MARGIN_SLACK_M
    else:
        bad = dist < margin - MARGIN_SLACK_M
    first = None  # the first breaking placement, where placements found it
    if bad[0]:
        lo = hi = 0.0
    else:
        k = int(np.argmax(bad)) if bad.any() else len(fr) - 1
        lo, hi = float(fr[k - 1]) if k > 0 else 0.0, float(fr[k])
        if seg.kind == "clothoid":
            lo, hi, first = _placements_bracket(fp, solid, margin, tol, seg, collision, lo, hi,
                                                travel, rule)
        if first is None:
            if lo > 0.0 and _violates(fp, solid, margin, tol, seg, collision, lo, rule):
                lo = 0.0
            if _violates(fp, solid, margin, tol, seg, collision, 0.0, rule):
                hi = 0.0
            steps = 0
            while (hi - lo) * travel > tol and steps < 40:
                mid = 0.5 * (lo + hi)
                if _violates(fp, solid, margin, tol, seg, collision, mid, rule):
                    hi = mid
                else:
                    lo = mid
                steps += 1
    f_start = hi
    if first is not None:
        # The first of placements spaced within the tolerance that breaks the margin: the
        # swept first part can break it earlier only between two of them, less than one
        # spacing (the tolerance along the farthest vertex's path) before.
        start_geom = SweptParts(np.asarray([first], dtype=object))
    else:
        start_geom = SweptParts(placed[:1] if f_start <= 0.0
                                else swept_parts(fp, sub_segment(seg, f_start), tol))
    if collision and not np.any(shapely.intersects(start_geom.parts, solid)):
        start_geom = piece
    x, y = nearest_point(start_geom.parts, solid, collision)
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
        px, py = ring[d_pts <= d_pts.min() + tol].mean(axis=0)
    else:
        ov = pl.intersection(solid)
        px, py = ov.centroid.x, ov.centroid.y
    bx, by = to_body(poses[w], px, py)
    local = f_start * (seg.length_m if seg.length_m > 0.0 else 0.0)
    need, zone = margin, ""
    if rule is not None and not collision:
        got = rule.of_union(piece.parts, solid)
        c, need, zone = got.clearance_m, got.need_m, got.zone
    return Hit(j, c, collision, local, x, y, part_name(fp, bx, by),
               None if rule is None else need, zone)


def stretches(results: Sequence[SegmentResult], stations: np.ndarray, index: ObstacleIndex,
              margin: float) -> list[Violation]:
    """Contiguous runs of segments close to the same solid, one violation each."""
    runs: dict[int, list[tuple[int, Hit]]] = {}
    done: list[list[tuple[int, Hit]]] = []
    for i, r in enumerate(results):
        here = {h.solid: h for h in r.hits}
        for j in list(runs):
            if j not in here:
                done.append(runs.pop(j))
        for j, h in here.items():
            runs.setdefault(j, []).append((i, h))
    done += runs.values()
    out = []
    for run in done:
        collide = [(i, h) for i, h in run if h.collision]
        kind = "collision" if collide else "clearance"
        chosen = collide or run

        def need(h: Hit) -> float:
            return margin if h.margin_m is None else h.margin_m

        i0, h0 = chosen[0]
        if collide:
            worst_i, worst = min(chosen, key=lambda ih: ih[1].clearance_m)
            amount = -worst.clearance_m
        else:
            worst_i, worst = max(chosen, key=lambda ih: need(ih[1]) - ih[1].clearance_m)
            amount = need(worst) - worst.clearance_m
        st = float(stations[i0]) + h0.start_local_m
        solid = index.solids[h0.solid].name
        if collide:
            msg = (f"{worst.part} scrapes {solid} by {amount * 1000:.0f} mm at station "
                   f"{st:.2f} m")
        else:
            of = f" of {worst.zone}" if worst.zone else ""
            msg = (f"{worst.part} passes {solid} with {worst.clearance_m * 1000:.0f} mm "
                   f"clearance, {amount * 1000:.0f} mm short of the "
                   f"{need(worst) * 1000:.0f} mm margin{of}, from station {st:.2f} m")
        out.append(Violation(kind, i0, st, h0.x, h0.y, float(amount), msg, solid))
    return out


def zone_stretches(results: Sequence[SegmentResult], stations: np.ndarray,
                   zones: ZoneIndex) -> list[Violation]:
    """``keep_out`` and ``wrong_way`` violations: one per contiguous run of segments in the
    same zone."""
    out: list[Violation] = []
    for kind in ("keep_out", "wrong_way"):
        runs: dict[int, list[tuple[int, object]]] = {}
        done: list[list[tuple[int, object]]] = []
        for i, r in enumerate(results):
            got = r.keep_out if kind == "keep_out" else r.wrong_way
            here: dict[int, object] = {}
            for h in got:
                k = h.solid if kind == "keep_out" else h.zone
                here.setdefault(k, h)
            for k in list(runs):
                if k not in here:
                    done.append(runs.pop(k))
            for k, h in here.items():
                runs.setdefault(k, []).append((i, h))
        done += runs.values()
        for run in done:
            i0, h0 = run[0]
            st = float(stations[i0]) + h0.start_local_m
            if kind == "keep_out":
                name = zones.keep_out.name(h0.solid)
                amount = max(-h.clearance_m for _i, h in run)
                worst = max(run, key=lambda ih: -ih[1].clearance_m)[1]
                msg = (f"{worst.part} enters keep-out {name} by {amount * 1000:.0f} mm at "
                       f"station {st:.2f} m")
            else:
                name = zones.one_way.name(h0.zone)
                amount = sum(h.length_m for _i, h in run)
                z = zones.one_way.zones[h0.zone]
                msg = (f"drives against one-way {name} (direction {z.direction_deg:g} deg) "
                       f"for {amount:.2f} m from station {st:.2f} m")
            out.append(Violation(kind, i0, st, h0.x, h0.y, float(amount), msg, name))
    return out
