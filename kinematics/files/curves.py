"""Flattening curves into polylines: how many chords keep a curve within a sagitta.

Shared by the DXF and SVG readers. A chord spanning an angle ``dtheta`` of a circle of radius
``r`` has sagitta ``r (1 - cos(dtheta / 2))`` (circle geometry).
"""

from __future__ import annotations

import math

import numpy as np

MAX_CHORDS = 100_000
"""More chords than this for one curve means a nonsense radius; the file is refused."""



def chord_count(radius: float, sweep_rad: float, sagitta: float) -> int:
    """Chords needed so an arc of ``radius`` sweeping ``sweep_rad`` deviates by <= ``sagitta``.

    A chord spanning ``dtheta`` has sagitta ``r (1 - cos(dtheta / 2))`` (circle geometry),
    so ``dtheta <= 2 acos(1 - s / r)``.

    Examples
    --------
    >>> chord_count(1.0, math.pi, 0.005)  # half circle of 1 m to 5 mm
    16
    """
    sweep = abs(sweep_rad)
    if radius <= 0 or sweep == 0:
        return 1
    if not (math.isfinite(radius) and math.isfinite(sweep) and sweep <= 4.0 * math.pi):
        raise ValueError(f"an arc of radius {radius:g} and sweep {sweep:g} rad is not usable")
    if sagitta >= radius:
        return max(1, math.ceil(sweep / math.pi))
    step = 2.0 * math.acos(1.0 - sagitta / radius)
    n = sweep / step
    if not n < MAX_CHORDS:
        raise ValueError(f"an arc of radius {radius:g} is too large to flatten")
    return max(1, math.ceil(n - 1e-12))


def arc_points(centre: tuple[float, float], radius: float, start_rad: float, sweep_rad: float,
               sagitta: float) -> np.ndarray:
    """Points on a circular arc (counter-clockwise for positive sweep), ends included."""
    n = chord_count(radius, sweep_rad, sagitta)
    t = start_rad + sweep_rad * np.linspace(0.0, 1.0, n + 1)
    return np.column_stack([centre[0] + radius * np.cos(t), centre[1] + radius * np.sin(t)])
