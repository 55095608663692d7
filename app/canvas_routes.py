"""The canvas's route drawing: the current route's path, waypoints, handles, swept band,
footprint outlines and violations, and the other routes.

Owns :class:`RouteDrawing`, the part of :class:`app.canvas.PlanCanvas` called on every drag
step (``refresh_routes``): each piece is redrawn only when what it shows changed, and the band
and outlines are kept per segment, so a step touches only the segments that moved.

Why the canvas keeps caches of the scene's pieces rather than rebuilding the scene: a drag
step must fit in a frame, and remaking the whole route's layer (:func:`app.scene.route_layer`,
:func:`app.scene.band_pieces`) re-samples and re-sweeps every segment, most of which a step
leaves as they were. So the canvas asks the scene's per-segment builders only for segments it
has not seen, and draws exactly what they return (tests/test_drag_scene.py compares the
canvas after a drag with the scene built afresh):

- ``_sample_cache``: the points along each segment (:func:`app.scene.segment_samples`), keyed
  by ``(segment, step_m)``. A :class:`kinematics.motion.segments.Segment` is a frozen value
  (kind, start pose, length, turn, direction, course, curvatures) that fixes every point of
  it, and its points depend on nothing else, so an equal key always means equal points.
  Entries of segments no longer on the route are dropped once the cache holds more than four
  times the route's segments (plus 64), so a long drag does not grow it without bound.
- ``_sweep_cache``: each segment's swept-band piece as a painter path
  (:func:`app.scene.band_piece`, from the check's own parts when it has them), keyed by the
  segment, and for a train also by the trailers' headings where the segment starts (all an
  edit earlier on the route changes for them). The piece depends besides only on the
  footprint and the trailers' geometry, so the whole cache is emptied when
  ``_sweep_cache_key`` (footprint, trailers' hitch, drawbar and footprint) changes; after each
  redraw it holds only the current route's segments.
- ``_outline_items``: one outline item per segment, keyed by the segment, whether it is the
  last, the spacing, the footprint and the trailers' state (the stations are
  :func:`app.scene.segment_outline_stations`); items whose key left the route go back to a pool.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np
from PySide6.QtCore import Qt
from PySide6.QtGui import (
    QBrush,
    QFont,
    QPainterPath,
    QPen,
)
from PySide6.QtWidgets import QGraphicsItem

from kinematics.motion.segments import Segment

from .canvas_items import (
    _BOX_CELL_PX,
    _LABEL_PLACES,
    _SELECTED_BRUSH,
    _WAYPOINT_BRUSH,
    HANDLE_PX,
    MARKER_PX,
    MAX_LABELS,
    _Boxes,
    _broken_line,
    _plan_box,
    _RoughWhileDragging,
    _set_text,
    footprint_outlines,
    polygons_path,
    sample_segments,
)
from .palette import BLACK
from .qstyle import qbrush, qpen
from .scene import (
    HEADING_WIDTH_PX,
    PIVOT_WIDTH_PX,
    ROUTE_COLOURS,
    STYLES,
    WAYPOINT_R_PX,
    band_piece,
    route_style,
    segment_outline_stations,
    violation_layer,
)

_FONTS: dict[str, QFont] = {}


def _waypoint_font() -> QFont:
    """The waypoints' numbers: the picture's marker text at the default size (bold, 10 px);
    made once, after the application exists."""
    f = _FONTS.get("waypoint")
    if f is None:
        f = _FONTS["waypoint"] = QFont("DejaVu Sans")
        f.setPixelSize(10)
        f.setBold(True)
    return f


class RouteDrawing:
    """Route drawing of :class:`app.canvas.PlanCanvas` (a mixin: it uses the
    canvas's document and items)."""

    def refresh_routes(self) -> None:
        """Redraw every route, the current one with its band, outlines and violations.

        Called on every drag step, so each part is redrawn only when what it shows changed
        (the other routes, labels, violations), and unchanged segments come from caches.
        """
        doc = self.doc
        cur = doc.route()
        self._set_route_colour(doc.current_route)
        self._draw_other_routes()
        pending = self._pending
        if pending != self._drawn.get("pending"):
            self._drawn["pending"] = pending
            self.pending_item.setData([pending[0]] if pending else [],
                                      [pending[1]] if pending else [])
        if cur is None:
            for it in (self.path_fwd, self.path_rev, self.chords_item, self.waypoints_item,
                       self.handles_item, self.handles_line, self.violations_item,
                       self.pivot_rings, self.pivot_heads):
                it.setData([], [])
            self.band_item.setPath(QPainterPath())
            self._draw_outlines([], self.doc.project.chassis.footprint)
            self._labels(self.wp_labels, 0, BLACK, None, (0, 0))
            self._labels(self.violation_labels, 0, BLACK, None, (0, 0))
            self._samples = sample_segments([])
            self._drawn.pop("violations", None)
            self._drawn.pop("pivots", None)
            return
        plan = doc.plan(cur.name)
        segs = list(plan.segments) if plan is not None else []
        self._samples = sample_segments(segs, cache=self._sample_cache)
        if len(self._sample_cache) > 4 * len(segs) + 64:  # forget segments dragged away
            live = {(g, 0.05) for g in segs}
            self._sample_cache = {k: v for k, v in self._sample_cache.items() if k in live}
        xy, _st, idx, dirs = self._samples
        self.path_fwd.setData(*_broken_line(xy, dirs, idx, 1))
        self.path_rev.setData(*_broken_line(xy, dirs, idx, -1))
        wx = np.array([w.x for w in cur.waypoints])
        wy = np.array([w.y for w in cur.waypoints])
        self.chords_item.setData(wx, wy)
        sel = np.arange(len(wx)) == self.selected
        self.waypoints_item.setData(wx, wy, brush=[_SELECTED_BRUSH if s else _WAYPOINT_BRUSH
                                                   for s in sel],
                                    size=np.where(sel, 2 * WAYPOINT_R_PX + 3, 2 * WAYPOINT_R_PX))
        # Each waypoint's number inside its ring, in the picture's bold type
        # (app.painting._paint_marker, the legend's "waypoint (number)").
        labels = self._labels(self.wp_labels, len(wx), STYLES["waypoint"].ink, None,
                              (0.5, 0.5))
        for k, t in enumerate(labels):
            if t.text_item.font() != _waypoint_font():
                t.text_item.setFont(_waypoint_font())
            _set_text(t, str(k + 1))
            t.setPos(wx[k], wy[k])
        self._draw_handles()
        self._draw_pivots(segs)
        self._draw_band_and_outlines(segs)
        self._draw_violations(cur.name)

    def _set_route_colour(self, k: int) -> None:
        """The current route in its colour from its place in the project, as the picture
        draws it (app.scene.route_style)."""
        if self._drawn.get("route_colour") == k:
            return
        self._drawn["route_colour"] = k
        self.path_fwd.setPen(qpen(route_style(max(k, 0), 1), cosmetic=True))
        self.path_rev.setPen(qpen(route_style(max(k, 0), -1), cosmetic=True))
        wp = qpen(route_style(max(k, 0), 1), cosmetic=True)
        wp.setWidthF(2.0)
        wp.setStyle(Qt.PenStyle.SolidLine)
        self.waypoints_item.setPen(wp)
        ring = QPen(wp)
        ring.setWidthF(PIVOT_WIDTH_PX)
        self.pivot_rings.setPen(ring)
        head = QPen(wp)
        head.setWidthF(1.0)
        self.pivot_heads.setPen(head)
        self._pivot_brush = QBrush(wp.color())
        self._drawn.pop("pivots", None)
        # Heading handles in the route's colour, as the picture draws a fixed heading: the
        # knob filled with it where the heading is fixed, with it lightened where the planner
        # chose it (the selected waypoint's free heading).
        line = QPen(wp)
        line.setWidthF(HEADING_WIDTH_PX)
        self.handles_line.setPen(line)
        self._handle_brushes = (QBrush(wp.color()), QBrush(wp.color().lighter(150)))
        self._drawn.pop("handles", None)

    def _draw_pivots(self, segs: list[Segment]) -> None:
        """Each turn on the spot as the picture draws it: a ring with an arrow head turning
        the way the body turns (app.qstyle.pivot_paths)."""
        piv = [s for s in segs if s.kind == "pivot" and s.turn_rad != 0.0]
        key = [(s.start[0], s.start[1], s.turn_rad > 0) for s in piv]
        if key == self._drawn.get("pivots"):
            return
        self._drawn["pivots"] = key
        xs, ys = [k[0] for k in key], [k[1] for k in key]
        signs = ["+" if k[2] else "-" for k in key]
        self.pivot_rings.setData(xs, ys, symbol=["pivot_ring" + g for g in signs])
        self.pivot_heads.setData(xs, ys, symbol=["pivot_head" + g for g in signs],
                                 brush=getattr(self, "_pivot_brush", None))

    def _draw_other_routes(self) -> None:
        """Other routes: their paths as the picture draws every route's (the route's colour
        from its place in the project, dashed in reverse: app.scene.route_style), so the user
        sees what else shares the floor and the legend's colours name them. Only the route
        being edited has its band, outlines, waypoints and markers on the canvas."""
        doc = self.doc
        if not self.painted:
            # The first picture shows the route being edited; the others are planned and
            # drawn right after it (see _after_first_paint).
            for it in self.others_items.values():
                it.setData([], [])
            self._drawn.pop("others", None)
            return
        others = [(i, r, doc.plan(r.name)) for i, r in enumerate(doc.project.routes)
                  if i != doc.current_route]
        # The key holds the objects themselves: compared by identity, never a reused id().
        key = [x for _i, *pair in others for x in pair]
        was = self._drawn.get("others")
        if was is not None and len(was) == len(key) and all(a is b for a, b in zip(was, key)):
            return  # dragging the current route leaves the others as they are
        self._drawn["others"] = key
        lines: dict[tuple[int, int], tuple[list, list]] = {k: ([], []) for k in self.others_items}
        for i, r, plan in others:
            ci = i % len(ROUTE_COLOURS)
            if plan is None or not plan.segments:  # not planned: its waypoints' chords
                x, y = [w.x for w in r.waypoints], [w.y for w in r.waypoints]
                lines[(ci, 1)][0].extend(list(x) + [np.nan])
                lines[(ci, 1)][1].extend(list(y) + [np.nan])
                continue
            xy, _st, idx, dirs = sample_segments(plan.segments)  # the picture's points
            for direction in (1, -1):
                x, y = _broken_line(xy, dirs, idx, direction)
                if len(x):
                    lines[(ci, direction)][0].extend(list(x) + [np.nan])
                    lines[(ci, direction)][1].extend(list(y) + [np.nan])
        for k, (x, y) in lines.items():
            self.others_items[k].setData(np.asarray(x, float), np.asarray(y, float))

    def _draw_handles(self) -> None:
        cur = self.doc.route()
        if cur is None:
            return
        L = HANDLE_PX * self.px_m()
        hx, hy, lx, ly, fixed = [], [], [], [], []
        for i, w in enumerate(cur.waypoints):
            if w.heading_deg is None and i != self.selected:
                continue
            h = math.radians(w.heading_deg if w.heading_deg is not None
                             else self._free_heading_deg(i))
            ex, ey = w.x + L * math.cos(h), w.y + L * math.sin(h)
            hx.append(ex)
            hy.append(ey)
            fixed.append(w.heading_deg is not None)
            if w.heading_deg is not None:
                lx += [w.x, ex, np.nan]
                ly += [w.y, ey, np.nan]
        key = (hx, hy, lx, ly, fixed)
        if key == self._drawn.get("handles"):
            return
        self._drawn["handles"] = key
        ink = getattr(self, "_handle_brushes", None) or (QBrush(), QBrush())
        self.handles_item.setData(hx, hy, brush=[ink[0] if f else ink[1] for f in fixed])
        self.handles_line.setData(np.asarray(lx, float), np.asarray(ly, float))

    def _free_heading_deg(self, i: int) -> float:
        """Heading the planner chose at waypoint ``i`` (or the chord direction)."""
        cur = self.doc.route()
        plan = self.doc.plan(cur.name) if cur is not None else None
        ch = getattr(plan, "chosen_headings", None) if plan is not None else None
        if ch and ch.get(i) is not None:
            return float(ch[i])
        wps = cur.waypoints
        j = i + 1 if i + 1 < len(wps) else i - 1
        a, b = (wps[i], wps[j]) if j > i else (wps[j], wps[i])
        return math.degrees(math.atan2(b.y - a.y, b.x - a.x))

    def _train(self, segs: list[Segment]) -> tuple[Any, Any]:
        """The current route's vehicle and, when it tows trailers, the check's trace of
        their headings along ``segs`` (else ``None``)."""
        cur = self.doc.route()
        if cur is None:
            return self.doc.project.chassis, None
        chassis = self.doc.vehicle(cur.name)
        if not getattr(chassis, "trailers", ()) or not segs:
            return chassis, None
        chk = self.doc.check(cur.name)
        trace = getattr(getattr(chk, "train", None), "trace", None)
        if trace is None or len(trace.segments) != len(segs):
            return chassis, None
        return chassis, trace

    def _draw_band_and_outlines(self, segs: list[Segment]) -> None:
        chassis, trace = self._train(segs)
        if self.show_band and segs:
            self.band_item.setPath(self._swept_path(segs, chassis, trace))
        else:
            self.band_item.setPath(QPainterPath())
        self._draw_outlines(segs if self.outline_spacing_m else [], chassis.footprint, chassis,
                            trace)

    def _polish(self) -> None:
        """The drag rested or ended: the band and outlines drawn antialiased again."""
        self.band_item.polish()
        for it in self._outline_items.values():
            it.polish()

    def _draw_outlines(self, segs: list[Segment], footprint: Sequence, chassis: Any = None,
                       trace: Any = None) -> None:
        """Footprint outlines every ``outline_spacing_m`` along each segment from its start
        (and at the route's end), one child item per segment kept by the segment's value: a
        drag step makes and repaints only the outlines of the segments that moved.

        A towing vehicle's trailers are outlined at the same stations, each at its own pose
        from the check's trace (kept by the trailers' headings where the segment starts,
        which is all that an edit earlier on the route changes for them)."""
        spacing = self.outline_spacing_m
        items: dict = self._outline_items
        trailers = tuple(getattr(chassis, "trailers", ()) or ()) if trace is not None else ()
        shapes = tuple(tuple(map(tuple, t.footprint)) for t in trailers)
        want = {}
        for k, seg in enumerate(segs):
            if seg.length_m <= 0.0:
                continue  # a turn on the spot: the next segment's first outline shows it
            state = (tuple(trace.traces[k].th[0].tolist()), shapes, k) if trailers else None
            want[(seg, k == len(segs) - 1, spacing, tuple(map(tuple, footprint)), state)] = \
                (k, seg)
        for key in [key for key in items if key not in want]:
            it = items.pop(key)
            it.hide()
            self._outline_pool.append(it)
        for key, (k, seg) in want.items():
            if key in items:
                continue
            if self._outline_pool:
                it = self._outline_pool.pop()
            else:
                it = _RoughWhileDragging(self.band_item._rough, self.outlines_item)
                it.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
            it.setPen(self.outlines_item.pen())
            # The scene's outline stations for this segment, as route_layer places them.
            local = segment_outline_stations(seg, spacing, key[1])
            path = footprint_outlines(footprint, seg.poses_at(local))
            if trailers:
                # The trace's progress on a line or arc is its length along the segment.
                poses = trace.poses(k, local * (trace.amount(k) / seg.length_m))
                for j, t in enumerate(trailers):
                    path.addPath(footprint_outlines(t.footprint, poses[:, j + 1]))
            it.setPath(path)
            it.show()
            items[key] = it

    def _swept_path(self, segs: list[Segment], chassis: Any = None, trace: Any = None
                    ) -> QPainterPath:
        """The swept band as one winding-filled path of per-segment pieces.

        Pieces are oriented alike (exteriors counter-clockwise), so the non-zero winding rule
        fills their union once without computing it; pieces of unchanged segments come from
        a cache, so a drag re-sweeps only the segments that moved.
        """
        chassis = chassis if chassis is not None else self.doc.project.chassis
        fp = chassis.footprint
        # A train's band holds its trailers' pieces too (the check's parts per segment).
        train_key = tuple((t.hitch_x_m, t.drawbar_m, tuple(map(tuple, t.footprint)))
                          for t in getattr(chassis, "trailers", ()) or ()) \
            if trace is not None else ()
        if self._sweep_cache_key != (fp, train_key):
            self._sweep_cache = {}
            self._sweep_cache_key = (fp, train_key)
        old = self._sweep_cache
        new: dict = {}
        path = QPainterPath()
        checked = None
        for k, seg in enumerate(segs):
            if trace is not None:
                seg_key: Any = (seg, tuple(trace.traces[k].th[0].tolist()))
            else:
                seg_key = seg
            piece = old.get(seg_key)
            if piece is None:
                if checked is None:
                    # The check swept these segments already; ask it only on a cache miss.
                    # Its parts are filled as they are: their union is never made here.
                    cur = self.doc.route()
                    chk = self.doc.check(cur.name) if cur is not None else None
                    checked = getattr(chk, "piece_parts", ()) or ()
                # The scene's piece (app.scene.band_piece), as the picture fills it.
                piece = polygons_path(band_piece(fp, seg, checked[k] if len(checked) ==
                                                 len(segs) else None))
            new[seg_key] = piece
            path.addPath(piece)
        self._sweep_cache = new
        path.setFillRule(Qt.FillRule.WindingFill)
        return path

    def _draw_violations(self, name: str) -> None:
        chk = self.doc.check(name)
        vs = list(getattr(chk, "violations", []) or []) if chk is not None else []
        # A drag step that leaves the violations as they were (the usual case) and the same
        # zoom redraws nothing here.
        (vx0, vx1), (vy0, vy1) = self.view.viewRange()
        key = (tuple((v.kind, v.x, v.y, v.amount_m) for v in vs), self.px_m(),
               (vx0, vx1, vy0, vy1))
        if key == self._drawn.get("violations"):
            return
        self._drawn["violations"] = key
        layer = violation_layer({name: chk})
        self.violations_item.setData([m.x for m in layer.markers], [m.y for m in layer.markers],
                                     symbol=[m.shape for m in layer.markers])
        # Labels the worst first, as the picture places them.
        shown = layer.labels[:MAX_LABELS]
        lst = STYLES["violation_label"]
        labels = self._labels(self.violation_labels, len(shown), lst.ink,
                              None, _LABEL_PLACES[0])
        px = self.px_m()
        # What a label must not cover, as plan boxes (x0, y0, x1, y1): every violation marker,
        # the names of doors and obstacles shown, and the labels already placed.
        half = 0.5 * MARKER_PX * px
        taken = _Boxes(_BOX_CELL_PX * px)
        for v in vs:
            taken.add((v.x - half, v.y - half, v.x + half, v.y + half))
        names = _Boxes(_BOX_CELL_PX * px)
        for n in self.plan_labels:
            if n.isVisible():
                names.add(_plan_box(n, px), n)
        for t, v in zip(labels, shown):
            t.setOpacity(self.band_item.opacity())  # greyed with the band while stale
            t.setFill(qbrush(lst.fill))
            t.setPen(qpen(lst.stroke, cosmetic=True))
            _set_text(t, v.text)
            t.setPos(v.x, v.y)
            # The first of four places round the marker that covers nothing above and lies
            # inside the view; else the first free one slid inside the view (at the edge of
            # the plot a label is never cut off); else the same over the plan's names (a
            # violation matters more than a door's name, which shows again zoomed in). A
            # label with no free place is hidden (its marker stays; the results list it).
            inset = 3 * px
            view = (vx0 + inset, vy0 + inset, vx1 - inset, vy1 - inset)
            seen = vx0 <= v.x <= vx1 and vy0 <= v.y <= vy1  # else nothing to keep in view
            places = [(a, False, True) for a in _LABEL_PLACES]
            places += [(a, True, True) for a in _LABEL_PLACES] if seen else []
            places += [(a, slide, False) for a, slide, _ in places]
            for anchor, slide, avoid_names in places:
                t.setAnchor(anchor)
                t.setPos(v.x, v.y)
                box = _plan_box(t, px)
                if slide:
                    dx = max(0.0, view[0] - box[0]) - max(0.0, box[2] - view[2])
                    dy = max(0.0, view[1] - box[1]) - max(0.0, box[3] - view[3])
                    t.setPos(v.x + dx, v.y + dy)
                    box = (box[0] + dx, box[1] + dy, box[2] + dx, box[3] + dy)
                inside = not seen or (view[0] <= box[0] and box[2] <= view[2]
                                      and view[1] <= box[1] and box[3] <= view[3])
                if inside and taken.free(box) and (not avoid_names or names.free(box)):
                    t.setVisible(True)
                    taken.add(box)
                    if not avoid_names:  # the names it would cover give way
                        for n in names.hits(box):
                            n.setVisible(False)
                            names.remove(n)
                    break
            else:
                t.setVisible(False)
