"""Traffic between routes: conflict areas and passing in a shared corridor."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from app.cli import main
from kinematics.check.clearance import ObstacleIndex
from kinematics.check.traffic import band_of, traffic
from kinematics.check.train import check_train
from kinematics.files.floorplan import FloorPlan, Obstacle
from kinematics.files.project import Chassis
from kinematics.motion.segments import line

A = Chassis(name="tug", footprint=((-0.3, -0.3), (0.5, -0.3), (0.5, 0.3), (-0.3, 0.3)),
            margin_m=0.05, track_m=0.5)
B = Chassis(name="cart", footprint=((-0.2, -0.25), (0.4, -0.25), (0.4, 0.25), (-0.2, 0.25)),
            margin_m=0.04, track_m=0.4)
# Analytic width: both bands (0.6 m and 0.5 m across) plus each margin on both sides.
NEED = 0.6 + 2 * 0.05 + 0.5 + 2 * 0.04


def _corridor(width: float):
    walls = (Obstacle(((0, -1), (20, -1), (20, 0), (0, 0)), "south wall"),
             Obstacle(((0, width), (20, width), (20, width + 1), (0, width + 1)),
                      "north wall"))
    idx = ObstacleIndex(FloorPlan(obstacles=walls))
    ya, yb = 0.35 + 0.002, width - 0.29 - 0.002
    bands = []
    for name, ch, seg in (("east", A, line((2.0, ya, 0.0), 14.0)),
                          ("west", B, line((17.0, yb, 3.141592653589793), 14.0))):
        chk = check_train([seg], ch, idx, 0.002, name)
        bands.append(band_of(chk, ch))
    return traffic(bands, idx)


@pytest.mark.parametrize("width, verdict", [(NEED, "passing"), (NEED - 0.005, "single_lane")])
def test_passing_at_the_analytic_width(width: float, verdict: str) -> None:
    # Source: common practice (two-way aisles): side by side, a corridor must hold both
    # vehicles' widths and each one's clearance on both its sides; the test corridor is
    # exactly that wide, then 5 mm narrower.
    rep = _corridor(width)
    assert [c["verdict"] for c in rep["corridors"]] == [verdict]
    n = rep["corridors"][0]["narrowest"]
    assert n["need_m"] == pytest.approx(NEED, abs=1e-6)
    assert n["width_m"] == pytest.approx(width, abs=1e-9)
    assert not rep["conflicts"]


def test_conflict_area_where_routes_cross() -> None:
    # Source: shapely: two straight bands crossing at right angles overlap in the rectangle
    # of their widths (0.6 m x 0.5 m here, plus their lengths' ends clear of it).
    idx = ObstacleIndex(FloorPlan())
    a = check_train([line((0.0, 0.0, 0.0), 6.0)], A, idx, 0.002, "east")
    b = check_train([line((3.0, -3.0, 1.5707963267948966), 6.0)], B, idx, 0.002, "north")
    rep = traffic([band_of(a, A), band_of(b, B)], idx)
    (c,) = rep["conflicts"]
    assert c["area_m2"] == pytest.approx(0.6 * 0.5, rel=1e-6)
    assert c["routes"] == ["east", "north"]
    assert [round(d["travel_deg"]) for d in c["directions"]] == [0, 90]
    assert not rep["corridors"]


def test_cli_traffic(capsys) -> None:
    sample = str(Path(__file__).resolve().parent.parent / "sample_floorplans"
                 / "clinic_train.swathe.json")
    assert main(["check", sample, "--traffic", "--json"]) == 0
    rep = json.loads(capsys.readouterr().out)["traffic"]
    assert rep["conflicts"] and rep["corridors"][0]["verdict"] == "passing"
    assert main(["check", sample, "--traffic"]) == 0
    text = capsys.readouterr().out
    assert "Traffic between routes:" in text and text.rstrip().endswith("codes require.")
