"""The picture without a window: floor plan, routes, swept area and violations on a QImage.

The picture painter of the plan scene (:mod:`app.scene`): it paints the scene's layers with
the scene's styles, as the canvas does, and adds what only a picture has (title and verdict
badge, legend, scale bar, axes cue, caution).

Over 600 lines because it still holds the picture's own plot painter (:func:`draw_plots`, for
``render --plots`` and the report) beside the window's pyqtgraph plots (:mod:`app.plots`);
moving the picture onto pyqtgraph's path is the next step and would shrink it by a third.

Everything is drawn with QPainter onto a QImage (or any paint device the caller's painter is
on), so it works under ``QT_QPA_PLATFORM=offscreen`` with only a ``QGuiApplication``: the
``swathe render`` command, the report and the tests use it. The plan is drawn at true scale
(one metre as long across as up), with a scale bar, an axes cue, a legend, a title carrying
the verdict, and the safety caution in small print.

Colours come from the Okabe-Ito palette (Okabe & Ito 2008, "Color Universal Design"), which
stays distinguishable under the common colour-vision deficiencies; nothing is told by colour
alone: reverse travel is dashed, each violation kind has its own marker shape and a label
with its amount, and the verdict is spelled out.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QPointF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFont,
    QFontMetricsF,
    QGuiApplication,
    QImage,
    QPainter,
    QPainterPath,
    QPen,
    QPolygonF,
)

from kinematics.analysis.report_text import CAUTION
from kinematics.analysis.results import (  # noqa: F401 - re-exported for older callers
    VIOLATION_WORDS,
    RouteResult,
    compute_results,
    door_clearances,
    door_results,
    project_title,
    vehicle_of,
    verdict_text,
    violation_label,
    violations_of,
)
from kinematics.files.project import drive_word

from .palette import (  # noqa: F401 - re-exported for the report and tests
    BLACK,
    BLUE,
    GREEN,
    OBSTACLE_FILL,
    ORANGE,
    PURPLE,
    SKY,
    VERMILLION,
    WALL_FILL,
    YELLOW,
)
from .qstyle import marker_path, paint_area, paint_area_sample, qbrush, qpen
from .scene import (  # noqa: F401 - the geometry helpers are re-exported for older callers
    FAINT_INK,
    INK,
    JAMB_R_PX,
    ROUTE_COLOURS,
    ROUTE_WIDTH_PX,
    STYLES,
    VIOLATION_R_PX,
    VIOLATION_SHAPES,
    WAYPOINT_R_PX,
    ZONE_ARROW_STEP_PX,
    floorplan_layer,
    legend_rows,
    outline_poses,
    place_footprint,
    route_layer,
    sample_path,
    swept_geometry,
    violation_layer,
    zone_layer,
    zone_legend_rows,
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


# -- the scene ------------------------------------------------------------------------------
def _scene_bounds(project: Any, plans: dict, bands: dict, focus: str | None = None
                  ) -> tuple[float, float, float, float]:
    """What the picture must show: the whole plan, or around one route (``focus``)."""
    xs: list[float] = []
    ys: list[float] = []
    fp = project.floorplan
    b = fp.bounds()
    has_plan = b != (0.0, 0.0, 0.0, 0.0) or bool(fp.walls or fp.obstacles or fp.doors)
    if focus is not None:
        fx = [w.x for r in project.routes if r.name == focus for w in r.waypoints]
        fy = [w.y for r in project.routes if r.name == focus for w in r.waypoints]
        g = bands.get(focus)
        if g is not None and not g.is_empty:
            fx += [g.bounds[0], g.bounds[2]]
            fy += [g.bounds[1], g.bounds[3]]
        if fx:
            # The route and a few metres of its surroundings, within the plan.
            x0, x1, y0, y1 = min(fx), max(fx), min(fy), max(fy)
            pad = max(2.5, 0.3 * max(x1 - x0, y1 - y0))
            box = [x0 - pad, y0 - pad, x1 + pad, y1 + pad]
            if has_plan:
                box = [max(box[0], b[0]), max(box[1], b[1]), min(box[2], b[2]),
                       min(box[3], b[3])]
                box = [min(box[0], x0), min(box[1], y0), max(box[2], x1), max(box[3], y1)]
            m = 0.03 * max(box[2] - box[0], box[3] - box[1], 1.0)
            return (box[0] - m, box[1] - m, box[2] + m, box[3] + m)
    if has_plan:
        xs += [b[0], b[2]]
        ys += [b[1], b[3]]
    for r in project.routes:
        if r.name in plans or not plans:
            xs += [w.x for w in r.waypoints]
            ys += [w.y for w in r.waypoints]
    for g in bands.values():
        if g is not None and not g.is_empty:
            gb = g.bounds
            xs += [gb[0], gb[2]]
            ys += [gb[1], gb[3]]
    if not xs:
        return (-1.0, -1.0, 1.0, 1.0)
    x0, x1, y0, y1 = min(xs), max(xs), min(ys), max(ys)
    pad = 0.04 * max(x1 - x0, y1 - y0, 1.0)
    return (x0 - pad, y0 - pad, x1 + pad, y1 + pad)


def render_scene(target: QPainter | QImage, project: Any, plans: dict, checks: dict,
                 route_name: str | None = None, size: tuple[int, int] = (1600, 1000),
                 errors: dict | None = None, footer: bool = True, title: bool = True,
                 scale: float | None = None) -> dict:
    """Draw the plan, routes, swept areas, violations, legend and title.

    Parameters
    ----------
    target : QPainter or QImage
        A painter already on a device (drawn into ``(0, 0, *size)`` of its current
        coordinates, so translate it to place the picture) or an image (drawn over all of it;
        ``size`` is then the image's size).
    project : Project
    plans, checks : dict
        By route name, as :func:`compute_results` returns them; routes not in ``plans`` are
        not drawn (all are drawn when ``plans`` is empty).
    route_name : str, optional
        The route the title names; by default every route in ``plans``.
    size : (int, int)
        Width and height in pixels.
    errors : dict, optional
        By route name, why a route could not be planned or checked (shown in the title).
    footer : bool
        Draw the safety caution at the bottom.
    title : bool
        Draw the title and verdict at the top (the report has its own).
    scale : float, optional
        Size of text and symbols relative to the default (by default from the image size).

    Returns
    -------
    dict
        Where things went, in pixels, for tests and callers: ``"plan_rect"``,
        ``"px_per_m"``, ``"violations"`` (list of ``(kind, QPointF)``), ``"to_px"`` (a
        function plan (x, y) -> QPointF), ``"covered"`` (the boxes of labels and markers
        drawn over the plan, QRectF).
    """
    own = isinstance(target, QImage)
    if own:
        size = (target.width(), target.height())
        painter = QPainter(target)
    else:
        painter = target
    try:
        return _draw(painter, project, plans, checks, route_name, size, errors or {}, footer,
                     title, scale)
    finally:
        if own:
            painter.end()


def _draw(p: QPainter, project: Any, plans: dict, checks: dict, route_name: str | None,
          size: tuple[int, int], errors: dict, footer: bool, title: bool = True,
          scale: float | None = None) -> dict:
    W, H = float(size[0]), float(size[1])
    # Layout unit: 1 at the default size, so text stays in proportion to the picture.
    u = scale if scale is not None else max(0.45, min(W / 1600.0, H / 1000.0))
    p.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    p.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
    p.fillRect(QRectF(0, 0, W, H), QColor("#FFFFFF"))

    f_title = font(22 * u, bold=True)
    f_sub = font(14 * u)
    f_label = font(12 * u)
    f_small = font(11 * u)
    title_h = 74 * u if title else 4 * u
    foot_h = (30 * u) if footer else 6 * u
    legend_w = min(300 * u, W * 0.28)
    m = 14 * u
    plan_rect = QRectF(m, title_h + m * 0.5, W - legend_w - 2.5 * m,
                       H - title_h - foot_h - 1.5 * m)

    names = list(plans) if plans else [r.name for r in project.routes]
    bands = {}
    for name in names:
        plan = plans.get(name)
        if plan is not None and plan.segments:
            try:
                bands[name] = swept_geometry(
                    vehicle_of(project, project.route(name)).footprint, plan.segments,
                    checks.get(name))
            except Exception:  # noqa: BLE001 - a picture without a band is still a picture
                bands[name] = None
    # The plan fits above a strip kept for the scale bar and axes cue, which never cover it.
    view = _View(_scene_bounds(project, plans, bands, route_name),
                 plan_rect.adjusted(0, 0, 0, -46 * u))
    labels = _Labels(plan_rect)

    # Plan frame background and border.
    p.setPen(pen("#B0B0B0", 1.0))
    p.setBrush(QBrush(QColor("#FAFAFA")))
    p.drawRect(plan_rect)
    p.save()
    p.setClipRect(plan_rect)

    _draw_grid(p, view, plan_rect, u)
    # Zones, then the swept bands under the walls as in the window, so paths, outlines and
    # markers sit on top of them.
    zones = zone_layer(project.floorplan.zones, ZONE_ARROW_STEP_PX * u / view.scale)
    for poly in zones.polygons:
        _paint_polygons(p, view, poly.role, poly.geoms, u)
    for mk in zones.markers:
        _paint_marker(p, view, mk, u)
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(qbrush(STYLES["band"].fill))
    for g in bands.values():
        if g is not None and not g.is_empty:
            p.drawPath(view.geometry_path(g))
    plan_layer = floorplan_layer(project.floorplan, checks)
    for poly in plan_layer.polygons:
        _paint_polygons(p, view, poly.role, poly.geoms, u)
    _obstacle_labels(p, view, plan_layer, u, labels)
    _zone_captions(p, view, zones, u, labels)
    # Doors with the plan, under the routes (as in the window, where the route being edited
    # lies over them).
    for line in plan_layer.lines:
        _paint_line(p, view, line, u)
    for mk in plan_layer.markers:
        _paint_marker(p, view, mk, u)
    # Each route keeps its colour from its place in the project, as in the window.
    index_of = {r.name: k for k, r in enumerate(project.routes)}
    routes = [r for r in project.routes if r.name in names]
    for r in routes:
        plan = plans.get(r.name)
        k = index_of[r.name]
        vehicle = vehicle_of(project, r)
        layer = route_layer(r, k, plan, vehicle.footprint)
        for line in layer.lines:
            _paint_line(p, view, line, u)
        if plan is not None:
            _draw_trailers(p, view, vehicle, checks.get(r.name), plan.segments, u)
            _draw_pivots(p, view, plan.segments, ROUTE_COLOURS[k % len(ROUTE_COLOURS)], u)
        _draw_headings(p, view, r, ROUTE_COLOURS[k % len(ROUTE_COLOURS)], u)
        for mk in layer.markers:
            labels.block(_paint_marker(p, view, mk, u))
    # Violation labels before door labels: a user must see what is wrong first.
    marks = _draw_violations(p, view, checks, u, labels, f_label)
    _place_labels(p, view, [lb for lb in plan_layer.labels if lb.role == "door_label"], u,
                  labels, f_label)
    _draw_scale_and_axes(p, view, plan_rect, u, f_small)
    p.restore()

    if title:
        _draw_title(p, project, plans, checks, route_name, errors, W, title_h, u, f_title,
                    f_sub)
    draw_legend(p, QRectF(W - legend_w - m, plan_rect.top(), legend_w, plan_rect.height()),
                 [r.name for r in routes], index_of, checks, u, f_label, f_small,
                 project.floorplan.zones)
    if footer:
        p.setPen(QColor(FAINT_INK))
        p.setFont(font(10.5 * u))
        p.drawText(QRectF(m, H - foot_h, W - 2 * m, foot_h),
                   Qt.AlignmentFlag.AlignVCenter | Qt.AlignmentFlag.AlignLeft
                   | Qt.TextFlag.TextWordWrap, CAUTION)
    return {"plan_rect": plan_rect, "px_per_m": view.scale, "violations": marks,
            "to_px": view.pt, "covered": list(labels.taken)}


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


def _obstacle_labels(p: QPainter, view: _View, layer: Any, u: float, labels: _Labels) -> None:
    """Obstacle names inside their shapes where they fit."""
    f = font(11 * u)
    fm = QFontMetricsF(f)
    p.setFont(f)
    st = STYLES["obstacle_label"]
    for lb in layer.labels:
        if lb.role != "obstacle_label":
            continue
        wpx = (lb.fit_m or 0.0) * view.scale
        if fm.horizontalAdvance(lb.text) + 6 > wpx:
            continue
        r = QRectF(0, 0, fm.horizontalAdvance(lb.text) + 6, fm.height())
        r.moveCenter(view.pt(lb.x, lb.y))
        if not labels.bounds.contains(r):
            continue  # half a word at the picture's edge reads worse than none
        labels.block(r)
        p.setPen(Qt.PenStyle.NoPen)
        p.setBrush(qbrush(st.fill))
        p.drawRect(r)
        p.setPen(QColor(st.ink))
        p.drawText(r, Qt.AlignmentFlag.AlignCenter, lb.text)


def _place_labels(p: QPainter, view: _View, items: list, u: float, labels: _Labels,
                  f: QFont) -> None:
    """Place the scene's labels by priority: forced ones first, others where there is room."""
    for lb in sorted(items, key=lambda t: (t.priority, not t.force)):
        st = STYLES[lb.role]
        along = None
        if lb.along is not None:
            along = (lb.along[0], -lb.along[1])  # plan y up, picture y down
        labels.place(p, view.pt(lb.x, lb.y), lb.text, font(10 * u) if lb.small else f,
                     lb.offset_px * u + lb.reach_m * view.scale, ink=st.ink,
                     fill=qbrush(st.fill).color(),
                     border=st.stroke.colour if st.stroke else None, force=lb.force,
                     along=along)


def _draw_trailers(p: QPainter, view: _View, vehicle: Any, check: Any, segments: Sequence,
                   u: float) -> None:
    """A train's trailers (and drawbars) where the tug's outlines are drawn."""
    train = getattr(check, "train", None)
    if train is None or not segments:
        return
    from kinematics.check.train import train_poses_at_stations
    from kinematics.motion.segments import path_length

    total = path_length(segments)
    if total <= 0:
        return
    bodies = train_poses_at_stations(train.trace, np.linspace(0.0, total, 10))
    p.setBrush(Qt.BrushStyle.NoBrush)
    for row in bodies:
        for j, t in enumerate(vehicle.trailers):
            ahead, pose = row[j], row[j + 1]
            hx = ahead[0] + t.hitch_x_m * math.cos(ahead[2])
            hy = ahead[1] + t.hitch_x_m * math.sin(ahead[2])
            p.setPen(pen("#3D3D3D", 1.1 * u))
            p.drawPolygon(view.poly(place_footprint(t.footprint, pose)))
            p.setPen(pen("#3D3D3D", 0.9 * u, Qt.PenStyle.DotLine))
            p.drawLine(view.pt(hx, hy), view.pt(pose[0], pose[1]))


def _draw_pivots(p: QPainter, view: _View, segments: Sequence, colour: str, u: float) -> None:
    """Pivots: a ring with an arrow head, turning the way the body turns."""
    for seg in segments:
        if seg.kind != "pivot" or seg.turn_rad == 0.0:
            continue
        c = view.pt(seg.start[0], seg.start[1])
        r = 11 * u
        rect = QRectF(c.x() - r, c.y() - r, 2 * r, 2 * r)
        p.setPen(pen(colour, 2.0 * u))
        p.setBrush(Qt.BrushStyle.NoBrush)
        span = 300 if seg.turn_rad > 0 else -300
        p.drawArc(rect, 30 * 16, span * 16)
        end = math.radians(30 + span)
        tip = QPointF(c.x() + r * math.cos(end), c.y() - r * math.sin(end))
        tang = end + (math.pi / 2 if span > 0 else -math.pi / 2)
        tx, ty = math.cos(tang), -math.sin(tang)
        h = 5 * u
        p.setBrush(QBrush(QColor(colour)))
        p.drawPolygon(QPolygonF([
            QPointF(tip.x() + tx * h, tip.y() + ty * h),
            QPointF(tip.x() - tx * h * 0.2 - ty * h, tip.y() - ty * h * 0.2 + tx * h),
            QPointF(tip.x() - tx * h * 0.2 + ty * h, tip.y() - ty * h * 0.2 - tx * h)]))


def _draw_headings(p: QPainter, view: _View, route: Any, colour: str, u: float) -> None:
    """A line from each waypoint with a fixed heading, pointing along it."""
    for w in route.waypoints:
        if w.heading_deg is None:
            continue
        c = view.pt(w.x, w.y)
        h = math.radians(w.heading_deg)
        L = 24 * u
        p.setPen(pen(colour, 1.8 * u))
        p.drawLine(c, QPointF(c.x() + L * math.cos(h), c.y() - L * math.sin(h)))


def _draw_violations(p: QPainter, view: _View, checks: dict, u: float, labels: _Labels,
                     f: QFont) -> list[tuple[str, QPointF]]:
    layer = violation_layer(checks, FORCED_VIOLATION_LABELS)
    marks = []
    kinds = [v.kind for chk in checks.values() for v in violations_of(chk)]
    for kind, m in zip(kinds, layer.markers):
        labels.block(_paint_marker(p, view, m, u))
        marks.append((kind, view.pt(m.x, m.y)))
    # Labels after all markers so a label never hides a marker drawn later; the worst first.
    # The worst few are always labelled; the rest where there is room (the results panel and
    # the report's table list every one).
    _place_labels(p, view, layer.labels, u, labels, f)
    return marks


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


def _zone_captions(p: QPainter, view: _View, layer: Any, u: float, labels: _Labels) -> None:
    """Each zone's name and number inside it, where it fits and nothing is there yet."""
    f = font(10.5 * u)
    fm = QFontMetricsF(f)
    p.setFont(f)
    st = STYLES["zone_label"]
    for lb in layer.labels:
        # Near the zone's top edge, where a route through its middle leaves it readable.
        top = view.pt(lb.x, lb.y)
        r = QRectF(0, 0, fm.horizontalAdvance(lb.text) + 6, fm.height())
        r.moveCenter(QPointF(top.x(), top.y() + 4 * u + fm.height() / 2))
        if not (lb.inside_m or 0.0) * view.scale > 2 * fm.height() and lb.centre:
            r.moveCenter(view.pt(*lb.centre))
        if not labels.bounds.contains(r):
            continue
        labels.block(r)
        p.setPen(Qt.PenStyle.NoPen)
        p.setBrush(qbrush(st.fill))
        p.drawRect(r)
        p.setPen(QColor(lb.ink or st.ink))
        p.drawText(r, Qt.AlignmentFlag.AlignCenter, lb.text)


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
            r = 8 * u
            p.setPen(pen(INK, 2.0 * u))
            p.setBrush(Qt.BrushStyle.NoBrush)
            p.drawArc(QRectF(x0 + sw / 2 - r, cy - r, 2 * r, 2 * r), 30 * 16, 300 * 16)
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


# -- images and files -----------------------------------------------------------------------
def new_image(size: tuple[int, int]) -> QImage:
    img = QImage(int(size[0]), int(size[1]), QImage.Format.Format_ARGB32)
    img.fill(QColor("#FFFFFF"))
    return img


IMAGE_FORMATS = {".png": "PNG", ".jpg": "JPEG", ".jpeg": "JPEG"}
"""Picture formats written, by file-name suffix (lower case); a name without a suffix is
written as PNG."""


def image_format_for(path: str | Path) -> str | None:
    """The Qt format name for ``path``'s suffix (PNG when it has none), or ``None`` when the
    suffix names a format not written."""
    suffix = Path(path).suffix.lower()
    return "PNG" if not suffix else IMAGE_FORMATS.get(suffix)


def image_png_bytes(img: QImage, fmt: str = "PNG") -> bytes:
    """The encoding of ``img`` as ``fmt`` (``"PNG"`` or ``"JPEG"``)."""
    data = QByteArray()
    buf = QBuffer(data)
    buf.open(QIODevice.OpenModeFlag.WriteOnly)
    if fmt == "JPEG":  # no transparency in JPEG: flatten onto the white background first
        img = img.convertToFormat(QImage.Format.Format_RGB32)
    if not img.save(buf, fmt, 92 if fmt == "JPEG" else -1):
        raise RuntimeError(f"Qt could not encode the picture as {fmt}")
    buf.close()
    return bytes(data.data())


def render_project_image(project: Any, route_name: str | None = None,
                         size: tuple[int, int] = (1600, 1000)) -> QImage:
    """Plan, check and draw ``project`` (or one route of it) onto a new image."""
    ensure_app()
    plans, checks, errors = compute_results(project, route_name)
    img = new_image(size)
    render_scene(img, project, plans, checks, route_name, size, errors=errors)
    return img


def render_project_png(project: Any, path: str | Path, route_name: str | None = None,
                       size: tuple[int, int] = (1600, 1000)) -> None:
    """Write the picture of ``project`` as a PNG file (JPEG for a ``.jpg``/``.jpeg`` name),
    atomically.

    Plans every route (or only ``route_name``) with :func:`kinematics.plan.planner.plan_route`,
    checks it with :mod:`kinematics.check.clearance`, and draws it with :func:`render_scene`.
    """
    from kinematics.files.jsonio import atomic_write_bytes

    fmt = image_format_for(path)
    if fmt is None:
        raise ValueError(f"cannot write a {Path(path).suffix} picture; expected .png or .jpg")
    img = render_project_image(project, route_name, size)
    atomic_write_bytes(path, image_png_bytes(img, fmt))


# -- plots -----------------------------------------------------------------------------------
_PLOT_NAMES = ("draw_plots", "render_plot_image", "render_plot_png", "WHEEL_COLOURS",
               "WHEEL_STYLES", "LIMIT_WORDS")


def __getattr__(name: str) -> Any:
    """The plots live in :mod:`app.plots` (one plotting path for window and picture); their
    old names here still work, imported only when asked for (pyqtgraph is not needed to draw
    the plan)."""
    if name in _PLOT_NAMES:
        from . import plots

        return getattr(plots, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
