"""Exact pose propagation under a constant body twist.

A rigid body moving in the plane with constant body-frame velocity ``(vx, vy)`` and yaw rate
``omega`` for a time ``t`` ends at a pose given in closed form (the exponential map of SE(2),
e.g. Lynch & Park, *Modern Robotics*, 2017, sec. 3.3 / 13.3):

    phi = omega * t
    S = sin(phi) / phi,  C = (1 - cos(phi)) / phi       (S -> 1, C -> 0 as phi -> 0)
    dx_world = t * R(theta0) @ [S * vx - C * vy,  C * vx + S * vy]
    theta    = theta0 + phi

No small-step integration is needed anywhere; short Taylor series keep it exact near phi = 0.
Every function takes and returns numpy arrays and broadcasts over many poses or times.
"""

from __future__ import annotations

import numpy as np
from numpy.typing import ArrayLike, NDArray

_SERIES_BELOW = 1e-4


def sinc_terms(phi: ArrayLike) -> tuple[NDArray[np.float64], NDArray[np.float64]]:
    """Return ``S = sin(phi)/phi`` and ``C = (1 - cos(phi))/phi``, stable near zero.

    Examples
    --------
    >>> S, C = sinc_terms(np.array([0.0, np.pi]))
    >>> np.round(S, 6).tolist(), np.round(C, 6).tolist()
    ([1.0, 0.0], [0.0, 0.63662])
    """
    phi = np.asarray(phi, dtype=float)
    small = np.abs(phi) < _SERIES_BELOW
    safe = np.where(small, 1.0, phi)
    p2 = phi * phi
    S = np.where(small, 1.0 - p2 / 6.0 + p2 * p2 / 120.0, np.sin(safe) / safe)
    C = np.where(small, phi / 2.0 - phi * p2 / 24.0 + phi * p2 * p2 / 720.0,
                 (1.0 - np.cos(safe)) / safe)
    return S, C


def wrap_angle(theta: ArrayLike) -> NDArray[np.float64]:
    """Wrap angles to ``[-pi, pi)``."""
    theta = np.asarray(theta, dtype=float)
    return (theta + np.pi) % (2.0 * np.pi) - np.pi


def propagate(pose: ArrayLike, vx: ArrayLike, vy: ArrayLike, omega: ArrayLike,
              t: ArrayLike) -> NDArray[np.float64]:
    """Pose after moving for time ``t`` with constant body twist ``(vx, vy, omega)``.

    Parameters
    ----------
    pose : array_like, shape (..., 3)
        Start poses ``(x, y, theta)`` in the plan frame, theta in radians.
    vx, vy : array_like
        Body-frame velocity (x forward, y left), m/s.
    omega : array_like
        Yaw rate, rad/s, counter-clockwise positive.
    t : array_like
        Durations, s. All arguments broadcast together.

    Returns
    -------
    ndarray, shape (..., 3)
        End poses; theta is not wrapped (it accumulates), so a full turn is visible.

    Examples
    --------
    >>> end = propagate([0.0, 0.0, 0.0], 1.0, 0.0, np.pi / 2, 1.0)  # quarter circle, R = 2/pi
    >>> np.round(end, 6).tolist()
    [0.63662, 0.63662, 1.570796]
    """
    pose = np.asarray(pose, dtype=float)
    vx, vy, omega, t = (np.asarray(a, dtype=float) for a in (vx, vy, omega, t))
    x0, y0, th0 = pose[..., 0], pose[..., 1], pose[..., 2]
    phi = omega * t
    S, C = sinc_terms(phi)
    bx = t * (S * vx - C * vy)
    by = t * (C * vx + S * vy)
    c, s = np.cos(th0), np.sin(th0)
    x = x0 + c * bx - s * by
    y = y0 + s * bx + c * by
    th = th0 + phi
    x, y, th = np.broadcast_arrays(x, y, th)
    return np.stack([x, y, th], axis=-1)


def unicycle_rhs(pose: ArrayLike, v: float, omega: float) -> NDArray[np.float64]:
    """Right-hand side of the unicycle equations ``(v cos th, v sin th, omega)``.

    For checking :func:`propagate` against a numerical integrator in the tests; the core never
    integrates.
    """
    pose = np.asarray(pose, dtype=float)
    return np.array([v * np.cos(pose[2]), v * np.sin(pose[2]), omega])
