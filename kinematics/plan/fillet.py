"""Corner fillets: tangent arcs of a given radius joining the straight legs of a polyline.

At a corner where the direction of travel turns by the deflection angle ``a`` (signed,
counter-clockwise positive, ``|a| < pi``), the circle of radius ``R`` tangent to both legs
touches each leg at the tangent distance

    t = R * tan(|a| / 2)

from the corner, and the arc between the two tangent points has length ``R * |a|`` (plane
geometry of the tangent circle to two lines, e.g. any surveying text on simple horizontal
curves: tangent length ``T = R tan(I/2)``, arc length ``L = R I``). The filleted polyline is
therefore shorter than the polyline by ``sum(2 t - R |a|)``, and it lies inside every corner.

Two fillets share a leg; they fit when the leg is at least as long as the two tangent
distances on it. :func:`layout_fillets` says which legs are too short and by how much, and
:func:`fit_radii` shrinks radii (in proportion on each crowded leg) until every fillet fits.
A corner that turns straight back (``|a|`` within ``REVERSAL_TOL_RAD`` of ``pi``) cannot be
filleted at all: its tangent distance is infinite.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from kinematics.motion.segments import Segment, arc, line, pivot

#: Deflections closer than this to a half turn are reversals: no fillet can turn them.
REVERSAL_TOL_RAD = 1e-9
#: Deflections below this are straight on: no arc is drawn (it would have no length).
STRAIGHT_TOL_RAD = 1e-12
#: Lengths below this (metres) are treated as zero when building segments.
ZERO_LENGTH_M = 1e-12


@dataclass(frozen=True)
class LegShortfall:
    """A leg too short for the fillets at its two ends.

    Attributes
    ----------
    leg : int
        Leg index: leg ``i`` runs from point ``i`` to point ``i + 1``.
    corners : tuple of int
        Point indices of the filleted corners at the ends of the leg.
    leg_m : float
        Length of the leg.
    need_m : float
        Sum of the tangent distances the fillets need on it (``inf`` for a reversal).
    short_m : float
        ``need_m - leg_m``, > 0.
    """

    leg: int
    corners: tuple[int, ...]
    leg_m: float
    need_m: float
    short_m: float


@dataclass(frozen=True)
class FilletLayout:
    """Where the fillets of a polyline sit, and whether they fit.

    Arrays over corners have one entry per interior point (point ``k + 1`` is corner ``k``).

    Attributes
    ----------
    points : ndarray, shape (N, 2)
    heading_rad : ndarray, shape (N - 1,)
        Direction of each leg.
    leg_m : ndarray, shape (N - 1,)
    deflection_rad : ndarray, shape (N - 2,)
        Signed turn at each corner, in ``[-pi, pi]``.
    radius_m : ndarray, shape (N - 2,)
        Fillet radius at each corner; 0 means no fillet (a sharp corner).
    tangent_m : ndarray, shape (N - 2,)
        Tangent distance from each corner to its tangent points (``inf`` for a reversal).
    shortfalls : tuple of LegShortfall
        Legs too short for their fillets; empty when everything fits.
    """

    points: NDArray[np.float64]
    heading_rad: NDArray[np.float64]
    leg_m: NDArray[np.float64]
    deflection_rad: NDArray[np.float64]
    radius_m: NDArray[np.float64]
    tangent_m: NDArray[np.float64]
    shortfalls: tuple[LegShortfall, ...]

    @property
    def fits(self) -> bool:
        """True when every leg holds the fillets at its ends."""
        return not self.shortfalls

    @property
    def length_m(self) -> float:
        """Length of the filleted path: legs minus ``2 t`` per fillet plus its arc ``R |a|``."""
        f = self.radius_m > 0.0
        return float(self.leg_m.sum() - 2.0 * self.tangent_m[f].sum()
                     + (self.radius_m[f] * np.abs(self.deflection_rad[f])).sum())


def leg_geometry(points: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Direction (rad) and length (m) of each leg of a polyline ``(N, 2)``."""
    p = np.asarray(points, dtype=float).reshape(-1, 2)
    d = np.diff(p, axis=0)
    return np.arctan2(d[:, 1], d[:, 0]), np.hypot(d[:, 0], d[:, 1])


def deflections(points: ArrayLike) -> NDArray[np.float64]:
    """Signed deflection angle at each interior point of a polyline, shape ``(N - 2,)``.

    Counter-clockwise positive, in ``[-pi, pi]``; legs must have non-zero length.

    Examples
    --------
    >>> np.degrees(deflections([[0, 0], [1, 0], [1, 1], [0, 1]])).round(6).tolist()
    [90.0, 90.0]
    """
    p = np.asarray(points, dtype=float).reshape(-1, 2)
    d = np.diff(p, axis=0)
    a, b = d[:-1], d[1:]
    cross = a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]
    dot = (a * b).sum(axis=1)
    return np.arctan2(cross, dot)


def tangent_lengths(deflection_rad: ArrayLike, radius_m: ArrayLike) -> NDArray[np.float64]:
    """Tangent distances ``R tan(|a| / 2)``; 0 where ``R`` is 0, ``inf`` for reversals.

    Examples
    --------
    >>> tangent_lengths([np.pi / 2, 0.0, np.pi], 2.0).round(9).tolist()
    [2.0, 0.0, inf]
    """
    a = np.abs(np.asarray(deflection_rad, dtype=float))
    r = np.broadcast_to(np.asarray(radius_m, dtype=float), a.shape)
    rev = a >= math.pi - REVERSAL_TOL_RAD
    t = r * np.tan(np.where(rev, 0.0, a) / 2.0)
    return np.where(r > 0.0, np.where(rev, np.inf, t), 0.0)


def _leg_need(tangent_m: NDArray[np.float64], n_legs: int) -> NDArray[np.float64]:
    need = np.zeros(n_legs)
    need[:-1] += tangent_m  # corner k sits at the end of leg k ...
    need[1:] += tangent_m   # ... and at the start of leg k + 1
    return need


def layout_fillets(points: ArrayLike, radius_m: ArrayLike, tol_m: float = 1e-9
                   ) -> FilletLayout:
    """Tangent distances of the fillets of a polyline and the legs they do not fit on.

    Parameters
    ----------
    points : array_like, shape (N, 2)
        Polyline vertices, N >= 2, no two consecutive points equal.
    radius_m : float or array_like, shape (N - 2,)
        Fillet radius at each interior point; 0 leaves that corner sharp.
    tol_m : float
        A leg may be this much shorter than its fillets need (rounding).

    Returns
    -------
    FilletLayout

    Examples
    --------
    >>> lay = layout_fillets([[0, 0], [2, 0], [2, 1], [0, 1]], 1.0)  # two right angles, 1 m apart
    >>> lay.fits, lay.shortfalls[0].leg, round(lay.shortfalls[0].short_m, 9)
    (False, 1, 1.0)
    """
    p = np.asarray(points, dtype=float).reshape(-1, 2)
    heading, leg = leg_geometry(p)
    defl = deflections(p)
    r = np.broadcast_to(np.asarray(radius_m, dtype=float), defl.shape).astype(float)
    # A corner that does not turn needs no fillet; giving it radius 0 keeps zero arcs out.
    r = np.where(np.abs(defl) < STRAIGHT_TOL_RAD, 0.0, r)
    t = tangent_lengths(defl, r)
    need = _leg_need(t, leg.size)
    short = []
    for i in np.flatnonzero(need > leg + tol_m):
        corners = tuple(int(k + 1) for k in (i - 1, i) if 0 <= k < defl.size and t[k] > 0.0)
        short.append(LegShortfall(int(i), corners, float(leg[i]), float(need[i]),
                                  float(need[i] - leg[i])))
    return FilletLayout(p, heading, leg, defl, r, t, tuple(short))


def fit_radii(points: ArrayLike, radius_m: ArrayLike) -> NDArray[np.float64]:
    """Largest radii, at most ``radius_m``, whose fillets all fit on their legs.

    On each crowded leg both fillets first give up the same share of their tangent distance
    (a corner keeps ``t * min(1, leg / need)`` over its two legs); then each corner in turn
    takes back what its neighbours leave free, so every shrunk fillet fills one of its legs.
    Reversals get radius 0.

    Examples
    --------
    >>> fit_radii([[0, 0], [2, 0], [2, 1], [0, 1]], 1.0).round(9).tolist()
    [0.5, 0.5]
    """
    lay = layout_fillets(points, radius_m)
    t = lay.tangent_m
    need = _leg_need(np.where(np.isfinite(t), t, 0.0), lay.leg_m.size)
    with np.errstate(divide="ignore", invalid="ignore"):
        share = np.where(need > lay.leg_m, lay.leg_m / need, 1.0)
    want = np.where(np.isfinite(t), t, 0.0)
    fair = want * np.minimum(share[:-1], share[1:])
    # One pass in route order tops each corner up to what its neighbours leave free, so every
    # shrunk corner ends with a full leg (no radius could grow without another shrinking).
    leg = lay.leg_m
    for k in range(fair.size):
        left = leg[k] - (fair[k - 1] if k > 0 else 0.0)
        right = leg[k + 1] - (fair[k + 1] if k + 1 < fair.size else 0.0)
        fair[k] = max(0.0, min(want[k], left, right))
    half = np.abs(lay.deflection_rad) / 2.0
    with np.errstate(divide="ignore", invalid="ignore"):
        r = np.where((lay.radius_m > 0.0) & (fair > 0.0), fair / np.tan(half), 0.0)
    return np.minimum(r, lay.radius_m)


def corner_segment(start: Sequence[float], deflection_rad: float, radius_m: float
                   ) -> Segment | None:
    """The turn at one corner from ``start``: an arc of ``radius_m``, or a pivot if it is 0.

    Returns ``None`` where the corner does not turn (no zero-length segments).
    """
    if abs(deflection_rad) < STRAIGHT_TOL_RAD:
        return None
    if radius_m > 0.0:
        return arc(start, radius_m, deflection_rad, 1)
    return pivot(start, deflection_rad)


def fillet_segments(points: ArrayLike, radius_m: ArrayLike,
                    layout: FilletLayout | None = None) -> list[Segment]:
    """Line-arc-line path along a polyline, from its first point to its last.

    The path starts at ``points[0]`` heading along the first leg and ends at ``points[-1]``
    heading along the last; each corner is an arc of its radius inside the corner, or a pivot
    on the spot where the radius is 0. Each segment starts at the previous one's end.

    Raises
    ------
    ValueError
        If the fillets do not fit (see :func:`layout_fillets`); shrink them with
        :func:`fit_radii` or set those corners to 0 first.

    Examples
    --------
    >>> segs = fillet_segments([[0, 0], [2, 0], [2, 2]], 1.0)
    >>> [(s.kind, round(s.length_m, 6)) for s in segs]
    [('line', 1.0), ('arc', 1.570796), ('line', 1.0)]
    """
    lay = layout if layout is not None else layout_fillets(points, radius_m)
    if not lay.fits:
        s = lay.shortfalls[0]
        raise ValueError(f"fillets do not fit on leg {s.leg} (from point {s.leg} to "
                         f"{s.leg + 1}): it is {s.leg_m:.6g} m, they need {s.need_m:.6g} m")
    p = lay.points
    pose: tuple[float, float, float] = (float(p[0, 0]), float(p[0, 1]),
                                        float(lay.heading_rad[0]))
    segs: list[Segment] = []
    n_legs = lay.leg_m.size
    for i in range(n_legs):
        t0 = lay.tangent_m[i - 1] if i > 0 else 0.0
        t1 = lay.tangent_m[i] if i < n_legs - 1 else 0.0
        run = lay.leg_m[i] - t0 - t1
        if run > ZERO_LENGTH_M:
            segs.append(line(pose, float(run)))
            pose = segs[-1].end
        if i < n_legs - 1:
            seg = corner_segment(pose, float(lay.deflection_rad[i]), float(lay.radius_m[i]))
            if seg is not None:
                segs.append(seg)
                pose = seg.end
    return segs
