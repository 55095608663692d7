"""QPainter basics of the picture: the application, colours, pens, fonts, violation markers,
the plan-to-pixel view, the greedy label placer, and the scene's areas, lines and markers.

Shared by :mod:`app.render` (the picture painter), :mod:`app.picture_frame` (title, legend,
scale bar), the report and the panels' small drawings; nothing here lays out a page.
"""


from __future__ import annotations

import math
from typing import Any

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFont,
    QFontMetricsF,
    QGuiApplication,
    QPainter,
    QPainterPath,
    QPen,
    QPolygonF,
)

from .qstyle import marker_path, paint_area, qbrush, qpen
from .scene import (
    INK,
    STYLES,
    VIOLATION_R_PX,
    VIOLATION_SHAPES,
)

#: The swept band, as the scene styles it.
BAND_RGBA = (*(int(STYLES["band"].fill.colour[i:i + 2], 16) for i in (1, 3, 5)),
             STYLES["band"].fill.alpha)
#: How many violation labels (the worst first) are drawn even where they must overlap.
FORCED_VIOLATION_LABELS = 8


def ensure_app() -> QGuiApplication:
    """The running Qt application, or a new one.

    A ``QApplication`` rather than a bare ``QGuiApplication``: painting needs only the latter,
    but a process that renders first and opens widgets later (the tests, a script that renders
    and then shows the window) would abort on the wrong application type.
    """
    app = QGuiApplication.instance()
    if app is None:
        from PySide6.QtWidgets import QApplication

        app = QApplication([])
    return app  # type: ignore[return-value]


def qcolor(spec: str, alpha: int = 255) -> QColor:
    c = QColor(spec)
    c.setAlpha(alpha)
    return c


def pen(colour: str | QColor, width: float = 1.0,
        style: Qt.PenStyle = Qt.PenStyle.SolidLine) -> QPen:
    p = QPen(QColor(colour) if isinstance(colour, str) else colour)
    p.setWidthF(width)
    p.setStyle(style)
    p.setCapStyle(Qt.PenCapStyle.FlatCap)
    p.setJoinStyle(Qt.PenJoinStyle.RoundJoin)
    return p


def font(px: float, bold: bool = False) -> QFont:
    f = QFont("DejaVu Sans")
    f.setPixelSize(max(6, int(round(px))))
    f.setBold(bold)
    return f


def nice_length(target: float) -> float:
    """The 1-2-5 series value at or just below ``target`` (for scale bars and ticks)."""
    if not target > 0:
        return 1.0
    e = math.floor(math.log10(target))
    for m in (5.0, 2.0, 1.0):
        if m * 10 ** e <= target:
            return m * 10 ** e
    return 10 ** e


def draw_marker(p: QPainter, kind: str, centre: QPointF, r: float) -> None:
    """The marker of violation ``kind`` (the scene's shape and style) at ``centre``."""
    st = STYLES["violation"]
    p.setPen(qpen(st.stroke, max(1.0, r / VIOLATION_R_PX)))
    p.setBrush(qbrush(st.fill))
    p.drawPath(marker_path(VIOLATION_SHAPES.get(kind, "circle"), centre, r))


def _paint_polygons(p: QPainter, view: _View, role: str, geoms: list, u: float) -> None:
    # The plan's outlines keep their pixel width at any size, as on the canvas.
    scale = 1.0 if role in ("wall", "obstacle") or role.startswith("zone_") else u
    for g in geoms:
        paint_area(p, STYLES[role], view.geometry_path(g), scale)


def _paint_line(p: QPainter, view: _View, line: Any, u: float) -> None:
    p.setPen(qpen(line.stroke, u))
    p.setBrush(Qt.BrushStyle.NoBrush)
    p.drawPolyline(view.poly(line.xy))


def _paint_marker(p: QPainter, view: _View, m: Any, u: float) -> QRectF:
    st = STYLES[m.role]
    c = view.pt(m.x, m.y)
    r = m.r_px * u
    p.setPen(qpen(m.stroke or st.stroke, u))
    p.setBrush(qbrush(st.fill))
    p.drawPath(marker_path(m.shape, c, r, m.angle_rad))
    box = QRectF(c.x() - r, c.y() - r, 2 * r, 2 * r)
    if m.text:
        p.setPen(QColor(st.ink))
        p.setFont(font(10 * u, bold=True))
        p.drawText(box, Qt.AlignmentFlag.AlignCenter, m.text)
    return box


class _View:
    """Plan metres to image pixels: uniform scale, y up on the plan, y down on the image."""

    def __init__(self, bounds: tuple[float, float, float, float], rect: QRectF) -> None:
        x0, y0, x1, y1 = bounds
        w, h = max(x1 - x0, 1e-6), max(y1 - y0, 1e-6)
        self.scale = min(rect.width() / w, rect.height() / h)  # pixels per metre
        cx, cy = (x0 + x1) / 2.0, (y0 + y1) / 2.0
        self.ox = rect.center().x() - cx * self.scale
        self.oy = rect.center().y() + cy * self.scale

    def pt(self, x: float, y: float) -> QPointF:
        return QPointF(self.ox + x * self.scale, self.oy - y * self.scale)

    def poly(self, xy: np.ndarray) -> QPolygonF:
        xy = np.asarray(xy, dtype=float)
        px = self.ox + xy[:, 0] * self.scale
        py = self.oy - xy[:, 1] * self.scale
        return QPolygonF([QPointF(a, b) for a, b in zip(px, py)])

    def geometry_path(self, geom: Any) -> QPainterPath:
        """A shapely (multi)polygon as a painter path with holes (odd-even fill)."""
        path = QPainterPath()
        path.setFillRule(Qt.FillRule.OddEvenFill)
        for g in getattr(geom, "geoms", [geom]):
            if g is None or g.is_empty:
                continue
            if g.geom_type == "Polygon":
                for ring in [g.exterior, *g.interiors]:
                    path.addPolygon(self.poly(np.asarray(ring.coords)[:, :2]))
                    path.closeSubpath()
            elif g.geom_type in ("MultiPolygon", "GeometryCollection"):
                path.addPath(self.geometry_path(g))
        return path


class _Labels:
    """Greedy label placement: a label goes where it overlaps nothing placed before."""

    def __init__(self, bounds: QRectF) -> None:
        self.taken: list[QRectF] = []
        self.bounds = bounds

    def block(self, r: QRectF) -> None:
        self.taken.append(r)

    def place(self, p: QPainter, anchor: QPointF, text: str, f: QFont, offset: float,
              ink: str = INK, fill: QColor | None = None, border: str | None = None,
              force: bool = False, along: tuple[float, float] | None = None
              ) -> QRectF | None:
        """Place ``text`` near ``anchor``; ``along`` (a unit pixel vector) first tries the
        two spots beyond the anchor in that direction and its opposite (a door's label goes
        past its jambs, off the route that passes through the opening)."""
        fm = QFontMetricsF(f)
        w = fm.horizontalAdvance(text) + 8
        h = fm.height() + 2
        ax, ay = anchor.x(), anchor.y()
        o3 = offset * 0.3
        cands = []
        if along is not None:
            ux, uy = along
            reach = offset + abs(ux) * w / 2 + abs(uy) * h / 2
            for sgn in (1.0, -1.0):
                cands.append((sgn * ux * reach - w / 2, sgn * uy * reach - h / 2))
        cands += [(offset, -h - o3), (offset, o3), (-w - offset, -h - o3), (-w - offset, o3),
                  (-w / 2, -h - offset * 1.6), (-w / 2, offset * 1.6),
                  (offset * 2.5, -h / 2), (-w - offset * 2.5, -h / 2)]
        chosen = None
        for dx, dy in cands:
            r = QRectF(ax + dx, ay + dy, w, h)
            if not self.bounds.contains(r):
                continue
            if any(r.intersects(t) for t in self.taken):
                continue
            chosen = r
            break
        if chosen is None and force:
            # A label that must show: rows further above and below, then further out to the
            # sides, tied to its anchor by the leader, before it may cover another.
            far = []
            for k in range(1, 7):
                step = k * (h + 2)
                far += [(offset, -h - o3 - step), (offset, o3 + step),
                        (-w - offset, -h - o3 - step), (-w - offset, o3 + step),
                        (-w / 2, -h - offset * 1.6 - step), (-w / 2, offset * 1.6 + step)]
            for dx, dy in far:
                r = QRectF(ax + dx, ay + dy, w, h)
                if self.bounds.contains(r) and not any(r.intersects(t) for t in self.taken):
                    chosen = r
                    break
        if chosen is None:
            if not force:
                return None
            inside = [QRectF(ax + dx, ay + dy, w, h) for dx, dy in cands
                      if self.bounds.contains(QRectF(ax + dx, ay + dy, w, h))]
            chosen = inside[0] if inside else QRectF(ax + cands[0][0], ay + cands[0][1], w, h)
        self.taken.append(chosen)
        if border:
            # A leader from the anchor to the label's nearest point ties them together.
            near = QPointF(min(max(ax, chosen.left()), chosen.right()),
                           min(max(ay, chosen.top()), chosen.bottom()))
            dx, dy = near.x() - ax, near.y() - ay
            dist = math.hypot(dx, dy)
            start = offset * 0.7  # from the marker's edge, not across it
            if dist > start:
                p.setPen(pen(border, 1.0))
                p.drawLine(QPointF(ax + dx / dist * start, ay + dy / dist * start), near)
        p.setPen(pen(border, 1.0) if border else Qt.PenStyle.NoPen)
        p.setBrush(QBrush(fill if fill is not None else qcolor("#FFFFFF", 225)))
        p.drawRoundedRect(chosen, 3, 3)
        p.setPen(QColor(ink))
        p.setFont(f)
        p.drawText(chosen, Qt.AlignmentFlag.AlignCenter, text)
        return chosen
