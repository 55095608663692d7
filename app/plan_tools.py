"""Floor-plan tools for the canvas that need no Qt: what element lies under the pointer.

The canvas asks :func:`element_at` when the pointer is off the route, so a wall, obstacle,
door or zone is named on hover with the same name the check's messages use ("wall 23",
"obstacle 4 (rack)", "zone 1 (ward)"); the edits themselves are
:mod:`kinematics.files.plan_edits`.
"""

from __future__ import annotations

from typing import Any

import shapely
from shapely.geometry import Point

from kinematics.check.zones import zone_name


def element_at(index: Any, x: float, y: float, tol_m: float) -> dict | None:
    """The element nearest ``(x, y)`` within ``tol_m`` (solids, then doors, then zones):
    ``{"kind", "index", "name", "text"}``, or ``None``."""
    pt = Point(x, y)
    if len(index.solids):
        hit = index.tree.query(pt, predicate="dwithin", distance=tol_m)
        if len(hit):
            d = shapely.distance(index.geometries[hit], pt)
            s = index.solids[int(hit[int(d.argmin())])]
            return {"kind": s.kind, "index": s.index, "name": s.name, "text": s.name}
    if len(index.doors):
        hit = index.door_tree.query(pt, predicate="dwithin", distance=tol_m)
        if len(hit):
            k = int(hit[0])
            d = index.doors[k]
            name = index.door_label(k)
            return {"kind": "door", "index": k, "name": name,
                    "text": f"door {name} ({d.width_m:.3f} m wide)"}
    for i, z in enumerate(index.floorplan.zones):
        if shapely.Polygon(z.points).buffer(tol_m).contains(pt):
            if z.kind == "slow":
                words = f"slow, {z.speed_mps:g} m/s"
            elif z.kind == "margin":
                words = f"margin {z.margin_m * 1000:.0f} mm"
            elif z.kind == "one_way":
                words = f"one way, {z.direction_deg:g} deg"
            else:
                words = "keep out"
            return {"kind": "zone", "index": i, "name": zone_name(i, z),
                    "text": f"{zone_name(i, z)}: {words}"}
    return None
