"""Qt pens, brushes and marker paths for the scene's styles (:mod:`app.scene`).

Both painters (the canvas and the picture) turn the scene's plain styles into Qt objects here,
so a style means the same pen and brush in each.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QColor, QPainter, QPainterPath, QPen, QPolygonF

from .scene import Fill, Stroke, Style, marker_polygon

#: A message that asks for attention (a refused value, results out of date), in widgets.
MESSAGE_STYLE = ("QLabel { color: #5A1E00; background: #FFF1E0; border: 1px solid #D55E00; "
                 "border-radius: 3px; padding: 4px; font-weight: bold; }")

DASHES = {"solid": Qt.PenStyle.SolidLine, "dash": Qt.PenStyle.DashLine,
          "dot": Qt.PenStyle.DotLine, "dashdot": Qt.PenStyle.DashDotLine}
PATTERNS = {"bdiag": Qt.BrushStyle.BDiagPattern, "fdiag": Qt.BrushStyle.FDiagPattern,
            "cross": Qt.BrushStyle.DiagCrossPattern, "hor": Qt.BrushStyle.HorPattern,
            "ver": Qt.BrushStyle.VerPattern}


def qcolor(spec: str, alpha: int = 255) -> QColor:
    c = QColor(spec)
    c.setAlpha(alpha)
    return c


def qpen(stroke: Stroke | None, scale: float = 1.0, cosmetic: bool = False) -> QPen:
    """The pen of ``stroke``, its width times ``scale`` (a cosmetic pen keeps screen pixels)."""
    if stroke is None:
        return QPen(Qt.PenStyle.NoPen)
    p = QPen(qcolor(stroke.colour, stroke.alpha))
    p.setWidthF(stroke.width_px * scale)
    p.setStyle(DASHES.get(stroke.dash, Qt.PenStyle.SolidLine))
    p.setCapStyle(Qt.PenCapStyle.FlatCap)
    p.setJoinStyle(Qt.PenJoinStyle.RoundJoin)
    p.setCosmetic(cosmetic)
    return p


def qbrush(fill: Fill | None) -> QBrush:
    """The solid brush of ``fill`` (no brush for ``None``)."""
    if fill is None:
        return QBrush(Qt.BrushStyle.NoBrush)
    return QBrush(qcolor(fill.colour, fill.alpha))


def hatch_brush(fill: Fill | None) -> QBrush | None:
    """The diagonal hatch drawn over ``fill``, or ``None`` where it has none."""
    if fill is None or not fill.hatch:
        return None
    return QBrush(qcolor(fill.hatch_colour, fill.hatch_alpha),
                  PATTERNS.get(fill.pattern, Qt.BrushStyle.BDiagPattern))


def marker_path(shape: str, centre: QPointF, r: float, angle_rad: float = 0.0
                ) -> QPainterPath:
    """A closed marker outline of radius ``r`` pixels around ``centre`` (screen axes), turned
    ``angle_rad`` counter-clockwise as seen on the plan (screen y runs down)."""
    path = QPainterPath()
    poly = marker_polygon(shape)
    x, y = centre.x(), centre.y()
    if poly is None:
        path.addEllipse(QRectF(x - r, y - r, 2 * r, 2 * r))
    else:
        if angle_rad:
            c, s = math.cos(angle_rad), math.sin(angle_rad)
            poly = [(a * c + b * s, -a * s + b * c) for a, b in poly.tolist()]
        else:
            poly = poly.tolist()
        path.addPolygon(QPolygonF([QPointF(x + r * a, y + r * b) for a, b in poly]))
        path.closeSubpath()
    return path


def pivot_paths(turn: float, r: float, centre: QPointF | None = None
                ) -> tuple[QPainterPath, QPainterPath]:
    """The "turn on the spot" symbol of radius ``r`` pixels (screen axes): ``(ring, head)``,
    an open ring of 300 degrees (stroked, not filled) and the arrow head at its end (filled),
    turning the way the body turns (``turn`` > 0: counter-clockwise as seen on the plan).
    The picture, its legend and the canvas draw this one symbol (``scene.PIVOT_R_PX``)."""
    cx, cy = (centre.x(), centre.y()) if centre is not None else (0.0, 0.0)
    span = 300.0 if turn > 0 else -300.0
    rect = QRectF(cx - r, cy - r, 2 * r, 2 * r)
    ring = QPainterPath()
    ring.arcMoveTo(rect, 30.0)
    ring.arcTo(rect, 30.0, span)
    end = math.radians(30.0 + span)
    tip = (cx + r * math.cos(end), cy - r * math.sin(end))
    tang = end + (math.pi / 2 if span > 0 else -math.pi / 2)
    tx, ty = math.cos(tang), -math.sin(tang)
    h = 5.0 * r / 11.0
    head = QPainterPath()
    head.addPolygon(QPolygonF([
        QPointF(tip[0] + tx * h, tip[1] + ty * h),
        QPointF(tip[0] - tx * h * 0.2 - ty * h, tip[1] - ty * h * 0.2 + tx * h),
        QPointF(tip[0] - tx * h * 0.2 + ty * h, tip[1] - ty * h * 0.2 - tx * h)]))
    head.closeSubpath()
    return ring, head


def paint_area(p: QPainter, style: Style, path: QPainterPath, scale: float = 1.0) -> None:
    """An area in ``style``: its fill, the hatch over it, then its outline (pen width times
    ``scale``); used for the plan's areas and their legend samples alike."""
    p.setPen(Qt.PenStyle.NoPen)
    if style.fill is not None:
        p.setBrush(qbrush(style.fill))
        p.drawPath(path)
        hatch = hatch_brush(style.fill)
        if hatch is not None:
            p.setBrush(hatch)
            p.drawPath(path)
    if style.stroke is not None:
        p.setPen(qpen(style.stroke, scale))
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawPath(path)


def paint_area_sample(p: QPainter, style: Style, rect: QRectF, scale: float = 1.0) -> None:
    """A legend sample of an area style (wall, obstacle, zone kind) filling ``rect``."""
    path = QPainterPath()
    path.addRect(rect)
    paint_area(p, style, path, scale)
