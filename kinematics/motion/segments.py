"""Path segments: line, arc and pivot, with closed-form poses along them.

A planned route is a list of :class:`Segment`. Every segment knows its start pose, its length,
its signed heading change and its direction of travel, and from those alone gives the pose at
any station in closed form (:func:`kinematics.motion.se2.propagate`), vectorised over stations.

Conventions (see ``shared/contract.md``): plan frame x right, y up; headings counter-clockwise
from +x, radians inside the core and degrees in files. ``direction`` is +1 forward, -1 reverse.

- ``line``: straight travel. For non-holonomic drives the heading is constant and the course
  (direction of travel in the plan frame) is the heading, or heading + pi in reverse. For
  mecanum and swerve a line may carry ``turn_rad`` != 0 (the body turns linearly with distance)
  and an explicit ``course_rad``.
- ``arc``: constant curvature; ``radius_m = length_m / |turn_rad|``; position follows the
  exponential map with body twist ``(direction, 0, turn_rad / length_m)`` for "time" ``s``.
- ``pivot``: turn on the spot, ``length_m = 0``; poses are parameterised by fraction of turn.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from numpy.typing import ArrayLike, NDArray

from kinematics.motion.arrays import unique_sorted
from kinematics.motion.se2 import propagate

KINDS = ("line", "arc", "pivot")


@dataclass(frozen=True)
class Segment:
    """One drivable piece of a route.

    Parameters
    ----------
    kind : {"line", "arc", "pivot"}
    start : tuple of float
        Start pose ``(x_m, y_m, heading_rad)``.
    length_m : float
        Path length of the reference point, >= 0 (0 for a pivot).
    turn_rad : float
        Signed heading change along the segment, counter-clockwise positive.
    direction : int
        +1 forward, -1 reverse.
    course_rad : float or None
        Holonomic lines only: the fixed direction of travel in the plan frame. ``None`` means
        the course follows from the heading and ``direction``.
    """

    kind: str
    start: tuple[float, float, float]
    length_m: float
    turn_rad: float = 0.0
    direction: int = 1
    course_rad: float | None = None
    note: str = field(default="", compare=False)

    def __post_init__(self) -> None:
        if self.kind not in KINDS:
            raise ValueError(f"unknown segment kind {self.kind!r}")
        if not (self.length_m >= 0.0) or not math.isfinite(self.length_m):
            raise ValueError(f"segment length must be finite and >= 0, got {self.length_m}")
        if self.direction not in (1, -1):
            raise ValueError("direction must be 1 or -1")
        if self.kind == "pivot" and self.length_m != 0.0:
            raise ValueError("a pivot has length 0")
        object.__setattr__(self, "start", tuple(float(v) for v in self.start))

    # -- derived geometry -------------------------------------------------------------------
    @property
    def radius_m(self) -> float | None:
        """Turn radius of an arc; ``None`` for lines and pivots."""
        if self.kind != "arc" or self.turn_rad == 0.0:
            return None
        return self.length_m / abs(self.turn_rad)

    @property
    def curvature(self) -> float:
        """Signed curvature d(heading)/d(signed distance), 1/m; 0 for lines and pivots.

        Positive turns the body counter-clockwise when driven forward.
        """
        if self.kind != "arc" or self.length_m == 0.0:
            return 0.0
        return self.turn_rad / (self.direction * self.length_m)

    @property
    def course(self) -> float:
        """Direction of travel at the start, plan frame, radians."""
        if self.course_rad is not None:
            return self.course_rad
        return self.start[2] + (0.0 if self.direction > 0 else math.pi)

    @property
    def end(self) -> tuple[float, float, float]:
        """End pose ``(x, y, heading_rad)``."""
        p = self.poses_at_fraction(np.array([1.0]))[0]
        return (float(p[0]), float(p[1]), float(p[2]))

    def poses_at_fraction(self, f: ArrayLike) -> NDArray[np.float64]:
        """Poses at fractions ``f`` in [0, 1] of the segment, shape ``(len(f), 3)``.

        For lines and arcs the fraction is of length; for pivots, of the turn.
        """
        f = np.atleast_1d(np.asarray(f, dtype=float))
        x0, y0, th0 = self.start
        if self.kind == "pivot":
            out = np.empty((f.size, 3))
            out[:, 0] = x0
            out[:, 1] = y0
            out[:, 2] = th0 + f * self.turn_rad
            return out
        if self.kind == "line" and (self.course_rad is not None or self.turn_rad != 0.0):
            # Holonomic line: fixed course, body heading turns linearly with distance.
            c = self.course
            s = f * self.length_m
            out = np.empty((f.size, 3))
            out[:, 0] = x0 + s * math.cos(c)
            out[:, 1] = y0 + s * math.sin(c)
            out[:, 2] = th0 + f * self.turn_rad
            return out
        if self.length_m == 0.0:
            return np.tile(np.array(self.start), (f.size, 1))
        omega = self.turn_rad / self.length_m if self.kind == "arc" else 0.0
        return propagate(np.array(self.start), float(self.direction), 0.0, omega,
                         f * self.length_m)

    def poses_at(self, s: ArrayLike) -> NDArray[np.float64]:
        """Poses at stations ``s`` (metres from the segment start), shape ``(len(s), 3)``."""
        s = np.atleast_1d(np.asarray(s, dtype=float))
        if self.length_m == 0.0:
            return self.poses_at_fraction(np.ones_like(s))
        return self.poses_at_fraction(s / self.length_m)

    def arc_centre(self) -> tuple[float, float] | None:
        """Centre of an arc's circle in the plan frame; ``None`` for other kinds."""
        k = self.curvature
        if k == 0.0:
            return None
        x0, y0, th0 = self.start
        r = 1.0 / k  # signed: positive centre to the left of the heading
        return (x0 - r * math.sin(th0), y0 + r * math.cos(th0))

    # -- file form --------------------------------------------------------------------------
    def to_dict(self) -> dict:
        """The contract's segment object (headings in degrees)."""
        e = self.end
        return {
            "kind": self.kind,
            "start": _pose_dict(self.start),
            "end": _pose_dict(e),
            "length_m": self.length_m,
            "radius_m": self.radius_m,
            "turn_deg": math.degrees(self.turn_rad),
            "direction": self.direction,
        }


def _pose_dict(p: Sequence[float]) -> dict:
    return {"x": float(p[0]), "y": float(p[1]), "heading_deg": math.degrees(p[2])}


# -- constructors ---------------------------------------------------------------------------
def line(start: Sequence[float], length_m: float, direction: int = 1) -> Segment:
    """A straight segment along the start heading (backwards if ``direction`` is -1)."""
    return Segment("line", tuple(start), float(length_m), 0.0, int(direction))


def arc(start: Sequence[float], radius_m: float, turn_rad: float, direction: int = 1) -> Segment:
    """An arc of ``radius_m`` turning the heading by ``turn_rad`` (signed)."""
    return Segment("arc", tuple(start), abs(float(radius_m) * float(turn_rad)), float(turn_rad),
                   int(direction))


def pivot(start: Sequence[float], turn_rad: float) -> Segment:
    """A turn on the spot by ``turn_rad`` (signed; +270 deg and -90 deg differ)."""
    return Segment("pivot", tuple(start), 0.0, float(turn_rad), 1)


def holonomic_line(start: Sequence[float], goal_xy: Sequence[float],
                   turn_rad: float = 0.0) -> Segment:
    """A straight move to ``goal_xy`` with the body turning by ``turn_rad`` on the way."""
    dx, dy = goal_xy[0] - start[0], goal_xy[1] - start[1]
    return Segment("line", tuple(start), math.hypot(dx, dy), float(turn_rad), 1,
                   course_rad=math.atan2(dy, dx))


# -- whole paths ----------------------------------------------------------------------------
def path_length(segments: Sequence[Segment]) -> float:
    """Sum of the segment lengths, m."""
    return float(sum(s.length_m for s in segments))


def segment_stations(segments: Sequence[Segment]) -> NDArray[np.float64]:
    """Station at the start of each segment plus the total, shape ``(n + 1,)``."""
    return np.concatenate([[0.0], np.cumsum([s.length_m for s in segments])])


def poses_along(segments: Sequence[Segment], stations: ArrayLike) -> NDArray[np.float64]:
    """Poses at route stations (metres from the route start), shape ``(len(stations), 3)``.

    A station on a joint takes the later segment; pivots (length 0) are passed over, so use
    :meth:`Segment.poses_at_fraction` to see a pivot's turn.
    """
    st = np.atleast_1d(np.asarray(stations, dtype=float))
    out = np.empty((st.size, 3))
    if not segments:
        out[:] = np.nan
        return out
    edges = segment_stations(segments)
    idx = np.clip(np.searchsorted(edges, st, side="right") - 1, 0, len(segments) - 1)
    for i in unique_sorted(idx):
        m = idx == i
        out[m] = segments[i].poses_at(st[m] - edges[i])
    return out


def joint_gaps(segments: Sequence[Segment]) -> NDArray[np.float64]:
    """Position gap (m) and heading gap (rad) at each joint, shape ``(n - 1, 2)``.

    Both are zero for a continuous path; the planner's tests assert that.
    """
    gaps = []
    for a, b in zip(segments[:-1], segments[1:]):
        e = a.end
        dpos = math.hypot(e[0] - b.start[0], e[1] - b.start[1])
        dth = abs(math.remainder(e[2] - b.start[2], 2 * math.pi))
        gaps.append((dpos, dth))
    return np.array(gaps, dtype=float).reshape(-1, 2)
