"""Sweep and check of a train (tug + trailers) against dense-pose shapely unions."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

from kinematics.check.clearance import ObstacleIndex
from kinematics.check.sweep import placed_footprints
from kinematics.check.train import check_train, sweep_trailer
from kinematics.files.floorplan import FloorPlan, Obstacle
from kinematics.files.project import Chassis, Trailer
from kinematics.motion.segments import arc, line, pivot
from kinematics.motion.trailers import trace_train

CART = ((-0.45, -0.3), (0.35, -0.3), (0.35, 0.3), (-0.45, 0.3))
ODD = ((-0.5, -0.25), (0.3, -0.3), (0.45, 0.0), (0.3, 0.3), (-0.2, 0.1), (-0.5, 0.25))
TUG = Chassis(name="ward tug", footprint=((-0.3, -0.3), (0.5, -0.3), (0.5, 0.3), (-0.3, 0.3)),
              margin_m=0.05, track_m=0.5,
              trailers=(Trailer("linen cart", -0.4, 0.8, CART),
                        Trailer("meal cart", -0.5, 0.7, ODD, margin_m=0.03,
                                max_hitch_deg=60.0)))


def _plan():
    segs = [line((0.0, 0.0, 0.0), 2.0)]
    for kind, *a in (("arc", 1.5, math.pi / 2), ("line", 1.0), ("pivot", -math.pi / 6),
                     ("arc", 2.0, -math.pi / 3), ("line", 2.5)):
        segs.append({"line": line, "arc": arc, "pivot": pivot}[kind](segs[-1].end, *a))
    return segs


def _dense(trace, j, fp, step=0.004):
    """The trailer placed at dense poses along the trace (every 4 mm of progress)."""
    polys = []
    for i in range(len(trace.segments)):
        a = trace.amount(i)
        if a <= 0.0:
            continue
        p = np.linspace(0.0, a, max(2, math.ceil(a / step) + 1))
        polys.extend(placed_footprints(fp, trace.poses(i, p)[:, j + 1]))
    return shapely.union_all(np.array(polys, dtype=object))


@pytest.mark.parametrize("j", [0, 1])
def test_trailer_band_contains_dense_union_and_is_tight(j: int) -> None:
    # Source: shapely (GEOS) union of the trailer placed at dense poses along the same trace:
    # the band must contain it, and exceed it by at most the tolerance plus the few tenths
    # of a millimetre the dense sampling leaves between its placements.
    segs = _plan()
    trace = trace_train(segs, TUG.trailers)
    fp = TUG.trailers[j].footprint
    chunks = sweep_trailer(trace, j, fp, 0.002)
    band = shapely.union_all(np.concatenate([c.parts for c in chunks]))
    dense = _dense(trace, j, fp)
    assert dense.difference(band).area < 1e-9
    assert band.buffer(1e-7).contains(dense)
    # The band's farthest point from the dense union (its outline, finely segmentised).
    pts = shapely.points(shapely.get_coordinates(shapely.segmentize(band.boundary, 0.002)))
    assert float(shapely.distance(pts, dense).max()) <= 0.002 + 0.0005


def test_train_clearance_is_conservative_and_names_the_body() -> None:
    # Source: shapely distances of the dense placements of each body (reference), against
    # the check's promise: reported clearance <= true, and at most the tolerance below.
    segs = _plan()
    trace = trace_train(segs, TUG.trailers)
    # A post inside the first turn: the trailers cut inside the tug's path (off-tracking).
    cx, cy = segs[1].arc_centre()
    px, py = cx + 0.95 * math.cos(-math.pi / 4), cy + 0.95 * math.sin(-math.pi / 4)
    post = Obstacle(((px - 0.05, py - 0.05), (px + 0.05, py - 0.05), (px + 0.05, py + 0.05),
                     (px - 0.05, py + 0.05)), "post")
    idx = ObstacleIndex(FloorPlan(obstacles=(post,)))
    chk = check_train(segs, TUG, idx, 0.002, "r")
    solid = idx.geometries[0]
    bodies = {b["body"]: b for b in chk.train.bodies}
    for j, t in enumerate(TUG.trailers):
        true = float(_dense(trace, j, t.footprint).distance(solid))
        got = bodies[f"trailer {j + 1} ({t.name})"]["min_clearance_m"]
        assert got <= true + 1e-9
        assert got >= true - 0.002 - 1e-6 or true <= 0.0
    tug_c = bodies["tug (ward tug)"]["min_clearance_m"]
    assert tug_c > 0.05  # the tug itself clears the post with its margin
    assert chk.min_clearance_m == min(b["min_clearance_m"] for b in chk.train.bodies)
    hit = [v for v in chk.violations if v.kind in ("collision", "clearance")]
    assert {v.kind for v in hit} == {"clearance", "collision"}
    assert {v.body for v in hit} == {"trailer 1 (linen cart)", "trailer 2 (meal cart)"}
    assert all(v.to_dict()["body"] == v.body for v in hit)
    assert not chk.clear


def test_jackknife_when_reversing() -> None:
    # Source: common practice (n-trailer kinematics): reversing round a turn the hitch angle
    # grows (the unstable direction) until the trailer folds; forward it settles.
    start = (0.0, 0.0, 0.0)
    rev = [line(start, 0.5, -1), arc(line(start, 0.5, -1).end, 1.6, math.pi / 2, -1)]
    idx = ObstacleIndex(FloorPlan())
    chk = check_train(rev, TUG, idx, 0.002, "back")
    jk = [v for v in chk.violations if v.kind == "jackknife"]
    assert jk and jk[0].body.startswith("trailer")
    assert jk[0].hitch_deg > 60.0 and "reversing" in jk[0].message
    fwd = [line(start, 0.5), arc(line(start, 0.5).end, 1.6, math.pi / 2)]
    assert not [v for v in check_train(fwd, TUG, idx, 0.002, "fwd").violations
                if v.kind == "jackknife"]


def test_trailer_violation_starts_where_the_dense_placements_first_break_the_rule() -> None:
    # Source: shapely distances of each trailer placed every 1 mm of progress along the same
    # trace (reference): a violation's station is where the rule is first broken, at most
    # the check's 1 cm placement step early and never late.
    from kinematics.motion.segments import segment_stations

    segs = _plan()
    trace = trace_train(segs, TUG.trailers)
    cx, cy = segs[1].arc_centre()
    px, py = cx + 0.95 * math.cos(-math.pi / 4), cy + 0.95 * math.sin(-math.pi / 4)
    post = Obstacle(((px - 0.05, py - 0.05), (px + 0.05, py - 0.05), (px + 0.05, py + 0.05),
                     (px - 0.05, py + 0.05)), "post")
    idx = ObstacleIndex(FloorPlan(obstacles=(post,)))
    chk = check_train(segs, TUG, idx, 0.002, "r")
    stations = segment_stations(segs)
    solid = idx.geometries[0]
    seen = 0
    for v in chk.violations:
        if v.kind not in ("collision", "clearance") or not v.body.startswith("trailer"):
            continue
        j = int(v.body.split()[1]) - 1
        t = TUG.trailers[j]
        margin = t.margin_m if t.margin_m is not None else TUG.margin_m
        first = None
        for i in range(len(segs)):
            a = trace.amount(i)
            if a <= 0.0 or segs[i].kind == "pivot":
                continue
            p = np.linspace(0.0, a, max(2, math.ceil(a / 0.001) + 1))
            d = shapely.distance(placed_footprints(t.footprint, trace.poses(i, p)[:, j + 1]),
                                 solid)
            bad = d <= 0.0 if v.kind == "collision" else d < margin
            if bad.any():
                first = float(stations[i]) + float(p[int(np.argmax(bad))])
                break
        assert first is not None
        assert first - 0.011 <= v.station_m <= first + 0.001, (v.body, v.station_m, first)
        seen += 1
    assert seen == 2


@pytest.mark.parametrize("far", [0.6, 1.5])
def test_windowed_check_least_clearance_and_band(far: float) -> None:
    # Source: shapely distances and union of each trailer placed at dense poses along the
    # same trace. The check sweeps only the windows a lower bound cannot rule out (the rest
    # when the band is asked for); solids placed out of every margin must still give each
    # body's least clearance within [true - tolerance, true], and the band built afterwards
    # must hold the dense union and exceed it by at most the tolerance.
    segs = _plan()
    trace = trace_train(segs, TUG.trailers)
    cx, cy = segs[1].arc_centre()
    posts = []
    for k, (ang, extra) in enumerate(((-0.8, 0.0), (-0.3, 0.4), (2.5, 1.0))):
        r = 0.95 - far - extra if ang < 0 else 1.5 + far + extra
        px, py = cx + r * math.cos(ang), cy + r * math.sin(ang)
        posts.append(Obstacle(((px - 0.05, py - 0.05), (px + 0.05, py - 0.05),
                               (px + 0.05, py + 0.05), (px - 0.05, py + 0.05)), f"post {k}"))
    idx = ObstacleIndex(FloorPlan(obstacles=tuple(posts)))
    chk = check_train(segs, TUG, idx, 0.002, "r")
    bodies = {b["body"]: b for b in chk.train.bodies}
    # The check left windows for later.
    assert all(len(sw.swept) < len(sw.windows) for sw in chk.train.sweeps)
    for j, t in enumerate(TUG.trailers):
        sw = chk.train.sweeps[j]
        dense = _dense(trace, j, t.footprint)
        true = min(float(dense.distance(g)) for g in idx.geometries)
        got = bodies[f"trailer {j + 1} ({t.name})"]["min_clearance_m"]
        assert true - 0.002 - 1e-6 <= got <= true + 1e-9
        band = shapely.union_all(np.concatenate([c.parts for c in chk.train.chunks[j]]))
        assert len(sw.swept) == len(sw.windows)
        assert dense.difference(band).area < 1e-9
        pts = shapely.points(shapely.get_coordinates(shapely.segmentize(band.boundary, 0.002)))
        assert float(shapely.distance(pts, dense).max()) <= 0.002 + 0.0005
    # The route's band (what views and traffic use) holds every body's pieces.
    union = chk.swept
    for j, t in enumerate(TUG.trailers):
        assert _dense(trace, j, t.footprint).difference(union).area < 1e-9


def test_three_carts_of_one_outline_are_each_conservative() -> None:
    # Source: shapely distances of each cart placed at dense poses along the same trace
    # (reference), for a train whose carts share one outline (the check then places them
    # all in one vectorised call): each body's least clearance within [true - tolerance,
    # true], and a clearance violation exactly for the carts nearer a post than the margin.
    segs = _plan()
    carts = tuple(Trailer(f"cart {k + 1}", -0.4 if k == 0 else -0.45, 0.7, CART)
                  for k in range(3))
    tug = Chassis(name="ward tug", footprint=TUG.footprint, margin_m=0.05, track_m=0.5,
                  trailers=carts)
    trace = trace_train(segs, carts)
    cx, cy = segs[1].arc_centre()
    posts = []
    for k, (ang, r) in enumerate(((-0.6, 0.75), (0.9, 1.2), (2.2, 2.7))):
        px, py = cx + r * math.cos(ang), cy + r * math.sin(ang)
        posts.append(Obstacle(((px - 0.05, py - 0.05), (px + 0.05, py - 0.05),
                               (px + 0.05, py + 0.05), (px - 0.05, py + 0.05)), f"post {k}"))
    idx = ObstacleIndex(FloorPlan(obstacles=tuple(posts)))
    chk = check_train(segs, tug, idx, 0.002, "r")
    bodies = {b["body"]: b for b in chk.train.bodies}
    near = set()
    for j, t in enumerate(carts):
        dense = _dense(trace, j, t.footprint, step=0.002)
        true = min(float(dense.distance(g)) for g in idx.geometries)
        got = bodies[f"trailer {j + 1} ({t.name})"]["min_clearance_m"]
        assert 0.0 < true - 0.002 - 1e-6 <= got <= true + 1e-9, (j, got, true)
        if true < 0.05:
            near.add(f"trailer {j + 1} ({t.name})")
    assert near  # the scene has a cart within the margin
    assert {v.body for v in chk.violations if v.kind == "clearance"} == near
