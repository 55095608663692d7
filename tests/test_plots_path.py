"""One plotting path: the picture's plots (``swathe render --plots``, the report) are the
window's plots (app.plots.SchedulePlots) rendered offscreen, so they show the same curves,
limit lines and cap names."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QColor, QPainter

from app import plots, render
from app.document import Document
from app.palette import BLUE, VERMILLION
from kinematics.files.project import load_project

DEMO = Path(__file__).resolve().parent.parent / "sample_floorplans" / "demo.swathe.json"
ROUTE = "corridor-to-sluice"  # stops and turns on the spot: both wheels' rates change sign


def _rgb(spec: str) -> np.ndarray:
    c = QColor(spec)
    return np.array([c.red(), c.green(), c.blue()])


def _array(img) -> np.ndarray:
    from PySide6.QtGui import QImage

    img = img.convertToFormat(QImage.Format.Format_RGB32)
    a = np.frombuffer(img.constBits(), np.uint8).reshape(img.height(), img.bytesPerLine() // 4, 4)
    return a[:, :img.width(), 2::-1].astype(int)


def _picture(doc: Document, size=(1200, 700)):
    img = render.new_image(size)
    p = QPainter(img)
    try:
        drawn = plots.draw_plots(p, QRectF(0, 0, *size), doc.schedule(ROUTE), "time", "title")
    finally:
        p.end()
    return img, drawn


def test_the_picture_plots_what_the_window_plots(qtbot):
    # Source: issue 16 (pictures and the report through one plotting path, not a second
    # painter); the window's panel and the picture hold the same curves and limit lines.
    render.ensure_app()
    doc = Document(load_project(DEMO))
    doc.set_current_route(doc.route_names().index(ROUTE))
    panel = plots.PlotsPanel(doc)
    qtbot.addWidget(panel)
    panel.refresh()
    _img, drawn = _picture(doc)
    assert drawn is not None
    win, pic = panel.graphics.contents(), drawn.contents()
    assert win["limits"] == pic["limits"]
    labels = [t for _p, _y, t in pic["limits"]]
    assert labels == ["max speed 1.00 m/s", "max wheel rate 12.0 rad/s",
                      "max wheel rate -12.0 rad/s"]
    for which in ("speed", "rate", "hitch"):
        a, b = win["curves"][which], pic["curves"][which]
        assert [c[0] for c in a] == [c[0] for c in b]
        for (_n, xa, ya), (_m, xb, yb) in zip(a, b):
            assert np.array_equal(xa, xb) and np.array_equal(ya, yb)
    assert [c[0] for c in pic["curves"]["rate"]] == ["left", "right"]
    # The old names still lead to the one path.
    assert render.draw_plots is plots.draw_plots


def test_limit_lines_are_where_the_limits_are_in_the_picture(qtbot):
    # Source: the chassis limits of the demo (1.0 m/s, 12 rad/s): the picture shows a dashed
    # vermillion line on the rows those values map to, and none half-way below them; the
    # speed curve (blue) reaches the max-speed row.
    render.ensure_app()
    doc = Document(load_project(DEMO))
    img, drawn = _picture(doc)
    arr = _array(drawn.image)
    src_w = drawn.ci.geometry().width()
    k = drawn.image.width() / src_w  # image pixels per layout pixel

    def row_share(plot, y: float, colour: str) -> float:
        vb = plot.getViewBox()
        x0, x1 = vb.viewRange()[0]
        pts = [vb.mapViewToScene(QPointF(x, y)) for x in np.linspace(x0, x1, 200)[5:-5]]
        hits = 0
        for q in pts:
            xi, yi = int(q.x() * k), int(q.y() * k)
            win = arr[max(0, yi - 1):yi + 2, max(0, xi - 1):xi + 2]
            hits += bool((np.abs(win - _rgb(colour)).max(axis=2) <= 45).any())
        return hits / len(pts)

    for plot, y in ((drawn.speed_plot, 1.0), (drawn.rate_plot, 12.0), (drawn.rate_plot, -12.0)):
        assert row_share(plot, y, VERMILLION) > 0.35, (y, row_share(plot, y, VERMILLION))
        assert row_share(plot, y / 2, VERMILLION) < 0.05
    # The speed curve runs along the limit where it cruises (about a third of the route,
    # partly under the dashes).
    assert row_share(drawn.speed_plot, 1.0, BLUE) > 0.1
    # The image drawn into the picture is the one checked above.
    assert (img.width(), img.height()) == (1200, 700)
