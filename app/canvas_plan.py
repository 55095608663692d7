"""The canvas's floor-plan drawing: walls, obstacles, zones, doors and the plan's names.

Owns :class:`PlanDrawing`, the part of :class:`app.canvas.PlanCanvas` that draws the Document's
floor plan from :mod:`app.scene` (``floorplan_layer``, ``zone_layer``) into the items the
canvas built, and places the names of doors, obstacles and zones so they do not pile up.
"""

from __future__ import annotations

import numpy as np
import shapely
from PySide6.QtCore import Qt
from PySide6.QtGui import (
    QColor,
)

from .canvas_items import (
    _BOX_CELL_PX,
    _DOOR_LABEL_PLACES,
    _Boxes,
    _Label,
    _plan_box,
    polygons_path,
)
from .qstyle import qbrush, qpen
from .scene import (
    STYLES,
    ZONE_ARROW_STEP_PX,
    floorplan_layer,
    zone_layer,
)


class PlanDrawing:
    """Floor-plan drawing of :class:`app.canvas.PlanCanvas` (a mixin: it uses the
    canvas's document and items)."""

    # -- drawing ----------------------------------------------------------------------------
    def refresh_plan(self) -> None:
        fp = self.doc.project.floorplan
        # The checker's index of the same plan: its solids and tree, not a second build.
        index = self.doc.obstacle_index()
        sol = index.solids
        walls = [s.geometry for s in sol if s.kind == "wall"]
        obst = [s.geometry for s in sol if s.kind == "obstacle"]
        # Oriented alike and filled by winding: where two walls overlap (a T-junction) the
        # overlap is filled once, not left empty as an odd-even fill would (holes, oriented
        # the other way, stay open).
        wind = Qt.FillRule.WindingFill
        self.walls_item.setPath(polygons_path(shapely.orient_polygons(walls), wind)
                                if walls else polygons_path([]))
        self.obstacles_item.setPath(polygons_path(shapely.orient_polygons(obst), wind)
                                    if obst else polygons_path([]))
        self.hatch_item.setPath(self.obstacles_item.path())
        zones = zone_layer(fp.zones)
        geoms = {pg_.role[5:]: pg_.geoms for pg_ in zones.polygons}
        for kind, parts in self.zone_items.items():
            path = polygons_path(geoms.get(kind, []))
            for it in parts:
                it.setPath(path)
        self._zone_arrow_px = None
        self._draw_zone_arrows()
        self._solid_geoms = [s.geometry for s in sol]
        self._solids_tree = index.tree if sol else None
        layer = floorplan_layer(fp, solids_list=sol)
        for role, item in (("door_gap", self.door_gaps_item), ("door", self.doors_item)):
            lines = [ln.xy for ln in layer.lines if ln.role == role]
            xy = (np.vstack([np.vstack([a, [np.nan, np.nan]]) for a in lines]) if lines
                  else np.zeros((0, 2)))
            item.setData(xy[:, 0], xy[:, 1])
        jambs = [m for m in layer.markers if m.role == "jamb"]
        self.jambs_item.setData([m.x for m in jambs], [m.y for m in jambs])
        named = [(d.midpoint, d.label, "door", 0.0) for d in fp.doors if d.label]
        first: dict[int, object] = {}  # each obstacle's first solid (one pass, not one each)
        for s in sol:
            if s.kind == "obstacle":
                first.setdefault(s.index, s.geometry)
        for i, o in enumerate(fp.obstacles):
            if o.label:
                g = [first[i]] if i in first else []
                if g:
                    c = g[0].representative_point()
                    x0, y0, x1, y1 = g[0].bounds
                    named.append(((c.x, c.y), o.label, "obstacle", x1 - x0))
        labels = self._labels(self.plan_labels, len(named), "#111111", None, (0.5, 0.5))
        for t in labels:
            # Names of the plan sit under the routes: a waypoint is never hidden by a door's
            # name.
            t.setZValue(1.5)
        self._obstacle_labels = []
        self._zone_labels = []
        self._door_labels: list[_Label] = []
        for t, (pos, text, kind, size_m) in zip(labels, named):
            st = STYLES["door_label" if kind == "door" else "obstacle_label"]
            t.setColor(QColor(st.ink))
            t.setFill(qbrush(st.fill))
            t.setPen(qpen(st.stroke, cosmetic=True))
            t.setAnchor((0.5, -0.3) if kind == "door" else (0.5, 0.5))
            t.setText(text)
            t.setPos(*pos)
            if kind == "obstacle":
                self._obstacle_labels.append((t, size_m, t.boundingRect().width()))
            else:
                self._door_labels.append(t)
        # Each zone's name and number, as the picture places it (app.scene.zone_layer).
        zst = STYLES["zone_label"]
        zlabels = self._labels(self.zone_labels, len(zones.labels), zst.ink, None, (0.5, 0.0))
        for t, lb in zip(zlabels, zones.labels):
            # Under the solids (over the zones and the band): a zone's name never hides a
            # wall or an obstacle, such as a pillar near the zone's top edge.
            t.setZValue(-0.5)
            t.setColor(QColor(lb.ink or zst.ink))
            t.setFill(qbrush(zst.fill))
            t.setText(lb.text)
            self._zone_labels.append((t, lb))
        self._fit_obstacle_labels()
        self._drawn.pop("violations", None)  # placed anew round the names shown now

    def _fit_obstacle_labels(self) -> None:
        """Name an obstacle only where its name fits across it on screen (no pile-ups),
        put each door's name by the door where it covers no other name: in the first row
        under it, else the second, else above it, else (zoomed far out) not at all; a
        zone's name goes under its top edge where the zone is tall enough, else in its
        middle."""
        px = self.px_m()
        taken = _Boxes(_BOX_CELL_PX * px)
        for t, size_m, text_px in getattr(self, "_obstacle_labels", []):
            t.setVisible(size_m / px >= 0.9 * text_px)
            if t.isVisible():
                taken.add(_plan_box(t, px))
        for t in getattr(self, "_door_labels", []):
            for anchor in _DOOR_LABEL_PLACES:
                t.setAnchor(anchor)
                box = _plan_box(t, px)
                if taken.free(box):
                    t.setVisible(True)
                    taken.add(box)
                    break
            else:
                t.setVisible(False)
        for t, lb in getattr(self, "_zone_labels", []):
            h = t.rect().height()
            if (lb.inside_m or 0.0) / px > 2 * h or lb.centre is None:
                t.setAnchor((0.5, -0.15))
                t.setPos(lb.x, lb.y)
            else:
                t.setAnchor((0.5, 0.5))
                t.setPos(*lb.centre)

    def _draw_zone_arrows(self) -> None:
        """The one-way arrows, spaced in screen pixels as the picture spaces them: drawn anew
        only when the zoom changed by more than a third."""
        px = self.px_m()
        was = self._zone_arrow_px
        if was is not None and 0.75 < px / was < 1.33:
            return
        self._zone_arrow_px = px
        fp = self.doc.project.floorplan
        marks = zone_layer([z for z in fp.zones if z.kind == "one_way"],
                           ZONE_ARROW_STEP_PX * px).markers if fp.zones else []
        self.zone_arrows_item.setData([m.x for m in marks], [m.y for m in marks],
                                      angle=[m.angle_rad for m in marks])
