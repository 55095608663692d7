"""Slow zones and stops in the timing: the route cut into pieces with their own speed caps.

- A ``slow`` zone caps the speed at its ``speed_mps`` while any part of the footprint is
  inside. Each moving segment is stepped so that no footprint point moves more than
  :data:`STEP_M` per step (:func:`kinematics.check.sweep.travel_m`); a step is capped when the
  footprint placed at its start, grown by that step's travel, meets the zone. Every placement
  within the step lies inside that grown footprint, so the cap always covers the stretch where
  the footprint overlaps the zone (it may start and end up to one step early and late).
- A stop (``Route.stops``) is where the route's path comes nearest the waypoint (the first
  such place after the previous stop, on poses every :data:`STOP_GRID_M`): the chassis comes to
  rest there and stands ``dwell_s`` before going on. A stop at the route's end rests there
  anyway; its dwell is listed with the stops but adds no samples.

:func:`split_route` cuts the plan's segments at those places; the profile
(:func:`kinematics.timing.profile.speed_profile`) takes the pieces with their caps, the
joints where it must rest and the dwell before each piece.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np
import shapely

from kinematics.check.sweep import placed_footprints, travel_m
from kinematics.files.floorplan import Zone, zone_polygon
from kinematics.motion.arrays import unique_sorted
from kinematics.motion.segments import Segment, segment_stations

#: Largest footprint travel per step when finding where a slow zone caps the speed, metres.
STEP_M = 0.02
#: Spacing of the route poses searched for a stop's place, metres.
STOP_GRID_M = 0.01
#: The binding-limit name of a slow zone's cap.
SLOW_ZONE = "slow_zone"


@dataclass(frozen=True)
class StopAt:
    """A stop on the planned path: waypoint (0-based), station, place, dwell."""

    waypoint: int
    station_m: float
    x: float
    y: float
    dwell_s: float

    def to_dict(self) -> dict:
        return {"waypoint": self.waypoint, "station_m": self.station_m, "x": self.x,
                "y": self.y, "dwell_s": self.dwell_s}


@dataclass(frozen=True)
class RoutePieces:
    """The plan's segments cut at slow-zone edges and stops.

    ``plan_segment[k]`` is the plan segment piece ``k`` comes from; ``cap[k]`` the slow-zone
    speed cap on it (``None``: none) and ``zone[k]`` that zone's name; ``rest_before`` the
    pieces before which the chassis stands still, ``dwell_s[k]`` how long (s).
    """

    pieces: tuple[Segment, ...]
    plan_segment: tuple[int, ...]
    cap: tuple[float | None, ...]
    zone: tuple[str, ...]
    rest_before: frozenset[int]
    dwell_s: tuple[float, ...]
    stops: tuple[StopAt, ...]

    @property
    def split(self) -> bool:
        """Whether any segment was cut (else the pieces are the plan's segments)."""
        return len(self.pieces) != len(set(self.plan_segment))


def piece_of(seg: Segment, f0: float, f1: float) -> Segment:
    """The part of ``seg`` from fraction ``f0`` to ``f1`` (lines, arcs, clothoids)."""
    if f0 <= 0.0 and f1 >= 1.0:
        return seg
    start = tuple(float(v) for v in seg.poses_at_fraction(np.array([f0]))[0])
    df = f1 - f0
    if seg.kind == "clothoid":
        k0 = seg.kappa0 + (seg.kappa1 - seg.kappa0) * f0
        k1 = seg.kappa0 + (seg.kappa1 - seg.kappa0) * f1
        length = seg.length_m * df
        return replace(seg, start=start, length_m=length, kappa0=k0, kappa1=k1,
                       turn_rad=seg.direction * length * 0.5 * (k0 + k1))
    return replace(seg, start=start, length_m=seg.length_m * df, turn_rad=seg.turn_rad * df)


def _slow_zones(zones: Sequence[Zone]) -> list[tuple[object, float, str]]:
    out = []
    for i, z in enumerate(zones):
        if z.kind != "slow" or z.speed_mps is None:
            continue
        poly = zone_polygon(z.points)
        if poly is not None:
            out.append((poly, float(z.speed_mps), f"zone {i} ({z.label})" if z.label
                        else f"zone {i}"))
    return out


def _capped_steps(seg: Segment, footprint: object, slow: list) -> tuple[np.ndarray, list]:
    """Fractions ``f`` of the step edges and, per step, ``(cap, name)`` or ``None``."""
    travel = travel_m(footprint, seg)
    n = int(min(20000, max(1, math.ceil(travel / STEP_M))))
    f = np.linspace(0.0, 1.0, n + 1)
    placed = placed_footprints(footprint, seg.poses_at_fraction(f[:-1]))
    grown = shapely.buffer(placed, travel / n, quad_segs=4)
    caps: list = [None] * n
    for poly, cap, name in slow:
        if not shapely.intersects(shapely.envelope(shapely.union_all(grown)), poly):
            continue
        hit = shapely.intersects(grown, poly)
        for k in np.flatnonzero(hit).tolist():
            if caps[k] is None or cap < caps[k][0]:
                caps[k] = (cap, name)
    return f, caps


def stops_on_path(segments: Sequence[Segment], waypoints: Sequence[object],
                  stops: Sequence[object]) -> list[StopAt]:
    """Where each stop of the route lies on its planned path (see module docstring)."""
    segs = tuple(segments)
    if not stops or not segs:
        return []
    edges = segment_stations(segs)
    total = float(edges[-1])
    st = np.linspace(0.0, total, max(2, int(math.ceil(total / STOP_GRID_M)) + 1))
    # Exact joints too, so a stop where the path passes through a waypoint lands on it.
    st = unique_sorted(np.concatenate([st, edges]))
    xy = np.empty((st.size, 2))
    idx = np.clip(np.searchsorted(edges, st, side="right") - 1, 0, len(segs) - 1)
    for i in unique_sorted(idx):
        m = idx == i
        s = segs[i]
        local = st[m] - edges[i]
        xy[m] = s.poses_at(local)[:, :2] if s.length_m > 0 else s.end[:2]
    out: list[StopAt] = []
    lo = 0
    n_wp = len(waypoints)
    for s in sorted(stops, key=lambda s: s.waypoint):
        w = waypoints[s.waypoint]
        wx, wy = (float(w.x), float(w.y)) if hasattr(w, "x") else (float(w[0]), float(w[1]))
        if s.waypoint == 0:
            k = 0
        elif s.waypoint == n_wp - 1:
            k = st.size - 1
        else:
            d = np.hypot(xy[lo:, 0] - wx, xy[lo:, 1] - wy)
            k = lo + int(np.argmin(d))
        lo = k
        out.append(StopAt(int(s.waypoint), float(st[k]), float(xy[k, 0]), float(xy[k, 1]),
                          float(s.dwell_s)))
    return out


def split_route(segments: Sequence[Segment], footprint: object, zones: Sequence[Zone] = (),
                waypoints: Sequence[object] = (), stops: Sequence[object] = ()
                ) -> RoutePieces:
    """The route cut at slow-zone edges and stops, with the caps and rests of each piece."""
    segs = tuple(segments)
    slow = _slow_zones(zones)
    placed = stops_on_path(segs, waypoints, stops)
    edges = segment_stations(segs)
    pieces: list[Segment] = []
    owner: list[int] = []
    caps: list[float | None] = []
    names: list[str] = []
    rest: set[int] = set()
    dwell: list[float] = []
    # Stops inside a segment cut it; a stop on a joint (or an end) rests before the piece
    # that starts there.
    inner: dict[int, list[float]] = {}
    for s in placed:
        i = int(np.clip(np.searchsorted(edges, s.station_m, side="right") - 1, 0,
                        len(segs) - 1))
        seg = segs[i]
        local = s.station_m - float(edges[i])
        if seg.length_m > 0.0 and 1e-9 < local < seg.length_m - 1e-9:
            inner.setdefault(i, []).append(local / seg.length_m)
    wait_at: dict[float, float] = {}
    for s in placed:
        wait_at[s.station_m] = wait_at.get(s.station_m, 0.0) + s.dwell_s
    for i, seg in enumerate(segs):
        if seg.kind == "pivot" or seg.length_m <= 0.0:
            cuts = [0.0, 1.0]
            step_caps = None
        else:
            cuts = [0.0, 1.0] + inner.get(i, [])
            step_caps = None
            if slow:
                f, step = _capped_steps(seg, footprint, slow)
                if any(c is not None for c in step):
                    step_caps = (f, step)
                    for k in range(1, len(step)):
                        if step[k] != step[k - 1]:
                            cuts.append(float(f[k]))
        cuts = sorted(set(cuts))
        for f0, f1 in zip(cuts[:-1], cuts[1:]):
            pieces.append(piece_of(seg, f0, f1) if seg.kind != "pivot" else seg)
            owner.append(i)
            cap, name = None, ""
            if step_caps is not None:
                f, step = step_caps
                k = int(np.clip(np.searchsorted(f, 0.5 * (f0 + f1), side="right") - 1, 0,
                                len(step) - 1))
                if step[k] is not None:
                    cap, name = step[k]
            caps.append(cap)
            names.append(name)
            dwell.append(0.0)
    # Rests and dwells before the piece that starts at each stop's station.
    starts = np.zeros(len(pieces))
    acc = 0.0
    for k, p in enumerate(pieces):
        starts[k] = acc
        acc += p.length_m
    for st_m, wait in wait_at.items():
        k = int(np.searchsorted(starts, st_m - 1e-9, side="left"))
        if k < len(pieces):
            if k > 0:
                rest.add(k)
            dwell[k] += wait
    return RoutePieces(tuple(pieces), tuple(owner), tuple(caps), tuple(names),
                       frozenset(rest), tuple(dwell), tuple(placed))
