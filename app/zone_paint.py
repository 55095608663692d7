"""How zones look: one colour, hatching and outline per kind, shared by the picture, the report
and the canvas, and the legend rows for them.

Every kind differs by its hatching and outline style as well as its colour (palette.py: never
by colour alone): keep-out cross-hatched vermillion with a solid outline, slow horizontal
orange lines dashed, margin diagonal sky-blue dotted, one-way vertical green dash-dotted with
arrows along its direction.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from typing import Any

from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QBrush, QColor, QPainter, QPainterPath, QPen, QPolygonF

from .palette import GREEN, ORANGE, SKY, VERMILLION

ZONE_STYLE = {
    "keep_out": (VERMILLION, Qt.BrushStyle.DiagCrossPattern, Qt.PenStyle.SolidLine),
    "slow": (ORANGE, Qt.BrushStyle.HorPattern, Qt.PenStyle.DashLine),
    "margin": (SKY, Qt.BrushStyle.FDiagPattern, Qt.PenStyle.DotLine),
    "one_way": (GREEN, Qt.BrushStyle.VerPattern, Qt.PenStyle.DashDotLine),
}
ZONE_WORDS = {"keep_out": "keep-out zone", "slow": "slow zone (cap)",
              "margin": "margin zone (margin)", "one_way": "one-way zone (arrows)"}


def zone_caption(zone: Any) -> str:
    """``ward: 0.4 m/s``: the label and the zone's number, for the plan."""
    name = zone.label or zone.kind.replace("_", "-")
    if zone.kind == "slow":
        return f"{name}: {zone.speed_mps:g} m/s"
    if zone.kind == "margin":
        return f"{name}: {zone.margin_m * 1000:.0f} mm"
    if zone.kind == "one_way":
        return f"{name}: one way"
    return name


def zone_brush(kind: str, alpha: int = 40) -> tuple[QBrush, QBrush, QPen]:
    """A faint fill, the hatching and the outline pen of a zone kind."""
    colour, pattern, style = ZONE_STYLE[kind]
    fill = QColor(colour)
    fill.setAlpha(alpha)
    hatch = QColor(colour)
    hatch.setAlpha(200)
    pen = QPen(QColor(colour), 1.6, style)
    pen.setCosmetic(True)
    return QBrush(fill), QBrush(hatch, pattern), pen


def draw_zone_sample(p: QPainter, kind: str, rect: Any) -> None:
    """The legend sample of a zone kind in ``rect``."""
    fill, hatch, pen = zone_brush(kind)
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(fill)
    p.drawRect(rect)
    p.setBrush(hatch)
    p.drawRect(rect)
    p.setPen(pen)
    p.setBrush(Qt.BrushStyle.NoBrush)
    p.drawRect(rect)


def draw_zones(p: QPainter, zones: Sequence[Any], to_px: Callable[[float, float], QPointF],
               px_per_m: float, u: float = 1.0) -> None:
    """Paint every zone: fill, hatching, outline, one-way arrows (pixel coordinates)."""
    for z in zones:
        if z.kind not in ZONE_STYLE or len(z.points) < 3:
            continue
        poly = QPolygonF([to_px(x, y) for x, y in z.points])
        path = QPainterPath()
        path.addPolygon(poly)
        path.closeSubpath()
        fill, hatch, pen = zone_brush(z.kind)
        p.setPen(Qt.PenStyle.NoPen)
        p.setBrush(fill)
        p.drawPath(path)
        p.setBrush(hatch)
        p.drawPath(path)
        p.setPen(pen)
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawPath(path)
        if z.kind == "one_way" and z.direction_deg is not None:
            _arrows(p, z, to_px, px_per_m, u)


def _arrows(p: QPainter, z: Any, to_px: Callable[[float, float], QPointF], px_per_m: float,
            u: float) -> None:
    from shapely.geometry import Point, Polygon

    poly = Polygon(z.points)
    if not poly.is_valid or poly.area <= 0:
        return
    a = math.radians(z.direction_deg)
    ux, uy = math.cos(a), math.sin(a)
    step = max(40 * u / max(px_per_m, 1e-9), 0.5)
    x0, y0, x1, y1 = poly.bounds
    half = 0.3 * step
    p.setPen(QPen(QColor(GREEN), max(1.2, 1.8 * u)))
    x = x0 + step / 2
    while x < x1:
        y = y0 + step / 2
        while y < y1:
            if poly.contains(Point(x, y)):
                tail = to_px(x - ux * half, y - uy * half)
                head = to_px(x + ux * half, y + uy * half)
                p.drawLine(tail, head)
                dx, dy = head.x() - tail.x(), head.y() - tail.y()
                n = math.hypot(dx, dy) or 1.0
                ex, ey = dx / n, dy / n
                s = 5 * u
                for sign in (1, -1):
                    p.drawLine(head, QPointF(head.x() - s * ex + sign * s * 0.6 * ey,
                                             head.y() - s * ey - sign * s * 0.6 * ex))
            y += step
        x += step
