"""Path segments: line, arc, clothoid and pivot, with closed-form poses along them.

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
- ``clothoid``: an Euler spiral, curvature linear in distance from ``curvature_start_per_m``
  (``k0``) to ``curvature_end_per_m`` (``k1``), both signed per metre of signed travel like an
  arc's; ``turn_rad = direction * length_m * (k0 + k1) / 2``. The heading after distance ``u``
  is ``th0 + d (k0 u + c u^2 / 2)`` with ``c = (k1 - k0) / length_m`` and ``d`` the direction,
  and the position is ``d * integral exp(i th(u)) du``, in closed form through the Fresnel
  integrals ``C + i S`` (``scipy.special.fresnel``) after completing the square (e.g. Meek &
  Walton, "Clothoid spline transition spirals", 1992; DLMF 7.2). Near an arc (``c`` so small
  that the completed square's phase ``k0^2 / (2 |c|)`` exceeds ``FRESNEL_MAX_PHASE``, where
  rounding of that phase would cost more than 1e-10 relative) the same integral is taken by
  Gauss-Legendre quadrature on chunks over which the heading turns at most 0.25 rad, whose
  error bound (Abramowitz & Stegun 25.4.30) is below 1e-30 relative. Either way the poses
  agree with ``scipy.integrate.quad`` of ``cos`` / ``sin`` of the heading to about 1e-12 m
  per metre of length (``tests/test_clothoid.py`` asserts 1e-9 m).
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

KINDS = ("line", "arc", "pivot", "clothoid")
#: Largest completed-square phase (rad) evaluated through the Fresnel integrals; beyond it the
#: clothoid is so close to an arc that quadrature is the more accurate way.
FRESNEL_MAX_PHASE = 1.0e5
#: Largest heading change (rad) over one Gauss-Legendre chunk.
_GL_CHUNK_RAD = 0.25
_GL_X, _GL_W = np.polynomial.legendre.leggauss(10)


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
    kappa0, kappa1 : float
        Clothoids only: signed curvature (1/m) at the start and the end.
    """

    kind: str
    start: tuple[float, float, float]
    length_m: float
    turn_rad: float = 0.0
    direction: int = 1
    course_rad: float | None = None
    note: str = field(default="", compare=False)
    kappa0: float = 0.0
    kappa1: float = 0.0

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
        if self.kind == "clothoid":
            if not (math.isfinite(self.kappa0) and math.isfinite(self.kappa1)):
                raise ValueError("clothoid curvatures must be finite")
            want = self.direction * self.length_m * 0.5 * (self.kappa0 + self.kappa1)
            if abs(want - self.turn_rad) > 1e-9 * max(1.0, abs(want)):
                raise ValueError("a clothoid's turn_rad must be direction * length * "
                                 "(kappa0 + kappa1) / 2")

    # -- derived geometry -------------------------------------------------------------------
    @property
    def radius_m(self) -> float | None:
        """Turn radius of an arc; ``None`` for lines and pivots."""
        if self.kind != "arc" or self.turn_rad == 0.0:
            return None
        return self.length_m / abs(self.turn_rad)

    @property
    def min_radius_m(self) -> float | None:
        """Smallest radius reached along the segment (arcs and clothoids); ``None`` if straight."""
        if self.kind == "arc":
            return self.radius_m
        if self.kind == "clothoid":
            k = max(abs(self.kappa0), abs(self.kappa1))
            return None if k == 0.0 else 1.0 / k
        return None

    @property
    def max_abs_curvature(self) -> float:
        """Largest |curvature| along the segment, 1/m (0 for lines and pivots)."""
        if self.kind == "clothoid":
            return max(abs(self.kappa0), abs(self.kappa1))
        return abs(self.curvature)

    @property
    def sharpness(self) -> float:
        """d(curvature)/d(distance) of a clothoid, 1/m^2 (signed); 0 for other kinds."""
        if self.kind != "clothoid" or self.length_m == 0.0:
            return 0.0
        return (self.kappa1 - self.kappa0) / self.length_m

    def curvature_at(self, s: ArrayLike) -> NDArray[np.float64]:
        """Signed curvature (1/m) at stations ``s`` (metres from the start)."""
        s = np.asarray(s, dtype=float)
        if self.kind == "clothoid":
            return self.kappa0 + self.sharpness * s
        return np.full(s.shape, self.curvature)

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
        if self.kind == "clothoid":
            return clothoid_poses(self.start, self.kappa0, self.kappa1, self.length_m,
                                  self.direction, f * self.length_m)
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
        } | ({"curvature_start_per_m": self.kappa0, "curvature_end_per_m": self.kappa1}
             if self.kind == "clothoid" else {})


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


def clothoid(start: Sequence[float], kappa0: float, kappa1: float, length_m: float,
             direction: int = 1) -> Segment:
    """An Euler spiral from ``start``: curvature linear from ``kappa0`` to ``kappa1`` (signed,
    1/m) over ``length_m``, driven forward (``direction`` 1) or in reverse (-1).

    Examples
    --------
    >>> c = clothoid((0.0, 0.0, 0.0), 0.0, 1.0, 1.0)  # 0 to 1/m over 1 m turns half a radian
    >>> round(c.turn_rad, 12), c.kind
    (0.5, 'clothoid')
    """
    d = int(direction)
    k0, k1, ell = float(kappa0), float(kappa1), float(length_m)
    return Segment("clothoid", tuple(start), ell, d * ell * 0.5 * (k0 + k1), d,
                   kappa0=k0, kappa1=k1)


def _fresnel_integral(a: float, b: float, s: NDArray[np.float64]) -> NDArray[np.complex128]:
    """``integral_0^s exp(i (a u + b u^2 / 2)) du`` for ``b != 0`` through Fresnel integrals."""
    from scipy.special import fresnel

    if b < 0.0:
        return np.conj(_fresnel_integral(-a, -b, s))
    k = math.sqrt(b / math.pi)
    t0 = k * (a / b)
    t1 = k * (s + a / b)
    s1, c1 = fresnel(t1)
    s0, c0 = fresnel(t0)
    return np.exp(-1j * (a * a / (2.0 * b))) * ((c1 - c0) + 1j * (s1 - s0)) / k


def _quadrature_integral(a: float, b: float, s: NDArray[np.float64]) -> NDArray[np.complex128]:
    """The same integral by Gauss-Legendre quadrature on chunks of at most 0.25 rad turn."""
    smax = float(np.max(np.abs(s))) if s.size else 0.0
    turn = abs(a) * smax + 0.5 * abs(b) * smax * smax
    m = max(1, math.ceil(turn / _GL_CHUNK_RAD))
    h = s / m  # chunk length per station
    out = np.zeros(s.shape, dtype=complex)
    for j in range(m):
        mid = (j + 0.5) * h
        u = mid[:, None] + 0.5 * h[:, None] * _GL_X[None, :]
        out += 0.5 * h * (np.exp(1j * (a * u + 0.5 * b * u * u)) @ _GL_W)
    return out


def clothoid_poses(start: Sequence[float], kappa0: float, kappa1: float, length_m: float,
                   direction: int, s: ArrayLike) -> NDArray[np.float64]:
    """Poses at distances ``s`` along a clothoid (see the module docstring), shape ``(n, 3)``.

    Public so that the route finder and the planner can place clothoids without a Segment.
    """
    s = np.atleast_1d(np.asarray(s, dtype=float))
    x0, y0, th0 = (float(v) for v in start)
    d = float(direction)
    c = (kappa1 - kappa0) / length_m if length_m > 0.0 else 0.0
    a, b = d * kappa0, d * c
    if b != 0.0 and a * a / (2.0 * abs(b)) <= FRESNEL_MAX_PHASE:
        z = _fresnel_integral(a, b, s)
    elif b == 0.0 and a == 0.0:
        z = s.astype(complex)
    else:
        z = _quadrature_integral(a, b, s)
    z = d * np.exp(1j * th0) * z
    out = np.empty((s.size, 3))
    out[:, 0] = x0 + z.real
    out[:, 1] = y0 + z.imag
    out[:, 2] = th0 + a * s + 0.5 * b * s * s
    return out


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
