"""Zones of the floor plan in the check: keep-out, margin and one-way rules.

Zones are not solids (:mod:`kinematics.files.floorplan`); each has its own rule:

- ``keep_out``: no part of the footprint may enter. A segment whose conservative swept
  region (:mod:`kinematics.check.sweep`, a superset of the true one by at most the tolerance)
  meets the zone is a ``keep_out`` violation; where it starts is found as for a collision
  (:func:`kinematics.check.violations.locate_hit`), the amount is the overlap depth.
- ``margin``: the clearance rule inside the zone replaces the chassis margin. The swept
  region is cut by the zones: the part inside zone ``k`` must keep ``margin_m`` of ``k`` from
  every solid, the part outside every margin zone the chassis margin (where margin zones
  overlap, both rules hold, so the larger counts). The true region cut the same way lies in
  the cut conservative region, so its distances are never larger: the rule is never missed,
  and a false alarm needs the region to be within the tolerance of breaking it.
- ``one_way``: where the reference point is inside the zone, its direction of travel must be
  within 90 degrees of ``direction_deg`` (crossing at right angles is allowed); a route driving
  against it is a ``wrong_way`` violation, its amount the length driven against the zone.
  The path is followed in chords of at most :data:`WRONG_WAY_STEP_M`; a chord counts when the
  direction anywhere along it is against the zone and it meets the zone grown by the chord's
  sagitta, so a wrong-way stretch is never missed.

``slow`` zones act on the speed profile (:mod:`kinematics.timing.zones`), not here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import Polygon
from shapely.geometry.base import BaseGeometry

from kinematics.files.floorplan import Zone, zone_polygon
from kinematics.motion.segments import Segment

#: Longest chord of the reference path tested against one-way zones, metres.
WRONG_WAY_STEP_M = 0.01
#: Direction of travel against a one-way zone: cosine of the angle to it below this.
_AGAINST_COS = -1e-9


def zone_name(i: int, zone: Zone) -> str:
    """``zone 2 (ward corridor)``: how messages name a zone (0-based, as walls)."""
    return f"zone {i} ({zone.label})" if zone.label else f"zone {i}"


class _Kind:
    """The zones of one kind: their polygons in one STRtree with their numbers."""

    def __init__(self, zones: list[tuple[int, Zone, Polygon]]) -> None:
        self.number = [i for i, _z, _p in zones]
        self.zones = [z for _i, z, _p in zones]
        self.geometries = np.array([p for _i, _z, p in zones], dtype=object)
        shapely.prepare(self.geometries)
        self.tree = shapely.STRtree(self.geometries)

    def __len__(self) -> int:
        return len(self.zones)

    def touching(self, geoms: np.ndarray | BaseGeometry, distance: float = 0.0) -> list[int]:
        """Indices (into this kind) of zones meeting ``geoms`` (within ``distance``)."""
        if not len(self):
            return []
        if distance > 0.0:
            got = self.tree.query(geoms, predicate="dwithin", distance=distance)
        else:
            got = self.tree.query(geoms, predicate="intersects")
        got = got[1] if got.ndim == 2 else got
        return sorted(set(got.tolist()))

    def name(self, k: int) -> str:
        return zone_name(self.number[k], self.zones[k])


class ZoneIndex:
    """A floor plan's zones by kind, each kind in its own STRtree."""

    def __init__(self, zones: tuple[Zone, ...]) -> None:
        by: dict[str, list[tuple[int, Zone, Polygon]]] = {
            "keep_out": [], "slow": [], "margin": [], "one_way": []}
        for i, z in enumerate(zones):
            poly = zone_polygon(z.points)
            if poly is not None:
                by[z.kind].append((i, z, poly))
        self.keep_out = _Kind(by["keep_out"])
        self.slow = _Kind(by["slow"])
        self.margin = _Kind(by["margin"])
        self.one_way = _Kind(by["one_way"])
        self.widest_margin_m = max((z.margin_m or 0.0 for z in self.margin.zones), default=0.0)

    def margin_rule(self, parts: np.ndarray, base_margin_m: float) -> MarginRule | None:
        """The clearance rule for a swept region made of ``parts``: ``None`` when no margin
        zone meets it (the chassis margin holds everywhere)."""
        ks = self.margin.touching(parts)
        if not ks:
            return None
        return MarginRule(base_margin_m, [(self.margin.geometries[k],
                                           float(self.margin.zones[k].margin_m or 0.0),
                                           self.margin.name(k)) for k in ks])


@dataclass(frozen=True)
class Shortfall:
    """How far a region falls short of the clearance rule near one solid."""

    short_m: float      # need - clearance of the worst region (> 0: the rule is broken)
    need_m: float       # the margin that region must keep
    clearance_m: float  # its clearance
    zone: str           # the margin zone it lies in ("" outside every margin zone)


class MarginRule:
    """The chassis margin outside the margin zones, each zone's margin inside it."""

    def __init__(self, base_margin_m: float,
                 zones: list[tuple[BaseGeometry, float, str]]) -> None:
        self.base_margin_m = float(base_margin_m)
        self.zones = zones
        self.outside = shapely.union_all([g for g, _m, _n in zones])
        self.reach_m = max([self.base_margin_m] + [m for _g, m, _n in zones])

    def regions(self, geoms: np.ndarray) -> list[tuple[np.ndarray, float, str]]:
        """``geoms`` cut into the region outside every zone and the region inside each."""
        geoms = np.asarray(geoms, dtype=object)
        out = [(shapely.difference(geoms, self.outside), self.base_margin_m, "")]
        for g, m, n in self.zones:
            out.append((shapely.intersection(geoms, g), m, n))
        return out

    def each(self, geoms: np.ndarray, solid: BaseGeometry) -> np.ndarray:
        """Shortfall (metres, > 0 breaks the rule) of each geometry of ``geoms`` alone."""
        worst = np.full(len(geoms), -math.inf)
        for cut, need, _n in self.regions(geoms):
            d = shapely.distance(cut, solid)
            d = np.where(shapely.is_empty(cut), math.inf, d)
            worst = np.maximum(worst, need - d)
        return worst

    def of_union(self, geoms: np.ndarray, solid: BaseGeometry) -> Shortfall:
        """The shortfall of the region that is the union of ``geoms`` (its worst region)."""
        best = Shortfall(-math.inf, self.base_margin_m, math.inf, "")
        for cut, need, name in self.regions(geoms):
            cut = cut[~shapely.is_empty(cut)]
            if not len(cut):
                continue
            d = float(np.min(shapely.distance(cut, solid)))
            if need - d > best.short_m:
                best = Shortfall(need - d, need, d, name)
        return best


def _course(seg: Segment, f: np.ndarray) -> np.ndarray:
    """Direction of travel of the reference point at fractions ``f`` of a moving segment."""
    if seg.kind == "line":
        return np.full(f.shape, seg.course)
    return seg.start[2] + f * seg.turn_rad + (0.0 if seg.direction > 0 else math.pi)


@dataclass(frozen=True)
class WrongWay:
    """A stretch of one segment driven against one-way zone ``zone`` (index in its kind)."""

    zone: int
    start_local_m: float
    x: float
    y: float
    length_m: float


def wrong_way(seg: Segment, zones: ZoneIndex) -> tuple[WrongWay, ...]:
    """Where the reference point drives ``seg`` against a one-way zone (see module doc)."""
    ow = zones.one_way
    if not len(ow) or seg.kind == "pivot" or seg.length_m <= 0.0:
        return ()
    n = max(1, math.ceil(seg.length_m / WRONG_WAY_STEP_M))
    f = np.linspace(0.0, 1.0, n + 1)
    poses = seg.poses_at_fraction(f)
    xy = poses[:, :2]
    sag = 0.0
    if seg.kind == "arc" and seg.radius_m:
        dth = abs(seg.turn_rad) / n
        sag = seg.radius_m * (1.0 - math.cos(dth / 2.0)) + 1e-9
    chords = shapely.linestrings(np.stack([xy[:-1], xy[1:]], axis=1))
    near = ow.touching(shapely.linestrings(xy), sag)
    out = []
    for k in near:
        z = ow.zones[k]
        zd = math.radians(z.direction_deg or 0.0)
        c = _course(seg, f)
        ca, cb = np.cos(c[:-1] - zd), np.cos(c[1:] - zd)
        against = np.minimum(ca, cb) < _AGAINST_COS
        if seg.kind == "arc":
            # The direction turns monotonically along a chord: it passes straight against
            # the zone when the opposite direction lies between its ends.
            lo, hi = np.minimum(c[:-1], c[1:]), np.maximum(c[:-1], c[1:])
            opp = zd + math.pi
            kk = np.ceil((lo - opp) / (2 * math.pi))
            against |= opp + kk * 2 * math.pi <= hi
        if not against.any():
            continue
        poly = ow.geometries[k]
        area = poly.buffer(sag) if sag > 0.0 else poly
        meets = against & shapely.intersects(chords, area)
        if not meets.any():
            continue
        step = seg.length_m / n
        rows = np.flatnonzero(meets)
        # Contiguous runs of chords, one stretch each.
        breaks = np.flatnonzero(np.diff(rows) > 1)
        starts = np.concatenate([[0], breaks + 1])
        ends = np.concatenate([breaks, [len(rows) - 1]])
        for a, b in zip(starts.tolist(), ends.tolist()):
            r0 = int(rows[a])
            entry = chords[r0].intersection(area)
            p = entry.representative_point() if not entry.is_empty else shapely.points(xy[r0])
            if not entry.is_empty:
                q = shapely.get_coordinates(entry)
                d = np.hypot(q[:, 0] - xy[r0, 0], q[:, 1] - xy[r0, 1])
                p = shapely.points(q[int(np.argmin(d))])
            local = r0 * step + float(np.hypot(p.x - xy[r0, 0], p.y - xy[r0, 1]))
            length = float(shapely.length(shapely.intersection(
                shapely.linestrings(xy[r0:int(rows[b]) + 2]), area)))
            out.append(WrongWay(k, min(local, seg.length_m), float(p.x), float(p.y),
                                max(length, 0.0)))
    return tuple(out)
