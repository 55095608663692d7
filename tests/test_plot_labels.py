"""The plots' names stay readable: a segment cap's name never crosses a limit line, the legend
or another name, and a limit's name never covers the legend, in the window's plots and in the
picture's (the same app.plots.SchedulePlots), on the towed-train sample whose lateral-accel cap
sits just under the speed limit."""

from __future__ import annotations

from pathlib import Path

import pytest
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPainter
from PySide6.QtWidgets import QApplication

from app import plots, render
from app.document import Document
from kinematics.files.project import load_project

TRAIN = Path(__file__).resolve().parent.parent / "sample_floorplans" / "clinic_train.swathe.json"
ROUTE = "linen-to-ward-b"  # lateral-accel cap at 0.69 m/s under the 0.80 m/s limit


def _problems(g: plots.SchedulePlots) -> list[str]:
    """What overlaps in ``g`` (empty when every shown name is clear)."""
    out = []
    svb = g.speed_plot.getViewBox()
    legend = g.legend_rect(svb)
    assert legend is not None and legend.width() > 20
    limit_rects = [(ln, ln.label.sceneBoundingRect()) for ln in g.limit_lines]
    caps = [t for t in g.cap_items if t.isVisible()]
    for t in caps:
        r = t.sceneBoundingRect()
        if r.intersects(legend):
            out.append(f"cap {t.textItem.toPlainText()!r} covers the speed legend")
        for ln, lr in limit_rects:
            if ln.getViewBox() is not svb:
                continue
            y = svb.mapViewToScene(QPointF(0.0, float(ln.value()))).y()
            if r.top() < y < r.bottom():
                out.append(f"cap {t.textItem.toPlainText()!r} crosses {ln.label.format!r}")
            if r.intersects(lr):
                out.append(f"cap {t.textItem.toPlainText()!r} covers {ln.label.format!r}")
    for i, a in enumerate(caps):
        for b in caps[i + 1:]:
            if a.sceneBoundingRect().intersects(b.sceneBoundingRect()):
                out.append("two cap names overlap")
    for ln, lr in limit_rects:
        lg = g.legend_rect(ln.getViewBox())
        if lg is not None and lr.intersects(lg):
            out.append(f"{ln.label.format!r} covers its plot's legend")
    return out


@pytest.mark.parametrize("size", [(1352, 205), (760, 520)])
def test_window_plots_keep_names_apart(qtbot, size):
    # Source: common practice (chart labelling: a label never crosses a line or another
    # label; one that cannot be placed is moved or left out); issue 16's known flaw: the
    # "lateral-accel cap" name crossed the speed legend on this sample.
    doc = Document(load_project(TRAIN))
    doc.set_current_route(doc.route_names().index(ROUTE))
    panel = plots.PlotsPanel(doc)
    qtbot.addWidget(panel)
    panel.resize(*size)
    panel.show()
    qtbot.waitExposed(panel)
    qtbot.wait(150)
    g = panel.graphics
    assert g.side_by_side == (size[0] > 2.6 * size[1])
    assert "lateral-accel cap" in g.cap_labels
    assert _problems(g) == []


@pytest.mark.parametrize("size", [(1600, 700), (1200, 700)])
def test_picture_plots_keep_names_apart(qtbot, size):
    # Source: as above; the picture (swathe render --plots, the report) draws the same plots.
    render.ensure_app()
    doc = Document(load_project(TRAIN))
    img = render.new_image(size)
    p = QPainter(img)
    try:
        g = plots.draw_plots(p, QRectF(0, 0, *size), doc.schedule(ROUTE), "time", "title",
                             hitch_limits=plots.hitch_limits_of(doc.vehicle(ROUTE)))
    finally:
        p.end()
    QApplication.processEvents()
    assert g is not None
    shown = [t.textItem.toPlainText() for t in g.cap_items if t.isVisible()]
    assert shown == ["lateral-accel cap"]  # room for it on a 700-pixel picture
    assert _problems(g) == []
