"""Four- and five-part CC Reeds-Shepp words (CC|CC, C|CC|C, C|CSC, CSC|C, C|CSC|C) in
kinematics/plan/cc_words.py: parallel-parking moves, checked against the plain Reeds-Shepp
length (OMPL's ReedsSheppStateSpace and ours) and by integrating every segment anew."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.special import fresnel

from kinematics.motion.segments import path_length
from kinematics.plan import cc_words, reeds_shepp
from kinematics.plan.cc_words import cc_shortest


def _parts(letters: str) -> int:
    return len(letters.replace("|", "").replace("S", "C"))


def _plain(goal, R):
    b = reeds_shepp.shortest(np.zeros((1, 3)), np.array([goal], float), R)
    return float(b.length_m[0]), reeds_shepp.LETTERS[int(b.word[0])]


def _ompl_length(goal, R):
    ob = pytest.importorskip("ompl.base")
    space = ob.ReedsSheppStateSpace(R)
    a, b = space.allocState(), space.allocState()
    a.setX(0.0), a.setY(0.0), a.setYaw(0.0)
    b.setX(goal[0]), b.setY(goal[1]), b.setYaw(goal[2])
    return float(space.distance(a, b))


def _heading_fn(s):
    """Heading after distance u along segment ``s``, from its kind, start heading, length,
    direction and curvatures only (not from its own pose code)."""
    th0, d, L = s.start[2], s.direction, s.length_m
    if s.kind == "clothoid":
        c = (s.kappa1 - s.kappa0) / L
        return lambda u: th0 + d * (s.kappa0 * u + 0.5 * c * u * u)
    if s.kind == "arc":
        return lambda u: th0 + s.turn_rad * u / L
    return lambda u: th0


def _integrate(segs, start):
    """End pose of ``segs`` laid from ``start`` by quadrature of cos / sin of each segment's
    heading (scipy.integrate.quad), each segment started where the previous one ended here."""
    x, y, th = (float(v) for v in start)
    for s in segs:
        # re-anchor the segment's heading law at the integrated heading
        f = _heading_fn(s)
        off = th - s.start[2]
        L = s.length_m
        cx = quad(lambda u, f=f, off=off: math.cos(f(u) + off), 0.0, L, epsabs=1e-13,
                  limit=200)[0]
        cy = quad(lambda u, f=f, off=off: math.sin(f(u) + off), 0.0, L, epsabs=1e-13,
                  limit=200)[0]
        x += s.direction * cx
        y += s.direction * cy
        th = f(L) + off
    return x, y, th


def _clothoid_end_fresnel(s):
    """End of a clothoid starting at curvature 0 in its own frame: sqrt(pi / c) (C(t), S(t)),
    t = k / sqrt(pi c) (DLMF 7.2), mirrored for negative curvature and reverse travel."""
    k, L = max(abs(s.kappa0), abs(s.kappa1)), s.length_m
    c = k / L
    sf, cf = fresnel(k / math.sqrt(math.pi * c))
    return math.sqrt(math.pi / c) * float(cf), math.sqrt(math.pi / c) * float(sf)


def _assert_cc_promise(segs, start, goal, R, sigma):
    # Source: Fraichard & Scheuer, IEEE T-RO 20(6) 2004 - a CC path has continuous curvature
    # (cusps at curvature 0), |kappa| <= 1/R and |dkappa/ds| <= sigma.
    x, y, th = _integrate(segs, start)
    assert math.hypot(x - goal[0], y - goal[1]) < 1e-3
    assert abs(math.degrees(math.remainder(th - goal[2], 2 * math.pi))) < 0.1

    def k0(s):
        return s.kappa0 if s.kind == "clothoid" else s.curvature

    def k1(s):
        return s.kappa1 if s.kind == "clothoid" else s.curvature

    assert abs(k0(segs[0])) < 1e-12 and abs(k1(segs[-1])) < 1e-12
    for a, b in zip(segs[:-1], segs[1:]):
        assert abs(k1(a) - k0(b)) < 1e-12
        if a.direction != b.direction:
            assert abs(k1(a)) < 1e-12
    assert max(s.max_abs_curvature for s in segs) <= 1.0 / R + 1e-12
    assert all(abs(s.sharpness) <= sigma + 1e-12 for s in segs)


# Parallel-parking moves: a shift sideways with the heading kept (0.3 to 1.5 turning radii),
# and a few with a small heading change or step along.
PARKING = [(0.0, 0.3, 0.0), (0.0, 0.6, 0.0), (0.0, 1.0, 0.0), (0.0, 1.5, 0.0),
           (0.4, 0.8, 0.0), (-0.4, 0.8, 0.0), (0.2, -1.1, 0.0), (0.0, 0.7, 0.15),
           (0.3, 1.2, -0.2), (-0.5, -0.5, 0.0)]


def test_parallel_parking_goals_need_the_long_words():
    # Source: Reeds & Shepp 1990 - a sideways shift with the heading kept is shortest by a
    # four- or five-part word (here checked by our Reeds-Shepp, whose lengths match OMPL's in
    # test_reeds_shepp).
    long_words = sum(_parts(_plain(g, 1.0)[1]) >= 4 for g in PARKING)
    assert long_words >= 6


@pytest.mark.parametrize("goal", PARKING)
def test_parking_cc_path_is_never_shorter_than_ompl_reeds_shepp(goal):
    # Source: OMPL ReedsSheppStateSpace(R).distance - the shortest path with curvature <= 1/R
    # and cusps allowed (Reeds & Shepp 1990) is a lower bound on every CC path of that bound.
    R = 1.0
    plain = _ompl_length(goal, R)
    for sigma in (0.5, 2.0, 20.0, 500.0):
        segs = cc_shortest((0.0, 0.0, 0.0), goal, R, sigma, reverse=True)
        assert segs
        _assert_cc_promise(segs, (0.0, 0.0, 0.0), goal, R, sigma)
        assert path_length(segs) >= plain - 1e-9


def test_parking_ratio_to_reeds_shepp_tends_to_one_as_sharpness_grows():
    # Source: Fraichard & Scheuer 2004, sec. IV - as sigma grows a CC turn tends to the arc of
    # radius R, so the CC path of each Reeds-Shepp word tends to that word (Reeds & Shepp
    # 1990), four- and five-part words included; OMPL's ReedsSheppStateSpace the reference.
    R = 1.0
    ratios = {}
    for sigma in (2.0, 20.0, 200.0, 1e4):
        ratios[sigma] = [path_length(cc_shortest((0.0, 0.0, 0.0), g, R, sigma, True))
                         / _ompl_length(g, R) for g in PARKING]
    worst = [max(ratios[s]) for s in sorted(ratios)]
    assert all(a >= b - 1e-9 for a, b in zip(worst[:-1], worst[1:]))  # shrinking
    assert worst[-1] < 1.001
    assert max(ratios[20.0]) < 1.15


def test_long_words_shorten_the_parking_moves_the_three_part_words_made_long(monkeypatch):
    # Source: Reeds & Shepp 1990 (the shortest sideways shift is a four/five-part word); the
    # same CC search without those words (the state before them) is compared, both against
    # the plain length from OMPL.
    R, sigma = 1.0, 20.0
    with_long = [path_length(cc_shortest((0, 0, 0), g, R, sigma, True)) for g in PARKING]
    monkeypatch.setattr(cc_words, "_LONG_SHAPES", ())
    without = [path_length(cc_shortest((0, 0, 0), g, R, sigma, True)) for g in PARKING]
    plain = [_ompl_length(g, R) for g in PARKING]
    assert all(a <= b + 1e-9 for a, b in zip(with_long, without))
    assert max(b / p for b, p in zip(without, plain)) > 1.5
    assert max(a / p for a, p in zip(with_long, plain)) < 1.15


def test_random_reverse_goals_are_reached_within_the_cc_promise():
    # Source: as above; every goal pose checked by independent quadrature of each segment's
    # heading (scipy.integrate.quad), lengths against OMPL's Reeds-Shepp distance.
    rng = np.random.default_rng(5)
    R = 0.8
    for _ in range(25):
        goal = (rng.uniform(-3, 3), rng.uniform(-3, 3), rng.uniform(-math.pi, math.pi))
        sigma = float(rng.choice([0.7, 3.0, 30.0]))
        segs = cc_shortest((0.0, 0.0, 0.0), goal, R, sigma, True)
        _assert_cc_promise(segs, (0.0, 0.0, 0.0), goal, R, sigma)
        assert path_length(segs) >= _ompl_length(goal, R) - 1e-9


def test_clothoids_of_a_parking_path_end_where_fresnel_says():
    # Source: DLMF 7.2 / scipy.special.fresnel - a clothoid from curvature 0 to k over L ends
    # at sqrt(pi / c) (C(t), S(t)) in its own frame, c = k / L, t = k / sqrt(pi c).
    segs = cc_shortest((0.0, 0.0, 0.0), (0.0, 1.0, 0.0), 1.0, 2.0, True)
    seen = 0
    for s in segs:
        if s.kind != "clothoid" or s.kappa0 != 0.0:
            continue
        ex, ey = _clothoid_end_fresnel(s)
        sk = math.copysign(1.0, s.kappa1)
        th = s.start[2]
        dx, dy = s.end[0] - s.start[0], s.end[1] - s.start[1]
        # the end in the clothoid's own frame: reverse travel mirrors x (the heading then
        # changes by -kappa per metre, and y by d * d * kappa), a right turn mirrors y
        lx = (math.cos(th) * dx + math.sin(th) * dy) * s.direction
        ly = (-math.sin(th) * dx + math.cos(th) * dy) * sk
        assert lx == pytest.approx(ex, abs=1e-9) and ly == pytest.approx(ey, abs=1e-9)
        seen += 1
    assert seen >= 2
