"""The block-at-a-time schedule text is byte for byte the row-at-a-time text.

The references are the encoders the fast path replaces: ``jsonio.dumps(schedule_to_dict(s))``
(every sample a Python dict through the ``json`` module) and a CSV written one row at a time
with the csv module and ``format(v, ".9g")``.
"""

from __future__ import annotations

import csv
import io
import math
from pathlib import Path

import numpy as np
import pytest

from kinematics.files.floorplan import Zone
from kinematics.files.jsonio import atomic_write_pieces, dumps
from kinematics.files.project import Chassis, Route, Stop, Waypoint, load_project
from kinematics.motion.segments import line, pivot
from kinematics.plan.planner import plan_route
from kinematics.timing import schedule_text
from kinematics.timing.schedule import (
    build_schedule,
    sample_columns,
    sample_curvature,
    samples_to_csv,
    schedule_json_pieces,
    schedule_json_text,
    schedule_meta,
    schedule_to_dict,
    trailer_sample_cells,
    trailer_sample_columns,
)
from kinematics.timing.schedule_text import round9

SAMPLES = Path(__file__).resolve().parent.parent / "sample_floorplans"


def _reference_csv(s) -> str:
    """The sampled CSV as it was written before: one csv-module row per sample."""
    head = samples_to_csv(s).split("\n")
    lines = 1 + sum(1 for x in head if x.startswith("#"))  # comments and the header row
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    sm = s.samples
    curv = sample_curvature(s)
    for k in range(sm.t_s.size):
        cells = [float(sm.t_s[k]), int(sm.segment[k]), float(sm.station_m[k]), float(sm.x[k]),
                 float(sm.y[k]), math.degrees(float(sm.heading_rad[k])), float(sm.v_mps[k]),
                 math.degrees(float(sm.omega_radps[k])), float(curv[k])]
        cells += [float(sm.rate_radps[n][k]) for n in s.drive.wheel_names]
        cells += [math.degrees(float(sm.angle_rad[n][k])) for n in s.drive.steered_wheels]
        cells += trailer_sample_cells(s, k)
        w.writerow([f"{v:.9g}" if isinstance(v, float) else str(v) for v in cells])
    return "\n".join(head[:lines]) + "\n" + buf.getvalue()


def _sample_schedules():
    for p in sorted(SAMPLES.glob("*.swathe.json")):
        project = load_project(p)
        for r in project.routes:
            c = project.chassis_for(r)
            plan = plan_route(r, c)
            yield p.name, build_schedule(r.name, list(plan.segments), c, dt_s=0.05,
                                         zones=project.floorplan.zones, route=r)


def _zoned_schedule():
    """A slow zone and a stop: the rows carry ``plan_segment`` and rest samples."""
    ch = Chassis(track_m=0.5)
    pts = ((0.0, 0.0), (4.0, 0.0), (8.0, 0.0), (8.0, 4.0))
    route = Route("r", tuple(Waypoint(*p) for p in pts), 0.0, stops=(Stop(1, 2.0),))
    zone = Zone("slow", ((5.0, -1.0), (9.0, -1.0), (9.0, 2.0), (5.0, 2.0)), "ward",
                speed_mps=0.2)
    plan = plan_route(route, ch)
    return build_schedule("r", list(plan.segments), ch, zones=(zone,), route=route)


def test_every_sample_route_writes_the_row_at_a_time_bytes(monkeypatch):
    # Source: the row-at-a-time encoders above (the text users and golden files had).
    monkeypatch.setattr(schedule_text, "CHUNK_ROWS", 37)  # many blocks and their joins
    seen = set()
    for name, s in list(_sample_schedules()) + [("zoned", _zoned_schedule())]:
        assert schedule_json_text(s) == dumps(schedule_to_dict(s)), name
        assert samples_to_csv(s) == _reference_csv(s), name
        seen.add(s.drive.name)
        seen.add("trailers" if s.samples.trailers is not None else "lone")
        seen.add("pieces" if s.pieces is not None else "plain")
    assert {"differential", "ackermann", "mecanum", "swerve", "trailers", "pieces"} <= seen


def test_small_large_and_tie_values_write_as_the_json_module_does(monkeypatch):
    # Numbers below 1e-4 (exponent form), above 1e6 (Python's own rounding), ties at the
    # ninth decimal and -0.0 all meet the same encoder. Source: Python's json and round().
    monkeypatch.setattr(schedule_text, "CHUNK_ROWS", 5)
    c = Chassis(drive="differential", track_m=0.5, wheel_radius_m=0.1)
    s = build_schedule("r", [line((0.0, 0.0, 0.0), 3.0), pivot((3.0, 0.0, 0.0), 1.0)], c,
                       dt_s=0.25)
    n = s.samples.t_s.size
    odd = np.array([1.5e-5, -3.25e-7, 2.5e-10, -2.5e-10, -0.0, 1 / 1024, 0.0009765625,
                    1234567.123456789, -98765432.5, 1e17, 5e-10, 1.0000000005, 7.0])
    x = np.resize(odd, n)
    s.samples.x[:] = x  # a frozen dataclass holds arrays: filled in place
    s.samples.rate_radps["left"][:] = x[::-1]
    assert schedule_json_text(s) == dumps(schedule_to_dict(s))
    assert samples_to_csv(s) == _reference_csv(s)


def test_round9_is_pythons_round_to_nine_decimals():
    # Source: Python's round() (correctly rounded, half to even on the exact binary value);
    # zero is written 0.0 by jsonio.dumps.
    rng = np.random.default_rng(5)
    v = np.concatenate([
        rng.normal(size=20000) * 10.0 ** rng.integers(-12, 7, 20000),
        np.arange(-2000, 2000) / 1024.0,                  # exact ties at the ninth decimal
        np.arange(1, 3000) * 1e-9 + 0.5e-9,               # near ties as typed
        rng.integers(-10**6, 10**6, 5000) / 2.0 ** rng.integers(0, 40, 5000),
        [0.0, -0.0, 5e-324, -5e-324, 999999.9999999995, 1e6, -1e6, 4.5e15, 1e300],
    ])
    want = [(r if r != 0 else 0.0) for r in (round(float(a), 9) for a in v)]
    got = round9(v).tolist()
    assert [repr(g) for g in got] == [repr(w) for w in want]


def test_a_name_like_a_template_mark_falls_back_to_rows():
    # A wheel name that encodes as the fast template's mark cannot be placed: row by row.
    c = Chassis(drive="differential", track_m=0.5, wheel_radius_m=0.1)
    s = build_schedule("r", [line((0.0, 0.0, 0.0), 1.0)], c, dt_s=0.1)
    assert schedule_text.sample_rows_json(s) is not None
    tr = np.zeros((s.samples.t_s.size, 1, 4))
    odd = s.samples.__class__(**{**s.samples.__dict__, "trailers": tr,
                                 "trailer_names": ("\x000\x00",)})
    s2 = s.__class__(**{**s.__dict__, "samples": odd})
    assert schedule_text.sample_rows_json(s2) is None
    assert schedule_json_text(s2) == dumps(schedule_to_dict(s2))


def test_a_non_finite_sample_is_refused_before_any_text():
    # Source: jsonio.dumps refuses NaN / infinity (RFC 8259 has no such numbers).
    c = Chassis(drive="differential", track_m=0.5, wheel_radius_m=0.1)
    s = build_schedule("r", [line((0.0, 0.0, 0.0), 1.0)], c, dt_s=0.1)
    s.samples.y[3] = math.nan
    with pytest.raises(ValueError, match="non-finite"):
        schedule_json_pieces(s)
    with pytest.raises(ValueError, match="non-finite"):
        dumps(schedule_to_dict(s))


def test_pieces_written_one_by_one_make_the_same_file(tmp_path):
    s = _zoned_schedule()
    atomic_write_pieces(tmp_path / "s.json", schedule_json_pieces(s))
    assert (tmp_path / "s.json").read_bytes() == schedule_json_text(s).encode("utf-8")
    assert [p.name for p in tmp_path.iterdir()] == ["s.json"]  # no temporary file left


def test_sample_columns_match_the_meta_columns():
    s = _zoned_schedule()
    cols = sample_columns(s.drive) + trailer_sample_columns(s)
    assert schedule_meta(s)["columns"] == cols
    row = samples_to_csv(s).split("\n")[-2].split(",")
    assert len(row) == len(cols)
