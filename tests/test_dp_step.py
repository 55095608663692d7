"""The written-out Dormand-Prince step of the trailer headings against scipy's own step."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate._ivp.rk import RK45, rk_step

from kinematics.motion.dp_step import make_step


def _chain_rhs(kind, th0, w0, wd, vel, direction, hitch, drawbar):
    """The n-trailer chain written from the model (Altafini, Int. J. Control 74, 2001): the
    hitch moves with the body ahead, ``v_h = v + omega h n(theta)``; a trailer turns at
    ``(v_h . n(theta_i)) / d_i`` and its axle moves at ``(v_h . e(theta_i)) e(theta_i)``."""

    def f(p, th):
        t_prev = th0 + (w0 + 0.5 * wd * p) * p
        w_prev = 0.0 if kind == "line" else w0 + wd * p
        if kind == "fixed":
            v = np.array(vel, dtype=float)
        else:
            v = direction * np.array([math.cos(t_prev), math.sin(t_prev)])
        out = []
        for t, h, d in zip(th, hitch, drawbar):
            vh = v + w_prev * h * np.array([-math.sin(t_prev), math.cos(t_prev)])
            e = np.array([math.cos(t), math.sin(t)])
            nrm = np.array([-math.sin(t), math.cos(t)])
            w = float(vh @ nrm) / d
            v = float(vh @ e) * e
            out.append(w)
            t_prev, w_prev = t, w
        return np.array(out)

    return f


@pytest.mark.parametrize("n", [1, 2, 3, 5])
@pytest.mark.parametrize("kind", ["line", "free", "fixed"])
def test_step_matches_scipy_dormand_prince(n: int, kind: str) -> None:
    # Source: scipy.integrate's RK45 is the Dormand-Prince 5(4) pair (its tableau RK45.A/B/C,
    # error weights RK45.E); one scipy step on the same right-hand side gives the same
    # 5th-order solution, final stage and error estimate up to rounding.
    rng = np.random.default_rng(10 * n + len(kind))
    for _ in range(20):
        th0 = rng.uniform(-math.pi, math.pi)
        w0 = 0.0 if kind == "line" else rng.uniform(-1.5, 1.5)
        wd = 0.0 if kind == "line" else rng.uniform(-0.5, 0.5)
        direction = float(rng.choice([-1.0, 1.0]))
        vel = (direction * math.cos(th0), direction * math.sin(th0)) if kind == "line" \
            else tuple(rng.uniform(-1.0, 1.0, 2))
        hitch = rng.uniform(-0.6, 0.1, n)
        drawbar = rng.uniform(0.4, 1.2, n)
        f = _chain_rhs(kind, th0, w0, wd, vel, direction, hitch, drawbar)
        step = make_step(kind, th0, w0, wd, vel, direction, float(hitch[0]),
                         [1.0 / d for d in drawbar], list(hitch[1:]) + [0.0])
        p = rng.uniform(0.0, 2.0)
        h = rng.uniform(0.01, 0.3)
        y = th0 + rng.uniform(-0.8, 0.8, n)
        k0 = f(p, y)
        y5, k6, err = step(p, h, tuple(y), tuple(k0))
        K = np.empty((RK45.n_stages + 1, n))
        ref_y, ref_f = rk_step(f, p, y, k0, h, RK45.A, RK45.B, RK45.C, K)
        ref_err = float(np.max(np.abs(h * (K.T @ RK45.E))))
        assert np.allclose(y5, ref_y, rtol=0.0, atol=1e-12)
        assert np.allclose(k6, ref_f, rtol=0.0, atol=1e-11)
        assert abs(err - ref_err) <= 1e-12 + 1e-9 * ref_err


def test_unknown_kind_refused() -> None:
    with pytest.raises(ValueError, match="unknown motion kind"):
        make_step("spin", 0.0, 0.0, 0.0, (1.0, 0.0), 1.0, -0.4, [1.0], [0.0])
