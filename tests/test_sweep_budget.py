"""The sweep's work budget: estimated before sweeping, honoured by the route check, and a
turning holonomic line whose work does not grow with its length (issue 17: bench/fuzz.py seed
13 found a mecanum route whose body turns along a ~10 km line taking over 20 s in `check`).

Invented test geometry: a 3 m wide, 12 m long hall; a mecanum cart 1.2 m x 0.7 m.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest
import shapely

from app.cli import main
from kinematics.check.sweep import (
    SWEEP_WORK_BUDGET,
    SweepBudgetError,
    _holonomic_method,
    prepare_footprint,
    sweep_cost,
    swept_parts,
)
from kinematics.motion.segments import arc, clothoid, holonomic_line, line, pivot

CART = [[-0.6, -0.35], [0.6, -0.35], [0.6, 0.35], [-0.6, 0.35]]
MECANUM = {"name": "cart", "drive": "mecanum", "footprint": CART, "margin_m": 0.05,
           "wheel_radius_m": 0.076, "wheelbase_m": 0.9, "track_m": 0.6,
           "max_speed_mps": 0.8, "max_accel_mps2": 0.4, "max_wheel_rate_radps": 15.0}
FLOOR = {"swathe_floorplan": 1, "name": "test hall",
         "walls": [{"points": [[0, 0], [12, 0]], "thickness_m": 0.1},
                   {"points": [[0, 3], [12, 3]], "thickness_m": 0.1}]}


def _project(tmp: Path, waypoints: list, footprint: list | None = None) -> Path:
    (tmp / "hall.floor.json").write_text(json.dumps(FLOOR))
    chassis = dict(MECANUM, footprint=footprint or CART)
    d = {"swathe_project": 1, "floorplan": "hall.floor.json", "chassis": chassis,
         "routes": [{"name": "far turn", "waypoints": waypoints, "turn_radius_m": 0.0}]}
    p = tmp / "p.swathe.json"
    p.write_text(json.dumps(d))
    return p


def _vertices(parts) -> int:
    return int(sum(len(g.exterior.coords) for g in parts))


def test_a_ten_km_turning_mecanum_line_is_checked_with_bounded_work(tmp_path, capsys):
    # The seed-13 finding, rebuilt: the body turns 180 deg along a 10 km line. The check's
    # work is bounded by the estimate below (no timer): the sweep by grown translations makes
    # as many chunks as the turn needs, whatever the length.
    p = _project(tmp_path, [[1, 1.5, 0], [10001, 1.5, 180]])
    seg = holonomic_line((1.0, 1.5, 0.0), (10001.0, 1.5), math.pi)
    fp = prepare_footprint(CART)
    # Source: the chunk counts of kinematics.check.sweep (module docstring): by rotations
    # about sqrt(L phi / (2 tol)) = ~2 900 chunks here; by translations phi r_far /
    # (0.64 tol) = ~1 800, independent of L.
    assert _holonomic_method(fp, seg, 0.0019)[0] == "translations"
    assert sweep_cost(fp, seg) < 0.05 * SWEEP_WORK_BUDGET
    shorter = holonomic_line((1.0, 1.5, 0.0), (1001.0, 1.5), math.pi)
    assert sweep_cost(fp, seg) == sweep_cost(fp, shorter)
    code = main(["check", str(p)])
    out = capsys.readouterr()
    assert code in (0, 1), out.err
    assert "far turn" in out.out and out.err == ""


def test_a_sweep_over_the_budget_is_refused_naming_file_route_and_segment(tmp_path, capsys):
    # A 12 m x 7 m body turning along a 10 km line at a 0.1 mm tolerance: ~3e6 vertices by
    # the cheaper way, past the budget. Refused before sweeping, one line, exit 2.
    big = [[-6, -3.5], [6, -3.5], [6, 3.5], [-6, 3.5]]
    p = _project(tmp_path, [[1, 1.5, 0], [10001, 1.5, 180]], footprint=big)
    code = main(["check", str(p), "--tolerance-mm", "0.1"])
    err = capsys.readouterr().err
    assert code == 2, err
    lines = err.splitlines()
    assert len(lines) == 1, err
    for name in (str(p), "route 'far turn'", "segment 0", "10000 m line", "180 deg",
                 "split it with waypoints"):
        assert name in lines[0], (name, lines[0])


def test_the_library_refusal_is_a_validation_error_with_the_estimate():
    big = [[-6, -3.5], [6, -3.5], [6, 3.5], [-6, 3.5]]
    seg = holonomic_line((0.0, 0.0, 0.0), (10000.0, 0.0), math.pi)
    with pytest.raises(SweepBudgetError) as info:
        swept_parts(big, seg, 0.0001)
    assert info.value.work > SWEEP_WORK_BUDGET
    assert "\n" not in info.value.message and info.value.message.startswith("sweeping")


@pytest.mark.parametrize("seg", [
    line((0, 0, 0.3), 7.0),
    arc((0, 0, 0), 3.0, 2.5),
    arc((0, 0, 0), 0.2, -4.0),
    pivot((1, 1, 0), 5.0),
    clothoid((0, 0, 0), 0.0, 1.5, 4.0),
    holonomic_line((0, 0, 0), (2.0, 1.0), 1.0),
    holonomic_line((0, 0, 0.3), (300.0, 40.0), 3.0),
    holonomic_line((0, 0, 0), (0.0, 0.0), 2.0),
])
@pytest.mark.parametrize("footprint", [CART, [[-0.5, -0.4], [0.7, -0.4], [0.7, 0.0],
                                              [0.0, 0.0], [0.0, 0.4], [-0.5, 0.4]]])
def test_the_estimate_is_not_below_the_vertices_made(seg, footprint):
    # Source: counting the vertices of what swept_parts returns (shapely get_coordinates); the
    # estimate may over-count (it bounds the rotation pieces by 2 per edge) but must not
    # under-count, or the budget would let more work through than it says.
    est = sweep_cost(footprint, seg)
    made = _vertices(swept_parts(footprint, seg))
    assert made <= est, (made, est)
    assert np.isfinite(est)


def test_translation_chunks_are_valid_minkowski_sums_of_the_grown_body():
    # Source: shapely.convex_hull (reference library) - each convex chunk drawn directly must
    # equal the hull of its two grown placements.
    from kinematics.check.sweep import _grown, _grown_translation_parts, _place

    fp = prepare_footprint(CART)
    seg = holonomic_line((0, 0, 0.3), (50.0, 20.0), 2.5)
    parts = _grown_translation_parts(fp, seg, 0.0019)
    assert bool(np.all(shapely.is_valid(parts)))
    g = _grown(fp.key, 0.32 * 0.0019)
    m = len(parts)
    f = np.linspace(0.0, 1.0, m + 1)
    poses = seg.poses_at_fraction(f)
    mid = seg.poses_at_fraction(0.5 * (f[:-1] + f[1:]))[:, 2]
    a, b = poses[:-1].copy(), poses[1:].copy()
    a[:, 2] = b[:, 2] = mid
    hull = shapely.convex_hull(shapely.multipoints(
        np.concatenate([_place(g.ring, a), _place(g.ring, b)], axis=1)))
    assert float(np.max(shapely.area(shapely.symmetric_difference(hull, parts)))) < 1e-9


def test_overlap_depth_from_the_near_parts_equals_the_whole_union():
    # Source: shapely.union_all of every part (reference library): the depth of a pillar in
    # a long turning line's swept region, measured on the parts near the pillar only, is the
    # depth measured on the whole union.
    from shapely.geometry import Point

    from kinematics.check.contact import overlap_depth
    from kinematics.check.segment_parts import SweptParts

    seg = holonomic_line((0.0, 0.0, 0.0), (60.0, 0.0), 2.0)
    sw = SweptParts(swept_parts(CART, seg))
    assert len(sw.parts) > 64
    pillar = Point(30.0, 0.2).buffer(0.15)
    near = sw.union_near(pillar)
    assert near.area < 0.5 * sw.union.area
    assert overlap_depth(near, pillar) == pytest.approx(overlap_depth(sw.union, pillar),
                                                       abs=1e-9)
