"""The picture without a window: floor plan, routes, swept area and violations on a QImage.

The picture painter of the plan scene (:mod:`app.scene`): it paints the scene's layers with
the scene's styles, as the canvas does, and adds what only a picture has (title and verdict
badge, legend, scale bar, axes cue, caution).

In parts: this module lays out the picture and paints the plan scene's layers (zones, band,
floor plan, routes, trailers, violations and their labels) and writes images;
:mod:`app.picture_frame` draws what frames the plan (grid, scale bar, axes cue, title and
verdict badge, legend) and :mod:`app.painting` holds the QPainter basics both use. The plots
of a picture or report are the window's (:func:`app.plots.draw_plots`). The names other
modules import from here (``render_scene``, ``draw_legend``, ``pen``, ``font``, the palette,
the analysis's results) stay importable from :mod:`app.render`.

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
    QImage,
    QPainter,
    QPainterPath,
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

from .painting import (  # noqa: F401 - also imported from here by others
    BAND_RGBA,
    FORCED_VIOLATION_LABELS,
    _Labels,
    _paint_line,
    _paint_marker,
    _paint_polygons,
    _View,
    draw_marker,
    ensure_app,
    font,
    nice_length,
    pen,
    qcolor,
)
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
from .picture_frame import (  # noqa: F401 - also imported from here by others
    _draw_grid,
    _draw_scale_and_axes,
    _draw_title,
    draw_legend,
)
from .qstyle import pivot_paths, qbrush
from .scene import (  # noqa: F401 - the geometry helpers are re-exported for older callers
    FAINT_INK,
    HEADING_WIDTH_PX,
    INK,
    JAMB_R_PX,
    PIVOT_R_PX,
    PIVOT_WIDTH_PX,
    ROUTE_COLOURS,
    ROUTE_WIDTH_PX,
    STYLES,
    VIOLATION_R_PX,
    VIOLATION_SHAPES,
    WAYPOINT_R_PX,
    ZONE_ARROW_STEP_PX,
    band_bounds,
    band_pieces,
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
        gb = band_bounds(bands.get(focus))
        if gb is not None:
            fx += [gb[0], gb[2]]
            fy += [gb[1], gb[3]]
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
    for pieces in bands.values():
        gb = band_bounds(pieces)
        if gb is not None:
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
                bands[name] = band_pieces(
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
    for pieces in bands.values():
        # The scene's per-segment pieces, each route's as one winding-filled path: their
        # union painted once, as the canvas paints it.
        band = QPainterPath()
        for piece in pieces or ():
            for g in piece:
                band.addPath(view.geometry_path(g))
        band.setFillRule(Qt.FillRule.WindingFill)
        p.drawPath(band)
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
    """Pivots: a ring with an arrow head, turning the way the body turns
    (:func:`app.qstyle.pivot_paths`, as the canvas draws them)."""
    for seg in segments:
        if seg.kind != "pivot" or seg.turn_rad == 0.0:
            continue
        ring, head = pivot_paths(seg.turn_rad, PIVOT_R_PX * u,
                                 view.pt(seg.start[0], seg.start[1]))
        p.setPen(pen(colour, PIVOT_WIDTH_PX * u))
        p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawPath(ring)
        p.setBrush(QBrush(QColor(colour)))
        p.drawPath(head)


def _draw_headings(p: QPainter, view: _View, route: Any, colour: str, u: float) -> None:
    """A line from each waypoint with a fixed heading, pointing along it, in the route's
    colour (as the window's heading handle)."""
    for w in route.waypoints:
        if w.heading_deg is None:
            continue
        c = view.pt(w.x, w.y)
        h = math.radians(w.heading_deg)
        L = 24 * u
        p.setPen(pen(colour, HEADING_WIDTH_PX * u))
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
