"""Trailer kinematics (n-trailer with off-axle hitching) against textbook geometry and scipy."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from kinematics.motion.segments import arc, clothoid, line, pivot
from kinematics.motion.trailers import Hitch, hitch_angles, trace_train


def _chain(first, *specs):
    segs = [first]
    for kind, *args in specs:
        e = segs[-1].end
        segs.append({"line": line, "arc": arc, "pivot": pivot, "clothoid": clothoid}[kind](
            e, *args))
    return segs


@pytest.mark.parametrize("h, d", [(-0.4, 0.9), (0.0, 0.9), (-0.8, 0.6), (0.3, 1.1)])
def test_steady_arc_radius(h: float, d: float) -> None:
    # Source: steady-state off-tracking of a towed axle (textbook geometry): the hitch runs on
    # a circle of radius sqrt(R^2 + h^2), the trailer axle is tangent to the circle it runs
    # on, so R_t = sqrt(R^2 + h^2 - d^2); on-axle (h = 0) R_t = sqrt(R^2 - d^2).
    R = 2.5
    segs = _chain(line((0.0, 0.0, 0.0), 1.0), ("arc", R, 5.0 * math.pi))
    tr = trace_train(segs, [Hitch(h, d)])
    cx, cy = segs[1].arc_centre()
    end = tr.poses(1, [tr.amount(1)])[0]
    rt = math.hypot(end[1, 0] - cx, end[1, 1] - cy)
    assert abs(rt - math.sqrt(R * R + h * h - d * d)) < 1e-3
    # The tug itself stays on R.
    assert abs(math.hypot(end[0, 0] - cx, end[0, 1] - cy) - R) < 1e-9


def test_line_closed_form() -> None:
    # Source: on a straight line an on- or off-axle trailer's hitch angle b obeys
    # db/ds = -sin(b)/d, whose solution is tan(b/2) = tan(b0/2) exp(-s/d) (separable ODE;
    # e.g. Lamiraux & Laumond's tractor-trailer papers use this straightening law).
    d = 0.8
    b0 = math.radians(50.0)
    segs = [line((0.0, 0.0, 0.3), 4.0)]
    tr = trace_train(segs, [Hitch(-0.5, d)], start_headings=[0.3 - b0])
    s = np.linspace(0.0, 4.0, 41)
    b = 0.3 - tr.headings(0, s)[:, 0]
    assert np.max(np.abs(np.tan(b / 2) - math.tan(b0 / 2) * np.exp(-s / d))) < 1e-7


def _reference(segs, hitches, y0):
    """Headings integrated independently in the hitch-angle form with scipy's solve_ivp.

    Source: Altafini 2001, the general n-trailer: with b = theta_prev - theta_i,
    theta_i' = (v_prev sin b + h_i w_prev cos b) / d_i,  v_i = v_prev cos b - h_i w_prev sin b.
    """
    out = []
    y = np.array(y0, float)
    for s in segs:
        wd = 0.0
        if s.kind == "pivot":
            amount, v0, w0 = abs(s.turn_rad), 0.0, math.copysign(1.0, s.turn_rad)
        elif s.kind == "clothoid":
            amount, v0 = s.length_m, float(s.direction)
            w0, wd = s.direction * s.kappa0, s.direction * (s.kappa1 - s.kappa0) / s.length_m
        else:
            amount, v0, w0 = s.length_m, float(s.direction), s.turn_rad / s.length_m

        def f(p, th, s=s, v0=v0, w0=w0, wd=wd):
            prev, v, w = s.start[2] + w0 * p + 0.5 * wd * p * p, v0, w0 + wd * p
            dth = np.empty_like(th)
            for i, hz in enumerate(hitches):
                b = prev - th[i]
                dth[i] = (v * math.sin(b) + hz.hitch_x_m * w * math.cos(b)) / hz.drawbar_m
                v = v * math.cos(b) - hz.hitch_x_m * w * math.sin(b)
                prev, w = th[i], dth[i]
            return dth

        sol = solve_ivp(f, (0.0, amount), y, method="DOP853", rtol=1e-11, atol=1e-12,
                        dense_output=True)
        out.append((amount, sol.sol))
        y = sol.y[:, -1]
    return out


def test_transients_match_solve_ivp() -> None:
    # Source: scipy.integrate.solve_ivp (DOP853) on the model written independently above.
    hitches = [Hitch(-0.45, 0.9), Hitch(-0.6, 0.8), Hitch(0.0, 1.0)]
    segs = _chain(line((1.0, 2.0, 0.2), 2.0), ("clothoid", 0.0, 1 / 1.5, 0.8),
                  ("arc", 1.5, math.pi / 2), ("clothoid", 1 / 1.5, 0.0, 0.8), ("line", 1.5),
                  ("pivot", -math.pi / 4), ("arc", 2.0, -2.0), ("line", 3.0),
                  ("arc", 1.2, math.pi), ("line", 0.6, -1))
    tr = trace_train(segs, hitches)
    ref = _reference(segs, hitches, [0.2] * 3)
    worst = 0.0
    for i, (amount, sol) in enumerate(ref):
        p = np.linspace(0.0, amount, 97)
        worst = max(worst, float(np.max(np.abs(tr.headings(i, p) - sol(p).T))))
    assert math.degrees(worst) < 0.05
    assert worst < 1e-5  # far inside the requirement
    # The stated bound is not exceeded at the integration nodes.
    nodes = max(float(np.max(np.abs(t.th - sol(t.p).T))) for t, (_, sol) in
                zip(tr.traces, ref))
    assert nodes <= max(tr.error_bound_rad * 10.0, 1e-9)


def test_on_axle_pivot_leaves_trailer_still_and_hitch_angles() -> None:
    # Source: common practice (kinematics): a hitch on the turning axis does not move.
    segs = [pivot((0.0, 0.0, 0.0), math.pi / 3)]
    tr = trace_train(segs, [Hitch(0.0, 1.0)])
    poses = tr.poses(0, [0.0, tr.amount(0)])
    assert np.allclose(poses[0, 1], poses[1, 1], atol=1e-12)
    assert hitch_angles(poses)[1, 0] == pytest.approx(math.pi / 3)
