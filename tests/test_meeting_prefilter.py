"""The clearance pass's one-query test of which segments meet a tree (``_meeting``) gives the
same answer with its bounding-box pre-filter as testing every part on its own."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest
import shapely

from kinematics.check import clearance_pass as cp
from kinematics.check.obstacles import ObstacleIndex
from kinematics.check.sweep import prepare_footprint
from kinematics.check.sweep_batch import swept_parts_many
from kinematics.files.project import load_project
from kinematics.plan.planner import plan_route

SAMPLES = Path(__file__).resolve().parent.parent / "sample_floorplans"


def _brute(parts_of, geoms, predicate, distance=None):
    # Source: the predicate's definition, part by part with shapely's own functions.
    out = []
    for parts in parts_of:
        if predicate == "dwithin":
            out.append(any(bool(shapely.dwithin(p, g, distance)) for p in parts for g in geoms))
        else:
            out.append(any(bool(shapely.intersects(p, g)) for p in parts for g in geoms))
    return np.array(out, dtype=bool)


@pytest.mark.parametrize("name", ["clinic_smooth.swathe.json", "depot.swathe.json"])
def test_meeting_matches_every_part_tested(name):
    proj = load_project(SAMPLES / name)
    ch = dataclasses.replace(proj.chassis, max_wheel_accel_radps2=6.0)
    idx = ObstacleIndex(proj.floorplan)
    fp = prepare_footprint(ch.footprint)
    seen_many = False
    for r in proj.routes:
        segs = plan_route(dataclasses.replace(r, transitions="clothoid"), ch).segments
        parts = swept_parts_many(fp, segs, 0.0015)
        seen_many |= max(len(p) for p in parts) > cp._MANY_PARTS
        # Margins from touching to far: the pre-filter must keep every segment that meets.
        for dist in (0.0, 0.01, 0.05, 0.3, 2.0):
            got = cp._meeting(parts, idx.tree, "dwithin", dist)
            assert got.tolist() == _brute(parts, idx.geometries, "dwithin", dist).tolist()
        assert cp._meeting(parts, idx.tree, "intersects").tolist() == \
            _brute(parts, idx.geometries, "intersects").tolist()
        if len(idx.doors):
            assert cp._meeting(parts, idx.door_tree, "intersects").tolist() == \
                _brute(parts, idx.door_tree.geometries, "intersects").tolist()
    assert seen_many  # the clothoids' many parts take the pre-filtered way


def test_meeting_box_near_but_parts_far():
    # An L of two thin parts whose bounding box covers a solid that neither part reaches.
    a = shapely.box(0.0, 0.0, 10.0, 0.1)
    b = shapely.box(0.0, 0.0, 0.1, 10.0)
    parts = [np.array([a, b] * 5, dtype=object), np.array([a], dtype=object)]
    solid = shapely.box(5.0, 5.0, 6.0, 6.0)
    tree = shapely.STRtree([solid])
    assert cp._meeting(parts, tree, "dwithin", 0.5).tolist() == [False, False]
    assert cp._meeting(parts, tree, "dwithin", 4.95).tolist() == [True, True]
    assert cp._meeting(parts, tree, "intersects").tolist() == [False, False]
