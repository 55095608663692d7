"""Traffic between routes: where two routes' swept bands overlap, and whether two vehicles
meeting head-on in a shared corridor can pass side by side.

- **Conflict areas**: every piece of the intersection of two routes' bands (each the whole
  train's, as checked), with its place (a point inside it), its area, the two routes and the
  direction each travels there (the heading of travel of the route's reference path nearest
  that point).
- **Passing**: route A's path is sampled every :data:`STEP_M`; where route B's path runs the
  other way (directions of travel more than 135 degrees apart) within the free cross-section of
  the corridor at that sample (the line across A's path, out to the first wall or obstacle on
  each side, and within :data:`ALONG_M` along A), the corridor is shared. There the width
  needed side by side is both bands' widths across that line plus each vehicle's margin on
  both of its sides (each keeps its margin from the walls and from the other vehicle):
  ``need = wA + 2 mA + wB + 2 mB``. A shared stretch is ``passing`` if the free width is at
  least that everywhere along it (within :data:`SLACK_M`), else ``single_lane`` (needs
  traffic control); each stretch reports its narrowest place and the spare (or missing) width
  there.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import shapely
from shapely.geometry import LineString, Point

from kinematics.check.obstacles import ObstacleIndex
from kinematics.motion.segments import poses_along, segment_stations

#: Sampling step along a route's path, metres.
STEP_M = 0.1
#: How far along route A route B's nearest sample may lie to share the cross-section, m.
ALONG_M = 0.5
#: Directions of travel more than this apart count as opposite, degrees.
OPPOSITE_DEG = 135.0
#: Farthest a cross-section reaches to find a wall, metres.
REACH_M = 20.0
#: Rounding slack of the passing comparison, metres (the bands' union keeps nanometres).
SLACK_M = 1e-6
#: Smallest overlap reported as a conflict area, square metres.
MIN_AREA_M2 = 1e-6


@dataclass(frozen=True)
class RouteBand:
    """What traffic needs of one checked route: its segments, band and vehicle's margin."""

    name: str
    segments: tuple
    band: Any
    margin_m: float
    vehicle: str = ""


def band_of(check: Any, chassis: Any) -> RouteBand:
    """The :class:`RouteBand` of a route check (its whole train's band)."""
    margins = [chassis.margin_m] + [chassis.trailer_margin(i) for i in
                                    range(len(getattr(chassis, "trailers", ()) or ()))]
    return RouteBand(check.name, tuple(check.segments), check.swept, max(margins),
                     getattr(chassis, "name", ""))


def _samples(segs: Sequence[Any]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Stations, poses and directions of travel every STEP_M along the moving segments."""
    edges = segment_stations(segs)
    total = float(edges[-1]) if len(edges) else 0.0
    if total <= 0.0:
        return np.zeros(0), np.zeros((0, 3)), np.zeros(0)
    st = np.linspace(0.0, total, max(2, math.ceil(total / STEP_M) + 1))
    poses = poses_along(segs, st)
    idx = np.clip(np.searchsorted(edges, st, side="right") - 1, 0, len(segs) - 1)
    course = np.array([segs[i].course if segs[i].course_rad is not None else
                       poses[k, 2] + (0.0 if segs[i].direction > 0 else math.pi)
                       for k, i in enumerate(idx.tolist())])
    return st, poses, course


def _nearest(poses: np.ndarray, x: float, y: float) -> int:
    return int(np.argmin(np.hypot(poses[:, 0] - x, poses[:, 1] - y)))


def conflict_areas(a: RouteBand, b: RouteBand) -> list[dict]:
    """Pieces where the two bands overlap, largest first."""
    if a.band is None or b.band is None:
        return []
    inter = shapely.intersection(a.band, b.band)
    out = []
    sa, pa, ca = _samples(a.segments)
    sb, pb, cb = _samples(b.segments)
    for g in shapely.get_parts(inter):
        if g.geom_type != "Polygon" or g.area < MIN_AREA_M2:
            continue
        p = g.representative_point()
        entry = {"routes": [a.name, b.name], "x": float(p.x), "y": float(p.y),
                 "area_m2": float(g.area), "directions": []}
        for name, st, poses, course in ((a.name, sa, pa, ca), (b.name, sb, pb, cb)):
            if len(st):
                k = _nearest(poses, p.x, p.y)
                entry["directions"].append({"route": name, "station_m": float(st[k]),
                                            "travel_deg": math.degrees(
                                                math.remainder(course[k], 2 * math.pi))})
        out.append(entry)
    out.sort(key=lambda e: -e["area_m2"])
    return out


def _free(index: ObstacleIndex, x: float, y: float, nx: float, ny: float) -> float:
    """Distance from (x, y) along (nx, ny) to the first wall or obstacle (REACH_M if none)."""
    ray = LineString([(x, y), (x + REACH_M * nx, y + REACH_M * ny)])
    best = REACH_M
    origin = Point(x, y)
    for j in index.within(ray, 0.0).tolist():
        hit = shapely.intersection(ray, index.geometries[j])
        if not hit.is_empty:
            best = min(best, float(shapely.distance(origin, hit)))
    return best


def _width_across(band: Any, line: LineString, px: float, py: float) -> float:
    """Length of the band's cross-section along ``line`` nearest the point (px, py)."""
    if band is None:
        return 0.0
    cut = shapely.intersection(band, line)
    pieces = [g for g in shapely.get_parts(cut) if g.geom_type == "LineString" and g.length > 0]
    if not pieces:
        return 0.0
    pt = Point(px, py)
    return float(min(pieces, key=lambda g: g.distance(pt)).length)


def passing(a: RouteBand, b: RouteBand, index: ObstacleIndex) -> list[dict]:
    """Shared stretches where ``b`` runs against ``a``, with the passing verdict of each."""
    sa, pa, ca = _samples(a.segments)
    sb, pb, cb = _samples(b.segments)
    if not len(sa) or not len(sb):
        return []
    cos_opp = math.cos(math.radians(OPPOSITE_DEG))
    rows: list[dict | None] = []
    for k in range(len(sa)):
        x, y, course = float(pa[k, 0]), float(pa[k, 1]), float(ca[k])
        ex, ey = math.cos(course), math.sin(course)
        nx, ny = -ey, ex
        dx, dy = pb[:, 0] - x, pb[:, 1] - y
        along = dx * ex + dy * ey
        side = dx * nx + dy * ny
        near = np.abs(along) <= ALONG_M
        opp = np.cos(cb - course) < cos_opp
        cand = np.nonzero(near & opp)[0]
        if not len(cand):
            rows.append(None)
            continue
        left = _free(index, x, y, nx, ny)
        right = _free(index, x, y, -nx, -ny)
        inside = cand[(side[cand] <= left) & (side[cand] >= -right)]
        if not len(inside):
            rows.append(None)
            continue
        j = int(inside[np.argmin(np.abs(along[inside]))])
        line = LineString([(x - right * nx, y - right * ny), (x + left * nx, y + left * ny)])
        wa = _width_across(a.band, line, x, y)
        wb = _width_across(b.band, line, float(pb[j, 0]), float(pb[j, 1]))
        need = wa + 2.0 * a.margin_m + wb + 2.0 * b.margin_m
        rows.append({"station_m": float(sa[k]), "other_station_m": float(sb[j]), "x": x,
                     "y": y, "width_m": left + right, "need_m": need,
                     "spare_m": left + right - need})
    out = []
    k = 0
    while k < len(rows):
        if rows[k] is None:
            k += 1
            continue
        run = []
        while k < len(rows) and rows[k] is not None:
            run.append(rows[k])
            k += 1
        worst = min(run, key=lambda r: r["spare_m"])
        ok = worst["spare_m"] >= -SLACK_M
        out.append({"routes": [a.name, b.name], "from_station_m": run[0]["station_m"],
                    "to_station_m": run[-1]["station_m"], "verdict": "passing" if ok else
                    "single_lane", "narrowest": worst,
                    "message": (f"{a.name!r} and {b.name!r} meet head-on from station "
                                f"{run[0]['station_m']:.2f} to {run[-1]['station_m']:.2f} m "
                                f"of {a.name!r}: " + (
                                    f"they pass side by side, {worst['spare_m'] * 1000:.0f} mm "
                                    "to spare at the narrowest" if ok else
                                    f"single lane, {-worst['spare_m'] * 1000:.0f} mm too "
                                    f"narrow at ({worst['x']:.2f}, {worst['y']:.2f}); needs "
                                    "traffic control"))})
    return out


def traffic(bands: Sequence[RouteBand], index: ObstacleIndex) -> dict:
    """Conflict areas and passing verdicts of every pair of routes."""
    conflicts: list[dict] = []
    corridors: list[dict] = []
    for i, a in enumerate(bands):
        for b in bands[i + 1:]:
            conflicts += conflict_areas(a, b)
            corridors += passing(a, b, index)
    return {"conflicts": conflicts, "corridors": corridors}


def format_traffic_text(report: dict) -> str:
    """The traffic section of ``swathe check --traffic``'s text report."""
    out = ["Traffic between routes:"]
    if not report["conflicts"] and not report["corridors"]:
        out.append("  no two routes' bands overlap and no corridor is shared head-on")
    for c in report["conflicts"]:
        dirs = ", ".join(f"{d['route']!r} travelling {d['travel_deg']:.0f} deg at station "
                         f"{d['station_m']:.2f} m" for d in c["directions"])
        out.append(f"  conflict area {c['area_m2']:.2f} m2 at ({c['x']:.2f}, {c['y']:.2f}) "
                   f"between {c['routes'][0]!r} and {c['routes'][1]!r}: {dirs}")
    for c in report["corridors"]:
        n = c["narrowest"]
        out.append(f"  {c['verdict']:<11} {c['message']} (width {n['width_m']:.3f} m, "
                   f"needed {n['need_m']:.3f} m)")
    return "\n".join(out) + "\n"
