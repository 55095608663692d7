"""Shortest forward-only paths of bounded curvature between two poses (Dubins paths).

Dubins (1957, *Amer. J. Math.* 79(3)) proved that the shortest path of a forward-moving
vehicle with turn radius at least ``r`` between two poses is one of six words made of arcs of
radius exactly ``r`` (L, R) and straights (S): LSL, RSR, LSR, RSL, RLR, LRL. The piece lengths
of each word follow in closed form from the goal pose seen from the start, normalised by ``r``;
the formulas here are those of Shkel & Lumelsky (2001), "Classification of the Dubins set",
*Robotics and Autonomous Systems* 34, sec. 2, written with the distance ``d = D / r`` and the
angles ``alpha``, ``beta`` of both headings measured from the line joining the two positions.

Every word is evaluated as array operations over all pairs at once and the shortest feasible
one is kept, so :func:`shortest` connects thousands of pairs in one call without a Python loop.

Headings are radians throughout. ``params`` holds the three piece lengths in metres (all >= 0
for Dubins); an arc piece of length ``s`` turns the heading by ``s / radius_m``.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np
from numpy.typing import ArrayLike, NDArray

from kinematics.errors import ValidationError
from kinematics.motion.segments import Segment, arc, line

TWO_PI = 2.0 * math.pi

#: Word names, in the order of the ``word`` index of :class:`DubinsBatch`.
WORDS: tuple[str, ...] = ("LSL", "RSR", "LSR", "RSL", "RLR", "LRL")

# Angles within this of a full turn are treated as no turn: the closed forms return 2 pi - 1e-16
# for what is geometrically a zero-length arc, and keeping it would add a whole circle.
_FULL_TURN_SNAP = 1e-12
# A piece shorter than this (metres) is dropped when building segments.
_ZERO_PIECE_M = 1e-12
# Goals this close to the start (in radii and radians) are the start: without this a heading
# rounding error of 1e-16 would ask for a full loop.
_SAME_POSE = 1e-12


def mod2pi(x: ArrayLike) -> NDArray[np.float64]:
    """Angle(s) in ``[0, 2 pi)``, with values a rounding error below ``2 pi`` sent to 0.

    Examples
    --------
    >>> mod2pi(np.array([-np.pi / 2, 2 * np.pi - 1e-15])).round(6).tolist()
    [4.712389, 0.0]
    """
    x = np.asarray(x, dtype=float)
    m = np.atleast_1d(x - TWO_PI * np.floor(x / TWO_PI))
    # Rounding can give exactly 2 pi for a tiny negative x, or -1e-16 near a multiple of 2 pi.
    m[(m > TWO_PI - _FULL_TURN_SNAP) | (m < 0.0)] = 0.0
    return m


@dataclass(frozen=True)
class DubinsBatch:
    """Shortest Dubins paths for ``N`` start/goal pairs.

    Attributes
    ----------
    length_m : ndarray, shape (N,)
        Path length in metres.
    word : ndarray of int, shape (N,)
        Index into :attr:`WORDS` of the shortest word.
    params : ndarray, shape (N, 3)
        Length in metres of each of the three pieces of the word, in order (all >= 0).
    radius_m : ndarray, shape (N,)
        Turn radius used for each pair.
    """

    length_m: NDArray[np.float64]
    word: NDArray[np.int64]
    params: NDArray[np.float64]
    radius_m: NDArray[np.float64]
    WORDS: ClassVar[tuple[str, ...]] = WORDS

    def __len__(self) -> int:
        return int(self.length_m.shape[0])

    def words(self) -> list[str]:
        """Word names of every pair."""
        return [WORDS[i] for i in self.word]


def _check_inputs(starts: ArrayLike, goals: ArrayLike, radius_m: ArrayLike, where: str
                  ) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Validate and broadcast poses ``(N, 3)`` and radii ``(N,)``."""
    p0 = np.atleast_2d(np.asarray(starts, dtype=float))
    p1 = np.atleast_2d(np.asarray(goals, dtype=float))
    if p0.ndim != 2 or p0.shape[1] != 3:
        raise ValidationError(where, "starts", "an array of poses (x_m, y_m, heading_rad), "
                              f"shape (N, 3); got shape {p0.shape}")
    if p1.shape != p0.shape:
        raise ValidationError(where, "goals", f"the same shape as starts {p0.shape}; "
                              f"got {p1.shape}")
    if not (np.all(np.isfinite(p0)) and np.all(np.isfinite(p1))):
        raise ValidationError(where, "starts/goals", "finite pose values (no NaN or infinity)")
    r = np.broadcast_to(np.asarray(radius_m, dtype=float), (p0.shape[0],)).astype(float)
    if not np.all(np.isfinite(r) & (r > 0.0)):
        raise ValidationError(where, "radius_m", "a positive finite turn radius in metres")
    return p0, p1, r


def normalised_goal(starts: NDArray[np.float64], goals: NDArray[np.float64],
                    radius_m: NDArray[np.float64]
                    ) -> tuple[NDArray[np.float64], NDArray[np.float64], NDArray[np.float64]]:
    """Goal in the start's frame scaled to unit radius.

    Parameters
    ----------
    starts, goals : ndarray, shape (N, 3)
        Poses ``(x_m, y_m, heading_rad)``.
    radius_m : ndarray, shape (N,)
        Turn radius per pair.

    Returns
    -------
    x, y, phi : ndarray, shape (N,)
        Goal position in start-frame radii and heading change in radians (not wrapped).
    """
    dx = goals[:, 0] - starts[:, 0]
    dy = goals[:, 1] - starts[:, 1]
    c, s = np.cos(starts[:, 2]), np.sin(starts[:, 2])
    x = (c * dx + s * dy) / radius_m
    y = (-s * dx + c * dy) / radius_m
    return x, y, goals[:, 2] - starts[:, 2]


def same_pose(x: NDArray[np.float64], y: NDArray[np.float64],
              phi: NDArray[np.float64]) -> NDArray[np.bool_]:
    """Where a normalised goal coincides with the start up to rounding.

    Parameters
    ----------
    x, y, phi : ndarray, shape (N,)
        A goal from :func:`normalised_goal`.

    Returns
    -------
    ndarray of bool, shape (N,)
        True where position and heading (mod 2 pi) agree within 1e-12.
    """
    near = (np.abs(x) < _SAME_POSE) & (np.abs(y) < _SAME_POSE)
    if near.any():
        near &= np.abs(phi - TWO_PI * np.round(phi / TWO_PI)) < _SAME_POSE
    return near


_INV_TWO_PI = 1.0 / TWO_PI
_SNAP_BELOW = TWO_PI - _FULL_TURN_SNAP
#: Pairs evaluated together: small enough that every temporary stays in the processor's cache
#: and in numpy's cache of small buffers (fresh large arrays cost page faults).
_BLOCK = 1024


def _wrap(x: NDArray[np.float64], out: NDArray[np.float64]) -> NDArray[np.float64]:
    """:func:`mod2pi` of ``x`` into ``out`` (the same operations, so the same bits), but for
    the snap of values a rounding error from 0 or 2 pi, which :func:`_snap` makes once all
    pieces are known."""
    np.divide(x, TWO_PI, out=out)
    np.floor(out, out=out)
    out *= TWO_PI
    return np.subtract(x, out, out=out)


def _snap(a: NDArray[np.float64]) -> None:
    """Arc angles a rounding error below 2 pi (or below 0) are no turn, in place."""
    a[(a > _SNAP_BELOW) | (a < 0.0)] = 0.0


#: An LSL / RSR straight shorter than this (in radii) joins circles that coincide to
#: rounding: the word is then one arc (its position error at most this times the radius).
_SAME_CIRCLE = 1e-9
#: Widest snap (rad) of a first or last LSL / RSR arc to no turn (see _one_arc).
_NOISE_SNAP_MAX = 1e-6


def _one_arc(piece: NDArray[np.float64], turn: NDArray[np.float64], d: NDArray[np.float64],
             gap: NDArray[np.float64]) -> None:
    """Mend an LSL / RSR word ``(3, N)`` whose first and last arcs add up to its turn plus a
    whole circle because the straight's direction is rounding noise, in place.

    That direction is ``atan2`` of a vector of the straight's length ``p`` (radii) whose
    components carry rounding errors of a few ``eps (d + 2)``, so it is good to about
    ``8 eps (d + 2) / p`` rad: an arc of nearly 0 can wrap to nearly 2 pi. Where the arcs
    add up to more than the turn (mod 2 pi) plus pi, an end arc within that error of 2 pi
    becomes no turn, and where the circles' centres (``gap`` apart, radii, from their
    coordinates: ``sqrt`` of the squared length formula is only good to ~1e-8) coincide
    within ``_SAME_CIRCLE`` the word becomes one arc of the turn. Answers that are the turn
    itself stay as they were.
    """
    # The arcs exceed pi wherever they exceed the turn (>= 0) plus pi: test that first.
    ends = piece[0] + piece[2]
    loop = ends > math.pi
    if not loop.any():
        return
    arc = np.zeros_like(turn)
    arc[loop] = mod2pi(turn[loop])
    loop &= ends > arc + math.pi
    if not loop.any():
        return
    one = loop & (gap < _SAME_CIRCLE)
    if one.any():
        piece[0, one] = arc[one]
        piece[1, one] = 0.0
        piece[2, one] = 0.0
    with np.errstate(divide="ignore"):
        tol = 8.0 * np.finfo(float).eps * (d + 2.0) / gap
    np.clip(tol, _FULL_TURN_SNAP, _NOISE_SNAP_MAX, out=tol)
    for k in (0, 2):
        piece[k, loop & (piece[k] > TWO_PI - tol)] = 0.0


def _dubins_words(d: NDArray[np.float64], alpha: NDArray[np.float64], beta: NDArray[np.float64],
                  trig: tuple[NDArray[np.float64], ...]
                  ) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Normalised piece lengths of all six words, shape ``(6, 3, N)``, and totals ``(6, N)``.

    Shkel & Lumelsky (2001), sec. 2, eqs. for LSL ... LRL; ``alpha`` and ``beta`` are the start
    and goal headings relative to the line from start to goal, ``d`` the distance over ``r``,
    ``trig`` their sines and cosines ``(sa, ca, sb, cb)``. Infeasible words total ``inf``.
    Written with ``out=`` throughout: about 80 array operations for all six words, each
    into a buffer of the block, no per-pair Python.
    """
    sa, ca, sb, cb = trig
    n = d.shape[0]
    cab = ca * cb
    cab += sa * sb  # cos(alpha - beta)
    d2 = d * d
    # Rounding leaves tangent cases (touching circles, p = 0; CCC at the edge of its range)
    # a few ulps on the wrong side of feasibility; accept them within that error.
    tol = d2 + 8.0
    tol *= 4.0 * np.finfo(float).eps
    out = np.empty((6, 3, n))
    bad = np.empty((6, n), dtype=bool)
    tmp = np.empty(n)
    p2 = np.empty(n)
    sd = sa - sb
    sd *= d
    base = 2.0 + d2
    base -= 2.0 * cab
    # LSL
    np.add(base, 2.0 * sd, out=p2)
    th_lsl = np.arctan2(cb - ca, d + sa - sb)
    _wrap(np.subtract(th_lsl, alpha, out=tmp), out[0, 0])
    np.sqrt(np.maximum(p2, 0.0, out=tmp), out=out[0, 1])
    _wrap(np.subtract(beta, th_lsl, out=tmp), out[0, 2])
    np.less(p2, -tol, out=bad[0])
    _one_arc(out[0], beta - alpha, d, np.hypot(cb - ca, d + sa - sb))
    # RSR
    np.subtract(base, 2.0 * sd, out=p2)
    th_rsr = np.arctan2(ca - cb, d - sa + sb)
    _wrap(np.subtract(alpha, th_rsr, out=tmp), out[1, 0])
    np.sqrt(np.maximum(p2, 0.0, out=tmp), out=out[1, 1])
    _wrap(np.subtract(th_rsr, beta, out=tmp), out[1, 2])
    np.less(p2, -tol, out=bad[1])
    _one_arc(out[1], alpha - beta, d, np.hypot(ca - cb, d - sa + sb))
    # LSR: the straight is an inner tangent; needs the circles apart.
    sp = sa + sb
    sp *= 2.0 * d
    common = d2 - 2.0
    common += 2.0 * cab
    np.add(common, sp, out=p2)
    p = out[2, 1]
    np.sqrt(np.maximum(p2, 0.0, out=tmp), out=p)
    # atan2(Y, X) - atan2(-2, p) as one angle of (X + iY)(p + 2i); (X, Y) is never 0 here.
    X, Y = d + sa + sb, -ca - cb
    th = np.arctan2(Y * p + 2.0 * X, X * p - 2.0 * Y)
    _wrap(np.subtract(th, alpha, out=tmp), out[2, 0])
    _wrap(np.subtract(th, beta, out=tmp), out[2, 2])
    np.less(p2, -tol, out=bad[2])
    # RSL
    np.subtract(common, sp, out=p2)
    p = out[3, 1]
    np.sqrt(np.maximum(p2, 0.0, out=tmp), out=p)
    # atan2(Y, X) - atan2(2, p) as one angle of (X + iY)(p - 2i).
    X, Y = d - sa - sb, ca + cb
    th = np.arctan2(Y * p - 2.0 * X, X * p + 2.0 * Y)
    _wrap(np.subtract(alpha, th, out=tmp), out[3, 0])
    _wrap(np.subtract(beta, th, out=tmp), out[3, 2])
    np.less(p2, -tol, out=bad[3])
    # RLR: the middle arc of an optimal CCC word is longer than pi (Dubins 1957), hence
    # 2 pi - acos rather than acos. Its joining angle is RSR's, LRL's is minus LSL's.
    six = 6.0 - d2
    six += 2.0 * cab
    for k, sign, th_j in ((4, 1.0, th_rsr), (5, -1.0, th_lsl)):
        c = np.add(six, 2.0 * sd, out=p2) if sign > 0 else np.subtract(six, 2.0 * sd, out=p2)
        c /= 8.0
        np.greater(np.abs(c, out=tmp), tol + 1.0, out=bad[k])
        p = out[k, 1]
        np.clip(c, -1.0, 1.0, out=tmp)
        np.arccos(tmp, out=p)
        np.subtract(TWO_PI, p, out=p)
        _snap(p)  # an arc of exactly 0 or 2 pi is no turn; its half goes into t below
        t = out[k, 0]
        if sign > 0:
            np.subtract(alpha, th_j, out=tmp)
        else:
            np.subtract(th_j, alpha, out=tmp)
        tmp += 0.5 * p
        _wrap(tmp, t)
        _snap(t)
        if sign > 0:
            np.subtract(alpha, beta, out=tmp)
        else:
            np.subtract(beta, alpha, out=tmp)
        tmp -= t
        tmp += p
        _wrap(tmp, out[k, 2])
    _snap(out[:, 0::2])  # the first and last arcs (the straights may exceed 2 pi)
    total = out[:, 0] + out[:, 1]
    total += out[:, 2]
    total[bad] = np.inf
    return out, total


def _shortest_block(p0: NDArray[np.float64], p1: NDArray[np.float64], r: NDArray[np.float64],
                    length: NDArray[np.float64], word: NDArray[np.int64],
                    params: NDArray[np.float64]) -> None:
    """:func:`shortest` of one block of pairs, written into ``length``, ``word``, ``params``."""
    x, y, phi = normalised_goal(p0, p1, r)
    d = np.sqrt(x * x + y * y)
    # When the positions coincide the joining line is undefined; measure from the start heading.
    far = d > 0.0
    if far.all():
        theta = np.arctan2(y, x)
        c_th, s_th = x / d, y / d
    else:
        dd = np.where(far, d, 1.0)
        c_th = np.where(far, x / dd, 1.0)
        s_th = np.where(far, y / dd, 0.0)
        theta = np.where(far, np.arctan2(y, x), 0.0)
    alpha = mod2pi(-theta)
    beta = mod2pi(phi - theta)
    s_phi, c_phi = np.sin(phi), np.cos(phi)
    # Sines and cosines of alpha = -theta and beta = phi - theta by the angle-difference rules,
    # so only phi needs a trigonometric call.
    trig = (-s_th, c_th, s_phi * c_th - c_phi * s_th, c_phi * c_th + s_phi * s_th)
    pieces, total = _dubins_words(d, alpha, beta, trig)
    same = same_pose(x, y, phi)
    if same.any():
        total[:, same] = np.inf
        total[0, same] = 0.0
        pieces[:, :, same] = 0.0
    w = np.argmin(total, axis=0)
    idx = np.arange(x.shape[0])
    np.multiply(total[w, idx], r, out=length)
    word[:] = w
    np.multiply(pieces[w, :, idx], r[:, None], out=params)


def shortest(starts: ArrayLike, goals: ArrayLike, radius_m: ArrayLike) -> DubinsBatch:
    """Shortest forward paths of turn radius ``radius_m`` for many pose pairs at once.

    Parameters
    ----------
    starts, goals : array_like, shape (N, 3) or (3,)
        Poses ``(x_m, y_m, heading_rad)``.
    radius_m : float or array_like, shape (N,)
        Minimum turn radius in metres, > 0.

    Returns
    -------
    DubinsBatch

    Raises
    ------
    ValidationError
        If shapes differ, a value is not finite or a radius is not positive.

    Notes
    -----
    Pairs are evaluated in blocks of ``_BLOCK`` (one block for a small batch, with no
    further set-up: the planner's few legs per drag step take the same code); each pair's
    answer does not depend on the others or on the block.

    Examples
    --------
    >>> b = shortest([[0, 0, 0]], [[0, 2, np.pi]], 1.0)   # a U-turn
    >>> round(float(b.length_m[0]), 9), b.words()
    (3.141592654, ['LSL'])
    """
    p0, p1, r = _check_inputs(starts, goals, radius_m, "<dubins.shortest>")
    n = p0.shape[0]
    length = np.empty(n)
    word = np.empty(n, dtype=np.int64)
    params = np.empty((n, 3))
    for i in range(0, n, _BLOCK):
        b = slice(i, i + _BLOCK)
        _shortest_block(p0[b], p1[b], r[b], length[b], word[b], params[b])
    return DubinsBatch(length_m=length, word=word, params=params, radius_m=r)


def pieces_to_segments(start: Sequence[float], letters: str, signed_lengths_m: Sequence[float],
                       radius_m: float) -> list[Segment]:
    """Chain arcs and straights from ``start``: one piece per letter (``L``, ``R``, ``S``).

    A negative length drives that piece in reverse. The steering letter fixes the curvature
    sign: ``L`` has curvature ``+1/r`` (centre on the left whichever way the body moves), so a
    reverse ``L`` turns the heading clockwise. Pieces shorter than 1e-12 m are dropped.

    Parameters
    ----------
    start : sequence of float
        Start pose ``(x_m, y_m, heading_rad)``.
    letters : str
        One of ``L``, ``R``, ``S`` per piece.
    signed_lengths_m : sequence of float
        Signed length of each piece in metres (extra entries past ``letters`` are ignored).
    radius_m : float
        Arc radius in metres.

    Returns
    -------
    list of Segment

    Examples
    --------
    >>> segs = pieces_to_segments((0, 0, 0), "LS", (np.pi / 2, -1.0), 1.0)
    >>> [(s.kind, s.direction) for s in segs], (np.round(segs[-1].end, 9) + 0.0).tolist()
    ([('arc', 1), ('line', -1)], [1.0, 0.0, 1.570796327])
    """
    segs: list[Segment] = []
    pose = tuple(float(v) for v in start)
    for ch, s in zip(letters, signed_lengths_m):
        s = float(s)
        if abs(s) < _ZERO_PIECE_M:
            continue
        direction = 1 if s > 0 else -1
        if ch == "S":
            seg = line(pose, abs(s), direction)
        else:
            turn = s / radius_m if ch == "L" else -s / radius_m
            seg = arc(pose, radius_m, turn, direction)
        segs.append(seg)
        pose = seg.end
    return segs


def batch_segments(batch: DubinsBatch, starts: ArrayLike, i: int) -> list[Segment]:
    """Segments of pair ``i`` of a batch, starting at ``starts[i]``.

    Parameters
    ----------
    batch : DubinsBatch
        The result of :func:`shortest`.
    starts : array_like, shape (N, 3)
        The starts the batch was computed from.
    i : int
        Which pair.

    Returns
    -------
    list of Segment
        As :func:`path_segments` returns for that pair.
    """
    return word_segments(batch, starts, i, WORDS)


def word_segments(batch: Any, starts: ArrayLike, i: int,
                  names: Sequence[str]) -> list[Segment]:
    """Segments of pair ``i`` of any word batch (Dubins or Reeds-Shepp), whose word indices
    point into ``names`` and whose ``params`` are signed piece lengths in metres."""
    p0 = np.atleast_2d(np.asarray(starts, dtype=float))
    return pieces_to_segments(p0[i], names[int(batch.word[i])], batch.params[i],
                              float(batch.radius_m[i]))


def path_segments(start: Sequence[float], goal: Sequence[float],
                  radius_m: float) -> list[Segment]:
    """The shortest Dubins path from ``start`` to ``goal`` as arc and line segments.

    Parameters
    ----------
    start, goal : sequence of float
        Poses ``(x_m, y_m, heading_rad)``.
    radius_m : float
        Turn radius in metres, > 0.

    Returns
    -------
    list of Segment
        Arcs of radius ``radius_m`` and straights, all forward, zero-length pieces dropped
        (empty when start and goal coincide). The last segment ends at ``goal``.

    Examples
    --------
    >>> segs = path_segments((0, 0, 0), (0, 2, np.pi), 1.0)
    >>> [(s.kind, round(s.turn_rad, 6)) for s in segs]
    [('arc', 3.141593)]
    """
    p0 = np.asarray(start, dtype=float).reshape(1, 3)
    batch = shortest(p0, np.asarray(goal, dtype=float).reshape(1, 3), float(radius_m))
    return batch_segments(batch, p0, 0)
