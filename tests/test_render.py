"""The off-screen picture: size, swept band along the route, violation markers, PNG bytes.

The picture is checked by its pixels: where the plan says the band is, the image must show
the band's colour; where the check says a violation is, its marker's colour; elsewhere not.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import pytest  # noqa: E402
from PySide6.QtGui import QColor, QImage  # noqa: E402

from app import render  # noqa: E402
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall  # noqa: E402
from kinematics.files.project import Chassis, Project, Route, Waypoint, save_project  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]


def small_project(blocked: bool = True) -> Project:
    """An invented 12 m x 6 m store room: one door, one crate, two routes."""
    walls = (Wall(((0, 0), (12, 0), (12, 6), (0, 6), (0, 0)), 0.2),
             Wall(((6, 0), (6, 2.5)), 0.15), Wall(((6, 3.5), (6, 6)), 0.15))
    obstacles = (Obstacle(((8.0, 1.2), (9.0, 1.2), (9.0, 1.9), (8.0, 1.9)), "crate"),)
    doors = (Door((6.0, 2.5), (6.0, 3.5), "D-1"),)
    fp = FloorPlan("test store room", walls, obstacles, doors)
    chassis = Chassis(name="test tug", drive="differential",
                      footprint=((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3)),
                      margin_m=0.05, wheel_radius_m=0.1, track_m=0.5,
                      max_wheel_rate_radps=12.0, max_lateral_accel_mps2=0.5)
    routes = [Route("through-door", (Waypoint(1.5, 3.0), Waypoint(10.5, 3.0)), 0.0)]
    if blocked:
        routes.append(Route("into-crate", (Waypoint(7.0, 1.5), Waypoint(10.5, 1.5)), 0.0))
    return Project(fp, chassis, tuple(routes))


def band_like(c: QColor) -> bool:
    # The band is translucent sky blue (86, 180, 233) over a near-white page: blue well above
    # red. Neither the page, the walls (grey) nor the path (dark blue lines) look like that
    # at the sampled spots.
    return c.blue() - c.red() > 45 and c.green() > 150


def vermillion_like(c: QColor) -> bool:
    # Okabe-Ito vermilion is (213, 94, 0); Source: Okabe & Ito 2008, Color Universal Design.
    return c.red() > 170 and c.blue() < 70 and 50 < c.green() < 140


def test_image_has_requested_size_and_png_round_trips(qapp, tmp_path):
    out = tmp_path / "pic.png"
    render.render_project_png(small_project(), out, size=(900, 560))
    img = QImage(str(out))
    assert not img.isNull()
    assert (img.width(), img.height()) == (900, 560)
    # Source: PNG specification (ISO/IEC 15948), clause 5.2: the 8-byte signature.
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_swept_band_colour_along_the_route(qapp):
    proj = small_project(blocked=False)
    plans, checks, _errors = render.compute_results(proj)
    assert plans["through-door"] is not None
    img = render.new_image((1600, 1000))
    info = render.render_scene(img, proj, plans, checks)
    to_px = info["to_px"]
    # The route runs along y = 3 with a footprint 0.6 m wide: the band covers y in
    # [2.7, 3.3]. Sample at y = 3.2 (inside, clear of the path line at y = 3) at many x.
    xs = [1.8 + 0.37 * k for k in range(24)]
    inside = [band_like(img.pixelColor(to_px(x, 3.2).toPoint())) for x in xs]
    outside = [band_like(img.pixelColor(to_px(x, 4.2).toPoint())) for x in xs]
    # Footprint outlines cross the band at a few stations; nearly all samples are band.
    assert sum(inside) >= 20, inside
    assert not any(outside), outside


def test_true_scale(qapp):
    proj = small_project(blocked=False)
    plans, checks, _ = render.compute_results(proj)
    img = render.new_image((1600, 1000))
    info = render.render_scene(img, proj, plans, checks)
    a, b, c = info["to_px"](0, 0), info["to_px"](10, 0), info["to_px"](0, 5)
    # One metre is as long across as up (the plan is drawn at one scale).
    assert abs((b.x() - a.x()) / 10 - (a.y() - c.y()) / 5) < 1e-9
    assert (b.x() - a.x()) / 10 == pytest.approx(info["px_per_m"])


def test_violation_markers_where_the_check_says(qapp):
    pytest.importorskip("kinematics.check.clearance")
    proj = small_project(blocked=True)
    plans, checks, errors = render.compute_results(proj)
    assert not errors, errors
    vs = render.violations_of(checks["into-crate"])
    assert vs, "a route through the crate must be reported"
    assert any(v.kind == "collision" for v in vs)
    img = render.new_image((1600, 1000))
    info = render.render_scene(img, proj, plans, checks)
    assert len(info["violations"]) == sum(len(render.violations_of(c)) for c in checks.values())
    for v in vs:
        centre = info["to_px"](v.x, v.y).toPoint()
        assert vermillion_like(img.pixelColor(centre)), (v, img.pixelColor(centre).name())
    # And no vermilion on the clear route's far end, away from every violation.
    far = info["to_px"](2.0, 3.6).toPoint()
    assert not vermillion_like(img.pixelColor(far))


def test_verdict_words(qapp):
    pytest.importorskip("kinematics.check.clearance")
    plans, checks, errors = render.compute_results(small_project(blocked=True))
    text, ok = render.verdict_text(checks, errors)
    n = sum(len(render.violations_of(c)) for c in checks.values())
    assert ok is False and text.startswith(f"{n} VIOLATION")
    plans, checks, errors = render.compute_results(small_project(blocked=False))
    text, ok = render.verdict_text(checks, errors)
    assert ok is True and text.startswith("CLEAR")


def test_plot_png(qapp, tmp_path):
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import build_schedule

    proj = small_project(blocked=False)
    r = proj.routes[0]
    sched = build_schedule(r.name, plan_route(r, proj.chassis).segments, proj.chassis)
    out = tmp_path / "plot.png"
    render.render_plot_png(sched, out, size=(1000, 600))
    img = QImage(str(out))
    assert (img.width(), img.height()) == (1000, 600)
    # The speed curve (Okabe-Ito blue, 0, 114, 178) is drawn somewhere in the upper half.
    blue = sum(1 for x in range(0, 1000, 3) for y in range(0, 300, 3)
               if abs(img.pixelColor(x, y).red() - 0) < 30
               and abs(img.pixelColor(x, y).blue() - 178) < 30
               and abs(img.pixelColor(x, y).green() - 114) < 30)
    assert blue > 20


def test_render_without_a_widget_application(tmp_path):
    """``render_project_png`` makes its own application when none runs (CLI use), and one on
    which widgets can still be created afterwards (a script that renders, then opens a window)."""
    proj = small_project(blocked=False)
    pj = tmp_path / "room.swathe.json"
    save_project(proj, pj, inline_floorplan=True)
    out = tmp_path / "cli.png"
    code = ("import sys; from kinematics.files.project import load_project; "
            "from app.render import render_project_png; "
            f"render_project_png(load_project({str(pj)!r}), {str(out)!r}, size=(640, 400)); "
            "from PySide6.QtWidgets import QLabel; "
            "w = QLabel('after render'); w.show(); print('widget ok')")
    env = dict(os.environ, QT_QPA_PLATFORM="offscreen", PYTHONPATH=str(ROOT))
    res = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True,
                         text=True, timeout=120, cwd=tmp_path)
    assert res.returncode == 0, res.stderr
    assert "widget ok" in res.stdout
    img = QImage(str(out))
    assert (img.width(), img.height()) == (640, 400)
