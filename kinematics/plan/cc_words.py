"""Continuous-curvature connections with cusps and three turns or more: CC Reeds-Shepp and CCC
Dubins.

Fraichard & Scheuer ("From Reeds and Shepp's to continuous-curvature paths", IEEE T-RO 20(6),
2004, sec. IV) build CC paths from *CC turns* (clothoid of sharpness ``sigma`` from curvature 0
to ``kappa = 1 / R``, arc of radius ``R``, mirror clothoid back to 0) and use one property of
them: every CC turn of deflection ``d >= kappa^2 / sigma`` starting at a pose ``q`` ends on the
circle of radius ``r_Omega = |Omega|`` about the point ``c = q (+) Omega`` (``Omega`` the arc's
centre seen from the start of the turn), and the end pose ``q'`` satisfies ``c = q' (+)
Omega'`` with ``Omega'`` the mirror offset ``(-x_Omega, y_Omega)``. So a turn is fixed by its
*centre* and its end heading, just as a circular arc is, and the words of Reeds and Shepp can be
laid on those centres in closed form (their CC Reeds-Shepp construction, sec. V):

- turn-line-turn (``C S C``, any direction of each part): the two centres are known from the
  start and the goal poses; the line length and direction follow from their distance;
- turn-turn-turn (``C C C``, cusps between turns allowed): the middle centre is where the
  circles about the outer centres, of the fixed joint distances, meet (0 to 2 points);
- four and five parts with cusps (``CC|CC``, ``C|CC|C``, ``C|CSC``, ``CSC|C``, ``C|CSC|C``,
  Reeds & Shepp 1990's families 7-12 and their mirror images and time-flips, every direction
  of each part): the inner turns share one deflection ``u`` (Reeds and Shepp's ``u`` and
  ``pi / 2``); for each ``u`` the centres' chain leaves one distance equation, solved for
  the line's run or for ``u`` itself (:func:`_long_words`). With a line, ``u`` is the one of a
  grid (refined twice) giving the shortest path; as ``sigma`` grows it tends to the plain
  word's ``pi / 2`` and the path to the Reeds-Shepp path (``tests/test_cc_long_words.py``).

Each direction change (cusp) falls where a CC turn or a line ends, at curvature 0, so curvature
stays continuous along the path as a function of arc length (the drive steers straight, stops,
and leaves straight); ``|kappa| <= 1/R`` and ``|dkappa/ds| <= sigma`` everywhere.

Which words. Forward only (a route without ``reverse``): the CC versions of the six Dubins
words (LSL, RSR, LSR, RSL, LRL, RLR). With reverse allowed: every turn-line-turn and
turn-turn-turn word with any direction on each of its three parts (the RS families ``C|C|C``,
``CC|C``, ``C|CC``, ``CSC`` and their time-flips and reflections) and the four- and five-part
words above. The answer is the shortest over all of them; it is not proved the shortest CC
path (Fraichard & Scheuer's CC paths are within a bound of it, not optimal). Turns of
deflection below ``kappa^2 / sigma`` (two clothoids, no arc) do not have the circle property;
they are covered for the turn-line-turn words (every direction with reverse) by the scan in
:func:`kinematics.plan.transitions.cc_connect`, which :func:`cc_shortest` also tries; a word
of more parts whose turns are that small is not built.

Every candidate is checked by the pose it really reaches (segments laid end to end); one that
misses the goal by more than ``GOAL_TOL_M`` / ``GOAL_TOL_RAD`` is dropped.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from functools import lru_cache

import numpy as np

from kinematics.motion.segments import Segment, line
from kinematics.plan.transitions import cc_connect, cc_turn

TWO_PI = 2.0 * math.pi
#: A candidate whose laid-out end misses the goal by more than this is dropped (m, rad).
GOAL_TOL_M = 1e-6
GOAL_TOL_RAD = 1e-8


@lru_cache(maxsize=256)
def turn_centre(radius_m: float, sigma: float) -> tuple[float, float, float]:
    """``(x_Omega, y_Omega, dmin)`` of a left forward CC turn from ``(0, 0, 0)``: the arc's
    centre and the least deflection ``kappa^2 / sigma`` with an arc (DLMF 7.2 for the clothoid's
    end ``sqrt(pi / sigma) (C(t), S(t))``, ``t = kappa / sqrt(pi sigma)``)."""
    from scipy.special import fresnel

    k = 1.0 / radius_m
    s_, c_ = fresnel(k / math.sqrt(math.pi * sigma))
    a = math.sqrt(math.pi / sigma) * float(c_)
    b = math.sqrt(math.pi / sigma) * float(s_)
    h = k * k / (2.0 * sigma)
    return a - radius_m * math.sin(h), b + radius_m * math.cos(h), k * k / sigma


def _rot(th: np.ndarray, v: np.ndarray) -> np.ndarray:
    """Rotate the 2-vectors ``v`` (``(..., 2)``) by angles ``th``."""
    c, s = np.cos(th), np.sin(th)
    return np.stack([c * v[..., 0] - s * v[..., 1], s * v[..., 0] + c * v[..., 1]], axis=-1)


def _offsets(xo: float, yo: float, side: np.ndarray, dirn: np.ndarray
             ) -> tuple[np.ndarray, np.ndarray]:
    """Centre offsets seen from a turn's start and from its end, in those poses' frames."""
    o_in = np.stack([dirn * xo, side * yo], axis=-1)
    o_out = np.stack([-dirn * xo, side * yo], axis=-1)
    return o_in, o_out


def _full(d: np.ndarray, dmin: float) -> np.ndarray:
    """Deflections in ``[0, 2 pi)`` made full turns (whole loops more where below ``dmin``)."""
    d = np.mod(d, TWO_PI)
    return d + TWO_PI * np.maximum(np.ceil((dmin - 1e-12 - d) / TWO_PI), 0.0)


def _combos(n: int, reverse: bool) -> np.ndarray:
    """Every (side, direction) of ``n`` parts as rows of 2n signs (directions +1 if forward)."""
    sides = np.array(np.meshgrid(*[[1.0, -1.0]] * n, indexing="ij")).reshape(n, -1).T
    dirs = (np.array(np.meshgrid(*[[1.0, -1.0]] * n, indexing="ij")).reshape(n, -1).T
            if reverse else np.ones((1, n)))
    return np.array([np.concatenate([s, d]) for s in sides for d in dirs])


def _csc(q0, qg, xo, yo, dmin, R, sigma, reverse):
    """Every turn-line-turn candidate: ``(length, plan)`` rows, plan = list of parts."""
    cmb = _combos(3, reverse)  # sides s1, s_line (unused), s2; directions e1, eline, e2
    cmb = cmb[cmb[:, 1] > 0]
    s1, s2, e1, el, e2 = cmb[:, 0], cmb[:, 2], cmb[:, 3], cmb[:, 4], cmb[:, 5]
    in1, out1 = _offsets(xo, yo, s1, e1)
    in2, out2 = _offsets(xo, yo, s2, e2)
    p0, pg = np.array(q0[:2]), np.array(qg[:2])
    c1 = p0 + _rot(np.full(len(cmb), q0[2]), in1)
    c2 = pg + _rot(np.full(len(cmb), qg[2]), out2)
    dv = c2 - c1
    delta = in2 - out1
    disc = np.einsum("ij,ij->i", dv, dv) - delta[:, 1] ** 2
    out = []
    for root in (1.0, -1.0):
        with np.errstate(invalid="ignore"):
            el_len = -delta[:, 0] + root * np.sqrt(disc)  # e * L
        ok = (disc >= 0.0) & (el * el_len >= -1e-12)
        th_a = np.arctan2(dv[:, 1], dv[:, 0]) - np.arctan2(delta[:, 1], el_len + delta[:, 0])
        d1 = _full(s1 * e1 * (th_a - q0[2]), dmin)
        d2 = _full(s2 * e2 * (qg[2] - th_a), dmin)
        L = np.abs(el_len)
        length = 4.0 / (R * sigma) + R * (d1 + d2 - 2.0 * dmin) + L  # 2 kappa / sigma a turn
        for j in np.flatnonzero(ok):
            out.append((float(length[j]), [("C", s1[j] * e1[j] * d1[j], e1[j]),
                                           ("S", float(L[j]), el[j]),
                                           ("C", s2[j] * e2[j] * d2[j], e2[j])]))
    return out


def _ccc(q0, qg, xo, yo, dmin, R, sigma, reverse):
    """Every turn-turn-turn candidate: ``(length, plan)`` rows."""
    cmb = _combos(3, reverse)
    s1, s2, s3, e1, e2, e3 = (cmb[:, i] for i in range(6))
    in1, out1 = _offsets(xo, yo, s1, e1)
    in2, out2 = _offsets(xo, yo, s2, e2)
    in3, out3 = _offsets(xo, yo, s3, e3)
    n = len(cmb)
    c1 = np.array(q0[:2]) + _rot(np.full(n, q0[2]), in1)
    c3 = np.array(qg[:2]) + _rot(np.full(n, qg[2]), out3)
    j12, j23 = in2 - out1, in3 - out2  # centre-to-centre vectors in the joint poses' frames
    r12, r23 = np.hypot(j12[:, 0], j12[:, 1]), np.hypot(j23[:, 0], j23[:, 1])
    dv = c3 - c1
    dist = np.hypot(dv[:, 0], dv[:, 1])
    with np.errstate(invalid="ignore", divide="ignore"):
        along = (dist ** 2 + r12 ** 2 - r23 ** 2) / (2.0 * dist)
        h2 = r12 ** 2 - along ** 2
        ok0 = (dist > 1e-12) & (h2 >= 0.0)
        ux, uy = dv[:, 0] / dist, dv[:, 1] / dist
        h = np.sqrt(np.maximum(h2, 0.0))
    out = []
    L = 2.0 / (R * sigma)  # the two clothoids of one turn, 2 kappa / sigma
    for root in (1.0, -1.0):
        c2 = np.stack([c1[:, 0] + along * ux - root * h * uy,
                       c1[:, 1] + along * uy + root * h * ux], axis=-1)
        a12 = c2 - c1
        a23 = c3 - c2
        th_a = np.arctan2(a12[:, 1], a12[:, 0]) - np.arctan2(j12[:, 1], j12[:, 0])
        th_b = np.arctan2(a23[:, 1], a23[:, 0]) - np.arctan2(j23[:, 1], j23[:, 0])
        d1 = _full(s1 * e1 * (th_a - q0[2]), dmin)
        d2 = _full(s2 * e2 * (th_b - th_a), dmin)
        d3 = _full(s3 * e3 * (qg[2] - th_b), dmin)
        length = 3.0 * L + R * (d1 + d2 + d3 - 3.0 * dmin)
        for j in np.flatnonzero(ok0):
            out.append((float(length[j]), [("C", s1[j] * e1[j] * d1[j], e1[j]),
                                           ("C", s2[j] * e2[j] * d2[j], e2[j]),
                                           ("C", s3[j] * e3[j] * d3[j], e3[j])]))
    return out


# -- four- and five-part words with cusps: CC|CC, C|CC|C, C|CSC, CSC|C, C|CSC|C ----------------
#: Shapes of the longer Reeds-Shepp families: ``T`` a turn, ``S`` a line. The turns between the
#: first and the last ("inner" turns) share one deflection ``u``, as in Reeds & Shepp 1990
#: (``C|C_u C_u|C``, ``C C_u|C_u C``, and ``pi / 2`` for the inner turns of the words with a
#: line); here ``u`` is free and chosen to make the path shortest.
_LONG_SHAPES = ("TTTT", "TTST", "TSTT", "TTSTT")
#: Inner deflections tried per word before the best is refined (see :func:`_long_words`).
_U_GRID = 48


def _long_sides(shape: str) -> np.ndarray:
    """Turn sides of a shape (rows of +-1): neighbouring turns with no line between them turn
    opposite ways (the Reeds-Shepp words' pattern), a turn after a line either way."""
    n = shape.count("T")
    rows = []
    for bits in np.array(np.meshgrid(*[[1.0, -1.0]] * n, indexing="ij")).reshape(n, -1).T:
        i, ok = 0, True
        for a, b in zip(shape[:-1], shape[1:]):
            if a == "T" and b == "T" and bits[i] == bits[i + 1]:
                ok = False
            i += a == "T"
        if ok:
            rows.append(bits)
    return np.array(rows)


@lru_cache(maxsize=8)
def _long_table(shape: str) -> tuple[np.ndarray, np.ndarray]:
    """``(sides, directions)``: every combination of turn sides (:func:`_long_sides`) and part
    directions (one per letter of ``shape``, at least one cusp)."""
    n = len(shape)
    dirs = np.array(np.meshgrid(*[[1.0, -1.0]] * n, indexing="ij")).reshape(n, -1).T
    dirs = dirs[np.any(dirs[:, 1:] != dirs[:, :1], axis=1)]
    sides = _long_sides(shape)
    si = np.repeat(np.arange(len(sides)), len(dirs))
    di = np.tile(np.arange(len(dirs)), len(sides))
    return sides[si], dirs[di]


def _chain(shape: str, sides: np.ndarray, dirs: np.ndarray, u: np.ndarray, xo: float,
           yo: float) -> tuple[np.ndarray, np.ndarray | None, np.ndarray]:
    """The vector from the first turn's centre to the last's, in the frame of the pose where
    the first turn ends: ``A + t e`` with ``t`` the line's signed run (``e`` is ``None`` for a
    word without a line), and the inner turns' total heading change. ``u``: ``(m, g)`` inner
    deflections for ``m`` words.

    A turn's centre is ``p + R(theta) Omega_in`` from its start pose and ``p' + R(theta')
    Omega_out`` from its end pose (Fraichard & Scheuer 2004, sec. IV), so two turns joined at
    heading ``theta`` have centres ``R(theta) (Omega_in' - Omega_out)`` apart, plus ``(t, 0)``
    in the line's frame where a line of signed run ``t`` joins them."""
    ti = [i for i, c in enumerate(shape) if c == "T"]
    ax = np.zeros(u.shape)
    ay = np.zeros(u.shape)
    e = None
    phi = np.zeros(u.shape)
    for k in range(len(ti) - 1):
        a, b = ti[k], ti[k + 1]
        ea, eb = dirs[:, a:a + 1], dirs[:, b:b + 1]
        sa, sb = sides[:, k:k + 1], sides[:, k + 1:k + 2]
        jx = np.broadcast_to(eb * xo + ea * xo, u.shape)  # Omega_in(b) - Omega_out(a)
        jy = np.broadcast_to((sb - sa) * yo, u.shape)
        c, s = np.cos(phi), np.sin(phi)
        ax = ax + c * jx - s * jy
        ay = ay + s * jx + c * jy
        if b - a == 2:
            e = (c, s)
        if k + 1 < len(ti) - 1:
            phi = phi + sb * eb * u
    return np.stack([ax, ay], axis=-1), (None if e is None else np.stack(e, axis=-1)), phi


def _long_words(q0, qg, xo, yo, dmin, R, sigma):
    """Every four- and five-part candidate with cusps (``CC|CC``, ``C|CC|C``, ``C|CSC``,
    ``CSC|C``, ``C|CSC|C`` and their mirror images and time-flips): ``(length, plan)`` rows.

    The first and the last turn's centres are fixed by the start and the goal; the vector
    between them is :func:`_chain` turned by the heading ``theta_a`` where the first turn
    ends, so for each inner deflection ``u`` one distance equation is left: for a word with a
    line it fixes the line's run (a quadratic), without one it is solved for ``u`` (grid of
    ``_U_GRID`` values over ``[kappa^2 / sigma, pi]``, each sign change refined by
    bisection). Then ``theta_a`` and the outer deflections follow. A word with a line keeps
    the shortest over the grid of ``u``, refined by two finer grids about it: any ``u``
    gives a path that reaches the goal, the refinement only shortens it."""
    if dmin >= math.pi:
        return []
    out = []
    for shape in _LONG_SHAPES:
        out += _shape_words(shape, q0, qg, xo, yo, dmin, R, sigma)
    return out


def _shape_words(shape, q0, qg, xo, yo, dmin, R, sigma):
    """The candidates of one shape of :data:`_LONG_SHAPES` (see :func:`_long_words`)."""
    p0, pg = np.array(q0[:2]), np.array(qg[:2])
    out = []
    turn_len = 2.0 / (R * sigma)  # the two clothoids of a turn, 2 kappa / sigma
    sides, dirs = _long_table(shape)
    m = len(sides)
    ti = [i for i, c in enumerate(shape) if c == "T"]
    nt = len(ti)
    i_first = np.stack([dirs[:, 0] * xo, sides[:, 0] * yo], axis=-1)
    o_last = np.stack([-dirs[:, ti[-1]] * xo, sides[:, -1] * yo], axis=-1)
    c1 = p0 + _rot(np.full(m, q0[2]), i_first)
    cn = pg + _rot(np.full(m, qg[2]), o_last)
    dv = cn - c1
    dist = np.hypot(dv[:, 0], dv[:, 1])[:, None]
    has_line = "S" in shape
    li = shape.find("S")

    def solve(u):
        """(ok, t, theta_a offset, phi, length) per (word, u)."""
        a, e, phi = _chain(shape, sides, dirs, u, xo, yo)
        if e is None:
            t = np.zeros(u.shape)
            w = a
            ok = np.ones(u.shape, dtype=bool)
        else:
            ae = np.einsum("...i,...i->...", a, e)
            disc = ae ** 2 - np.einsum("...i,...i->...", a, a) + dist ** 2
            with np.errstate(invalid="ignore"):
                root = np.sqrt(disc)
            el = dirs[:, li:li + 1]
            # the run's sign is the line's direction; of the two roots the shorter
            t1, t2 = -ae + root, -ae - root
            t1 = np.where(el * t1 >= -1e-12, t1, np.nan)
            t2 = np.where(el * t2 >= -1e-12, t2, np.nan)
            t = np.where(np.isnan(t1) | (np.abs(t2) < np.abs(t1)), t2, t1)
            ok = (disc >= 0.0) & ~np.isnan(t)
            t = np.where(ok, t, 0.0)
            w = a + t[..., None] * e
        th_a = (np.arctan2(dv[:, 1], dv[:, 0])[:, None]
                - np.arctan2(w[..., 1], w[..., 0]))
        d1 = _full(sides[:, :1] * dirs[:, :1] * (th_a - q0[2]), dmin)
        sl, elast = sides[:, -1:], dirs[:, ti[-1]:ti[-1] + 1]
        dn = _full(sl * elast * (qg[2] - th_a - phi), dmin)
        length = (nt * turn_len + R * (d1 + dn - 2.0 * dmin)
                  + (nt - 2) * R * (u - dmin) + np.abs(t))
        return ok, t, d1, dn, np.where(ok, length, np.inf), w

    grid = np.linspace(dmin, math.pi, _U_GRID)
    u = np.broadcast_to(grid, (m, _U_GRID)).copy()
    if has_line:
        ok, t, d1, dn, length, _ = solve(u)
        best = np.argmin(length, axis=1)
        ub = grid[best]
        step = (math.pi - dmin) / (_U_GRID - 1)
        for _ in range(2):  # two finer grids about the best u
            fine = np.clip(ub[:, None] + np.linspace(-step, step, 9)[None, :], dmin, math.pi)
            ok, t, d1, dn, length, _ = solve(fine)
            j = np.argmin(length, axis=1)
            ub = fine[np.arange(m), j]
            step /= 4.0
        uu = ub[:, None]
    else:
        _, _, _, _, _, w = solve(u)
        f = np.hypot(w[..., 0], w[..., 1]) - dist
        wi, gi = np.nonzero(np.sign(f[:, :-1]) != np.sign(f[:, 1:]))
        if wi.size == 0:
            return []
        lo, hi = grid[gi].copy(), grid[gi + 1].copy()
        flo, fhi = f[wi, gi], f[wi, gi + 1]
        side = np.zeros(lo.shape, dtype=np.int8)
        for it in range(40):
            # three bisections, then the Illinois variant of false position (as in
            # cc_connect) until every gap is below 1e-13 m
            if it < 3:
                mid = 0.5 * (lo + hi)
            else:
                with np.errstate(divide="ignore", invalid="ignore"):
                    mid = np.where(fhi != flo, lo - flo * (hi - lo) / (fhi - flo),
                                   0.5 * (lo + hi))
                mid = np.clip(mid, np.minimum(lo, hi), np.maximum(lo, hi))
            wm, _, _ = _chain(shape, sides[wi], dirs[wi], mid[:, None], xo, yo)
            fm = np.hypot(wm[:, 0, 0], wm[:, 0, 1]) - dist[wi, 0]
            left = np.sign(fm) == np.sign(flo)
            lo, flo = np.where(left, mid, lo), np.where(left, fm, flo)
            hi, fhi = np.where(left, hi, mid), np.where(left, fhi, fm)
            if it >= 3:
                fhi = np.where(left & (side == 1), 0.5 * fhi, fhi)
                flo = np.where(~left & (side == -1), 0.5 * flo, flo)
                side = np.where(left, 1, -1).astype(np.int8)
                if float(np.max(np.abs(fm))) < 1e-13:
                    break
        # one row per root: the words repeated as many times as they have roots
        sides, dirs, dv, dist = sides[wi], dirs[wi], dv[wi], dist[wi]
        uu = mid[:, None]
    ok, t, d1, dn, length, _ = solve(uu)
    for j in np.flatnonzero(ok[:, 0] & np.isfinite(length[:, 0])):
        parts, k = [], 0
        for i, c in enumerate(shape):
            e_i = dirs[j, i]
            if c == "S":
                parts.append(("S", float(abs(t[j, 0])), e_i))
                continue
            d = d1[j, 0] if k == 0 else dn[j, 0] if k == nt - 1 else uu[j, 0]
            parts.append(("C", sides[j, k] * e_i * d, e_i))
            k += 1
        out.append((float(length[j, 0]), parts))
    return out


def _lay(q0: Sequence[float], parts, R: float, sigma: float) -> list[Segment]:
    segs: list[Segment] = []
    pose = tuple(float(v) for v in q0)
    for kind, val, dirn in parts:
        if kind == "S":
            if val > 1e-12:
                segs.append(line(pose, val, int(dirn)))
        else:
            segs.extend(cc_turn(pose, val, R, sigma, int(dirn)))
        pose = segs[-1].end if segs else pose
    return segs


def _reaches(segs: Sequence[Segment], goal: Sequence[float], start: Sequence[float]) -> bool:
    e = segs[-1].end if segs else start
    return (math.hypot(e[0] - goal[0], e[1] - goal[1]) <= GOAL_TOL_M
            and abs(math.remainder(e[2] - goal[2], TWO_PI)) <= GOAL_TOL_RAD)


def cc_candidates(start: Sequence[float], goal: Sequence[float], radius_m: float,
                  sigma: float, reverse: bool) -> list[tuple[float, list]]:
    """Every closed-form CC candidate ``(length_m, parts)`` from ``start`` to ``goal``,
    shortest first; ``parts`` are ``("C", heading change, direction)`` and ``("S", length,
    direction)``."""
    xo, yo, dmin = turn_centre(float(radius_m), float(sigma))
    q0 = tuple(float(v) for v in start)
    qg = tuple(float(v) for v in goal)
    rows = _csc(q0, qg, xo, yo, dmin, radius_m, sigma, reverse) + \
        _ccc(q0, qg, xo, yo, dmin, radius_m, sigma, reverse)
    if reverse:
        rows += _long_words(q0, qg, xo, yo, dmin, radius_m, sigma)
    rows.sort(key=lambda r: r[0])
    return rows


def cc_shortest(start: Sequence[float], goal: Sequence[float], radius_m: float, sigma: float,
                reverse: bool = False) -> list[Segment] | None:
    """The shortest CC path found from ``start`` to ``goal`` (poses ``(x, y, heading_rad)``):
    CC Dubins (forward) or CC Reeds-Shepp (``reverse``) words of this module's docstring, plus
    the turn-line-turn scan of :func:`kinematics.plan.transitions.cc_connect` (which
    also covers turns too small for an arc). ``None`` where none reaches the goal.

    Examples
    --------
    >>> segs = cc_shortest((0.0, 0.0, 0.0), (0.0, 0.0, math.pi), 1.0, 2.0, reverse=True)
    >>> e = segs[-1].end; round(e[0], 9) + 0.0, round(e[1], 9) + 0.0, round(e[2] % 6.283, 6)
    (0.0, 0.0, 3.141593)
    """
    best: tuple[float, list[Segment]] | None = None
    scan = cc_connect(start, goal, radius_m, sigma, reverse)
    if scan is not None and _reaches(scan, goal, start):
        best = (math.fsum(s.length_m for s in scan), scan)
    for length, parts in cc_candidates(start, goal, radius_m, sigma, reverse):
        if best is not None and length >= best[0] - 1e-12:
            break
        segs = _lay(start, parts, radius_m, sigma)
        if _reaches(segs, goal, start):
            best = (math.fsum(s.length_m for s in segs), segs)
            break
    return None if best is None else best[1]
