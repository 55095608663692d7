"""The floor plan's solids and doors in spatial indexes, built once per floor plan.

Solids (walls and obstacles) sit in one ``shapely.STRtree`` so that each swept piece asks only
for solids within the margin of its envelope: a check's cost grows with the route and the
clutter near it, not with the size of the building. Doors get a tree of their lines and a box
around each (:data:`DOOR_BOX_M` across, :data:`DOOR_BOX_ALONG_M` beyond each jamb) in which
their clearance is measured.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import shapely
from shapely.geometry import LineString
from shapely.geometry.base import BaseGeometry

from kinematics.check.zones import ZoneIndex
from kinematics.files.floorplan import FloorPlan, Solid, solids
from kinematics.files.jsonio import collector_held

#: Half-depth (across the door line) and extra length (beyond each jamb) of the box in which
#: a door's clearance is measured, metres.
DOOR_BOX_M = 1.0
DOOR_BOX_ALONG_M = 0.5


class ObstacleIndex:
    """The floor plan's solids (walls and obstacles) in one STRtree, plus its doors.

    Build it once per floor plan and pass it to every check.

    Parameters
    ----------
    floorplan : FloorPlan
    """

    def __init__(self, floorplan: FloorPlan) -> None:
        self.floorplan = floorplan
        with collector_held():  # thousands of new objects, none in a cycle
            self.solids: list[Solid] = solids(floorplan)
            self.geometries = np.array([s.geometry for s in self.solids], dtype=object)
            shapely.prepare(self.geometries)
            self.tree = shapely.STRtree(self.geometries)
        self.doors = tuple(floorplan.doors)
        self.door_lines = np.array([LineString([d.a, d.b]) for d in self.doors], dtype=object)
        self.door_boxes = np.array([door_box(d.a, d.b) for d in self.doors], dtype=object)
        self.door_tree = shapely.STRtree(self.door_lines)
        self.zones = ZoneIndex(tuple(floorplan.zones))

    def __len__(self) -> int:
        return len(self.solids)

    def within(self, geom: BaseGeometry, distance_m: float) -> np.ndarray:
        """Indices of solids within ``distance_m`` of ``geom`` (touching and overlapping too)."""
        if not len(self.solids):
            return np.zeros(0, dtype=int)
        if distance_m > 0.0:
            return self.tree.query(geom, predicate="dwithin", distance=distance_m)
        return self.tree.query(geom, predicate="intersects")

    def nearest(self, geom: BaseGeometry) -> tuple[int | None, float]:
        """Index of the nearest solid and its distance (``None, inf`` for an empty plan)."""
        if not len(self.solids):
            return None, math.inf
        idx, dist = self.tree.query_nearest(geom, return_distance=True, all_matches=False)
        return int(idx[0]), float(dist[0])

    def door_label(self, i: int) -> str:
        """The door's label, or ``door i`` where it has none."""
        return self.doors[i].label or f"door {i}"


def door_box(a: Sequence[float], b: Sequence[float]) -> BaseGeometry:
    """The box round the door line from jamb ``a`` to jamb ``b`` in which its clearance counts."""
    ax, ay = a
    bx, by = b
    w = math.hypot(bx - ax, by - ay)
    ux, uy = (bx - ax) / w, (by - ay) / w
    e = DOOR_BOX_ALONG_M
    line = LineString([(ax - ux * e, ay - uy * e), (bx + ux * e, by + uy * e)])
    return line.buffer(DOOR_BOX_M, cap_style="flat")
