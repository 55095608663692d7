"""Issue 10 point 5: a sampled schedule with transitions carries, in its CSV ``#`` header and
its JSON ``meta`` object, the chassis geometry, the limits, the units, the route, its length
and duration and the Swathe version, and honours ``--dt`` in both formats."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

from kinematics import __version__
from tests.test_cli import run

SAMPLE = Path(__file__).resolve().parent.parent / "sample_floorplans" / \
    "clinic_smooth.swathe.json"
ROUTE = "ward-to-room-208"


@pytest.mark.parametrize("dt", [0.05, 0.2])
def test_sampled_csv_and_json_carry_meta_and_honour_dt(capsys, dt):
    # Source: the point 5 (rows every --dt, strictly increasing t_s; a header naming
    # geometry, limits, units, route, length, duration, version) and shared/contract.md.
    code, out, err = run(["schedule", SAMPLE, "--route", ROUTE, "--format", "json", "--samples",
                          "--dt", dt], capsys)
    assert code in (0, 1), err
    doc = json.loads(out)
    meta = doc["meta"]
    assert meta["swathe_version"] == __version__ and meta["route"] == ROUTE
    assert meta["dt_s"] == pytest.approx(dt)
    assert meta["length_m"] > 1.0 and meta["duration_s"] > 1.0
    assert {"wheel_radius_m", "track_m", "footprint"} <= set(meta["chassis"])
    assert meta["limits"]["max_wheel_accel_radps2"] is not None  # the limit setting the CCs
    assert meta["units"]["t_s"] == "s" and "rate_radps" in meta["units"]
    t = [s["t_s"] for s in doc["samples"]]
    steps = [b - a for a, b in zip(t, t[1:])]
    # Rows every dt, plus joints and ramp ends in between: never a step above dt, most at it.
    assert all(0.0 < h <= dt * (1.0 + 1e-9) for h in steps)
    assert sum(abs(h - dt) < 1e-9 for h in steps) > 0.5 * len(steps)
    assert t[-1] == pytest.approx(meta["duration_s"], abs=1e-9)
    assert len(t) == meta["samples"]

    code, out, err = run(["schedule", SAMPLE, "--route", ROUTE, "--format", "csv", "--samples",
                          "--dt", dt], capsys)
    assert code in (0, 1), err
    head = [ln[2:] for ln in out.splitlines() if ln.startswith("# ")]
    kv = dict(ln.split(": ", 1) for ln in head if ": " in ln)
    assert kv["swathe_version"] == __version__ and kv["route"] == ROUTE
    assert float(kv["dt_s"]) == pytest.approx(dt)
    assert float(kv["length_m"]) == pytest.approx(meta["length_m"])
    assert float(kv["duration_s"]) == pytest.approx(meta["duration_s"])
    assert json.loads(kv["chassis"]) == meta["chassis"]
    assert json.loads(kv["limits"]) == meta["limits"]
    assert "t_s s" in kv["units"]
    rows = list(csv.DictReader(io.StringIO("\n".join(
        ln for ln in out.splitlines() if not ln.startswith("#")))))
    assert list(rows[0]) == meta["columns"] == kv["columns"].split(", ")
    assert all(c.endswith(("_s", "_m", "_deg", "_mps", "_dps", "_per_m", "_radps")) or
               c in ("segment", "x", "y") for c in meta["columns"])
    tc = [float(r["t_s"]) for r in rows]
    assert tc == pytest.approx(t, rel=1e-8)  # CSV keeps 9 significant digits
