"""The picture's frame around the plan: grid, scale bar and axes cue, title with the verdict
badge, and the legend box (also the window's legend dock).

Laid out by :func:`app.render.render_scene`; drawn with the scene's styles
(:mod:`app.scene`) through :mod:`app.painting`.
"""


from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFont,
    QFontMetricsF,
    QPainter,
    QPolygonF,
)

from kinematics.analysis.results import (
    project_title,
    verdict_text,
)
from kinematics.files.project import drive_word

from .painting import (
    _View,
    draw_marker,
    font,
    nice_length,
    pen,
    qcolor,
)
from .palette import (
    BLACK,
    BLUE,
    VERMILLION,
)
from .qstyle import marker_path, paint_area_sample, pivot_paths, qbrush, qpen
from .scene import (
    FAINT_INK,
    INK,
    JAMB_R_PX,
    PIVOT_WIDTH_PX,
    ROUTE_WIDTH_PX,
    STYLES,
    WAYPOINT_R_PX,
    legend_rows,
)


def _draw_grid(p: QPainter, view: _View, rect: QRectF, u: float) -> None:
    step = nice_length(90 * u / view.scale) if view.scale > 0 else 1.0
    tl_x = (rect.left() - view.ox) / view.scale
    br_x = (rect.right() - view.ox) / view.scale
    top_y = (view.oy - rect.top()) / view.scale
    bot_y = (view.oy - rect.bottom()) / view.scale
    p.setPen(pen("#E6E6E6", 1.0))
    x = math.floor(tl_x / step) * step
    while x <= br_x:
        a = view.pt(x, 0).x()
        p.drawLine(QPointF(a, rect.top()), QPointF(a, rect.bottom()))
        x += step
    y = math.floor(bot_y / step) * step
    while y <= top_y:
        b = view.pt(0, y).y()
        p.drawLine(QPointF(rect.left(), b), QPointF(rect.right(), b))
        y += step


def _draw_scale_and_axes(p: QPainter, view: _View, rect: QRectF, u: float, f: QFont) -> None:
    length = nice_length(rect.width() * 0.18 / view.scale)
    px = length * view.scale
    x0 = rect.left() + 16 * u
    y0 = rect.bottom() - 18 * u
    tw = QFontMetricsF(f).horizontalAdvance(f"{length:g} m")
    box = QRectF(x0 - 8 * u, y0 - 30 * u, px + tw + 24 * u, 42 * u)
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(QBrush(qcolor("#FFFFFF", 220)))
    p.drawRect(box)
    # Alternating black and white halves, as on a drawing's scale bar.
    h = 7 * u
    for k in range(2):
        p.setPen(pen(BLACK, 1.0))
        p.setBrush(QBrush(QColor(BLACK if k == 0 else "#FFFFFF")))
        p.drawRect(QRectF(x0 + k * px / 2, y0 - h, px / 2, h))
    p.setPen(QColor(INK))
    p.setFont(f)
    text = f"{length:g} m"
    p.drawText(QPointF(x0 + px + 6 * u, y0), text)
    p.drawText(QPointF(x0, y0 - h - 5 * u), "0")
    # Axes cue: the plan frame, x to the right and y up.
    ax = QPointF(rect.right() - 62 * u, rect.bottom() - 18 * u)
    L = 38 * u
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(QBrush(qcolor("#FFFFFF", 220)))
    p.drawRect(QRectF(ax.x() - 14 * u, ax.y() - L - 20 * u, L + 36 * u, L + 30 * u))
    p.setPen(pen(INK, 1.6 * u))
    p.setBrush(QBrush(QColor(INK)))
    for dx, dy, name in ((L, 0.0, "x"), (0.0, -L, "y")):
        tip = QPointF(ax.x() + dx, ax.y() + dy)
        p.drawLine(ax, tip)
        ux, uy = (1, 0) if dx else (0, -1)
        a = 5 * u
        p.drawPolygon(QPolygonF([QPointF(tip.x() + ux * a, tip.y() + uy * a),
                                 QPointF(tip.x() - uy * a * 0.7, tip.y() + ux * a * 0.7),
                                 QPointF(tip.x() + uy * a * 0.7, tip.y() - ux * a * 0.7)]))
        p.drawText(QPointF(tip.x() + (8 * u if dx else 7 * u),
                           tip.y() + (4 * u if dx else 6 * u)), name)


def _draw_title(p: QPainter, project: Any, plans: dict, checks: dict, route_name: str | None,
                errors: dict, W: float, h: float, u: float, f_title: QFont,
                f_sub: QFont) -> None:
    m = 14 * u
    verdict, ok = verdict_text(checks, errors)
    names = [route_name] if route_name is not None else list(plans)
    routes = ", ".join(names) if names else "no routes"
    chassis = project.chassis
    # Verdict badge on the right: its words say it; colour and symbol only repeat them.
    f_badge = font(18 * u, bold=True)
    symbol = {True: "\u2713 ", False: "\u2717 ", None: ""}[ok]
    badge_text = symbol + verdict
    fm = QFontMetricsF(f_badge)
    bw = min(fm.horizontalAdvance(badge_text) + 28 * u, W * 0.55)
    badge = QRectF(W - bw - m, m, bw, h - 2 * m)
    fill = {True: BLUE, False: VERMILLION, None: "#707070"}[ok]
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(QBrush(QColor(fill)))
    p.drawRoundedRect(badge, 6 * u, 6 * u)
    p.setPen(QColor("#FFFFFF"))
    p.setFont(f_badge)
    p.drawText(badge, Qt.AlignmentFlag.AlignCenter, fm.elidedText(
        badge_text, Qt.TextElideMode.ElideRight, bw - 16 * u))
    left = QRectF(m, m * 0.6, W - bw - 3 * m, h - m)
    p.setPen(QColor(INK))
    p.setFont(f_title)
    fmt = QFontMetricsF(f_title)
    title = f"{project_title(project)} \u2014 {routes}"
    p.drawText(QRectF(left.left(), left.top(), left.width(), fmt.height()),
               Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter,
               fmt.elidedText(title, Qt.TextElideMode.ElideRight, left.width()))
    sub = (f"plan: {project.floorplan.name or 'unnamed'}   \u00b7   chassis: {chassis.name} "
           f"({drive_word(chassis.drive)}), margin {chassis.margin_m * 1000:.0f} mm")
    errs = [f"{k}: {v}" for k, v in errors.items()]
    if errs:
        sub += "   \u00b7   " + "; ".join(errs)
    fms = QFontMetricsF(f_sub)
    p.setFont(f_sub)
    p.setPen(QColor(FAINT_INK))
    p.drawText(QRectF(left.left(), left.top() + fmt.height() + 2 * u, left.width(),
                      fms.height()), Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter,
               fms.elidedText(sub, Qt.TextElideMode.ElideRight, left.width()))


def draw_legend(p: QPainter, rect: QRectF, names: Sequence[str], index_of: dict, checks: dict,
                u: float, f: QFont, f_small: QFont, zones: Sequence[Any] = ()) -> None:
    """The legend box in ``rect``: the picture's, and the window's legend dock."""
    rows = legend_rows(names, checks, index_of, zones=zones)
    row_h = 25 * u
    head_h = 28 * u
    needed = head_h + row_h * len(rows) + 10 * u
    if needed > rect.height():
        row_h = max(12.0, (rect.height() - head_h - 10 * u) / len(rows))
    box = QRectF(rect.left(), rect.top(), rect.width(), min(rect.height(), needed))
    p.setPen(pen("#B0B0B0", 1.0))
    p.setBrush(QBrush(QColor("#FFFFFF")))
    p.drawRect(box)
    p.setPen(QColor(INK))
    p.setFont(font(13 * u, bold=True))
    p.drawText(QRectF(box.left() + 10 * u, box.top() + 4 * u, box.width(), head_h),
               Qt.AlignmentFlag.AlignVCenter, "Legend")
    fm = QFontMetricsF(f)
    sw = 38 * u
    y = box.top() + head_h + 4 * u
    for kind, text, arg in rows:
        cy = y + row_h / 2
        x0 = box.left() + 10 * u
        sample = QRectF(x0, cy - 7 * u, sw, 14 * u)
        if kind in ("wall", "obstacle"):
            paint_area_sample(p, STYLES[kind], sample)
        elif kind == "zone":
            paint_area_sample(p, STYLES["zone_" + arg], sample)
        elif kind == "door":
            p.setPen(qpen(STYLES["door"].stroke, u))
            p.drawLine(QPointF(x0, cy), QPointF(x0 + sw, cy))
            jst = STYLES["jamb"]
            p.setPen(qpen(jst.stroke, u))
            p.setBrush(qbrush(jst.fill))
            for xx in (x0, x0 + sw):
                p.drawPath(marker_path("circle", QPointF(xx, cy), JAMB_R_PX * u))
        elif kind in ("path", "reverse"):
            style = Qt.PenStyle.SolidLine if kind == "path" else Qt.PenStyle.DashLine
            p.setPen(pen(arg or INK, ROUTE_WIDTH_PX * u, style))
            p.drawLine(QPointF(x0, cy), QPointF(x0 + sw, cy))
        elif kind == "pivot":
            # The plan's symbol (ring and arrow head), a little smaller.
            ring, head = pivot_paths(1.0, 8 * u, QPointF(x0 + sw / 2, cy))
            p.setPen(pen(INK, PIVOT_WIDTH_PX * u))
            p.setBrush(Qt.BrushStyle.NoBrush)
            p.drawPath(ring)
            p.setBrush(QBrush(QColor(INK)))
            p.drawPath(head)
        elif kind == "band":
            p.setPen(Qt.PenStyle.NoPen)
            p.setBrush(qbrush(STYLES["band"].fill))
            p.drawRect(sample)
        elif kind == "outline":
            p.setPen(qpen(STYLES["outline"].stroke, u))
            p.setBrush(Qt.BrushStyle.NoBrush)
            p.drawRect(QRectF(x0 + 6 * u, cy - 6 * u, sw - 12 * u, 12 * u))
        elif kind == "waypoint":
            r = WAYPOINT_R_PX * u
            p.setPen(pen(INK, 2.0 * u))
            p.setBrush(qbrush(STYLES["waypoint"].fill))
            c = QPointF(x0 + sw / 2, cy)
            p.drawEllipse(c, r, r)
            p.setFont(font(9 * u, bold=True))
            p.drawText(QRectF(c.x() - r, c.y() - r, 2 * r, 2 * r),
                       Qt.AlignmentFlag.AlignCenter, "1")
        elif kind == "violation":
            draw_marker(p, arg, QPointF(x0 + sw / 2, cy), 7.5 * u)
        p.setPen(QColor(INK if "(none)" not in text else FAINT_INK))
        p.setFont(f)
        tx = x0 + sw + 10 * u
        p.drawText(QRectF(tx, y, box.right() - tx - 6 * u, row_h),
                   Qt.AlignmentFlag.AlignVCenter | Qt.AlignmentFlag.AlignLeft,
                   fm.elidedText(text, Qt.TextElideMode.ElideRight, box.right() - tx - 6 * u))
        y += row_h
