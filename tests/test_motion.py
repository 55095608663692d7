"""Closed-form pose propagation against a numerical integrator and textbook cases."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from kinematics.motion.se2 import propagate, sinc_terms, unicycle_rhs, wrap_angle

solve_ivp = pytest.importorskip("scipy.integrate").solve_ivp

finite = dict(allow_nan=False, allow_infinity=False)


@given(
    x=st.floats(-50, 50, **finite), y=st.floats(-50, 50, **finite),
    th=st.floats(-math.pi, math.pi, **finite),
    v=st.floats(-3, 3, **finite),
    omega=st.one_of(st.floats(-4, 4, **finite), st.floats(-1e-7, 1e-7, **finite),
                    st.just(0.0)),
    t=st.floats(0.0, 5.0, **finite),
)
def test_arc_propagation_matches_solve_ivp(x, y, th, v, omega, t):
    # Source: scipy.integrate.solve_ivp (DOP853) on the unicycle equations
    # x' = v cos th, y' = v sin th, th' = omega, as the reference; rtol 1e-10 as the issue asks.
    ref = solve_ivp(lambda _t, p: unicycle_rhs(p, v, omega), (0.0, t), [x, y, th],
                    method="DOP853", rtol=1e-12, atol=1e-12)
    expect = ref.y[:, -1]
    got = propagate([x, y, th], v, 0.0, omega, t)
    np.testing.assert_allclose(got, expect, rtol=1e-10, atol=1e-9)


@given(vx=st.floats(-2, 2, **finite), vy=st.floats(-2, 2, **finite),
       omega=st.floats(-3, 3, **finite), t=st.floats(0, 4, **finite))
def test_holonomic_twist_matches_solve_ivp(vx, vy, omega, t):
    # Source: scipy.integrate.solve_ivp on the rigid-body planar kinematics
    # [x', y'] = R(th) [vx, vy], th' = omega (Lynch & Park, Modern Robotics, sec. 13.3).
    def rhs(_t, p):
        c, s = math.cos(p[2]), math.sin(p[2])
        return [c * vx - s * vy, s * vx + c * vy, omega]

    ref = solve_ivp(rhs, (0.0, t), [0.3, -0.2, 0.7], method="DOP853", rtol=1e-12, atol=1e-12)
    got = propagate([0.3, -0.2, 0.7], vx, vy, omega, t)
    np.testing.assert_allclose(got, ref.y[:, -1], rtol=1e-10, atol=1e-9)


def test_quarter_circle_closed_form():
    # Source: common plane geometry: a quarter turn of radius R from the origin heading +x
    # ends at (R, R) heading +90 degrees.
    R = 2.5
    end = propagate([0.0, 0.0, 0.0], 1.0, 0.0, 1.0 / R, R * math.pi / 2)
    np.testing.assert_allclose(end, [R, R, math.pi / 2], atol=1e-12)


def test_full_circle_returns_to_start_and_vectorises():
    # Source: common plane geometry: one full turn returns to the start pose.
    R = np.array([0.5, 1.0, 7.0])
    ends = propagate(np.zeros((3, 3)), 1.0, 0.0, 1.0 / R, 2 * math.pi * R)
    np.testing.assert_allclose(ends[:, :2], 0.0, atol=1e-12)
    np.testing.assert_allclose(ends[:, 2], 2 * math.pi)


def test_series_branch_is_continuous():
    # Near phi = 0 the Taylor branch must agree with the direct formula (common numerics).
    phi = np.array([0.99e-4, 1.01e-4])
    S, C = sinc_terms(phi)
    np.testing.assert_allclose(S, np.sin(phi) / phi, rtol=1e-14)
    np.testing.assert_allclose(C, (1 - np.cos(phi)) / phi, rtol=1e-8)


def test_wrap_angle_range():
    a = wrap_angle(np.array([-7.0, -math.pi, 0.0, math.pi, 7.0]))
    assert np.all(a >= -math.pi) and np.all(a < math.pi)
    np.testing.assert_allclose(np.cos(a), np.cos([-7.0, -math.pi, 0.0, math.pi, 7.0]))
