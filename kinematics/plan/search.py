"""Route finder: a drivable, clear route between poses for every drive, and repair of a sketch.

The search is Hybrid A* (Dolgov, Thrun, Montemerlo and Diebel, "Practical search techniques in
path planning for autonomous driving", 2008; "Path planning for autonomous vehicles in unknown
semi-structured environments", 2010) over continuous poses ``(x, y, heading)`` with a closed
set on a grid of cells and heading bins:

- **Motion primitives per drive** (:func:`primitives`): steered drives (bicycle, Ackermann, and
  a differential cart that turns with a radius) drive arcs at the turn radius left and right
  and a straight, forward and, where the route may reverse, backward; a differential cart with
  radius 0 drives straight (and back) and pivots on the spot; mecanum and swerve translate in
  eight body directions and turn on the spot.
- **Collision check** with the checker's own footprint, margin and conservative sweep
  (:func:`kinematics.check.sweep.swept_parts`): each primitive is swept once from the origin
  and moved rigidly to every node; a motion is kept only where every swept part is at least the
  margin (plus ``SAFETY_M``) from every solid of the :class:`ObstacleIndex`. The plan's zones
  are honoured as the check rules them (:mod:`kinematics.check.zones`): keep-out zones are
  barred to the footprint like solids, the part of a motion inside a margin zone keeps that
  zone's margin, and no motion drives against a one-way zone. A clearance grid
  (:mod:`kinematics.plan.heuristics`) skips the exact test of a motion that stays far from
  every solid and keep-out zone (by the widest margin zone's margin).
- **Cost**: path length; reversing costs ``reverse_factor`` times its length and every change
  of direction ``switch_penalty_m``; pivots cost their turn times ``pivot_cost_m_per_rad``; and
  a clearance term grows linearly from 0 where the swept motion keeps ``clearance_pref_m`` above
  the margin to ``clearance_weight`` per metre at the margin, so the route keeps off the walls
  where it can.
- **Heuristic**: the larger of the obstacle-free Dubins / Reeds-Shepp length to the goal pose
  (:mod:`~kinematics.plan.dubins`, :mod:`~kinematics.plan.reeds_shepp`; Euclidean for drives
  that pivot or move sideways, or where the goal heading is free; one pair at a time in plain
  floats, :mod:`~kinematics.plan.dubins_one`, :mod:`~kinematics.plan.reeds_shepp_one`) and the
  2D grid distance
  around the solids, weighted by ``heuristic_weight`` (> 1 trades optimality for speed).
- **Analytic expansion**: from popped nodes, every few expansions and at every one near the
  goal, the route's own connection to the goal (the planner's Dubins / Reeds-Shepp, pivot-line
  or holonomic line between two poses, :func:`kinematics.plan.planner.plan_route`) is swept;
  if it is clear the search ends there. Goal poses are therefore reached exactly. Two
  shortcuts keep this cheap: the heuristic's shortest word from each node to the goal is
  kept, and a connection with a pose the clearance grid proves blocked (a disc inside the
  footprint nearer a solid than any margin, :meth:`RouteFinder._surely_blocked`) is passed
  over before it is planned or swept; connections are planned through a
  :class:`~kinematics.plan.planner.PieceCache` (the plan is the same with or without it).
- **Smoothing into the route's own segment kinds**: the chain of node poses becomes waypoints
  with headings, keeping only as many as needed: from each kept pose the farthest later pose
  whose planner connection is clear (doubling then bisection). The route is then planned by
  :func:`~kinematics.plan.planner.plan_route` like any sketched route (so it is lines and arcs,
  and clothoids where the route's transitions ask for them and the planner makes them) and
  re-checked with :func:`kinematics.check.train.check_train` (the tug and every trailer it
  tows, zones included) before it is offered.

:class:`RouteFinder` offers the uses: :meth:`~RouteFinder.find` (first waypoint to last,
through the interior waypoints in order, with their headings where set) and
:meth:`~RouteFinder.repair` (keep the legs that pass, re-search only the failing ones). The time
limit is checked every few expansions and always honoured; a node budget is checked too.

Size: one search (Hybrid A*): the motion primitives, the node expansion, the analytic
Dubins/Reeds-Shepp shots and the repair of a sketched route share the settings, the closed set
and the check; the grid heuristics are in kinematics/plan/heuristics.py.
"""

from __future__ import annotations

import heapq
import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace

import numpy as np
import shapely
from numpy.typing import NDArray
from shapely.geometry import Point

from kinematics.check.clearance import ObstacleIndex, RouteCheck
from kinematics.check.sweep import (
    DEFAULT_TOLERANCE_M,
    farthest_radius,
    placed_footprints,
    prepare_footprint,
    swept_parts,
)
from kinematics.check.train import check_train
from kinematics.check.zones import wrong_way
from kinematics.errors import ValidationError
from kinematics.files.project import Chassis, Project, Route, Stop, Waypoint, route_transitions
from kinematics.motion.segments import Segment, arc, holonomic_line, line, pivot, poses_along
from kinematics.motion.trailers import hitch_angles, trace_train
from kinematics.plan import dubins
from kinematics.plan.dubins_one import shortest_one
from kinematics.plan.heuristics import ClearanceGrid
from kinematics.plan.planner import (
    DUPLICATE_TOL_M,
    PieceCache,
    RoutePlan,
    _drive_limits,
    plan_route,
)
from kinematics.plan.reeds_shepp_one import shortest_one as rs_one

#: Extra clearance (m) the search keeps above the margin, so rounding never flips a verdict.
SAFETY_M = 1e-3
#: The search area reaches this far (m) beyond the floor plan and the waypoints.
AREA_PAD_M = 1.0
#: Hitch angles are binned this coarsely (rad) in the search's closed set for a train.
HITCH_BIN_RAD = math.radians(15.0)
#: Hitch angles are sampled this often (m of tug travel) against the jackknife limit.
HITCH_STEP_M = 0.02
Pose = tuple[float, float, float]
Headings = tuple[float, ...]
ProgressFn = Callable[[float, int], None]
StopFn = Callable[[], bool]


@dataclass(frozen=True)
class FindSettings:
    """Tuning of the search (defaults suit rooms and corridors of a building)."""

    time_limit_s: float = 5.0
    node_budget: int = 200_000
    heading_bins: int = 72
    step_m: float | None = None
    clearance_pref_m: float = 0.15
    clearance_weight: float = 3.0
    reverse_factor: float = 2.0
    switch_penalty_m: float = 1.0
    pivot_cost_m_per_rad: float | None = None
    heuristic_weight: float = 1.5
    analytic_every: int = 4
    analytic_near_every: int = 1
    improve_min: int = 100


@dataclass
class FindResult:
    """What a find or a repair gave: the new route (when found) and how the search went."""

    name: str
    found: bool
    route: Route | None = None
    plan: RoutePlan | None = None
    check: RouteCheck | None = None
    expanded_nodes: int = 0
    time_s: float = 0.0
    reason: str = ""
    blocked_at: tuple[float, float] | None = None
    searched: NDArray[np.float64] = field(default_factory=lambda: np.zeros((0, 2)))
    legs: tuple[int, ...] = ()
    notes: tuple[str, ...] = ()
    cancelled: bool = False

    def to_dict(self) -> dict:
        """The contract's ``find --json`` route object (plus ``found`` and, failing, why)."""
        d: dict = {"name": self.name, "found": self.found,
                   "expanded_nodes": int(self.expanded_nodes), "time_s": float(self.time_s)}
        if self.found and self.route is not None and self.plan is not None:
            chosen = self.plan.chosen_headings
            d["waypoints"] = [[w.x, w.y, w.heading_deg if w.heading_deg is not None
                               else chosen.get(k)]
                              for k, w in enumerate(self.route.waypoints)]
            d["segments"] = [s.to_dict() for s in self.plan.segments]
            d["length_m"] = self.plan.length_m
            d["clear"] = bool(self.check.clear) if self.check is not None else False
            d["min_clearance_m"] = (None if self.check is None
                                    else self.check.min_clearance_m)
            d["legs_searched"] = list(self.legs)
        else:
            d["clear"] = False
            d["reason"] = self.reason
            if self.blocked_at is not None:
                d["blocked_at"] = {"x": self.blocked_at[0], "y": self.blocked_at[1]}
        if self.notes:
            d["notes"] = list(self.notes)
        return d


class SearchStopped(Exception):
    """The caller asked the search to stop (Cancel in the window)."""


@dataclass(frozen=True, eq=False)
class Primitive:
    """One motion from the origin pose: its segment, swept parts and end pose."""

    seg: Segment
    parts: NDArray[np.object_]
    end: Pose
    length_m: float
    direction: int
    turn_rad: float
    reach_m: float
    kind: str


# -- drive modes ---------------------------------------------------------------------------
def drive_mode(chassis: Chassis, route: Route) -> tuple[str, float]:
    """``("steer" | "pivot" | "holo", radius_m)``: how the planner joins this route's poses."""
    drive, min_r, can_pivot, holonomic = _drive_limits(chassis)
    if holonomic:
        return "holo", 0.0
    asked = float(route.turn_radius_m or 0.0)
    radius = max(asked, min_r) if asked > 0.0 else min_r
    if drive == "differential" and radius == 0.0 and can_pivot:
        return "pivot", 0.0
    return "steer", radius


def primitives(mode: str, radius_m: float, step_m: float, reverse: bool, footprint,
               tolerance_m: float = DEFAULT_TOLERANCE_M) -> list[Primitive]:
    """The motion primitives of a drive mode, each swept once from pose (0, 0, 0)."""
    fp = prepare_footprint(footprint)
    o = (0.0, 0.0, 0.0)
    segs: list[Segment] = []
    dirs = (1, -1) if reverse else (1,)
    if mode == "steer":
        turn = step_m / radius_m
        for d in dirs:
            segs.append(line(o, step_m, d))
            for sign in (1.0, -1.0):
                # Steering left (curvature +1/r) turns the heading clockwise in reverse.
                segs.append(arc(o, radius_m, sign * turn * d, d))
    elif mode == "pivot":
        for d in dirs:
            segs.append(line(o, step_m, d))
        for deg in (15.0, 45.0, 90.0):
            for sign in (1.0, -1.0):
                segs.append(pivot(o, sign * math.radians(deg)))
    else:
        for k in range(8):
            a = k * math.pi / 4.0
            segs.append(holonomic_line(o, (step_m * math.cos(a), step_m * math.sin(a))))
        for deg in (15.0, 45.0):
            for sign in (1.0, -1.0):
                segs.append(pivot(o, sign * math.radians(deg)))
    out = []
    r_far = fp.r_far_m
    for s in segs:
        parts = swept_parts(fp, s, tolerance_m)
        e = s.end
        out.append(Primitive(s, parts, (float(e[0]), float(e[1]), float(e[2])), s.length_m,
                             s.direction, s.turn_rad, r_far + s.length_m, s.kind))
    return out


def _move(parts: NDArray[np.object_], pose: Sequence[float]) -> NDArray[np.object_]:
    c, s = math.cos(pose[2]), math.sin(pose[2])
    x, y = pose[0], pose[1]

    def f(p: NDArray[np.float64]) -> NDArray[np.float64]:
        return np.column_stack([x + c * p[:, 0] - s * p[:, 1], y + s * p[:, 0] + c * p[:, 1]])
    return shapely.transform(parts, f)


def _placed(seg: Segment, pose: Sequence[float]) -> Segment:
    """Primitive ``seg`` (from the origin pose) started at ``pose`` instead."""
    course = None if seg.course_rad is None else seg.course_rad + pose[2]
    return replace(seg, start=(float(pose[0]), float(pose[1]), float(pose[2])),
                   course_rad=course)


def _compose(p: Sequence[float], rel: Sequence[float]) -> Pose:
    c, s = math.cos(p[2]), math.sin(p[2])
    return (p[0] + c * rel[0] - s * rel[1], p[1] + s * rel[0] + c * rel[1], p[2] + rel[2])


def _wrap(a: float) -> float:
    return math.remainder(a, 2.0 * math.pi)


# -- the finder ----------------------------------------------------------------------------
class RouteFinder:
    """Finds and repairs routes for one chassis on one floor plan.

    Parameters
    ----------
    project : Project
        Its floor plan and chassis (routes are passed to :meth:`find` / :meth:`repair`).
    index : ObstacleIndex, optional
        Built from the floor plan when not given.
    settings : FindSettings, optional
    """

    def __init__(self, project: Project, index: ObstacleIndex | None = None,
                 settings: FindSettings | None = None, chassis: Chassis | None = None) -> None:
        self.project = project
        # A fleet route is searched for its own vehicle (Project.chassis_for); default the
        # project's chassis.
        self.chassis = chassis if chassis is not None else project.chassis
        self.file = str(project.path or "<project>")
        self.index = index if index is not None else ObstacleIndex(project.floorplan)
        self.settings = settings or FindSettings()
        self.fp = prepare_footprint(self.chassis.footprint)
        self.margin = float(self.chassis.margin_m)
        self.r_far = farthest_radius(self.fp)
        ring = self.fp.ring
        # Inscribed radius about the reference point (0 where it lies outside the outline).
        ref = Point(0.0, 0.0)
        self.r_in = (float(self.fp.polygon.exterior.distance(ref))
                     if self.fp.polygon.contains(ref) else 0.0)
        # Discs inside the footprint (body-frame centre, radius) for the clearance grid's quick
        # proof that a pose collides (see :meth:`_surely_blocked`).
        self._discs = _footprint_discs(self.fp.polygon)
        width = float(ring[:, 1].max() - ring[:, 1].min())
        length = float(ring[:, 0].max() - ring[:, 0].min())
        self.step = float(self.settings.step_m or min(0.5, max(0.08, 0.35 * min(width, length))))
        # Zones of the plan the search honours as the check does (kinematics.check.zones):
        # keep-out zones as solids the footprint must not meet, margin zones by the margin
        # inside them, one-way zones by the direction of travel in them.
        self.zones = self.index.zones
        z = self.zones
        self._keep_out = len(z.keep_out) > 0
        self._margins = len(z.margin) > 0
        self._one_way = len(z.one_way) > 0
        zone_margins = [float(m.margin_m or 0.0) for m in z.margin.zones]
        # Most any margin zone asks beyond the chassis margin (the clearance grid's lower
        # bound must cover it before it skips an exact check).
        self._extra_max = max([0.0] + [m - self.margin for m in zone_margins])
        self._least_margin = min([self.margin] + zone_margins
                                 + ([0.0] if self._keep_out else []))
        # A towed train: each trailer's band is swept along every motion the search tries,
        # from the trailer headings the node carries (the train's state), and kept clear of
        # the solids and keep-out zones by its own margin, hitch angles within their limits.
        self.trailers = tuple(getattr(self.chassis, "trailers", ()) or ())
        self._tfp = [prepare_footprint(t.footprint) for t in self.trailers]
        self._tmargin = [float(self.chassis.trailer_margin(j)) for j in range(len(self.trailers))]
        self._tlimit = [math.radians(t.max_hitch_deg) for t in self.trailers]
        # Every trailer lies within this distance of the tug's reference point.
        reach, x = 0.0, 0.0
        for t, f in zip(self.trailers, self._tfp):
            x += abs(t.hitch_x_m) + abs(t.drawbar_m)
            reach = max(reach, x + f.r_far_m)
            x += f.r_far_m
        self._train_reach = reach
        self._prims: dict[tuple, list[Primitive]] = {}
        # The planner's pieces kept between connections (the plan is the same with or without
        # it): the smoothing and the final plan ask for many of the search's connections again.
        self._cache = PieceCache(50_000)
        self._grid: ClearanceGrid | None = None
        self._leg_radius = 0.0
        self._sample_m = 0.1
        self._quick: dict[Pose, tuple] = {}
        self._dubins_ok: dict[tuple, float | None] = {}
        self._quick_goal: Pose | None = None
        self._grid_bounds: tuple | None = None

    # -- geometry helpers --------------------------------------------------------------------
    def _area(self, route: Route) -> tuple[float, float, float, float]:
        xs = [w.x for w in route.waypoints]
        ys = [w.y for w in route.waypoints]
        if len(self.index):
            b = shapely.total_bounds(self._grid_geometries())
            xs += [b[0], b[2]]
            ys += [b[1], b[3]]
        pad = self.r_far + AREA_PAD_M
        return (min(xs) - pad, min(ys) - pad, max(xs) + pad, max(ys) + pad)

    def grid(self, route: Route) -> ClearanceGrid:
        """The clearance grid over the route's search area (kept while the area holds)."""
        area = self._area(route)
        if self._grid is None or self._grid_bounds is None or not (
                self._grid_bounds[0] <= area[0] and self._grid_bounds[1] <= area[1]
                and self._grid_bounds[2] >= area[2] and self._grid_bounds[3] >= area[3]):
            cell = min(0.1, max(0.03, self.step / 2.0))
            self._grid = ClearanceGrid(self._grid_geometries(), area, cell,
                                       self.r_in + self._least_margin)
            self._grid_bounds = area
        return self._grid

    def _grid_geometries(self) -> NDArray[np.object_]:
        """The solids and the keep-out zones (both barred to the footprint)."""
        if not self._keep_out:
            return self.index.geometries
        return np.concatenate([self.index.geometries, self.zones.keep_out.geometries])

    def _prims_for(self, mode: str, radius: float, reverse: bool) -> list[Primitive]:
        key = (mode, radius, reverse)
        if key not in self._prims:
            self._prims[key] = primitives(mode, radius, self.step, reverse, self.fp)
        return self._prims[key]

    def _solid_distance(self, parts: NDArray[np.object_], reach: float) -> float:
        """Least distance of ``parts`` to the solids, or ``inf`` when beyond ``reach``."""
        if not len(self.index) or not len(parts):
            return math.inf
        pairs = self.index.tree.query(parts, predicate="dwithin", distance=reach)
        if pairs.shape[1] == 0:
            return math.inf
        return float(np.min(shapely.distance(parts[pairs[0]],
                                             self.index.geometries[pairs[1]])))

    def _parts_distance(self, parts: NDArray[np.object_], reach: float) -> float:
        """The least clearance of ``parts`` measured against the chassis margin, or ``inf``
        when beyond ``reach``: the distance to the solids less what a margin zone asks beyond
        the chassis margin where a part lies in it (the check's rule,
        :class:`kinematics.check.zones.MarginRule`), and for keep-out zones the distance to
        them plus the margin (so keeping the margin here keeps ``SAFETY_M`` off the zone)."""
        if self._margins and self.zones.margin.touching(parts):
            rule = self.zones.margin_rule(parts, self.margin)
            least = math.inf
            for cut, need, _n in rule.regions(parts):
                cut = cut[~shapely.is_empty(cut)]
                extra = need - self.margin
                least = min(least, self._solid_distance(cut, reach + max(extra, 0.0)) - extra)
        else:
            least = self._solid_distance(parts, reach)
        if self._keep_out:
            ko = self.zones.keep_out
            pairs = ko.tree.query(parts, predicate="dwithin",
                                  distance=max(reach - self.margin, 0.0))
            if pairs.shape[1]:
                d = float(np.min(shapely.distance(parts[pairs[0]], ko.geometries[pairs[1]])))
                least = min(least, d + self.margin)
        return least

    def _against_one_way(self, seg: Segment) -> bool:
        """The reference point drives ``seg`` against a one-way zone somewhere."""
        return self._one_way and seg.kind != "pivot" and bool(wrong_way(seg, self.zones))

    def train_distance(self, segs: Sequence[Segment], th: Headings, cap: float,
                       lower_bound: float = -math.inf) -> tuple[float, Headings]:
        """The trailers' least clearance along ``segs`` from trailer headings ``th``, measured
        against the chassis margin as :meth:`_parts_distance` does (``inf`` beyond ``cap``;
        ``-inf`` where a hitch angle passes its limit), and the headings at the end.

        The trailers' motion is integrated (:func:`kinematics.motion.trailers.trace_train`)
        and each trailer's footprint placed every ``HITCH_STEP_M`` of tug travel; between two
        placements no footprint point moves farther than ``D`` = the axle's displacement plus
        the farthest footprint radius times the heading change (both are rigid placements),
        so every point of the band lies within about ``D / 2`` of a placed footprint, and the
        distance is taken less ``D / 2`` (plus 1 mm). This is the search's stand-in for the
        exact band of :func:`kinematics.check.train.sweep_trailer`, which the found route's
        final check (:func:`~kinematics.check.train.check_train`) uses.

        ``lower_bound`` (the clearance grid's bound on the distance from the segments' start
        to any solid) skips the placements of a motion the whole train stays far from.
        """
        trace = trace_train(segs, self.trailers, th)
        end = tuple(float(v) for v in trace.end_headings())
        limit = np.asarray(self._tlimit)[None, :] + 1e-9
        poses = []
        for i in range(len(segs)):
            amount = trace.amount(i)
            n = max(2, math.ceil(amount / HITCH_STEP_M) + 1) if amount > 0.0 else 2
            pz = trace.poses(i, np.linspace(0.0, amount, n))
            if np.any(np.abs(hitch_angles(pz)) > limit):
                return -math.inf, end
            poses.append(pz)
        travel = sum(sg.length_m for sg in segs)
        if lower_bound - self._extra_max >= self._train_reach + travel + cap:
            return math.inf, end
        allp = np.concatenate(poses)
        least = math.inf
        for j, fp in enumerate(self._tfp):
            pj = allp[:, j + 1]
            step = np.hypot(np.diff(pj[:, 0]), np.diff(pj[:, 1])) + \
                fp.r_far_m * np.abs(np.diff(pj[:, 2]))
            grow = 0.5 * float(step.max(initial=0.0)) + 1e-3
            parts = placed_footprints(fp, pj)
            # Against its own margin, shown as the chassis margin would be.
            shift = self.margin - self._tmargin[j]
            least = min(least, self._parts_distance(parts, cap - shift + grow) + shift - grow)
        return least, end

    def segments_clear(self, segs: Sequence[Segment]) -> bool:
        """Every segment's conservative swept region keeps the margin from every solid."""
        return self.segments_distance(segs, self.margin + SAFETY_M) >= self.margin + SAFETY_M

    def segments_distance(self, segs: Sequence[Segment], cap: float,
                          floor: float | None = None) -> float:
        """Least distance of the segments' swept regions to the solids (``inf`` beyond
        ``cap``); stops early, returning what it has, once below ``floor``."""
        least = math.inf
        for s in segs:
            if self._against_one_way(s):
                return -math.inf
            parts = swept_parts(self.fp, s)
            least = min(least, self._parts_distance(parts, cap))
            if floor is not None and least < floor:
                break
        return least

    def pose_distance(self, pose: Sequence[float]) -> tuple[float, int | None]:
        """Distance from the footprint placed at ``pose`` to the nearest solid, and which."""
        g = placed_footprints(self.fp, [pose])[0]
        j, d = self.index.nearest(g)
        return d, j

    def _solid_name(self, j: int | None) -> str:
        if j is None:
            return "nothing"
        return self.index.solids[j].name

    # -- connections -------------------------------------------------------------------------
    def connect(self, route: Route, a: Pose, b: Sequence[float | None]) -> list[Segment] | None:
        """The route's own connection from pose ``a`` to ``b`` (heading ``None``: the
        planner's choice), as the planner draws it; ``None`` where it has an issue.

        Between two poses of a forward-only steered route the planner draws the shortest
        Dubins word from ``a`` to ``b`` (headings read through degrees, as from waypoints);
        that word is laid here directly (:func:`~kinematics.plan.dubins_one.shortest_one`,
        :func:`~kinematics.plan.dubins.pieces_to_segments`) once a first connection showed
        the planner draws this route so (:meth:`_plain_dubins`)."""
        rad = self._plain_dubins(route) if b[2] is not None else None
        if rad is not None and math.hypot(b[0] - a[0], b[1] - a[1]) > 10.0 * DUPLICATE_TOL_M:
            start = (float(a[0]), float(a[1]), math.radians(math.degrees(a[2])))
            goal = (float(b[0]), float(b[1]), math.radians(math.degrees(float(b[2]))))
            _n, w, pieces = shortest_one(start, goal, rad)
            return dubins.pieces_to_segments(start, dubins.WORDS[w], pieces, rad)
        return self._planned(route, a, b)

    def _plain_dubins(self, route: Route) -> float | None:
        """The radius of the plain Dubins words the planner joins two poses of ``route`` with,
        or ``None`` where it joins them otherwise (reversing, clothoid transitions, a drive
        that pivots or translates, a radius the chassis cannot turn). Found once per route
        setting by planning one connection both ways and comparing them."""
        key = (route.turn_radius_m, route.reverse, route_transitions(route, self.chassis))
        if key not in self._dubins_ok:
            mode, radius = drive_mode(self.chassis, route)
            got = None
            if mode == "steer" and not route.reverse and key[2] != "clothoid" and radius > 0:
                a, b = (0.0, 0.0, 0.3), (3.0 * radius + 1.0, 1.5 * radius, -1.0)
                ref = self._planned(route, a, b)
                _n, w, pieces = shortest_one((a[0], a[1], math.radians(math.degrees(a[2]))),
                                             (b[0], b[1], math.radians(math.degrees(b[2]))),
                                             radius)
                mine = dubins.pieces_to_segments(
                    (a[0], a[1], math.radians(math.degrees(a[2]))), dubins.WORDS[w], pieces,
                    radius)
                if ref is not None and len(ref) == len(mine) and all(
                        p.kind == q.kind and abs(p.length_m - q.length_m) < 1e-9
                        and abs(p.curvature - q.curvature) < 1e-12 for p, q in zip(ref, mine)):
                    got = float(radius)
            self._dubins_ok[key] = got
        return self._dubins_ok[key]

    def _planned(self, route: Route, a: Pose, b: Sequence[float | None]
                 ) -> list[Segment] | None:
        """:meth:`connect` by :func:`~kinematics.plan.planner.plan_route` itself."""
        wa = Waypoint(float(a[0]), float(a[1]), math.degrees(a[2]))
        hb = None if b[2] is None else math.degrees(float(b[2]))
        wb = Waypoint(float(b[0]), float(b[1]), hb)
        sub = replace(route, waypoints=(wa, wb), stops=())
        pl = plan_route(sub, self.chassis, cache=self._cache)
        if any(i.kind in ("infeasible", "turn_radius") for i in pl.issues):
            return None
        return list(pl.segments)

    def _connect_clear(self, route: Route, a: Pose, b: Sequence[float | None]
                       ) -> list[Segment] | None:
        segs = self.connect(route, a, b)
        if segs is None or not self.segments_clear(segs):
            return None
        return segs

    # -- input checks ------------------------------------------------------------------------
    def _check_inputs(self, route: Route, route_index: int) -> None:
        lim = self.settings.time_limit_s
        if not (isinstance(lim, (int, float)) and math.isfinite(lim) and lim > 0.0):
            raise ValidationError(self.file, "--time-limit",
                                  f"a positive number of seconds, got {lim!r}")
        place = f"routes[{route_index}].waypoints"
        for k, w in enumerate(route.waypoints):
            where = f"{place}[{k}]"
            inside = self.index.within(Point(w.x, w.y), 0.0) if len(self.index) else []
            if len(inside):
                name = self._solid_name(int(inside[0]))
                raise ValidationError(self.file, where, f"a waypoint outside the solids; "
                                      f"({w.x:g}, {w.y:g}) is inside {name}")
            ko = self.zones.keep_out.touching(Point(w.x, w.y)) if self._keep_out else []
            if ko:
                raise ValidationError(self.file, where, f"a waypoint outside the keep-out "
                                      f"zones; ({w.x:g}, {w.y:g}) is inside "
                                      f"{self.zones.keep_out.name(ko[0])}")
            if w.heading_deg is not None:
                d, j = self.pose_distance((w.x, w.y, math.radians(w.heading_deg)))
                if d <= 0.0:
                    what = "the start" if k == 0 else "the chassis"
                    raise ValidationError(self.file, where, f"{what} placed here with heading "
                                          f"{w.heading_deg:g} deg overlaps "
                                          f"{self._solid_name(j)}")
            else:
                heads = np.linspace(-math.pi, math.pi, 24, endpoint=False)
                g = placed_footprints(self.fp, [(w.x, w.y, h) for h in heads])
                if len(self.index) and np.all(
                        [len(self.index.within(p, 0.0)) > 0 for p in g]):
                    j = int(self.index.within(g[0], 0.0)[0])
                    raise ValidationError(self.file, where, f"room for the chassis at "
                                          f"({w.x:g}, {w.y:g}); at every heading it overlaps "
                                          f"{self._solid_name(j)}")

    # -- one leg -----------------------------------------------------------------------------
    def _search_leg(self, route: Route, starts: list[Pose], goal: tuple[float, float,
                    float | None], deadline: float, budget: list[int],
                    should_stop: StopFn | None, progress: ProgressFn | None,
                    t0: float, searched: list, start_th: list[Headings] | None = None
                    ) -> tuple[list[Pose] | None, dict]:
        """Hybrid A* from any of ``starts`` to ``goal``; the pose chain or ``None`` and why.

        With trailers, ``start_th`` holds each start's trailer headings (default: in line
        with the tug) and ``info["th"]`` the chain's.
        """
        train = bool(self.trailers)
        if start_th is None:
            start_th = [tuple([p[2]] * len(self.trailers)) for p in starts]
        st = self.settings
        mode, radius = drive_mode(self.chassis, route)
        # The primitives and the grid distance to the goal are made when first needed: a leg
        # whose first analytic shot (from its one start) is clear never needs them.
        prims: list[Primitive] = []
        grid = self.grid(route)
        self._leg_radius = float(radius)
        self._sample_m = grid.cell_m
        gx, gy, gh = goal
        h2d_box: list[NDArray[np.float64]] = []
        cell = grid.cell_m
        pref = st.clearance_pref_m
        need = self.margin + SAFETY_M
        far_enough = self.margin + pref
        pivot_cost = (st.pivot_cost_m_per_rad if st.pivot_cost_m_per_rad is not None
                      else 0.5 * self.r_far)
        xy_res = max(self.step * 0.7, cell)
        bins = st.heading_bins
        area = self._grid_bounds
        assert area is not None
        use_rs = mode == "steer" and gh is not None
        near_goal = max(2.0 * radius, 4.0 * self.step, 1.0)
        # The heuristic's shortest words to the goal, from the poses as the planner reads them
        # from waypoints (headings through degrees), are kept for _word_blocked.
        g_pose = (float(gx), float(gy),
                  math.radians(math.degrees(gh)) if gh is not None else 0.0)
        rad = float(radius)
        # Each pose's shortest word to the goal (the heuristic's), for _word_blocked.
        quick: dict[Pose, tuple] = {}
        self._quick = quick
        self._quick_goal = g_pose

        def heuristic(poses: NDArray[np.float64], with_grid: bool = True
                      ) -> NDArray[np.float64]:
            h = np.hypot(poses[:, 0] - gx, poses[:, 1] - gy)
            if with_grid:
                if not h2d_box:
                    h2d_box.append(grid.distance_to(gx, gy))
                i, j = grid.cell_of(poses[:, 0], poses[:, 1])
                h = np.maximum(np.maximum(h2d_box[0][i, j] - 1.5 * cell, 0.0), h)
            if use_rs:
                keys = [(float(x), float(y), math.radians(math.degrees(float(a))))
                        for x, y, a in poses]
                # One pair at a time in plain floats: a few pairs cost less so than one array
                # call (kinematics.plan.dubins_one, reeds_shepp_one; the same lengths to
                # rounding).
                if route.reverse:
                    got = [rs_one(k, g_pose, rad) for k in keys]
                    for k, g in zip(keys, got):
                        quick[k] = (g[1], g[2])
                else:
                    got = [shortest_one(k, g_pose, rad) for k in keys]
                    for k, g in zip(keys, got):
                        quick[k] = (dubins.WORDS[g[1]], g[2])
                h = np.maximum(h, [g[0] for g in got])
            return h

        def key(p: Sequence[float], th: Headings = ()) -> tuple[int, ...]:
            k = (int(round(p[0] / xy_res)), int(round(p[1] / xy_res)),
                 int(round(_wrap(p[2]) / (2.0 * math.pi) * bins)) % bins)
            if not th:
                return k
            ahead = [p[2], *th[:-1]]
            return k + tuple(int(round(_wrap(a - t) / HITCH_BIN_RAD)) for a, t in zip(ahead, th))

        xs: list[Pose] = []
        ths: list[Headings] = []
        # Least clearance (as the search measures it) of the motion into each node.
        clear_in: list[float] = []
        gs: list[float] = []
        parent: list[int] = []
        pdir: list[int] = []
        best_g: dict[tuple, float] = {}
        heap: list[tuple[float, int]] = []
        # One start is expanded first whatever its key, so its heuristic skips the grid
        # distance (still made before any successor is keyed). A start the grid cuts off from
        # the goal is then expanded rather than dropped: its analytic shot is swept and
        # checked like any other, and its successors' keys are infinite.
        hs = heuristic(np.array(starts, dtype=float), with_grid=len(starts) != 1)
        for p, h, th0 in zip(starts, hs, start_th):
            if not math.isfinite(h):
                continue
            xs.append(p)
            ths.append(th0)
            clear_in.append(math.inf)
            gs.append(0.0)
            parent.append(-1)
            pdir.append(0)
            best_g[key(p, th0)] = 0.0
            heapq.heappush(heap, (st.heuristic_weight * float(h), len(xs) - 1))
        done: set[tuple] = set()
        expanded = 0
        closest = (math.inf, starts[0] if starts else (gx, gy, 0.0))
        info: dict = {"expanded": 0, "closest": closest, "why": "exhausted"}
        best_goal: tuple = (math.inf, -1, (gx, gy, 0.0), (), math.inf)
        stop_at = math.inf
        while heap:
            if budget[0] <= 0:
                info["why"] = "budget"
                break
            if (expanded & 15) == 0:
                now = time.perf_counter()
                if now >= deadline:
                    info["why"] = "time"
                    break
                if should_stop is not None and should_stop():
                    raise SearchStopped()
                if progress is not None and (expanded & 255) == 0:
                    progress(min(1.0, (now - t0) / st.time_limit_s), expanded)
            f, n = heapq.heappop(heap)
            if best_goal[1] >= 0 and f >= best_goal[0]:
                break
            p = xs[n]
            pth = ths[n]
            k = key(p, pth)
            if k in done:
                continue
            done.add(k)
            expanded += 1
            budget[0] -= 1
            searched.append((p[0], p[1]))
            dist_goal = math.hypot(p[0] - gx, p[1] - gy)
            if dist_goal < closest[0]:
                closest = (dist_goal, p)
            # Analytic expansion: the route's own connection to the goal, an edge to the goal
            # whose cost is counted like any motion's; the cheapest goal found so far ends
            # the search once no open node can beat it.
            if expanded == 1 or expanded % (st.analytic_near_every if dist_goal < near_goal
                                            else st.analytic_every) == 0:
                hit = self._analytic(route, mode, p, goal, pdir[n], pivot_cost, pth)
                if hit is not None and gs[n] + hit[1] < best_goal[0]:
                    if best_goal[1] < 0:
                        # Look on for a cheaper (clearer) goal a bounded while only.
                        stop_at = expanded + max(st.improve_min, expanded // 2)
                    best_goal = (gs[n] + hit[1], n, hit[0], hit[2], hit[3])
            if best_goal[1] >= 0 and (not heap or heap[0][0] >= best_goal[0]
                                      or expanded >= stop_at):
                break
            kids: list[Pose] = []
            kid_th: list[Headings] = []
            kid_g: list[float] = []
            kid_d: list[float] = []
            kid_dir: list[int] = []
            lb = grid.lower_bound(p[0], p[1])
            if not prims:
                prims = self._prims_for(mode, radius, route.reverse)
            for pr in prims:
                q = _compose(p, pr.end)
                if not (area[0] <= q[0] <= area[2] and area[1] <= q[1] <= area[3]):
                    continue
                if not train and key(q) in done:
                    continue
                if self._one_way and self._against_one_way(_placed(pr.seg, p)):
                    continue
                if lb - self._extra_max >= pr.reach_m + far_enough:
                    d = math.inf
                else:
                    d = self._parts_distance(_move(pr.parts, p), far_enough)
                    if d < need:
                        continue
                qth: Headings = ()
                if train:
                    # The trailers' motion along the primitive gives the train's state (the
                    # hitch angles in the key) and their band's clearance.
                    td, qth = self.train_distance([_placed(pr.seg, p)], pth, far_enough, lb)
                    if td < need:
                        continue
                    d = min(d, td)
                kq = key(q, qth)
                if train and kq in done:
                    continue
                travel = pr.length_m + pivot_cost * abs(pr.turn_rad) if pr.kind == "pivot" \
                    else pr.length_m
                cost = pr.length_m * (st.reverse_factor if pr.direction < 0 else 1.0)
                if pr.kind == "pivot":
                    cost = pivot_cost * abs(pr.turn_rad)
                elif pdir[n] != 0 and pr.direction != pdir[n]:
                    cost += st.switch_penalty_m
                if d < far_enough:
                    cost += st.clearance_weight * (far_enough - d) / pref * max(travel, 1e-3)
                g = gs[n] + cost
                if g >= best_g.get(kq, math.inf):
                    continue
                best_g[kq] = g
                kids.append(q)
                kid_th.append(qth)
                kid_g.append(g)
                kid_d.append(d)
                kid_dir.append(pdir[n] if pr.kind == "pivot" else pr.direction)
            if not kids:
                continue
            hk = heuristic(np.array(kids, dtype=float))
            for q, qth, g, dr, h, dq in zip(kids, kid_th, kid_g, kid_dir, hk, kid_d):
                if not math.isfinite(h):
                    continue
                xs.append(q)
                ths.append(qth)
                clear_in.append(dq)
                gs.append(g)
                parent.append(n)
                pdir.append(dr)
                heapq.heappush(heap, (g + st.heuristic_weight * float(h), len(xs) - 1))
        info.update(expanded=expanded, closest=closest)
        if best_goal[1] >= 0:
            m = best_goal[1]
            chain, cth, cin = [], [], []
            while m >= 0:
                chain.append(xs[m])
                cth.append(ths[m])
                cin.append(clear_in[m])
                m = parent[m]
            chain.reverse()
            cth.reverse()
            cin.reverse()
            chain.append(best_goal[2])
            cth.append(best_goal[3])
            cin.append(best_goal[4])
            info["th"] = cth
            info["clear_in"] = cin
            info["why"] = "found"
            return chain, info
        return None, info

    def _analytic(self, route: Route, mode: str, p: Pose,
                  goal: tuple[float, float, float | None], last_dir: int, pivot_cost: float,
                  th: Headings = ()) -> tuple[Pose, float, Headings, float] | None:
        """The goal pose reached by the cheapest clear connection from ``p``, its cost and
        the trailer headings there."""
        gx, gy, gh = goal
        cands: list[float | None] = [gh]
        if gh is None and mode == "steer" and math.hypot(gx - p[0], gy - p[1]) > 1e-9:
            line_dir = math.atan2(gy - p[1], gx - p[0])
            cands += [p[2]] + [line_dir + k * math.pi / 4.0 for k in range(1, 8)]
        best: tuple[Pose, float, Headings] | None = None
        for h in cands:
            if h is not None and mode == "steer" and self._word_blocked(route, p, (gx, gy, h)):
                continue
            segs = self.connect(route, p, (gx, gy, h))
            if segs is None:
                continue
            if self._surely_blocked(segment_poses(segs, self._sample_m)):
                continue
            got = self._segments_cost(segs, last_dir, pivot_cost, th)
            if got is None or (best is not None and got[0] >= best[1]):
                continue
            end = segs[-1].end if segs else p
            best = ((gx, gy, float(end[2]) if h is None else float(h)), got[0], got[1],
                    got[2])
        return best

    def _surely_blocked(self, poses: NDArray[np.float64], want: float | None = None) -> bool:
        """The footprint placed at one of ``poses`` certainly has a clearance (as
        :meth:`_parts_distance` measures it) below ``want`` (default: the margin plus
        ``SAFETY_M``, what every motion must keep): a disc inside the footprint lies, by the
        clearance grid's upper bound, nearer a solid (or a keep-out zone) than ``want`` less
        the most any zone's margin falls below the chassis margin. A quick way to pass over a
        connection before its exact sweep; ``False`` proves nothing."""
        grid = self._grid
        if grid is None or not len(poses) or not self._discs.size:
            return False
        extra = 0.0 if want is None else want - (self.margin + SAFETY_M)
        c, s = np.cos(poses[:, 2])[:, None], np.sin(poses[:, 2])[:, None]
        bx, by, rho = self._discs[:, 0], self._discs[:, 1], self._discs[:, 2]
        x = poses[:, 0:1] + c * bx - s * by
        y = poses[:, 1:2] + s * bx + c * by
        need = np.broadcast_to(rho + self._least_margin + SAFETY_M + extra, x.shape)
        return grid.surely_near(x.ravel(), y.ravel(), need.ravel())

    def _quick_word_fn(self, route: Route) -> Callable[[Pose, Sequence[float]], tuple | None]:
        """A function giving the planner's Dubins word between two poses (letters, piece
        lengths) cheaply (:func:`~kinematics.plan.dubins_one.shortest_one`), or ``None``
        where the route does not join poses by plain Dubins words (reversing, clothoid
        transitions, drives that pivot or translate)."""
        mode, _r = drive_mode(self.chassis, route)
        if mode != "steer" or route.reverse or \
                route_transitions(route, self.chassis) == "clothoid":
            return lambda a, b: None
        rad = self._leg_radius

        def word(a: Pose, b: Sequence[float]) -> tuple:
            got = shortest_one(a, (b[0], b[1], float(b[2])), rad)
            return dubins.WORDS[got[1]], got[2]
        return word

    def _word_blocked(self, route: Route, a: Pose, b: Sequence[float]) -> bool:
        """The shortest Dubins / Reeds-Shepp word from ``a`` to the leg's goal ``b`` (the
        heuristic measured it from ``a``) has a pose that is :meth:`_surely_blocked`: the
        planner's connection (that word) fails without planning or sweeping it."""
        start = (float(a[0]), float(a[1]), math.radians(math.degrees(a[2])))
        goal = (float(b[0]), float(b[1]), math.radians(math.degrees(float(b[2]))))
        hit = self._quick.get(start) if goal == self._quick_goal else None
        if hit is None:
            return False
        return self._surely_blocked(word_poses(start, hit[0], hit[1], self._leg_radius,
                                               self._sample_m))

    def _segments_cost(self, segs: Sequence[Segment], last_dir: int, pivot_cost: float,
                       th: Headings = ()) -> tuple[float, Headings, float] | None:
        """The search's cost of driving ``segs``, the trailer headings at their end and
        their least clearance (``None`` where one is not clear)."""
        st = self.settings
        need = self.margin + SAFETY_M
        far = self.margin + st.clearance_pref_m
        cost = 0.0
        least = math.inf
        d_prev = last_dir
        for s in segs:
            if self._against_one_way(s):
                return None
            d = self._parts_distance(swept_parts(self.fp, s), far)
            if d < need:
                return None
            if self.trailers:
                td, th = self.train_distance([s], th, far)
                if td < need:
                    return None
                d = min(d, td)
            least = min(least, d)
            if s.kind == "pivot":
                travel = pivot_cost * abs(s.turn_rad)
                cost += travel
            else:
                travel = s.length_m
                cost += s.length_m * (st.reverse_factor if s.direction < 0 else 1.0)
                if d_prev != 0 and s.direction != d_prev:
                    cost += st.switch_penalty_m
                d_prev = s.direction
            if d < far:
                cost += st.clearance_weight * (far - d) / st.clearance_pref_m * \
                    max(travel, 1e-3)
        return cost, th, least

    def _smooth(self, route: Route, chain: list[Pose], free_end: bool,
                cth: list[Headings] | None = None, clear_in: list[float] | None = None
                ) -> tuple[list[Pose], Headings]:
        """As few of the chain's poses as keep every planner connection clear, and the
        trailer headings at the end (``cth``: the trailers' headings at each chain pose;
        ``clear_in``: the clearance the search measured on the motion into each, which
        spares measuring the chain's steps again)."""
        m = len(chain) - 1
        train = bool(self.trailers) and cth is not None

        def target(j: int) -> tuple:
            pj = chain[j]
            return (pj[0], pj[1], None) if (j == m and free_end) else pj

        # A shortcut must keep the margin, and as much clearance (up to the preferred one)
        # as the searched poses it replaces: smoothing must not pull the route onto a wall.
        cap = self.margin + self.settings.clearance_pref_m
        need = self.margin + SAFETY_M
        base = []
        for i in range(m):
            if clear_in is not None:
                base.append(min(cap, clear_in[i + 1]))
                continue
            segs = self.connect(route, chain[i], target(i + 1))
            d = self.segments_distance(segs, cap) if segs else need
            if segs and train:
                d = min(d, self.train_distance(segs, cth[i], cap)[0])
            base.append(min(cap, d))
        memo: dict[tuple[int, int], tuple[bool, Headings]] = {}
        if clear_in is not None and not train and not free_end and m >= 1:
            # The chain's last step is the analytic expansion: this very connection, already
            # swept by the search with the clearance ``base[m - 1]`` (the same call and cap).
            memo[(m - 1, m)] = (True, ())
        now_th: list[Headings] = [cth[0] if train else ()]

        quick = self._quick_word_fn(route)

        def ok(i: int, j: int) -> bool:
            if (i, j) not in memo:
                want = max(need, min(base[i:j]) - SAFETY_M)
                b = target(j)
                word = quick(chain[i], b) if b[2] is not None else None
                if word is not None and self._surely_blocked(word_poses(
                        chain[i], word[0], word[1], self._leg_radius, self._sample_m), want):
                    memo[(i, j)] = (False, ())
                    return False
                segs = self.connect(route, chain[i], b)
                good = segs is not None and not self._surely_blocked(
                    segment_poses(segs, self._sample_m), want) and \
                    self.segments_distance(segs, cap, want) >= want
                end: Headings = ()
                if good and train:
                    td, end = self.train_distance(segs, now_th[0], cap)
                    good = td >= want
                memo[(i, j)] = (good, end)
            return memo[(i, j)][0]

        keep = [0]
        i = 0
        while i < m:
            if ok(i, m):
                j = m
            else:
                lo, step = i + 1, 1
                while lo + step < m and ok(i, lo + step):
                    lo += step
                    step *= 2
                hi = min(lo + step, m)
                while hi - lo > 1:
                    mid = (lo + hi) // 2
                    if ok(i, mid):
                        lo = mid
                    else:
                        hi = mid
                j = lo
            if train:
                good, end = memo.get((i, j), (False, ()))
                if not good:
                    # The searched step itself (its planner connection from here).
                    segs = self.connect(route, chain[i], target(j)) or []
                    end = self.train_distance(segs, now_th[0], cap)[1] if segs else cth[j]
                now_th[0] = end
            keep.append(j)
            i = j
        return [chain[k] for k in keep], now_th[0]

    # -- public uses -------------------------------------------------------------------------
    def _route_index(self, route: Route) -> int:
        for i, r in enumerate(self.project.routes):
            if r.name == route.name:
                return i
        return 0

    def _start_headings(self, w: Waypoint) -> list[float]:
        if w.heading_deg is not None:
            return [math.radians(w.heading_deg)]
        heads = np.linspace(-math.pi, math.pi, 24, endpoint=False)
        g = placed_footprints(self.fp, [(w.x, w.y, h) for h in heads])
        need = self.margin + SAFETY_M
        return [float(h) for h, p in zip(heads, g)
                if self._parts_distance(np.array([p], dtype=object), need) >= need]

    def find(self, route: Route, progress: ProgressFn | None = None,
             should_stop: StopFn | None = None, legs: Sequence[int] | None = None,
             _t0: float | None = None) -> FindResult:
        """Search a clear route through the waypoints of ``route`` in order.

        ``legs`` limits the search to those legs (0-based: leg ``k`` joins waypoints ``k``
        and ``k + 1``); the others are kept as sketched (used by :meth:`repair`).

        Raises
        ------
        ValidationError
            A non-positive time limit, a waypoint inside a solid, or a pose with a heading
            whose placed footprint overlaps one.
        """
        self._check_inputs(route, self._route_index(route))
        t0 = time.perf_counter() if _t0 is None else _t0
        deadline = t0 + self.settings.time_limit_s
        budget = [int(self.settings.node_budget)]
        searched: list[tuple[float, float]] = []
        wps = route.waypoints
        n = len(wps)
        todo = set(range(n - 1)) if legs is None else set(legs)
        out: list[Waypoint] = [wps[0]]
        heads = self._start_headings(wps[0])
        if not heads:
            d, j = self.pose_distance((wps[0].x, wps[0].y, 0.0))
            return self._fail(route, t0, 0, searched, (wps[0].x, wps[0].y),
                              f"the start at ({wps[0].x:g}, {wps[0].y:g}) is closer than "
                              f"the margin to {self._solid_name(j)} at every heading")
        starts = [(wps[0].x, wps[0].y, h) for h in heads]
        # Trailer headings at each start (None: in line with the tug, as the check starts a
        # train; so too after a kept leg of a repair, which the final check then judges).
        start_th: list[Headings] | None = None
        total = 0
        for k in range(n - 1):
            w1 = wps[k + 1]
            last = k + 1 == n - 1
            if k not in todo:
                out.append(w1)
                starts = [(w1.x, w1.y, math.radians(w1.heading_deg))] \
                    if w1.heading_deg is not None else [(w1.x, w1.y, h)
                                                       for h in self._start_headings(w1)]
                start_th = None
                continue
            gh = None if w1.heading_deg is None else math.radians(w1.heading_deg)
            chain, info = self._search_leg(route, starts, (w1.x, w1.y, gh), deadline, budget,
                                           should_stop, progress, t0, searched, start_th)
            total += info["expanded"]
            if chain is None:
                cd, cp = info["closest"]
                j = self.index.nearest(Point(cp[0], cp[1]))[0] if len(self.index) else None
                why = {"time": f"within {self.settings.time_limit_s:g} s",
                       "budget": f"within {self.settings.node_budget} nodes",
                       "exhausted": "at all (every reachable pose was tried)"}[info["why"]]
                msg = (f"no route from waypoint {k + 1} to waypoint {k + 2} {why}: it got no "
                       f"nearer than {cd:.2f} m, stopped near ({cp[0]:.2f}, {cp[1]:.2f}) by "
                       f"{self._solid_name(j)}")
                return self._fail(route, t0, total, searched, (cp[0], cp[1]), msg)
            free_end = last and gh is None
            kept, end_th = self._smooth(route, chain, free_end, info.get("th"),
                                        info.get("clear_in"))
            if self.trailers and not self._train_follows(route, kept, free_end,
                                                         info["th"][0]):
                # The trailers did not follow the shortcuts clear: keep every searched pose.
                kept, end_th = chain, info["th"][-1]
            # The first kept pose is the leg's start: a waypoint already in ``out``.
            if k == 0 or (k - 1) not in todo or out[-1].heading_deg is None:
                s0 = kept[0]
                out[-1] = Waypoint(out[-1].x, out[-1].y, math.degrees(s0[2]))
            for j, p in enumerate(kept[1:], start=1):
                if j == len(kept) - 1:
                    h = None if free_end else math.degrees(p[2])
                    out.append(Waypoint(w1.x, w1.y, h))
                else:
                    out.append(Waypoint(p[0], p[1], math.degrees(p[2])))
            end = kept[-1]
            starts = [(w1.x, w1.y, end[2])]
            start_th = [end_th] if self.trailers else None
        new = replace(route, waypoints=tuple(out), stops=_moved_stops(route, out))
        return self._offer(new, t0, total, searched, tuple(sorted(todo)))

    def _train_follows(self, route: Route, kept: list[Pose], free_end: bool,
                       th: Headings) -> bool:
        """The trailers keep their margin along the planner's connections of ``kept``."""
        segs: list[Segment] = []
        for i in range(len(kept) - 1):
            b = kept[i + 1]
            got = self.connect(route, kept[i], (b[0], b[1], None) if (
                free_end and i + 2 == len(kept)) else b)
            if got is None:
                return False
            segs += got
        return not segs or self.train_distance(segs, th, self.margin + SAFETY_M)[0] >= \
            self.margin + SAFETY_M

    def _offer(self, new: Route, t0: float, total: int, searched: list, legs: tuple[int, ...],
               notes: tuple[str, ...] = ()) -> FindResult:
        """Plan and re-check the new route; offer it only when clear."""
        pl = plan_route(new, self.chassis)
        chk = check_train(pl, self.chassis, self.index, route_name=new.name, route=new)
        found = chk.clear and not any(i.kind in ("infeasible", "turn_radius")
                                      for i in pl.issues)
        res = FindResult(new.name, found, new if found else None, pl if found else None,
                         chk if found else None, total, time.perf_counter() - t0,
                         searched=np.array(searched, dtype=float).reshape(-1, 2), legs=legs,
                         notes=notes)
        if not found:
            v = chk.violations[0] if chk.violations else None
            res.reason = ("the smoothed route failed its re-check"
                          + (f": {v.message}" if v is not None else ""))
            res.blocked_at = (v.x, v.y) if v is not None else None
        return res

    def _fail(self, route: Route, t0: float, total: int, searched: list,
              at: tuple[float, float], msg: str) -> FindResult:
        return FindResult(route.name, False, None, None, None, total,
                          time.perf_counter() - t0, msg, at,
                          np.array(searched, dtype=float).reshape(-1, 2))

    def repair(self, route: Route, progress: ProgressFn | None = None,
               should_stop: StopFn | None = None) -> FindResult:
        """Keep the legs of ``route`` that pass and search again only the failing ones.

        Where the kept legs no longer pass once the searched legs are in (a drive whose
        corners cut past the waypoints), the whole route is searched instead and a note says
        so.
        """
        self._check_inputs(route, self._route_index(route))
        t0 = time.perf_counter()
        pl = plan_route(route, self.chassis)
        chk = check_train(pl, self.chassis, self.index, route_name=route.name, route=route)
        bad_issue = [i for i in pl.issues if i.kind in ("infeasible", "turn_radius")]
        n = len(route.waypoints)
        if chk.clear and not bad_issue:
            return FindResult(route.name, True, route, pl, chk, 0, time.perf_counter() - t0,
                              notes=("the route passes as sketched; nothing to repair",))
        stations = waypoint_stations(pl, route)
        bad: set[int] = set()
        for v in chk.violations:
            leg = int(np.searchsorted(stations, v.station_m + 1e-9, side="right")) - 1
            bad.add(min(max(leg, 0), n - 2))
        for i in bad_issue:
            if i.waypoint is not None:
                bad.update(k for k in (i.waypoint - 1, i.waypoint) if 0 <= k <= n - 2)
            else:
                bad.update(range(n - 1))
        # Fix the headings where kept and searched legs meet, as the sketch drives there.
        wps = list(route.waypoints)
        poses = poses_along(pl.segments, np.maximum(stations - 1e-9, 0.0)) \
            if pl.segments else np.zeros((n, 3))
        for k in range(n):
            meets = ((k - 1) in bad) != (k in bad) or (k == 0 and 0 in bad)
            if meets and wps[k].heading_deg is None and not (k == n - 1):
                h = pl.start[2] if k == 0 else float(poses[k, 2])
                wps[k] = Waypoint(wps[k].x, wps[k].y, math.degrees(h))
            elif meets and k == n - 1 and wps[k].heading_deg is None and (n - 2) not in bad:
                wps[k] = Waypoint(wps[k].x, wps[k].y, math.degrees(float(poses[k, 2])))
        posed = replace(route, waypoints=tuple(wps))
        res = self.find(posed, progress, should_stop, legs=sorted(bad), _t0=t0)
        if res.found or res.reason.startswith("no route"):
            return res
        full = self.find(route, progress, should_stop, _t0=t0)
        full.notes = full.notes + ("the kept legs did not pass with the searched ones; the "
                                   "whole route was searched",)
        return full


def _footprint_discs(poly) -> NDArray[np.float64]:
    """Discs inside a footprint polygon, rows ``(x, y, radius)`` in the body frame: up to seven
    centres along the middle of its bounding box, each with its distance to the outline."""
    x0, y0, x1, y1 = poly.bounds
    ym = 0.5 * (y0 + y1)
    half = 0.5 * min(x1 - x0, y1 - y0)
    xs = np.linspace(x0 + half, x1 - half, 7) if x1 - x0 >= y1 - y0 else None
    pts = [(float(x), ym) for x in xs] if xs is not None else \
        [(0.5 * (x0 + x1), float(y)) for y in np.linspace(y0 + half, y1 - half, 7)]
    out = []
    for px, py in dict.fromkeys(pts):
        q = Point(px, py)
        if poly.contains(q):
            out.append((px, py, float(poly.exterior.distance(q))))
    return np.array(out, dtype=float).reshape(-1, 3)


def word_poses(start: Sequence[float], letters: str, lengths_m: Sequence[float],
               radius_m: float, step_m: float) -> NDArray[np.float64]:
    """Poses every ``step_m`` or less along a Dubins / Reeds-Shepp word from ``start`` (each
    piece's ends included), shape ``(n, 3)``: the closed-form motion along an arc of signed
    curvature ``+-1 / radius_m`` (``L``, ``R``) or a straight (``S``), a negative length
    driven in reverse, as :func:`kinematics.plan.dubins.pieces_to_segments` lays them."""
    x, y, th = (float(v) for v in start)
    out = [np.array([[x, y, th]])]
    for c, s in zip(letters, lengths_m):
        s = float(s)
        if abs(s) < 1e-12:
            continue
        u = np.linspace(0.0, s, max(2, math.ceil(abs(s) / step_m) + 1))[1:]
        if c == "S":
            px, py, ph = x + u * math.cos(th), y + u * math.sin(th), np.full(u.shape, th)
        else:
            k = (1.0 if c == "L" else -1.0) / radius_m
            ph = th + k * u
            px = x + (np.sin(ph) - math.sin(th)) / k
            py = y - (np.cos(ph) - math.cos(th)) / k
        out.append(np.column_stack([px, py, ph]))
        x, y, th = float(px[-1]), float(py[-1]), float(ph[-1])
    return np.concatenate(out)


def segment_poses(segs: Sequence[Segment], step_m: float) -> NDArray[np.float64]:
    """Poses every ``step_m`` or less along ``segs`` (ends included), shape ``(n, 3)``."""
    total = sum(sg.length_m for sg in segs)
    if not segs or total <= 0.0:
        return np.array([sg.start for sg in segs], dtype=float).reshape(-1, 3)
    return poses_along(segs, np.linspace(0.0, total, max(2, math.ceil(total / step_m) + 1)))


def waypoint_stations(plan: RoutePlan, route: Route, step_m: float = 0.02) -> NDArray[np.float64]:
    """Station (m) along ``plan`` nearest each waypoint of ``route``, in order, shape (n,)."""
    n = len(route.waypoints)
    total = plan.length_m
    if total <= 0.0 or not plan.segments:
        return np.zeros(n)
    st = np.linspace(0.0, total, max(2, int(math.ceil(total / step_m)) + 1))
    p = poses_along(plan.segments, st)
    out = np.zeros(n)
    lo = 0
    for k, w in enumerate(route.waypoints):
        if k == 0:
            continue
        if k == n - 1:
            out[k] = total
            continue
        d = np.hypot(p[lo:, 0] - w.x, p[lo:, 1] - w.y)
        i = lo + int(np.argmin(d))
        out[k] = st[i]
        lo = i
    return out


def find_route(project: Project, name: str, settings: FindSettings | None = None,
               repair: bool = False) -> FindResult:
    """Find (or repair) the route ``name`` of ``project`` (see :class:`RouteFinder`)."""
    route = project.route(name)
    finder = RouteFinder(project, settings=settings, chassis=project.chassis_for(route))
    return finder.repair(route) if repair else finder.find(route)


def replace_route(project: Project, route: Route) -> Project:
    """``project`` with its route of the same name replaced by ``route`` (fleet kept)."""
    routes = tuple(route if r.name == route.name else r for r in project.routes)
    return replace(project, routes=routes)


def _moved_stops(route: Route, out: Sequence[Waypoint]) -> tuple[Stop, ...]:
    """The route's stops renumbered onto the found waypoints ``out``.

    Every waypoint of ``route`` is in ``out`` at its own place and in order (the search
    passes each one), so a stop follows its waypoint to the first later match of it.
    """
    if not route.stops:
        return ()
    where, j = [], 0
    for w in route.waypoints:
        while j < len(out) and (out[j].x, out[j].y) != (w.x, w.y):
            j += 1
        where.append(min(j, len(out) - 1))
    return tuple(Stop(where[s.waypoint], s.dwell_s) for s in route.stops
                 if 0 <= s.waypoint < len(where))


__all__ = ["FindSettings", "FindResult", "RouteFinder", "SearchStopped", "find_route",
           "replace_route", "primitives", "drive_mode", "waypoint_stations"]
