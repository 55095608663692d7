"""Route planner: sketched waypoints to drivable line, arc and pivot segments.

The path a chassis can follow between the user's waypoints depends on its drive:

- ``differential`` (also tracked, skid-steer) with ``turn_radius_m`` 0: straight legs joined by
  pivots on the spot, each the signed smallest turn. A heading given at a waypoint is met with a
  pivot there. With ``reverse`` on, a leg is driven backwards where that needs the smaller pivot.
- ``differential`` with ``turn_radius_m`` R > 0: each corner without a heading is a tangent arc
  of radius R inside the corner (line-arc-line, :mod:`~kinematics.plan.fillet`), so the route cuts
  the
  corner. A waypoint with a heading is passed exactly with that heading: the legs on either
  side become a Dubins connection (Reeds-Shepp with ``reverse`` on) between the pose where the
  neighbouring fillet ends and the waypoint's pose. Where two fillets do not fit on one leg, or
  a corner turns straight back (no arc turns 180 degrees at a point), the corner with the longer
  tangent is drawn as a pivot on the spot and an ``infeasible`` issue names the waypoint and
  the shortfall. With ``"allow_smaller_radius": true`` in the route's extra keys the crowded
  fillets are shrunk instead (in proportion on each crowded leg) and a note says so; a
  reversal still becomes a pivot with an ``infeasible`` issue.
- ``bicycle``, ``ackermann``: never pivot. Every waypoint becomes a pose: its given heading,
  or one a driver would choose (the bisector of the adjacent legs inside the route, the leg
  direction at its first and last waypoint; straight on where the route turns straight back),
  recorded in ``chosen_headings``. Consecutive poses are joined by the shortest Dubins path
  (Dubins 1957), or the shortest Reeds-Shepp path (Reeds & Shepp 1990) with ``reverse`` on,
  of radius ``max(turn_radius_m, chassis minimum)``.
- With transitions ``"clothoid"`` (:func:`kinematics.files.project.route_transitions`) every
  fillet is a CC turn (clothoid, arc, clothoid) and every connection between poses is a CC
  path (Fraichard & Scheuer 2004): CC Dubins words forward, CC Reeds-Shepp words with
  ``reverse`` on (:func:`kinematics.plan.cc_words.cc_shortest`); only where none reaches the
  pose does the plain Dubins / Reeds-Shepp path stay (its curvature steps are then stops).
- ``mecanum``, ``swerve``: straight lines between waypoints; the body heading is held, or turns
  linearly with distance the shorter way round to meet the next waypoint's given heading.

``turn_radius_m`` below the chassis minimum (from :func:`kinematics.motion.drives.drive_for`) is
raised to the minimum with a ``turn_radius`` issue; 0 means "not set" and quietly takes the
minimum (a note says so). A differential chassis with a minimum radius cannot pivot, so it is
planned with fillets and any pivot left in its route is a ``turn_radius`` issue too.
Consecutive duplicate waypoints are merged (a note says so); where they give different
headings each is met in turn on the spot, with pivots where the drive may pivot and with
Dubins / Reeds-Shepp loops back to the point where it may not. Each piece (a line, a corner
turn, a Dubins / Reeds-Shepp connection) starts at the pose it was laid to reach, computed
from the waypoints alone, where the previous piece's end agrees with that pose to rounding;
so joints are continuous to rounding, the route ends at the last waypoint, and moving one
waypoint leaves every piece away from it exactly as it was. :class:`RoutePlanner` keeps those
pieces between calls (its plans equal :func:`plan_route`'s) for a window replanning on drags.
Waypoint indices in issues (``waypoint``) and ``chosen_headings`` are 0-based indices into
the route's waypoints as given; messages and notes, which people read beside the window and
the rendered picture, count waypoints from 1 ("waypoint 3" is the third, index 2).

Size: one planner with a rule per drive (pivoting, holonomic, steered, filleted with
Dubins/Reeds-Shepp and CC transitions); the rules share the segment builder, the issues and the
piece cache that keeps a drag cheap.
"""

from __future__ import annotations

import functools
import math
from collections import OrderedDict
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

from kinematics.errors import ValidationError
from kinematics.files.project import (
    DRIVE_ALIASES,
    Chassis,
    Project,
    Route,
    drive_word,
    route_transitions,
)
from kinematics.files.validate import MAX_PLAN_LENGTH_M, MAX_ROUTE_SPAN_M, too_spread
from kinematics.motion.drives import drive_for
from kinematics.motion.segments import Segment, holonomic_line, line, path_length, pivot
from kinematics.plan.cc_words import cc_shortest
from kinematics.plan.fillet import (
    STRAIGHT_TOL_RAD,
    ZERO_LENGTH_M,
    corner_segment,
    deflections,
    fit_radii,
    layout_fillets,
    leg_geometry,
)
from kinematics.plan.transitions import (
    cc_tangent_length,
    cc_turn,
    transition_sharpness,
)

#: Consecutive waypoints closer than this (metres) are the same point.
DUPLICATE_TOL_M = 1e-6
#: A heading within this of a leg direction drives straight along the leg.
ALIGN_TOL_RAD = 1e-12
#: Shrunk fillets below this radius (metres) are drawn as pivots instead.
SMALLEST_FILLET_M = 1e-6
#: Relative slack of the turn radius check (rounding of ``length / turn``).
RADIUS_REL_TOL = 1e-9
#: A piece's end within this (metres, radians) of the pose it was laid to reach restarts the
#: next piece from that pose (rounding only; see ``_Builder.anchor``).
ANCHOR_TOL_M = 1e-9
ANCHOR_TOL_RAD = 1e-9

ISSUE_KINDS = ("infeasible", "turn_radius")
_STEERED = ("bicycle", "ackermann")
Pose = tuple[float, float, float]
_REVERSAL = "the route turns straight back here and no arc turns 180 degrees at a point"


@dataclass(frozen=True)
class PlanIssue:
    """Something about a route that cannot be driven as sketched.

    Attributes
    ----------
    kind : {"infeasible", "turn_radius"}
    message : str
    waypoint : int or None
        0-based index of the waypoint in the route as given (the message counts from 1).
    segment : int or None
        Index of the segment drawn there.
    x, y : float
        Where, plan frame, metres.
    amount_m : float
        How far short: the missing leg length or the missing radius, metres.
    """

    kind: str
    message: str
    waypoint: int | None
    segment: int | None
    x: float
    y: float
    amount_m: float

    def to_dict(self) -> dict:
        return {"kind": self.kind, "message": self.message, "waypoint": self.waypoint,
                "segment": self.segment, "x": self.x, "y": self.y, "amount_m": self.amount_m}


@dataclass(frozen=True)
class RoutePlan:
    """The drivable segments of one route, with what could not be met.

    Attributes
    ----------
    name, drive : str
    segments : tuple of Segment
        Continuous: each starts where the previous ends.
    issues : tuple of PlanIssue
    chosen_headings : dict of int to float
        Waypoint index -> heading (degrees, in (-180, 180]) the planner chose where the user
        gave none: start and end of every route, every waypoint of a steered or holonomic one.
    notes : tuple of str
        Harmless changes the planner made (merged duplicates, shrunk fillets, radius taken).
    turn_radius_m : float
        The radius the route turns with (0: pivots).
    start : tuple of float
        Start pose ``(x_m, y_m, heading_rad)``; where the route is when it has no segments.
    """

    name: str
    drive: str
    segments: tuple[Segment, ...]
    issues: tuple[PlanIssue, ...] = ()
    chosen_headings: dict[int, float] = field(default_factory=dict)
    notes: tuple[str, ...] = ()
    turn_radius_m: float = 0.0
    start: Pose = (0.0, 0.0, 0.0)

    @property
    def length_m(self) -> float:
        """Sum of the segment lengths, m."""
        return path_length(self.segments)

    def to_dict(self) -> dict:
        """The contract's ``plan --json`` route object, plus issues, chosen headings, notes."""
        return {
            "name": self.name,
            "drive": self.drive,
            "length_m": self.length_m,
            "turn_radius_m": self.turn_radius_m,
            "segments": [s.to_dict() for s in self.segments],
            "issues": [i.to_dict() for i in self.issues],
            "chosen_headings": [{"waypoint": k, "heading_deg": v}
                                for k, v in sorted(self.chosen_headings.items())],
            "notes": list(self.notes),
        }


# -- drive limits ---------------------------------------------------------------------------
def _drive_limits(chassis: Chassis) -> tuple[str, float, bool, bool]:
    """Drive name, minimum turn radius (m), may it pivot on the spot, is it holonomic."""
    model = drive_for(chassis)
    drive = DRIVE_ALIASES.get(chassis.drive, chassis.drive)
    return drive, float(model.min_turn_radius_m), bool(model.can_pivot), bool(model.holonomic)


# -- the builder ----------------------------------------------------------------------------
def _wrap_deg(rad: float) -> float:
    """Degrees in (-180, 180]; a rounding error past -180 is 180."""
    d = math.degrees(math.remainder(rad, 2.0 * math.pi))
    return d + 360.0 if d <= -180.0 + 1e-9 else d


def _turn_to(frm: float, to: float) -> float:
    """Signed smallest turn from heading ``frm`` to ``to``, in [-pi, pi]."""
    return math.remainder(to - frm, 2.0 * math.pi)


def end_pose(seg: Segment) -> Pose:
    """End pose of ``seg`` in closed form with scalar math.

    The same exponential map as :meth:`Segment.end` (:func:`kinematics.motion.se2.propagate`),
    without numpy's per-call cost, which dominated planning: equal to it to rounding.
    """
    x, y, h = seg.start
    turn, length = seg.turn_rad, seg.length_m
    if seg.kind == "pivot":
        return (x, y, h + turn)
    if seg.kind == "clothoid":
        return seg.end
    if seg.kind == "line":
        if seg.course_rad is not None or turn != 0.0:
            c = seg.course
            return (x + length * math.cos(c), y + length * math.sin(c), h + turn)
        d = seg.direction * length
        return (x + d * math.cos(h), y + d * math.sin(h), h)
    if length == 0.0:
        return (x, y, h)
    # Body-frame displacement of a constant twist (direction, 0, turn / length) over the
    # length: direction * length * (sin(phi) / phi, (1 - cos(phi)) / phi), series near 0.
    if abs(turn) < 1e-4:
        p2 = turn * turn
        sc = 1.0 - p2 / 6.0 + p2 * p2 / 120.0
        cc = turn / 2.0 - turn * p2 / 24.0 + turn * p2 * p2 / 720.0
    else:
        sc, cc = math.sin(turn) / turn, (1.0 - math.cos(turn)) / turn
    d = seg.direction * length
    bx, by = d * sc, d * cc
    c, s = math.cos(h), math.sin(h)
    return (x + c * bx - s * by, y + s * bx + c * by, h + turn)


class PieceCache:
    """Least-recently-used store of planned pieces, keyed by every value they depend on.

    A piece (a line, a corner turn, a Dubins / Reeds-Shepp connection) is a pure function of
    its start pose and its own parameters, and the planner starts each piece at a pose
    computed from the waypoints alone (see :meth:`_Builder.anchor`). So after one waypoint
    moves only the pieces next to it miss; the rest come back as the very same objects,
    bit for bit, which also keeps :class:`kinematics.check.clearance.RouteChecker`'s cache warm.
    """

    def __init__(self, size: int = 20000) -> None:
        self.size = int(size)
        self._d: OrderedDict[tuple, tuple] = OrderedDict()
        self.misses = 0

    def lookup(self, key: tuple) -> tuple | None:
        """The value stored under ``key`` (now the most recently used), or ``None``."""
        hit = self._d.get(key)
        if hit is not None:
            self._d.move_to_end(key)
        return hit

    def put(self, key: tuple, val: tuple) -> None:
        self._d[key] = val
        if len(self._d) > self.size:
            self._d.popitem(last=False)

    def get(self, key: tuple, make: Callable[[], tuple]) -> tuple:
        """The value under ``key``, made by ``make()`` and stored if missing."""
        hit = self.lookup(key)
        if hit is None:
            self.misses += 1
            hit = make()
            self.put(key, hit)
        return hit

    def clear(self) -> None:
        self._d.clear()

    def __len__(self) -> int:
        return len(self._d)


def _cc_or_plain(pose: Pose, goal: Pose, radius_m: float, sigma: float, reverse: bool
                 ) -> list[Segment]:
    """The shortest CC connection (:func:`kinematics.plan.cc_words.cc_shortest`: CC Dubins
    forward, CC Reeds-Shepp with ``reverse``), else the plain Dubins / Reeds-Shepp path (its
    curvature steps; the profile then stops at each)."""
    from kinematics.plan import dubins, reeds_shepp

    segs = cc_shortest(pose, goal, radius_m, sigma, reverse)
    if segs is not None:
        return segs
    return (reeds_shepp if reverse else dubins).path_segments(pose, goal, radius_m)


class _Builder:
    """Collects segments, issues, notes and chosen headings while a route is built.

    ``spin_radius_m`` says how several headings given at one point are met: 0 with pivots on
    the spot, > 0 with Dubins / Reeds-Shepp loops back to the same point. ``cache`` (a
    :class:`PieceCache`) lets unchanged pieces be reused; results are the same without it.
    """

    def __init__(self, route: Route, start: Pose, spin_radius_m: float = 0.0,
                 cache: PieceCache | None = None) -> None:
        self.route = route
        self.segs: list[Segment] = []
        self.issues: list[PlanIssue] = []
        self.notes: list[str] = []
        self.chosen: dict[int, float] = {}
        self.start = start
        self.spin_radius_m = spin_radius_m
        self.cache = cache
        self._pose: Pose = start
        self._anchored = 0
        #: Sharpness of CC connections (0: plain Dubins / Reeds-Shepp).
        self.cc_sigma = 0.0

    @property
    def pose(self) -> Pose:
        return self._pose

    def _piece(self, key: tuple, make: Callable[[], Sequence[Segment]]) -> None:
        """Append the segments ``make()`` returns for the current pose, through the cache."""
        if self.cache is None:
            segs = tuple(make())
            end = end_pose(segs[-1]) if segs else self._pose
        else:
            segs, end = self.cache.get((*key, self._pose), lambda: self._made(make))
        self.segs.extend(segs)
        self._pose = end

    def _made(self, make: Callable[[], Sequence[Segment]]) -> tuple:
        segs = tuple(make())
        return segs, (end_pose(segs[-1]) if segs else self._pose)

    def add(self, seg: Segment | None) -> int | None:
        if seg is None:
            return None
        self.segs.append(seg)
        self._pose = end_pose(seg)
        return len(self.segs) - 1

    def anchor(self, pose: Sequence[float]) -> None:
        """Restart from ``pose``, the point the last piece was laid to reach, computed from the
        waypoints alone.

        The end of the last piece agrees with it to rounding; starting from the computed pose
        instead keeps that rounding from running on into every later segment, so pieces away
        from an edit come back bit for bit. The heading keeps the turn count the route has
        accumulated (only its value modulo a full turn is taken from ``pose``). Where the two
        disagree by more than rounding, or no segment was laid since the last anchor (the pose
        would move with no segment to move it, e.g. off the route's start), the pose is kept.
        """
        if len(self.segs) == self._anchored:
            return
        self._anchored = len(self.segs)
        x, y, h = float(pose[0]), float(pose[1]), float(pose[2])
        cx, cy, ch = self._pose
        if abs(cx - x) > ANCHOR_TOL_M or abs(cy - y) > ANCHOR_TOL_M:
            return
        hh = h + 2.0 * math.pi * round((ch - h) / (2.0 * math.pi))
        if abs(hh - ch) <= ANCHOR_TOL_RAD:
            self._pose = (x, y, hh)

    def line(self, length_m: float, direction: int = 1) -> None:
        pose = self._pose
        self._piece(("line", float(length_m), int(direction)),
                    lambda: (line(pose, length_m, direction),))

    def corner(self, deflection_rad: float, radius_m: float) -> int | None:
        """The turn at a corner (see :func:`kinematics.plan.fillet.corner_segment`); its index."""
        pose = self._pose
        n = len(self.segs)
        self._piece(("corner", float(deflection_rad), float(radius_m)),
                    lambda: tuple(s for s in (corner_segment(pose, deflection_rad,
                                                             radius_m),) if s is not None))
        return n if len(self.segs) > n else None

    def cc_corner(self, deflection_rad: float, radius_m: float, sigma: float) -> int | None:
        """A continuous-curvature turn at a corner (:func:`kinematics.plan.transitions.cc_turn`);
        the index of its first segment."""
        pose = self._pose
        n = len(self.segs)
        self._piece(("cc", float(deflection_rad), float(radius_m), float(sigma)),
                    lambda: tuple(cc_turn(pose, deflection_rad, radius_m, sigma)))
        return n if len(self.segs) > n else None

    def turn(self, to_heading: float) -> int | None:
        """Pivot from the current heading to ``to_heading`` the short way (none if aligned)."""
        t = _turn_to(self.pose[2], to_heading)
        if abs(t) < STRAIGHT_TOL_RAD:
            return None
        pose = self._pose
        self._piece(("pivot", t), lambda: (pivot(pose, t),))
        return len(self.segs) - 1

    def straight(self, length_m: float, direction: int = 1) -> None:
        if length_m > ZERO_LENGTH_M:
            self.line(length_m, direction)

    def holonomic(self, goal_xy: Sequence[float], turn_rad: float) -> None:
        """A straight move to ``goal_xy``, the body turning by ``turn_rad`` on the way."""
        pose = self._pose
        goal = (float(goal_xy[0]), float(goal_xy[1]))
        self._piece(("holonomic", goal, float(turn_rad)),
                    lambda: (holonomic_line(pose, goal, turn_rad),))

    def connect(self, goal: Pose, radius_m: float, reverse: bool) -> None:
        """Shortest bounded-curvature path from the current pose to ``goal``."""
        from kinematics.plan import dubins, reeds_shepp

        mod = reeds_shepp if reverse else dubins
        pose = self._pose
        goal = (float(goal[0]), float(goal[1]), float(goal[2]))
        if self.cc_sigma > 0.0:
            sigma = self.cc_sigma
            self._piece(("cc-connect", goal, float(radius_m), sigma, bool(reverse)),
                        lambda: _cc_or_plain(pose, goal, radius_m, sigma, reverse))
        else:
            self._piece(("connect", goal, float(radius_m), bool(reverse)),
                        lambda: mod.path_segments(pose, goal, radius_m))
        self.anchor(goal)

    def spin(self, xy: Sequence[float], headings: Sequence[float]) -> None:
        """Meet each heading in turn at the point ``xy`` where the route now is."""
        for h in headings:
            if self.spin_radius_m > 0.0:
                self.connect((float(xy[0]), float(xy[1]), h), self.spin_radius_m,
                             self.route.reverse)
            else:
                self.turn(h)
                self.anchor((float(xy[0]), float(xy[1]), h))

    def issue(self, kind: str, message: str, waypoint: int | None, segment: int | None,
              xy: Sequence[float], amount_m: float) -> None:
        self.issues.append(PlanIssue(kind, message, waypoint, segment, float(xy[0]),
                                     float(xy[1]), float(amount_m)))


@dataclass
class _Points:
    """Distinct consecutive waypoints.

    ``headings[k]`` lists the headings (rad) given at point ``k`` in order: one for a plain
    waypoint with a heading, several where repeated waypoints give different ones, none where
    the user gave none. ``index[k]`` is the first original waypoint index of point ``k``.
    """

    xy: np.ndarray
    headings: list[list[float]]
    index: list[int]

    def arrive(self, k: int) -> float | None:
        return self.headings[k][0] if self.headings[k] else None

    def leave(self, k: int) -> float | None:
        return self.headings[k][-1] if self.headings[k] else None


def _distinct_points(route: Route, notes: list[str]) -> _Points:
    wps = route.waypoints
    if not wps:
        raise ValidationError(route.name, "waypoints", "at least one waypoint")
    for i, w in enumerate(wps):
        vals = (w.x, w.y) + (() if w.heading_deg is None else (w.heading_deg,))
        if not all(math.isfinite(float(v)) for v in vals):
            raise ValidationError(route.name, f"waypoints[{i}]",
                                  "finite x, y and heading_deg (no NaN or infinity)")
    # The file reader refuses such routes too; this guards routes built in code or sketched
    # on the canvas far from the plan.
    far = too_spread([(w.x, w.y) for w in wps])
    if far is not None:
        raise ValidationError(route.name, f"waypoints[{far}]",
                              f"waypoints within {MAX_ROUTE_SPAN_M / 1000:g} km of each "
                              f"other (metres on a floor plan)")
    groups: list[list[int]] = [[0]]
    for i in range(1, len(wps)):
        a = wps[groups[-1][0]]
        if math.hypot(wps[i].x - a.x, wps[i].y - a.y) < DUPLICATE_TOL_M:
            groups[-1].append(i)
        else:
            groups.append([i])
    xy, headings, index = [], [], []
    for g in groups:
        if len(g) > 1:
            dropped = ", ".join(str(i + 1) for i in g[1:])
            notes.append(f"waypoint(s) {dropped} repeat waypoint {g[0] + 1} and were merged")
        xy.append((wps[g[0]].x, wps[g[0]].y))
        headings.append([math.radians(wps[i].heading_deg) for i in g
                         if wps[i].heading_deg is not None])
        index.append(g[0])
    return _Points(np.array(xy, dtype=float), headings, index)


def _radius(route: Route, min_r: float, pts: _Points, b: _Builder, drive: str) -> float:
    """The radius the route turns with, raised to the chassis minimum where needed."""
    asked = float(route.turn_radius_m or 0.0)
    if asked >= min_r * (1.0 - RADIUS_REL_TOL):
        return max(asked, min_r) if asked > 0.0 else asked
    if asked <= 0.0:
        b.notes.append(f"turn_radius_m not set: using the chassis minimum {min_r:.4g} m")
        return min_r
    b.issue("turn_radius", f"route asks for turn radius {asked:.4g} m but the {drive_word(drive)} "
            f"chassis turns no tighter than {min_r:.4g} m; planned with {min_r:.4g} m",
            None, None, pts.xy[0], min_r - asked)
    return min_r


# -- per drive ------------------------------------------------------------------------------
def _plan_pivoting(pts: _Points, b: _Builder, reverse: bool) -> None:
    """Straight legs joined by pivots on the spot (differential, radius 0)."""
    head, leg = leg_geometry(pts.xy)
    b.spin(pts.xy[0], pts.headings[0][1:])
    for i in range(leg.size):
        target, direction = float(head[i]), 1
        if reverse:
            back = target + math.pi
            if abs(_turn_to(b.pose[2], back)) < abs(_turn_to(b.pose[2], target)) - 1e-12:
                target, direction = back, -1
        b.turn(target)
        b.anchor((pts.xy[i, 0], pts.xy[i, 1], target))
        b.straight(float(leg[i]), direction)
        b.anchor((pts.xy[i + 1, 0], pts.xy[i + 1, 1], target))
        b.spin(pts.xy[i + 1], pts.headings[i + 1])


def _plan_holonomic(pts: _Points, b: _Builder) -> None:
    """Straight moves; the body heading held or turned linearly to the next given heading."""
    n = len(pts.index)
    b.spin(pts.xy[0], pts.headings[0][1:])
    for i in range(1, n):
        given = pts.arrive(i)
        turn = 0.0 if given is None else _turn_to(b.pose[2], given)
        b.holonomic(pts.xy[i], turn)
        b.anchor((pts.xy[i, 0], pts.xy[i, 1], b.pose[2] if given is None else given))
        b.spin(pts.xy[i], pts.headings[i][1:])
        if given is None and i < n - 1:
            b.chosen[pts.index[i]] = _wrap_deg(b.pose[2])


def _driver_headings(pts: _Points) -> list[float | None]:
    """Headings a driver would take where none is given: the bisector of the adjacent legs
    inside the route, the leg direction at its ends; ``None`` where the user gave one."""
    head, _ = leg_geometry(pts.xy)
    n = len(pts.index)
    out: list[float | None] = []
    for k in range(n):
        if pts.headings[k]:
            out.append(None)
        elif k == 0:
            out.append(float(head[0]))
        elif k == n - 1:
            out.append(float(head[-1]))
        else:
            u = (math.cos(head[k - 1]) + math.cos(head[k]),
                 math.sin(head[k - 1]) + math.sin(head[k]))
            # Straight back: no bisector; arrive along the incoming leg.
            out.append(math.atan2(u[1], u[0]) if math.hypot(*u) > 1e-9 else float(head[k - 1]))
    return out


def _plan_steered(pts: _Points, b: _Builder, radius_m: float, reverse: bool) -> None:
    """Every waypoint a pose; shortest Dubins / Reeds-Shepp paths between consecutive poses."""
    chosen = _driver_headings(pts)
    n = len(pts.index)
    poses: list[Pose] = []
    for k in range(n):
        x, y = float(pts.xy[k, 0]), float(pts.xy[k, 1])
        hs = pts.headings[k] or [chosen[k]]
        poses.extend((x, y, h) for h in hs)
        if chosen[k] is not None and 0 < k < n - 1:
            b.chosen[pts.index[k]] = _wrap_deg(chosen[k])
    if len(poses) < 2:
        return
    if b.cc_sigma > 0.0:
        for i in range(len(poses) - 1):
            b.connect(poses[i + 1], radius_m, reverse)
        return
    # All legs not yet in the cache in one vectorised call; each leg's pieces are then laid
    # from the pose it starts at (see ``_Builder.anchor``).
    p = np.array(poses, dtype=float)
    keys = [("word", poses[i], poses[i + 1], float(radius_m), bool(reverse))
            for i in range(len(poses) - 1)]
    words: dict[tuple, tuple] = {}
    if b.cache is not None:
        for k in keys:
            hit = b.cache.lookup(k)
            if hit is not None:
                words[k] = hit
    # Imported here: a route of pivots and fillets (most) never needs them at start-up.
    from kinematics.plan import dubins, reeds_shepp

    todo = [i for i in range(len(keys)) if keys[i] not in words]
    if todo:
        sel = np.array(todo)
        if reverse:
            batch = reeds_shepp.shortest(p[sel], p[sel + 1], radius_m)
            letters = [reeds_shepp.LETTERS[w] for w in batch.word]
        else:
            batch = dubins.shortest(p[sel], p[sel + 1], radius_m)
            letters = [dubins.WORDS[w] for w in batch.word]
        for j, i in enumerate(todo):
            words[keys[i]] = (letters[j], tuple(float(v) for v in batch.params[j]))
            if b.cache is not None:
                b.cache.put(keys[i], words[keys[i]])
    for i in range(len(poses) - 1):
        word, params = words[keys[i]]
        pose = b.pose
        b._piece(("pieces", word, params, float(radius_m)),
                 lambda pose=pose, word=word, params=params:
                 dubins.pieces_to_segments(pose, word, params, radius_m))
        b.anchor(poses[i + 1])


def _fillet_radii(pts: _Points, b: _Builder, radius_m: float, route: Route
                  ) -> tuple[np.ndarray, dict[int, tuple[str, float]]]:
    """Radius of each corner's fillet (0: pivot or a heading there) and the failed corners."""
    xy = pts.xy
    n = len(pts.index)
    defl = deflections(xy)
    # Interior points with a heading are poses, not fillets: radius 0 keeps their tangent 0.
    radii = np.array([0.0 if pts.headings[k + 1] else radius_m for k in range(n - 2)])
    is_fillet = (radii > 0.0) & (np.abs(defl) >= STRAIGHT_TOL_RAD)
    lay = layout_fillets(xy, radii)
    failed: dict[int, tuple[str, float]] = {}  # corner -> (reason, amount_m)
    if not lay.fits and route.extra.get("allow_smaller_radius") is True:
        shrunk = fit_radii(xy, radii)
        for k in np.flatnonzero(is_fillet & (shrunk < radii)):
            if shrunk[k] < SMALLEST_FILLET_M:
                failed[int(k)] = (_REVERSAL if np.isinf(lay.tangent_m[k])
                                  else "no room for any fillet", radius_m)
                shrunk[k] = 0.0
            else:
                b.notes.append(f"fillet at waypoint {pts.index[k + 1] + 1} drawn with radius "
                               f"{shrunk[k]:.4g} m (route asks {radius_m:.4g} m): the legs "
                               "are too short")
        return shrunk, failed
    # Otherwise the corner with the longer tangent on the most crowded leg becomes a pivot,
    # one at a time, until the rest fit.
    while not lay.fits:
        worst = max(lay.shortfalls, key=lambda s: s.short_m)
        k = max(worst.corners, key=lambda c: lay.tangent_m[c - 1]) - 1
        if np.isinf(lay.tangent_m[k]):
            failed[k] = (_REVERSAL, radius_m)
        else:
            failed[k] = (f"fillets of radius {radius_m:.4g} m do not fit on the leg from "
                         f"waypoint {pts.index[worst.leg] + 1} to {pts.index[worst.leg + 1] + 1}: "
                         f"it is {worst.leg_m:.4g} m, they need {worst.need_m:.4g} m",
                         worst.short_m)
        radii[k] = 0.0
        lay = layout_fillets(xy, radii)
    return radii, failed


@functools.lru_cache(maxsize=256)
def _sharpness(chassis: Chassis, radius_m: float) -> float:
    return transition_sharpness(chassis, radius_m)


def _cc_corners(pts: _Points, b: _Builder, radii: np.ndarray, t_arc: np.ndarray,
                chassis: Chassis) -> tuple[np.ndarray, np.ndarray]:
    """Sharpness of each corner's CC turn (0: a plain arc) and the tangent lengths.

    A corner whose CC turn does not fit on its legs (the clothoids need more room than the
    arc) keeps the plain arc, and a note says so.
    """
    defl = deflections(pts.xy)
    _, leg = leg_geometry(pts.xy)
    sig = np.zeros(radii.size)
    t = t_arc.copy()
    for k in range(radii.size):
        if radii[k] > 0.0 and np.isfinite(t_arc[k]) and abs(defl[k]) >= STRAIGHT_TOL_RAD:
            sig[k] = _sharpness(chassis, float(radii[k]))
            t[k] = cc_tangent_length(float(defl[k]), float(radii[k]), sig[k])
    while True:
        need = np.zeros(leg.size)
        need[:-1] += t
        need[1:] += t
        over = np.flatnonzero(need > leg + 1e-9)
        if over.size == 0:
            return sig, t
        i = int(over[0])
        cands = [k for k in (i - 1, i) if 0 <= k < radii.size and sig[k] > 0.0]
        k = max(cands, key=lambda c: t[c] - t_arc[c])
        sig[k], t[k] = 0.0, t_arc[k]
        b.notes.append(f"no room for transition curves at waypoint {pts.index[k + 1] + 1}: "
                       "drawn as a plain arc (its curvature steps)")


def _plan_filleted(pts: _Points, b: _Builder, radius_m: float, route: Route,
                   chassis: Chassis | None = None) -> None:
    """Line-arc-line through corners without heading; Dubins / Reeds-Shepp at headed ones.

    With a ``chassis`` (transitions on) each fillet is a CC turn (clothoid, arc, clothoid).
    """
    xy = pts.xy
    n = len(pts.index)
    head, leg = leg_geometry(xy)
    defl = deflections(xy)
    radii, failed = _fillet_radii(pts, b, radius_m, route)
    t = layout_fillets(xy, radii).tangent_m
    sig = np.zeros(t.size)
    if chassis is not None:
        sig, t = _cc_corners(pts, b, radii, t, chassis)
    # Poses are the route's ends and the points with a heading; ends without one take the
    # direction of their leg.
    pose = [k in (0, n - 1) or bool(pts.headings[k]) for k in range(n)]
    h_in = [pts.arrive(k) for k in range(n)]
    h_out = [pts.leave(k) for k in range(n)]
    h_out[0] = h_out[0] if h_out[0] is not None else float(head[0])
    h_in[-1] = h_in[-1] if h_in[-1] is not None else float(head[-1])
    b.spin(xy[0], pts.headings[0][1:])
    for i in range(n - 1):
        u = (math.cos(head[i]), math.sin(head[i]))
        t0 = 0.0 if pose[i] else t[i - 1]
        t1 = 0.0 if pose[i + 1] else t[i]
        on_leg0 = not pose[i] or abs(_turn_to(h_out[i], head[i])) < ALIGN_TOL_RAD
        on_leg1 = not pose[i + 1] or abs(_turn_to(h_in[i + 1], head[i])) < ALIGN_TOL_RAD
        if on_leg0 and on_leg1:
            b.straight(float(leg[i] - t0 - t1))
            b.anchor((float(xy[i + 1, 0] - t1 * u[0]), float(xy[i + 1, 1] - t1 * u[1]),
                      float(head[i])))
        else:
            goal_h = h_in[i + 1] if pose[i + 1] else float(head[i])
            b.connect((float(xy[i + 1, 0] - t1 * u[0]), float(xy[i + 1, 1] - t1 * u[1]),
                       goal_h), radius_m, route.reverse)
        if pose[i + 1]:
            b.spin(xy[i + 1], pts.headings[i + 1][1:])
            continue
        if sig[i] > 0.0:
            seg = b.cc_corner(float(defl[i]), float(radii[i]), float(sig[i]))
        else:
            seg = b.corner(float(defl[i]), float(radii[i]))
        v = (math.cos(head[i + 1]), math.sin(head[i + 1]))
        b.anchor((float(xy[i + 1, 0] + t[i] * v[0]), float(xy[i + 1, 1] + t[i] * v[1]),
                  float(head[i + 1])))
        if i in failed:
            reason, amount = failed[i]
            w = pts.index[i + 1]
            b.issue("infeasible", f"waypoint {w + 1}: {reason}; drawn as a pivot on the spot",
                    w, seg, xy[i + 1], amount)


def _check_radii(b: _Builder, min_r: float, can_pivot: bool, drive: str) -> None:
    """A ``turn_radius`` issue for every arc tighter than the chassis turns, and pivots."""
    for i, s in enumerate(b.segs):
        r = s.min_radius_m
        if s.kind in ("arc", "clothoid") and r is not None and \
                r < min_r * (1.0 - RADIUS_REL_TOL):
            what = "arc of radius" if s.kind == "arc" else "clothoid reaching radius"
            b.issue("turn_radius", f"segment {i}: {what} {r:.4g} m is tighter "
                    f"than the {drive_word(drive)} chassis turns ({min_r:.4g} m)", None, i, s.start,
                    min_r - r)
        elif s.kind == "pivot" and not can_pivot:
            b.issue("turn_radius", f"segment {i}: pivot on the spot, but the "
                    f"{drive_word(drive)} chassis turns no tighter than {min_r:.4g} m", None, i,
                    s.start, min_r)


# -- public ---------------------------------------------------------------------------------
def plan_route(route: Route, chassis: Chassis, cache: PieceCache | None = None) -> RoutePlan:
    """Drivable segments for ``route`` as ``chassis`` can follow them.

    Parameters
    ----------
    route : Route
        Waypoints (a heading where the user fixed one), ``turn_radius_m``, ``reverse``; the
        extra key ``allow_smaller_radius`` lets crowded fillets shrink.
    chassis : Chassis
        Its drive decides the kind of path (see the module docstring).
    cache : PieceCache, optional
        Pieces kept from earlier calls (see :class:`RoutePlanner`); the plan is the same
        with or without it.

    Returns
    -------
    RoutePlan
        Segments from the first waypoint to the last, continuous, plus issues and notes.

    Raises
    ------
    ValidationError
        For non-finite waypoints, or a chassis missing a dimension its drive needs.

    Examples
    --------
    >>> from kinematics.files.project import Waypoint
    >>> r = Route("r", (Waypoint(0, 0), Waypoint(4, 0), Waypoint(4, 3)), 0.0)
    >>> pl = plan_route(r, Chassis(drive="differential", track_m=0.5))  # pivots at corners
    >>> [(s.kind, round(s.length_m, 3), round(math.degrees(s.turn_rad))) for s in pl.segments]
    [('line', 4.0, 0), ('pivot', 0.0, 90), ('line', 3.0, 0)]
    """
    drive, min_r, can_pivot, holonomic = _drive_limits(chassis)
    notes: list[str] = []
    pts = _distinct_points(route, notes)
    n = len(pts.index)
    h0 = pts.arrive(0)
    if h0 is None:
        h0 = math.atan2(*(pts.xy[1] - pts.xy[0])[::-1]) if n > 1 else 0.0
    start = (float(pts.xy[0, 0]), float(pts.xy[0, 1]), float(h0))
    b = _Builder(route, start, cache=cache)
    b.notes.extend(notes)
    radius = 0.0 if holonomic else _radius(route, min_r, pts, b, drive)
    b.spin_radius_m = 0.0 if can_pivot else radius
    if n == 1:
        b.notes.append("the route has only one distinct point")
        b.spin(pts.xy[0], pts.headings[0][1:])
    elif holonomic:
        _plan_holonomic(pts, b)
    elif drive in _STEERED:
        if route_transitions(route, chassis) == "clothoid" and radius > 0.0:
            b.cc_sigma = _sharpness(chassis, float(radius))
        _plan_steered(pts, b, radius, route.reverse)
    elif radius == 0.0:
        _plan_pivoting(pts, b, route.reverse)
    else:
        cc = route_transitions(route, chassis) == "clothoid"
        if cc:
            b.cc_sigma = _sharpness(chassis, float(radius))
        _plan_filleted(pts, b, radius, route, chassis if cc else None)
    if not pts.headings[0]:
        b.chosen[0] = _wrap_deg(start[2])
    if n > 1 and not pts.headings[-1]:
        b.chosen[len(route.waypoints) - 1] = _wrap_deg(b.pose[2])
    _check_radii(b, min_r, can_pivot, drive)
    length = math.fsum(s.length_m for s in b.segs)
    if not length <= MAX_PLAN_LENGTH_M:
        # The checks sample every route at centimetre steps: refuse before they allocate.
        raise ValidationError(route.name, "waypoints",
                              f"the planned route is {length / 1000:.4g} km long (at most "
                              f"{MAX_PLAN_LENGTH_M / 1000:g} km); expected a route in a "
                              "building (loops repeated many times?)")
    return RoutePlan(route.name, drive, tuple(b.segs), tuple(b.issues), dict(b.chosen),
                     tuple(b.notes), float(radius), start)


class RoutePlanner:
    """:func:`plan_route` with a :class:`PieceCache` kept between calls.

    For a window that replans on every step of a drag: moving one waypoint changes only the
    pieces next to it, and every other piece is taken from the cache. Plans are identical to
    :func:`plan_route`'s.

    Parameters
    ----------
    cache_size : int
        Pieces kept (least recently used dropped first).

    Examples
    --------
    >>> from kinematics.files.project import Waypoint
    >>> planner = RoutePlanner()
    >>> r = Route("r", (Waypoint(0, 0), Waypoint(4, 0), Waypoint(4, 3)), 1.0)
    >>> c = Chassis(drive="differential", track_m=0.5)
    >>> planner.plan(r, c) == plan_route(r, c)
    True
    """

    def __init__(self, cache_size: int = 20000) -> None:
        self.cache = PieceCache(cache_size)

    def plan(self, route: Route, chassis: Chassis) -> RoutePlan:
        """The plan of ``route`` for ``chassis`` (see :func:`plan_route`)."""
        return plan_route(route, chassis, cache=self.cache)


def plan_project(project: Project) -> list[RoutePlan]:
    """:func:`plan_route` for every route of ``project`` with its chassis, in order."""
    return [plan_route(r, project.chassis) for r in project.routes]

