"""Trains and fleets through the command line: check, plan and schedule of the sample."""

from __future__ import annotations

import json
import math
import os
from pathlib import Path

import numpy as np

from app.cli import main

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

SAMPLE = str(Path(__file__).resolve().parent.parent / "sample_floorplans"
             / "clinic_train.swathe.json")


def _run(capsys, *argv) -> tuple[int, str]:
    code = main(list(argv))
    return code, capsys.readouterr().out


def test_check_lists_bodies_and_vehicles(capsys) -> None:
    code, out = _run(capsys, "check", SAMPLE, "--json")
    assert code == 0
    routes = {r["name"]: r for r in json.loads(out)["routes"]}
    train = routes["linen-to-ward-b"]
    assert train["chassis"] == "ward tug"
    assert [b["body"] for b in train["bodies"]] == ["tug (ward tug)", "trailer 1 (linen cart)",
                                                    "trailer 2 (meal cart)"]
    # Common practice (off-tracking): the carts cut inside the turn, so the train's least
    # clearance is a cart's, below the tug's own.
    assert train["min_clearance_m"] == min(b["min_clearance_m"] for b in train["bodies"])
    assert train["min_clearance_m"] < train["bodies"][0]["min_clearance_m"]
    assert routes["supply-return"]["chassis"] == "hospital delivery cart"
    assert "bodies" not in routes["supply-return"]
    code, text = _run(capsys, "check", SAMPLE)
    assert "(vehicle 'ward tug')" in text and "trailer 2 (meal cart): least clearance" in text


def test_plan_names_vehicle(capsys) -> None:
    code, out = _run(capsys, "plan", SAMPLE, "--json")
    assert code == 0
    assert [r["chassis"] for r in json.loads(out)["routes"]] == ["ward tug",
                                                                 "hospital delivery cart"]


def test_schedule_samples_carry_trailers(capsys) -> None:
    code, out = _run(capsys, "schedule", SAMPLE, "--route", "linen-to-ward-b")
    assert code == 0
    samples = json.loads(out)["samples"]
    assert all([t["name"] for t in s["trailers"]] == ["linen cart", "meal cart"]
               for s in samples)
    first = samples[0]
    # Starting in line with the tug: each axle midpoint lies on the tug's axis, hitch offset
    # plus drawbar behind the body ahead (geometry of the hitch, common practice).
    h0 = math.radians(first["heading_deg"])
    t1 = first["trailers"][0]
    assert math.hypot(t1["x"] - (first["x"] - 1.10 * math.cos(h0)),
                      t1["y"] - (first["y"] - 1.10 * math.sin(h0))) < 1e-9
    for s in samples:
        ahead = s["heading_deg"]
        for t in s["trailers"]:
            d = math.remainder(ahead - t["heading_deg"], 360.0)
            assert abs(d - t["hitch_deg"]) < 1e-6
            ahead = t["heading_deg"]
    assert max(abs(t["hitch_deg"]) for s in samples for t in s["trailers"]) > 20.0
    code, out = _run(capsys, "schedule", SAMPLE, "--route", "supply-return")
    assert "trailers" not in json.loads(out)["samples"][0]


def test_sampled_csv_has_trailer_columns(capsys) -> None:
    code, out = _run(capsys, "schedule", SAMPLE, "--route", "linen-to-ward-b", "--format",
                     "csv", "--samples")
    assert code == 0
    rows = [ln for ln in out.splitlines() if not ln.startswith("#")]
    head = rows[0].split(",")
    cols = [f"trailer{j}_{k}" for j in (1, 2) for k in ("x", "y", "heading_deg", "hitch_deg")]
    assert head[-8:] == cols
    _, js = _run(capsys, "schedule", SAMPLE, "--route", "linen-to-ward-b")
    samples = json.loads(js)["samples"]
    assert len(rows) - 1 == len(samples)
    for row, s in zip(rows[1:], samples):
        vals = [float(v) for v in row.split(",")[-8:]]
        want = [t[k] for t in s["trailers"] for k in ("x", "y", "heading_deg", "hitch_deg")]
        assert max(abs(a - b) for a, b in zip(vals, want)) < 1e-6


def test_window_plots_hitch_angles_of_a_train(qtbot) -> None:
    # Source: the schedule's own hitch angles (tested against the geometry above) drawn
    # unchanged, with each trailer's jackknife limit.
    from app.document import Document
    from app.plots import PlotsPanel
    from kinematics.files.project import load_project
    from kinematics.timing.schedule import schedule_series

    doc = Document(load_project(SAMPLE))
    panel = PlotsPanel(doc)
    qtbot.addWidget(panel)
    doc.set_current_route(0)
    panel.refresh()
    assert panel.hitch_plot.isVisible()
    curves = {c.name(): c for c in panel.hitch_plot.listDataItems()}
    assert sorted(curves) == ["linen cart", "meal cart"]
    s = schedule_series(doc.schedule("linen-to-ward-b"))
    assert np.allclose(curves["meal cart"].getData()[1], s["hitch_deg"]["meal cart"])
    texts = [ln.label.format for ln in panel.limit_lines]
    assert any("jackknife limit 75 deg" in t for t in texts)
    doc.set_current_route(1)  # the lone delivery cart: no hitch plot
    panel.refresh()
    assert not panel.hitch_plot.listDataItems() and not panel.hitch_plot.isVisible()


def test_side_by_side_plots_give_the_hitch_angles_a_column_of_their_own(qtbot) -> None:
    # Source: project rule (plots people read): in a wide, short dock a train's hitch plot
    # stood in a row under the speed plot and squeezed both to a few pixels of data; side by
    # side it takes a third column as tall as the others, stacked it is a third row.
    from app.document import Document
    from app.plots import PlotsPanel
    from kinematics.files.project import load_project

    doc = Document(load_project(SAMPLE))
    panel = PlotsPanel(doc)
    qtbot.addWidget(panel)
    panel.resize(1800, 220)
    panel.show()
    doc.set_current_route(0)
    panel.refresh()
    qtbot.waitUntil(lambda: panel.side_by_side)
    panel.graphics.ci.layout.activate()
    sp, hp = panel.speed_plot.geometry(), panel.hitch_plot.geometry()
    assert panel.hitch_plot.isVisible()
    assert abs(hp.height() - sp.height()) < 2 and abs(hp.top() - sp.top()) < 2
    assert hp.left() > panel.rate_plot.geometry().right() - 1
    panel.resize(700, 700)
    qtbot.waitUntil(lambda: not panel.side_by_side)
    panel.graphics.ci.layout.activate()
    assert panel.hitch_plot.geometry().top() >= panel.rate_plot.geometry().bottom() - 1
