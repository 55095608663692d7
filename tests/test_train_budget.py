"""The trailer integration's work budget (issue 17): a train towed along kilometres is
refused before integrating, naming file, route and trailers; no plan integrates past the
budget. Invented geometry: the sample clinic tug and carts on a route moved 10 km away."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from app.cli import main
from kinematics.motion.segments import arc, holonomic_line, line, pivot
from kinematics.motion.trailers import (
    TRAIN_STEP_BUDGET,
    Hitch,
    TrainBudgetError,
    TugMotion,
    fewest_steps,
    integrate_segment,
    trace_train,
)

SAMPLES = Path(__file__).resolve().parent.parent / "sample_floorplans"
HITCHES = (Hitch(-0.35, 0.75), Hitch(-0.55, 0.7))


def _far_train(tmp: Path, far_m: float) -> Path:
    d = json.loads((SAMPLES / "clinic_train.swathe.json").read_text())
    d["floorplan"] = str(SAMPLES / "clinic.floor.json")
    r = d["routes"][0]
    r["waypoints"] = [[4.2, 9.6, 0], [4.2 + far_m, 9.6], [4.2 + far_m, 14.0]]
    d["routes"] = [r]
    p = tmp / "far.swathe.json"
    p.write_text(json.dumps(d))
    return p


def _one_line(code: int, err: str, *names: str) -> None:
    assert code == 2, err
    lines = err.splitlines()
    assert len(lines) == 1, err
    for n in names:
        assert n in lines[0], (n, lines[0])


def test_a_train_towed_ten_km_is_refused_before_integrating(tmp_path, capsys):
    # 2 carts x ~10 km / 0.3 m per step: ~1.2e5 steps x trailers, past the 6e4 budget. The
    # refusal comes from the estimate, before any step (no timer: the work is the estimate).
    p = _far_train(tmp_path, 10000.0)
    code = main(["check", str(p)])
    _one_line(code, capsys.readouterr().err, str(p), "route 'linen-to-ward-b'", "trailers",
              "2 trailers", "split the route")
    code = main(["schedule", str(p), "--route", "linen-to-ward-b"])
    out = capsys.readouterr()
    _one_line(code, out.err, str(p), "routes[0]", "trailers", "integration steps")
    assert out.out == ""


def test_a_train_within_the_budget_is_checked(tmp_path, capsys):
    p = _far_train(tmp_path, 100.0)
    code = main(["check", str(p)])
    out = capsys.readouterr()
    assert code in (0, 1), out.err
    assert "trailer 2 (meal cart)" in out.out


@pytest.mark.parametrize("seg", [
    line((0, 0, 0), 30.0), line((0, 0, 0), 12.0, -1), arc((0, 0, 0), 2.0, 2.5),
    pivot((0, 0, 0), 3.0), holonomic_line((0, 0, 0), (8.0, 3.0), 1.0),
])
def test_the_estimate_is_a_lower_bound_of_the_steps_taken(seg):
    # Source: integrate_segment's longest step, MAX_STEP_TRAVEL_M of the fastest hitch
    # point's travel (kinematics.motion.trailers): no integration takes fewer steps.
    m = TugMotion.of(seg)
    tr, _err, _growth = integrate_segment(m, HITCHES, [seg.start[2]] * 2)
    assert fewest_steps(m, HITCHES) <= len(tr.p) - 1 <= tr.tried


def test_integration_stops_at_its_step_allowance():
    m = TugMotion.of(line((0, 0, 0), 30.0))
    with pytest.raises(TrainBudgetError):
        integrate_segment(m, HITCHES, [0.0, 0.0], max_steps=10)


def test_trace_train_refuses_past_the_budget_in_the_library():
    far = TRAIN_STEP_BUDGET * 0.3  # one step per 0.3 m of hitch travel: twice the budget
    with pytest.raises(TrainBudgetError) as info:
        trace_train([line((0, 0, 0), far)], HITCHES)
    assert info.value.steps > TRAIN_STEP_BUDGET
    assert info.value.message.startswith("towing 2 trailers")
    assert math.isfinite(info.value.steps)
