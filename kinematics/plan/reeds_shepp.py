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
from collections.abc import Sequence
from dataclasses import dataclass
from typing import ClassVar

import numpy as np
from numpy.typing import ArrayLike, NDArray

from kinematics.motion.segments import Segment
from kinematics.plan.dubins import _check_inputs, normalised_goal, same_pose, word_segments

PI = math.pi
TWO_PI = 2.0 * math.pi
HALF_PI = 0.5 * math.pi
MAX_PIECES = 5
_BLOCK = 8192

# A piece whose sign the word fixes may come out a rounding error on the wrong side of zero.
_SIGN_TOL = 1e-10
# Tangent cases (circles just touching) sit on the boundary of a word's feasibility.
_EDGE_TOL = 1e-12

_Arr = NDArray[np.float64]


def _m2(x: _Arr) -> _Arr:
    """Angle in ``[-pi, pi]``."""
    q = x * (1.0 / TWO_PI)
    np.rint(q, out=q)
    q *= -TWO_PI
    q += x
    return q


def _fit(a: _Arr, want: int) -> tuple[_Arr, NDArray[np.bool_]]:
    """Give an arc angle the sign its word needs, where geometry allows it.

    A half turn forwards and a half turn backwards about the same centre reach the same pose
    with the same length, so an angle at -pi may stand for +pi and vice versa; a value a
    rounding error past zero is zero.
    """
    if want > 0:
        ok = a >= -_SIGN_TOL
        out = np.maximum(a, 0.0)
        turn = a <= -PI + _SIGN_TOL
        shift = TWO_PI
    else:
        ok = a <= _SIGN_TOL
        out = np.minimum(a, 0.0)
        turn = a >= PI - _SIGN_TOL
        shift = -TWO_PI
    if turn.any():
        out[turn] = a[turn] + shift
        ok |= turn
    return out, ok


# -- family representatives, Reeds & Shepp (1990) sec. 8, for unit radius --------------------
# Every representative measures the goal (x, y, phi) through one of two points,
#   P1 = (x - sin phi, y - 1 + cos phi)   (8.1, 8.3/8.4, 8.9)
#   P2 = (x + sin phi, y - 1 - cos phi)   (8.2, 8.7, 8.8, 8.10, 8.11),
# the goal's turning centre seen from the start's left one. Time-flip maps P to (-Px, Py)
# and phi to -phi, so a flipped pair shares the point's distance rho (and its polar angle
# becomes pi - theta). Whether a family can reach the goal at all depends on rho alone
# (``_cond_*``), as do its middle pieces (``_pre_*``); the rest (``_fam_*``) gives
# (t, u, v, feasible) from the precomputed part, the polar angle or the point, and phi.

_Res = tuple[_Arr, _Arr, _Arr, NDArray[np.bool_]]


def _fam_lsl(rho: _Arr, theta: _Arr, phi: _Arr) -> _Res:
    """L+S+L+, formula 8.1, from P1."""
    t, ok_t = _fit(theta, +1)
    v, ok_v = _fit(_m2(phi - t), +1)
    return t, rho, v, ok_t & ok_v


def _cond_lsr(rho: _Arr) -> NDArray[np.bool_]:
    return rho * rho >= 4.0 - _EDGE_TOL


def _pre_lsr(rho: _Arr) -> tuple[_Arr, _Arr]:
    u = np.sqrt(np.maximum(rho * rho - 4.0, 0.0))
    return u, np.arctan2(2.0, u)


def _fam_lsr(pre: tuple[_Arr, _Arr], theta: _Arr, phi: _Arr) -> _Res:
    """L+S+R+, formula 8.2, from P2."""
    u, ang = pre
    t, ok_t = _fit(_m2(theta + ang), +1)
    v, ok_v = _fit(_m2(t - phi), +1)
    return t, u, v, ok_t & ok_v


def _cond_ccc(rho: _Arr) -> NDArray[np.bool_]:
    return rho <= 4.0 + _EDGE_TOL


def _pre_ccc(rho: _Arr) -> _Arr:
    return -2.0 * np.arcsin(np.minimum(0.25 * rho, 1.0))


def _fam_ccc(u: _Arr, theta: _Arr, phi: _Arr) -> _Res:
    """L+R-L (last arc either way: C|C|C and C|CC), formulas 8.3 and 8.4, from P1."""
    t, ok_t = _fit(_m2(theta + 0.5 * u + PI), +1)
    return t, u, _m2(phi - t + u), ok_t


def _tau_omega(pre: tuple[_Arr, ...], xi: _Arr, eta: _Arr) -> _Arr:
    """First arc of a CCCC word given its middle arcs (Reeds & Shepp 1990, sec. 8, tau-omega).

    ``pre`` starts with sin u, cos u, cos v, sin delta, cos delta for delta = u - v.
    """
    su, cu, cv, sd, cd = pre[:5]
    a = su - sd
    b = cu - cd - 1.0
    t1 = np.arctan2(eta * a - xi * b, xi * a + eta * b)
    t2 = 2.0 * (cd - cv - cu) + 3.0
    return np.where(t2 < 0.0, _m2(t1 + PI), t1)


def _cond_cccc_a(rho: _Arr) -> NDArray[np.bool_]:
    return 0.25 * (2.0 + rho) <= 1.0 + _EDGE_TOL


def _pre_cccc_a(rho: _Arr) -> tuple[_Arr, ...]:
    # u = acos(rho'), v = -u, delta = 2u: sines and cosines by the double-angle rules.
    cu = np.minimum(0.25 * (2.0 + rho), 1.0)
    su = np.sqrt(1.0 - cu * cu)
    return su, cu, cu, 2.0 * su * cu, 2.0 * cu * cu - 1.0, np.arccos(cu)


def _fam_cccc_a(pre: tuple[_Arr, ...], xi: _Arr, eta: _Arr, phi: _Arr) -> _Res:
    """L+R+L-R- with middle arcs u, -u, formula 8.7, from P2."""
    u = pre[5]
    t, ok_t = _fit(_m2(_tau_omega(pre, xi, eta)), +1)
    v, ok_v = _fit(_m2(t - 2.0 * u - phi), -1)
    return t, u, v, ok_t & ok_v


def _cond_cccc_b(rho: _Arr) -> NDArray[np.bool_]:
    # rho' >= 0 is the paper's condition u >= -pi/2.
    r = (20.0 - rho * rho) / 16.0
    return (r >= -_EDGE_TOL) & (r <= 1.0 + _EDGE_TOL)


def _pre_cccc_b(rho: _Arr) -> tuple[_Arr, ...]:
    # u = v = -acos(rho'), delta = 0.
    cu = np.clip((20.0 - rho * rho) / 16.0, 0.0, 1.0)
    zero = np.zeros_like(cu)
    return -np.sqrt(1.0 - cu * cu), cu, cu, zero, zero + 1.0, -np.arccos(cu)


def _fam_cccc_b(pre: tuple[_Arr, ...], xi: _Arr, eta: _Arr, phi: _Arr) -> _Res:
    """L+R-L-R+ with middle arcs u, u, formula 8.8, from P2."""
    t, ok_t = _fit(_m2(_tau_omega(pre, xi, eta)), +1)
    v, ok_v = _fit(_m2(t - phi), +1)
    return t, pre[5], v, ok_t & ok_v


def _cond_ccsc_l(rho: _Arr) -> NDArray[np.bool_]:
    # rho >= 2 for the tangent to exist, and the straight (2 - sqrt(rho^2 - 4)) reversed.
    return (rho >= 2.0 - _EDGE_TOL) & (2.0 - np.sqrt(np.maximum(rho * rho - 4.0, 0.0))
                                       <= _SIGN_TOL)


def _pre_ccsc_l(rho: _Arr) -> tuple[_Arr, _Arr]:
    r = np.sqrt(np.maximum(rho * rho - 4.0, 0.0))
    return np.minimum(2.0 - r, 0.0), np.arctan2(r, -2.0)


def _fam_ccsc_l(pre: tuple[_Arr, _Arr], theta: _Arr, phi: _Arr) -> _Res:
    """L+R-(pi/2)S-L-, formula 8.9, from P1; pieces (t, -pi/2, u, v)."""
    u, ang = pre
    t, ok_t = _fit(_m2(theta + ang), +1)
    v, ok_v = _fit(_m2(phi - HALF_PI - t), -1)
    return t, u, v, ok_t & ok_v


def _cond_ccsc_r(rho: _Arr) -> NDArray[np.bool_]:
    return rho >= 2.0 - _EDGE_TOL


def _pre_ccsc_r(rho: _Arr) -> _Arr:
    return np.minimum(2.0 - rho, 0.0)


def _fam_ccsc_r(u: _Arr, theta: _Arr, phi: _Arr) -> _Res:
    """L+R-(pi/2)S-R-, formula 8.10, from P2; pieces (t, -pi/2, u, v).

    The paper takes the polar angle of (-P2y, P2x), which is P2's angle plus pi/2.
    """
    t, ok_t = _fit(_m2(theta + HALF_PI), +1)
    v, ok_v = _fit(_m2(t + HALF_PI - phi), -1)
    return t, u, v, ok_t & ok_v


def _cond_ccscc(rho: _Arr) -> NDArray[np.bool_]:
    # The straight 4 - sqrt(rho^2 - 4) must be reversed: rho^2 >= 20.
    return (rho >= 2.0 - _EDGE_TOL) & (4.0 - np.sqrt(np.maximum(rho * rho - 4.0, 0.0))
                                       <= _SIGN_TOL)


def _pre_ccscc(rho: _Arr) -> _Arr:
    return np.minimum(4.0 - np.sqrt(np.maximum(rho * rho - 4.0, 0.0)), 0.0)


def _fam_ccscc(u: _Arr, xi: _Arr, eta: _Arr, phi: _Arr) -> _Res:
    """L+R-(pi/2)S-L-(pi/2)R+, formula 8.11, from P2; pieces (t, -pi/2, u, -pi/2, v)."""
    t, ok_t = _fit(_m2(np.arctan2((4.0 - u) * xi - 2.0 * eta, -2.0 * xi + (u - 4.0) * eta)), +1)
    v, ok_v = _fit(_m2(t - phi), +1)
    return t, u, v, ok_t & ok_v


# How each family is evaluated: (base, point 1 or 2, backwards reading too, rho condition,
# rho-only part, rest, rest takes the polar angle (True) or the point (False)).
_FAMILIES = (
    ("CSC-LSL", 1, False, None, None, _fam_lsl, True),
    ("CSC-LSR", 2, False, _cond_lsr, _pre_lsr, _fam_lsr, True),
    ("CCC", 1, True, _cond_ccc, _pre_ccc, _fam_ccc, True),
    ("CCCC-a", 2, False, _cond_cccc_a, _pre_cccc_a, _fam_cccc_a, False),
    ("CCCC-b", 2, False, _cond_cccc_b, _pre_cccc_b, _fam_cccc_b, False),
    ("CCSC-L", 1, True, _cond_ccsc_l, _pre_ccsc_l, _fam_ccsc_l, True),
    ("CCSC-R", 2, True, _cond_ccsc_r, _pre_ccsc_r, _fam_ccsc_r, True),
    ("CCSCC", 2, False, _cond_ccscc, _pre_ccscc, _fam_ccscc, False),
)


# Each family representative: letters, pieces as (source, factor) with source one of
# "t", "u", "v" or "c" (a constant factor), the sign each of t, u, v is held to (0 = free),
# and whether the backwards reading is a different word.
_BASES: dict[str, tuple[str, tuple[tuple[str, float], ...], tuple[int, int, int], bool]] = {
    "CSC-LSL": ("LSL", (("t", 1), ("u", 1), ("v", 1)), (1, 1, 1), False),
    "CSC-LSR": ("LSR", (("t", 1), ("u", 1), ("v", 1)), (1, 1, 1), False),
    "CCC": ("LRL", (("t", 1), ("u", 1), ("v", 1)), (1, -1, 0), True),
    "CCCC-a": ("LRLR", (("t", 1), ("u", 1), ("u", -1), ("v", 1)), (1, 1, -1), False),
    "CCCC-b": ("LRLR", (("t", 1), ("u", 1), ("u", 1), ("v", 1)), (1, -1, 1), False),
    "CCSC-L": ("LRSL", (("t", 1), ("c", -HALF_PI), ("u", 1), ("v", 1)), (1, -1, -1), True),
    "CCSC-R": ("LRSR", (("t", 1), ("c", -HALF_PI), ("u", 1), ("v", 1)), (1, -1, -1), True),
    "CCSCC": ("LRSLR", (("t", 1), ("c", -HALF_PI), ("u", 1), ("c", -HALF_PI), ("v", 1)),
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
    for key, (letters, pieces, signs, has_back) in _BASES.items():
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


_SRC = {"t": 0, "u": 1, "v": 2, "c": 3}


def _piece_matrix() -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Per word: signed pieces from (t, u, v, 1), shape (W, 5, 4); length weights (W, 4)."""
    m = np.zeros((len(_WORDS), MAX_PIECES, 4))
    for k, w in enumerate(_WORDS):
        flip = -1.0 if w.timeflip else 1.0
        for j, (src, f) in enumerate(w.pieces):
            m[k, j, _SRC[src]] = flip * f
    return m, np.abs(m).sum(axis=1)


_PIECES, _WEIGHTS = _piece_matrix()
_INDEX = {(w.base, w.backwards, w.timeflip, w.reflect): k for k, w in enumerate(_WORDS)}
# _evaluate sums lengths as |t| + w_u |u| + |v| + constant.
assert np.all(_WEIGHTS[:, 0] == 1.0) and np.all(_WEIGHTS[:, 2] == 1.0)


def _take(a: object, idx: NDArray[np.int64] | None) -> object:
    if idx is None:
        return a
    if isinstance(a, tuple):
        return tuple(p[idx] for p in a)
    return a[idx]


def _evaluate(x: _Arr, y: _Arr, phi: _Arr) -> tuple[_Arr, _Arr, _Arr, _Arr, NDArray[np.int64]]:
    """Shortest word per normalised goal: its ``t``, ``u``, ``v``, length and word index.

    Words are compared as they are evaluated, keeping only the best so far, and each family
    is evaluated only on the goals its rho condition admits (most goals a few radii away
    rule out CCC and CCCC at once, as the paper's formulas do).
    """
    n = x.shape[0]
    best = np.full(n, np.inf)
    bt, bu, bv = np.zeros(n), np.zeros(n), np.zeros(n)
    bw = np.zeros(n, dtype=np.int64)
    s, c = np.sin(phi), np.cos(phi)
    xb = x * c + y * s
    yb = x * s - y * c

    def put(k: int, res: _Res, idx: NDArray[np.int64] | None) -> None:
        t, u, v, ok = res
        w = _WEIGHTS[k]
        total = np.abs(t)  # t and v have weight 1 in every word (asserted below)
        if w[1] == 1.0:
            total += np.abs(u)
        elif w[1]:
            total += w[1] * np.abs(u)
        total += np.abs(v)
        total += w[3]
        if idx is None:
            better = ok & (total < best)
            np.copyto(best, total, where=better)
            np.copyto(bt, t, where=better)
            np.copyto(bu, u, where=better)
            np.copyto(bv, v, where=better)
            bw[better] = k
        else:
            better = ok & (total < best[idx])
            sel = idx[better]
            best[sel] = total[better]
            bt[sel], bu[sel], bv[sel] = t[better], u[better], v[better]
            bw[sel] = k

    for backwards, gx, gy in ((False, x, y), (True, xb, yb)):
        for rf in (False, True):
            # Reflection: (x, y, phi) -> (x, -y, -phi).
            ry, rsin, rphi = (-gy, -s, -phi) if rf else (gy, s, phi)
            phis = (rphi, -rphi)
            pts = {}
            for p, xi, eta in ((1, gx - rsin, ry - 1.0 + c), (2, gx + rsin, ry - 1.0 - c)):
                th = np.arctan2(eta, xi)
                pts[p] = ((xi, -xi), eta, np.sqrt(xi * xi + eta * eta), (th, _m2(PI - th)))
            for base, p, back_too, cond, pre_fn, fam, by_angle in _FAMILIES:
                if backwards and not back_too:
                    continue
                xis, eta, rho, ths = pts[p]
                idx = None
                if cond is not None:
                    ok = cond(rho)
                    if not ok.all():
                        idx = np.flatnonzero(ok)
                        if idx.size == 0:
                            continue
                rho_s = _take(rho, idx)
                pre = rho_s if pre_fn is None else pre_fn(rho_s)
                for tf in (False, True):
                    # Time-flip: (x, y, phi) -> (-x, y, -phi); P -> (-Px, Py).
                    ph = _take(phis[tf], idx)
                    if by_angle:
                        res = fam(pre, _take(ths[tf], idx), ph)
                    else:
                        res = fam(pre, _take(xis[tf], idx), _take(eta, idx), ph)
                    put(_INDEX[(base, backwards, tf, rf)], res, idx)
    return bt, bu, bv, best, bw


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
    n = x.shape[0]
    t, u, v = np.empty(n), np.empty(n), np.empty(n)
    length, word = np.empty(n), np.empty(n, dtype=np.int64)
    # Blocks small enough for the evaluation's temporaries to stay in cache.
    for i in range(0, n, _BLOCK):
        b = slice(i, i + _BLOCK)
        t[b], u[b], v[b], length[b], word[b] = _evaluate(x[b], y[b], phi[b])
    params = np.empty((n, MAX_PIECES))
    for j in range(MAX_PIECES):
        m = _PIECES[:, j]
        params[:, j] = m[word, 0] * t + m[word, 1] * u + m[word, 2] * v + m[word, 3]
    same = same_pose(x, y, phi)
    if same.any():
        word[same], length[same], params[same] = 0, 0.0, 0.0
    return ReedsSheppBatch(length_m=length * r, word=word.astype(np.int64),
                           params=params * r[:, None], radius_m=r)


def batch_segments(batch: ReedsSheppBatch, starts: ArrayLike, i: int) -> list[Segment]:
    """Segments of pair ``i`` of a batch, starting at ``starts[i]``.

    Parameters
    ----------
    batch : ReedsSheppBatch
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
    return word_segments(batch, starts, i, LETTERS)


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
