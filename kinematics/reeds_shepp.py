"""Shortest paths of bounded curvature driving forwards and backwards (Reeds-Shepp paths).

Reeds & Shepp (1990), "Optimal paths for a car that goes both forwards and backwards",
*Pacific J. Math.* 145(2), showed that the shortest such path is one of 48 words of at most
five pieces -- arcs of radius exactly ``r`` (L, R) and straights (S) -- separated by at most
two cusps, in the families CSC, CCC, CCCC, CCSC and CCSCC. Section 8 of the paper gives the
piece lengths of one representative of each family in closed form (formulas 8.1-8.11); the
others follow from two symmetries of the problem:

- *time-flip*: goal ``(x, y, phi) -> (-x, y, -phi)``, every piece driven the other way;
- *reflection*: goal ``(x, y, phi) -> (x, -y, -phi)``, L and R swapped;

plus, for the families that are not palindromes, reading the word *backwards* (the goal seen
from the start becomes the start seen from the goal). Where a formula leaves the sign of a
piece free (C|C|C and C|CC share formula 8.3/8.4), one evaluation covers two of the paper's
words, so 44 evaluations cover all 48.

Every evaluation is an array operation over all pairs at once, then the shortest feasible word
is kept per pair, so :func:`shortest` connects thousands of pairs in one call.

Headings are radians. ``params`` holds the signed piece lengths in metres (up to five, zero
padded): a negative length is driven in reverse. An arc piece of signed length ``s`` on an
``L`` turns the heading by ``s / radius_m`` (``-s / radius_m`` on an ``R``).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import ClassVar

import numpy as np
from numpy.typing import ArrayLike, NDArray

from .dubins import _check_inputs, normalised_goal, pieces_to_segments, same_pose
from .segments import Segment

PI = math.pi
TWO_PI = 2.0 * math.pi
HALF_PI = 0.5 * math.pi
MAX_PIECES = 5

# A piece whose sign the word fixes may come out a rounding error on the wrong side of zero.
_SIGN_TOL = 1e-10
# Tangent cases (circles just touching) sit on the boundary of a word's feasibility.
_EDGE_TOL = 1e-12

_Arr = NDArray[np.float64]


def _m2(x: _Arr) -> _Arr:
    """Angle in ``[-pi, pi]``."""
    return x - TWO_PI * np.round(x / TWO_PI)


def _polar(x: _Arr, y: _Arr) -> tuple[_Arr, _Arr]:
    return np.hypot(x, y), np.arctan2(y, x)


def _fit(a: _Arr, want: int) -> tuple[_Arr, NDArray[np.bool_]]:
    """Give an arc angle the sign its word needs, where geometry allows it.

    A half turn forwards and a half turn backwards about the same centre reach the same pose
    with the same length, so an angle at -pi may stand for +pi and vice versa; a value a
    rounding error past zero is zero.
    """
    if want > 0:
        a = np.where(a <= -PI + _SIGN_TOL, a + TWO_PI, a)
        ok = a >= -_SIGN_TOL
        return np.where(a < 0.0, 0.0, a), ok
    a = np.where(a >= PI - _SIGN_TOL, a - TWO_PI, a)
    ok = a <= _SIGN_TOL
    return np.where(a > 0.0, 0.0, a), ok


def _tau_omega(u: _Arr, v: _Arr, xi: _Arr, eta: _Arr, phi: _Arr) -> tuple[_Arr, _Arr]:
    """The first and last arc of a CCCC word given the middle two (Reeds & Shepp 1990, sec. 8)."""
    delta = _m2(u - v)
    a = np.sin(u) - np.sin(delta)
    b = np.cos(u) - np.cos(delta) - 1.0
    t1 = np.arctan2(eta * a - xi * b, xi * a + eta * b)
    t2 = 2.0 * (np.cos(delta) - np.cos(v) - np.cos(u)) + 3.0
    tau = np.where(t2 < 0.0, _m2(t1 + PI), _m2(t1))
    omega = _m2(tau - u + v - phi)
    return tau, omega


# -- the representative of each family: (t, u, v, feasible) for goal (x, y, phi), r = 1 ------
def _lp_sp_lp(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+S+L+, formula 8.1."""
    u, t = _polar(x - np.sin(phi), y - 1.0 + np.cos(phi))
    t, ok_t = _fit(t, +1)
    v, ok_v = _fit(_m2(phi - t), +1)
    return t, u, v, ok_t & ok_v


def _lp_sp_rp(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+S+R+, formula 8.2."""
    u1, t1 = _polar(x + np.sin(phi), y - 1.0 - np.cos(phi))
    u1 = u1 * u1
    ok = u1 >= 4.0 - _EDGE_TOL
    u = np.sqrt(np.maximum(u1 - 4.0, 0.0))
    t, ok_t = _fit(_m2(t1 + np.arctan2(2.0, u)), +1)
    v, ok_v = _fit(_m2(t - phi), +1)
    return t, u, v, ok & ok_t & ok_v


def _lp_rm_l(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+R-L (last arc either way: C|C|C and C|CC), formulas 8.3 and 8.4."""
    xi = x - np.sin(phi)
    eta = y - 1.0 + np.cos(phi)
    u1, theta = _polar(xi, eta)
    ok = u1 <= 4.0 + _EDGE_TOL
    u = -2.0 * np.arcsin(np.clip(0.25 * u1, -1.0, 1.0))
    t, ok_t = _fit(_m2(theta + 0.5 * u + PI), +1)
    v = _m2(phi - t + u)
    return t, u, v, ok & ok_t


def _lp_rup_lum_rm(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+R+L-R- with equal middle arcs u, formula 8.7; pieces (t, u, -u, v)."""
    xi = x + np.sin(phi)
    eta = y - 1.0 - np.cos(phi)
    rho = 0.25 * (2.0 + np.hypot(xi, eta))
    ok = rho <= 1.0 + _EDGE_TOL
    u = np.arccos(np.clip(rho, -1.0, 1.0))
    t, v = _tau_omega(u, -u, xi, eta, phi)
    t, ok_t = _fit(t, +1)
    v, ok_v = _fit(v, -1)
    return t, u, v, ok & ok_t & ok_v


def _lp_rum_lum_rp(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+R-L-R+ with equal middle arcs u, formula 8.8; pieces (t, u, u, v)."""
    xi = x + np.sin(phi)
    eta = y - 1.0 - np.cos(phi)
    rho = (20.0 - xi * xi - eta * eta) / 16.0
    # rho >= 0 is the paper's condition u >= -pi/2.
    ok = (rho >= -_EDGE_TOL) & (rho <= 1.0 + _EDGE_TOL)
    u = -np.arccos(np.clip(rho, 0.0, 1.0))
    t, v = _tau_omega(u, u, xi, eta, phi)
    t, ok_t = _fit(t, +1)
    v, ok_v = _fit(v, +1)
    return t, u, v, ok & ok_t & ok_v


def _lp_rm_sm_lm(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+R-(pi/2)S-L-, formula 8.9; pieces (t, -pi/2, u, v)."""
    xi = x - np.sin(phi)
    eta = y - 1.0 + np.cos(phi)
    rho, theta = _polar(xi, eta)
    ok = rho >= 2.0 - _EDGE_TOL
    r = np.sqrt(np.maximum(rho * rho - 4.0, 0.0))
    u = 2.0 - r
    t, ok_t = _fit(_m2(theta + np.arctan2(r, -2.0)), +1)
    v, ok_v = _fit(_m2(phi - HALF_PI - t), -1)
    return t, np.minimum(u, 0.0), v, ok & (u <= _SIGN_TOL) & ok_t & ok_v


def _lp_rm_sm_rm(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+R-(pi/2)S-R-, formula 8.10; pieces (t, -pi/2, u, v)."""
    xi = x + np.sin(phi)
    eta = y - 1.0 - np.cos(phi)
    rho, theta = _polar(-eta, xi)
    ok = rho >= 2.0 - _EDGE_TOL
    u = 2.0 - rho
    t, ok_t = _fit(theta, +1)
    v, ok_v = _fit(_m2(t + HALF_PI - phi), -1)
    return t, np.minimum(u, 0.0), v, ok & (u <= _SIGN_TOL) & ok_t & ok_v


def _lp_rm_slm_rp(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]:
    """L+R-(pi/2)S-L-(pi/2)R+, formula 8.11; pieces (t, -pi/2, u, -pi/2, v)."""
    xi = x + np.sin(phi)
    eta = y - 1.0 - np.cos(phi)
    rho, _ = _polar(xi, eta)
    ok = rho >= 2.0 - _EDGE_TOL
    u = 4.0 - np.sqrt(np.maximum(rho * rho - 4.0, 0.0))
    ok &= u <= _SIGN_TOL
    u = np.minimum(u, 0.0)
    t, ok_t = _fit(_m2(np.arctan2((4.0 - u) * xi - 2.0 * eta, -2.0 * xi + (u - 4.0) * eta)), +1)
    v, ok_v = _fit(_m2(t - phi), +1)
    return t, u, v, ok & ok_t & ok_v


_BaseFn = Callable[[_Arr, _Arr, _Arr], tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]]

# Each family representative: formula, letters, pieces as (source, factor) with source one of
# "t", "u", "v" or "c" (a constant factor), the sign each of t, u, v is held to (0 = free),
# and whether the backwards reading is a different word.
_BASES: dict[str, tuple[_BaseFn, str, tuple[tuple[str, float], ...], tuple[int, int, int],
                        bool]] = {
    "CSC-LSL": (_lp_sp_lp, "LSL", (("t", 1), ("u", 1), ("v", 1)), (1, 1, 1), False),
    "CSC-LSR": (_lp_sp_rp, "LSR", (("t", 1), ("u", 1), ("v", 1)), (1, 1, 1), False),
    "CCC": (_lp_rm_l, "LRL", (("t", 1), ("u", 1), ("v", 1)), (1, -1, 0), True),
    "CCCC-a": (_lp_rup_lum_rm, "LRLR", (("t", 1), ("u", 1), ("u", -1), ("v", 1)),
               (1, 1, -1), False),
    "CCCC-b": (_lp_rum_lum_rp, "LRLR", (("t", 1), ("u", 1), ("u", 1), ("v", 1)),
               (1, -1, 1), False),
    "CCSC-L": (_lp_rm_sm_lm, "LRSL", (("t", 1), ("c", -HALF_PI), ("u", 1), ("v", 1)),
               (1, -1, -1), True),
    "CCSC-R": (_lp_rm_sm_rm, "LRSR", (("t", 1), ("c", -HALF_PI), ("u", 1), ("v", 1)),
               (1, -1, -1), True),
    "CCSCC": (_lp_rm_slm_rp, "LRSLR",
              (("t", 1), ("c", -HALF_PI), ("u", 1), ("c", -HALF_PI), ("v", 1)),
              (1, -1, 1), False),
}
# (time-flip, reflect) in the order the paper lists the symmetries.
_SYMMETRIES = ((False, False), (True, False), (False, True), (True, True))
_SWAP_LR = str.maketrans("LR", "RL")


@dataclass(frozen=True)
class _Word:
    name: str
    letters: str
    base: str
    timeflip: bool
    reflect: bool
    backwards: bool
    pieces: tuple[tuple[str, float], ...]


def _make_words() -> tuple[_Word, ...]:
    words = []
    for key, (_, letters, pieces, signs, has_back) in _BASES.items():
        sign_of = {"t": signs[0], "u": signs[1], "v": signs[2]}
        for backwards in (False, True) if has_back else (False,):
            pcs = tuple(reversed(pieces)) if backwards else pieces
            lets = letters[::-1] if backwards else letters
            for tf, rf in _SYMMETRIES:
                ls = lets.translate(_SWAP_LR) if rf else lets
                name = ""
                for ch, (src, f) in zip(ls, pcs):
                    sg = np.sign(f) * (sign_of[src] if src != "c" else 1) * (-1 if tf else 1)
                    name += ch + {1: "+", -1: "-", 0: ""}[int(sg)]
                words.append(_Word(name, ls, key, tf, rf, backwards, pcs))
    return tuple(words)


_WORDS = _make_words()
#: Word names, in the order of the ``word`` index of :class:`ReedsSheppBatch`. A ``+`` or
#: ``-`` after a letter is the direction that piece is always driven in; a letter without one
#: may go either way (its sign is in ``params``).
WORDS: tuple[str, ...] = tuple(w.name for w in _WORDS)
#: Steering letters of each word, one per piece.
LETTERS: tuple[str, ...] = tuple(w.letters for w in _WORDS)


@dataclass(frozen=True)
class ReedsSheppBatch:
    """Shortest Reeds-Shepp paths for ``N`` start/goal pairs.

    Attributes
    ----------
    length_m : ndarray, shape (N,)
        Path length in metres (sum of the absolute piece lengths).
    word : ndarray of int, shape (N,)
        Index into :attr:`WORDS` / :attr:`LETTERS`.
    params : ndarray, shape (N, 5)
        Signed length in metres of each piece of the word, in order, zero padded past the
        word's last piece; negative is driven in reverse.
    radius_m : ndarray, shape (N,)
        Turn radius used for each pair.
    """

    length_m: NDArray[np.float64]
    word: NDArray[np.int64]
    params: NDArray[np.float64]
    radius_m: NDArray[np.float64]
    WORDS: ClassVar[tuple[str, ...]] = WORDS
    LETTERS: ClassVar[tuple[str, ...]] = LETTERS

    def __len__(self) -> int:
        return int(self.length_m.shape[0])

    def words(self) -> list[str]:
        """Word names of every pair."""
        return [WORDS[i] for i in self.word]

    def cusps(self) -> NDArray[np.int64]:
        """Number of changes of direction along each path, shape ``(N,)``."""
        sg = np.sign(np.where(np.abs(self.params) < 1e-12, 0.0, self.params))
        # Carry the last non-zero direction over zero pieces before counting changes.
        n = np.zeros(sg.shape[0], dtype=np.int64)
        last = np.zeros(sg.shape[0])
        for k in range(sg.shape[1]):
            s = sg[:, k]
            n += ((s != 0) & (last != 0) & (s != last)).astype(np.int64)
            last = np.where(s != 0, s, last)
        return n


def _evaluate(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr]:
    """Normalised signed pieces ``(W, N, 5)`` and lengths ``(W, N)`` (inf where infeasible)."""
    n = x.shape[0]
    cphi, sphi = np.cos(phi), np.sin(phi)
    xb = x * cphi + y * sphi
    yb = x * sphi - y * cphi
    cache: dict[tuple[str, bool, bool, bool], tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]] = {}
    pieces = np.zeros((len(_WORDS), n, MAX_PIECES))
    lengths = np.full((len(_WORDS), n), np.inf)
    for k, w in enumerate(_WORDS):
        gx, gy = (xb, yb) if w.backwards else (x, y)
        gx = -gx if w.timeflip else gx
        gy = -gy if w.reflect else gy
        gphi = -phi if w.timeflip != w.reflect else phi
        ck = (w.base, w.backwards, w.timeflip, w.reflect)
        if ck not in cache:
            cache[ck] = _BASES[w.base][0](gx, gy, gphi)
        t, u, v, ok = cache[ck]
        src = {"t": t, "u": u, "v": v}
        flip = -1.0 if w.timeflip else 1.0
        for j, (s, f) in enumerate(w.pieces):
            pieces[k, :, j] = flip * (f if s == "c" else f * src[s])
        lengths[k] = np.where(ok, np.abs(pieces[k]).sum(axis=1), np.inf)
    return pieces, lengths


def shortest(starts: ArrayLike, goals: ArrayLike, radius_m: ArrayLike) -> ReedsSheppBatch:
    """Shortest forward-and-reverse paths of turn radius ``radius_m`` for many pose pairs.

    Parameters
    ----------
    starts, goals : array_like, shape (N, 3) or (3,)
        Poses ``(x_m, y_m, heading_rad)``.
    radius_m : float or array_like, shape (N,)
        Minimum turn radius in metres, > 0.

    Returns
    -------
    ReedsSheppBatch

    Raises
    ------
    ValidationError
        If shapes differ, a value is not finite or a radius is not positive.

    Examples
    --------
    >>> b = shortest([[0, 0, 0]], [[-3, 0, 0]], 1.0)   # straight back
    >>> round(float(b.length_m[0]), 9), round(float(b.params[0].sum()), 9)   # all reverse
    (3.0, -3.0)
    """
    p0, p1, r = _check_inputs(starts, goals, radius_m, "<reeds_shepp.shortest>")
    x, y, phi = normalised_goal(p0, p1, r)
    pieces, lengths = _evaluate(x, y, phi)
    same = same_pose(x, y, phi)
    lengths[:, same] = np.inf
    lengths[0, same] = 0.0
    pieces[:, same] = 0.0
    word = np.argmin(lengths, axis=0)
    idx = np.arange(x.shape[0])
    return ReedsSheppBatch(length_m=lengths[word, idx] * r, word=word.astype(np.int64),
                           params=pieces[word, idx] * r[:, None], radius_m=r)


def batch_segments(batch: ReedsSheppBatch, starts: ArrayLike, i: int) -> list[Segment]:
    """Segments of pair ``i`` of a batch, starting at ``starts[i]``."""
    p0 = np.atleast_2d(np.asarray(starts, dtype=float))
    return pieces_to_segments(p0[i], LETTERS[int(batch.word[i])], batch.params[i],
                              float(batch.radius_m[i]))


def path_segments(start: Sequence[float], goal: Sequence[float],
                  radius_m: float) -> list[Segment]:
    """The shortest Reeds-Shepp path from ``start`` to ``goal`` as arc and line segments.

    Parameters
    ----------
    start, goal : sequence of float
        Poses ``(x_m, y_m, heading_rad)``.
    radius_m : float
        Turn radius in metres, > 0.

    Returns
    -------
    list of Segment
        Arcs of radius ``radius_m`` and straights; reverse pieces have ``direction == -1``, so
        a cusp is where ``direction`` changes. Zero-length pieces are dropped (empty when
        start and goal coincide). The last segment ends at ``goal``.

    Examples
    --------
    >>> segs = path_segments((0, 0, 0), (-2, 0, 0), 1.0)
    >>> [(s.kind, s.length_m, s.direction) for s in segs]
    [('line', 2.0, -1)]
    """
    p0 = np.asarray(start, dtype=float).reshape(1, 3)
    batch = shortest(p0, np.asarray(goal, dtype=float).reshape(1, 3), float(radius_m))
    return batch_segments(batch, p0, 0)
