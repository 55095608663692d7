"""Towed trailers: the n-trailer model with off-axle hitching, integrated along a plan.

Each trailer is hitched at ``h = hitch_x_m`` on the x axis of the body ahead (negative: behind
that body's reference point) and rolls on an axle ``d = drawbar_m`` behind the hitch, without
slipping sideways (the general n-trailer of Altafini, "Some properties of the general
n-trailer", Int. J. Control 74, 2001). With ``v_h`` the plan-frame velocity of the hitch
point, the trailer's heading ``theta_i`` and axle velocity follow

    v_h = v_{i-1} + omega_{i-1} * h_i * n(theta_{i-1})
    omega_i = (v_h . n(theta_i)) / d_i          (n = the left normal of the heading)
    v_i = (v_h . e(theta_i)) e(theta_i)

so on a steady arc of radius ``R`` a trailer settles on the radius ``sqrt(R^2 + h^2 - d^2)``
(classic steady off-tracking). The tug's motion on each segment is known in closed form, so
only the trailer headings are integrated, in the progress of the segment (metres on lines and
arcs, radians of turn on pivots) with an adaptive Dormand-Prince 5(4) pair (Dormand & Prince,
J. Comp. Appl. Math. 6, 1980; Hairer, Norsett & Wanner, Solving ODEs I, sec. II.5).

Error bound (stated): every step keeps the embedded local error estimate below
:data:`LOCAL_TOL_RAD`; between steps headings come from the cubic Hermite interpolant of the
step ends and their exact slopes. Travelling forward the hitch dynamics contract (a heading
error decays as the body ahead pulls), so the global error is estimated by the sum of the
local ones; reversing, an error may grow by ``exp(|v_h| / d)`` per unit progress, and the
estimate (:attr:`TrainTrace.error_bound_rad`) multiplies by that growth on every reversing
step. Pivots with an on-axle hitch do not move the trailer at all.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from numpy.typing import ArrayLike, NDArray

from kinematics.errors import ValidationError
from kinematics.motion.dp_step import make_step
from kinematics.motion.segments import Segment

#: Local error tolerance of one integration step, radians.
LOCAL_TOL_RAD = 1e-8
#: Longest step, as travel of the fastest hitch point, metres (keeps the Hermite
#: interpolant between steps far more accurate than the sweep tolerance).
MAX_STEP_TRAVEL_M = 0.3
#: Most integration steps times trailers one plan may take (each step costs a few tens of
#: microseconds per trailer in Python; the train's sweep grows with the same travel): about
#: 18 km towing one trailer, 9 km towing two, 1.8 km towing ten. Checked before integrating
#: (from the fewest steps :data:`MAX_STEP_TRAVEL_M` allows) and while integrating (steps
#: tried, rejected ones too), so no plan integrates for longer.
TRAIN_STEP_BUDGET = 60_000


class TrainBudgetError(ValidationError):
    """A plan whose trailer integration would take more than :data:`TRAIN_STEP_BUDGET`
    steps times trailers: bad input, refused before (or, for steps the error control
    rejects, while) integrating. ``file`` and ``place`` are left to the caller."""

    def __init__(self, steps: float, n_trailers: int, length_m: float, when: str) -> None:
        self.steps = float(steps)
        super().__init__("", "", (
            f"towing {n_trailers} trailer{'s' if n_trailers != 1 else ''} along "
            f"{length_m:.6g} m {when} about {steps:.2g} integration steps times trailers "
            f"(at most {TRAIN_STEP_BUDGET:.2g}); split the route or tow fewer trailers"))

    @property
    def message(self) -> str:
        """As :attr:`SwatheInputError.message`; just the reason while no file is named."""
        return super().message if self.file or self.place else self.expected

@dataclass(frozen=True)
class Hitch:
    """The geometry of one trailer's coupling: hitch offset on the body ahead and drawbar."""

    hitch_x_m: float
    drawbar_m: float


def hitches_of(trailers: Sequence) -> tuple[Hitch, ...]:
    """:class:`Hitch` of each trailer (anything with ``hitch_x_m`` and ``drawbar_m``)."""
    return tuple(Hitch(float(t.hitch_x_m), float(t.drawbar_m)) for t in trailers)


@dataclass(frozen=True)
class TugMotion:
    """The tug's motion on one segment per unit progress: heading ``th0 + w * p``; a
    plan-frame velocity that is either fixed (``fixed``, holonomic lines and pivots) or
    ``direction * e(heading)``."""

    amount: float
    th0: float
    w: float
    fixed: tuple[float, float] | None
    direction: float
    #: d(turn rate)/d(progress): non-zero on clothoids, whose heading is
    #: ``th0 + w p + wd p^2 / 2``.
    wd: float = 0.0

    @staticmethod
    def of(seg: Segment) -> TugMotion:
        if seg.kind == "pivot":
            amt = abs(seg.turn_rad)
            return TugMotion(amt, seg.start[2], math.copysign(1.0, seg.turn_rad) if amt else 0.0,
                             (0.0, 0.0), 1.0)
        L = seg.length_m
        if seg.kind == "clothoid":
            d = float(seg.direction)
            c = (seg.kappa1 - seg.kappa0) / L if L > 0.0 else 0.0
            return TugMotion(L, seg.start[2], d * seg.kappa0, None, d, d * c)
        w = seg.turn_rad / L if L > 0.0 else 0.0
        if seg.kind == "line" and (seg.course_rad is not None or seg.turn_rad != 0.0):
            c = seg.course
            return TugMotion(L, seg.start[2], w, (math.cos(c), math.sin(c)), 1.0)
        return TugMotion(L, seg.start[2], w, None, float(seg.direction))

    def speed_bound(self) -> float:
        """Largest speed of the reference point per unit progress."""
        return 0.0 if self.fixed == (0.0, 0.0) else 1.0

    def turn_bound(self) -> float:
        """Largest turn rate of the tug per unit progress on the segment."""
        return max(abs(self.w), abs(self.w + self.wd * self.amount))


def _rhs(m: TugMotion, hitches: Sequence[Hitch], p: float, th: Sequence[float]
         ) -> list[float]:
    """Heading rates of the trailers (per unit progress) at progress ``p``."""
    th_prev = m.th0 + (m.w + 0.5 * m.wd * p) * p
    if m.fixed is None:
        vx, vy = m.direction * math.cos(th_prev), m.direction * math.sin(th_prev)
    else:
        vx, vy = m.fixed
    w_prev = m.w + m.wd * p
    out = []
    for hz, t in zip(hitches, th):
        h = hz.hitch_x_m
        hx = vx - w_prev * h * math.sin(th_prev)
        hy = vy + w_prev * h * math.cos(th_prev)
        c, s = math.cos(t), math.sin(t)
        w = (-hx * s + hy * c) / hz.drawbar_m
        along = hx * c + hy * s
        vx, vy = along * c, along * s
        out.append(w)
        th_prev, w_prev = t, w
    return out


def _hitch_speed_bounds(m: TugMotion, hitches: Sequence[Hitch]) -> list[float]:
    """Upper bounds of each hitch point's speed per unit progress on the segment.

    A hitch moves with the body ahead: its reference point's velocity plus the body's turn
    rate times the offset, across the body. For a trailer (and a tug driving along its
    heading) the two are at right angles and add as ``hypot``; a holonomic tug's velocity
    may point anywhere, so there they add as a plain sum. A trailer turns at most
    ``|v_h| / d``."""
    v, w = m.speed_bound(), m.turn_bound()
    out = []
    first = True
    for hz in hitches:
        h = abs(hz.hitch_x_m)
        ph = v + w * h if first and m.fixed is not None else math.hypot(v, w * h)
        first = False
        out.append(ph)
        v, w = ph, ph / hz.drawbar_m
    return out


def _step_of(m: TugMotion, hitches: Sequence[Hitch]):
    """One Dormand-Prince step on ``m`` (:func:`kinematics.motion.dp_step.make_step`): the
    hitch chain's right-hand side with the segment's constants bound once."""
    inv_d = [1.0 / hz.drawbar_m for hz in hitches]
    h_next = [hz.hitch_x_m for hz in hitches[1:]] + [0.0]
    h1 = hitches[0].hitch_x_m
    if m.fixed is None and m.w == 0.0 and m.wd == 0.0:
        # A straight line along the heading: the tug's heading and velocity are constant and
        # it does not turn, so the first hitch moves with it.
        c0, s0 = math.cos(m.th0), math.sin(m.th0)
        return make_step("line", m.th0, m.w, m.wd, (m.direction * c0, m.direction * s0),
                         m.direction, h1, inv_d, h_next)
    kind = "free" if m.fixed is None else "fixed"
    return make_step(kind, m.th0, m.w, m.wd, m.fixed or (0.0, 0.0), m.direction, h1, inv_d,
                     h_next)


@dataclass
class SegmentTrace:
    """Integration nodes of one segment: progress ``p`` (k,), headings and slopes (k, n)."""

    motion: TugMotion
    p: NDArray[np.float64]
    th: NDArray[np.float64]
    dth: NDArray[np.float64]
    #: Steps tried, rejected ones too (the work the step budget counts).
    tried: int = 0


def fewest_steps(m: TugMotion, hitches: Sequence[Hitch]) -> int:
    """The fewest steps :func:`integrate_segment` can take on ``m`` (its longest step is
    :data:`MAX_STEP_TRAVEL_M` of the fastest hitch point's travel)."""
    if m.amount <= 0.0 or not hitches:
        return 0
    pmax = max(_hitch_speed_bounds(m, hitches), default=0.0)
    return 1 if pmax <= 0.0 else math.ceil(m.amount * pmax / MAX_STEP_TRAVEL_M - 1e-12)


def integrate_segment(m: TugMotion, hitches: Sequence[Hitch], th_start: Sequence[float],
                      tol: float = LOCAL_TOL_RAD, max_steps: float = math.inf
                      ) -> tuple[SegmentTrace, float, float]:
    """Trailer headings along one segment from ``th_start``.

    Returns the trace, the sum of the accepted local error estimates and the largest growth
    rate of a heading error per unit progress on reversing steps (0 going forward). More than
    ``max_steps`` steps tried (rejected ones too) raise :class:`TrainBudgetError`.
    """
    n = len(hitches)
    y = [float(v) for v in th_start]
    f = _rhs(m, hitches, 0.0, y)
    ps, ths, dths = [0.0], [list(y)], [list(f)]
    err_sum = 0.0
    if m.amount <= 0.0 or n == 0:
        return SegmentTrace(m, np.array(ps), np.array(ths).reshape(1, n),
                            np.array(dths).reshape(1, n)), 0.0, 0.0
    bounds = _hitch_speed_bounds(m, hitches)
    pmax = max(bounds) if bounds else 0.0
    hmax = m.amount if pmax <= 0.0 else min(m.amount, MAX_STEP_TRAVEL_M / pmax)
    # Forward on a line or arc the headings contract; reversing, on holonomic lines and on
    # pivots the hitch may push, and an error may grow by up to |v_h| / d per unit progress.
    pushing = m.fixed is not None or m.direction < 0
    growth = max(b / hz.drawbar_m for b, hz in zip(bounds, hitches)) if pushing else 0.0
    step = _step_of(m, hitches)
    amount = m.amount
    p, h = 0.0, min(hmax, 0.05 * amount + 1e-3)
    tried = 0
    while p < amount:
        tried += 1
        if tried > max_steps:
            raise TrainBudgetError(tried * n, n, amount, "needs more than")
        h = min(h, amount - p)
        # The 7th stage is evaluated at the 5th-order solution (FSAL; a61 = 0).
        y5, k6, err = step(p, h, y, f)
        if err <= tol or h <= 1e-9 * max(1.0, amount):
            p = amount if amount - (p + h) <= 1e-12 * max(1.0, amount) else p + h
            y, f = y5, k6
            ps.append(p)
            ths.append(y)
            dths.append(f)
            err_sum = err_sum * math.exp(growth * h) + err
        fac = 0.9 * (tol / err) ** 0.2 if err > 0.0 else 5.0
        h = min(hmax, h * min(5.0, max(0.2, fac)))
    return (SegmentTrace(m, np.array(ps), np.array(ths), np.array(dths), tried), err_sum,
            growth)


def _hermite(p: NDArray, nodes: SegmentTrace) -> NDArray[np.float64]:
    """Cubic Hermite interpolation of the headings at progress ``p``, shape (len(p), n)."""
    P = nodes.p
    if P.size == 1:
        return np.repeat(nodes.th[:1], p.size, axis=0)
    k = np.clip(np.searchsorted(P, p, side="right") - 1, 0, P.size - 2)
    h = (P[k + 1] - P[k])[:, None]
    t = ((p - P[k])[:, None]) / h
    t2, t3 = t * t, t * t * t
    h00, h10, h01, h11 = 2 * t3 - 3 * t2 + 1, t3 - 2 * t2 + t, -2 * t3 + 3 * t2, t3 - t2
    return (h00 * nodes.th[k] + h10 * h * nodes.dth[k] + h01 * nodes.th[k + 1]
            + h11 * h * nodes.dth[k + 1])


@dataclass
class TrainTrace:
    """Trailer headings along a whole plan.

    ``traces[i]`` holds the integration nodes of segment ``i``; headings elsewhere come from
    the cubic Hermite interpolant. ``error_bound_rad`` is the stated estimate of the largest
    heading error (see the module text).
    """

    segments: tuple[Segment, ...]
    hitches: tuple[Hitch, ...]
    traces: list[SegmentTrace]
    error_bound_rad: float

    @property
    def n(self) -> int:
        return len(self.hitches)

    def amount(self, i: int) -> float:
        """Progress of segment ``i`` (metres, or radians of turn for a pivot)."""
        return self.traces[i].motion.amount

    def headings(self, i: int, progress: ArrayLike) -> NDArray[np.float64]:
        """Trailer headings on segment ``i`` at ``progress``, shape (len(progress), n)."""
        p = np.atleast_1d(np.asarray(progress, dtype=float))
        return _hermite(np.clip(p, 0.0, self.amount(i)), self.traces[i])

    def rates(self, i: int, progress: ArrayLike) -> NDArray[np.float64]:
        """Trailer heading rates per unit progress on segment ``i``, exactly from the model
        at the interpolated headings, shape (len(progress), n)."""
        p = np.atleast_1d(np.asarray(progress, dtype=float))
        th = self.headings(i, p)
        m = self.traces[i].motion
        return np.array([_rhs(m, self.hitches, float(q), row) for q, row in zip(p, th)]
                        ).reshape(p.size, self.n)

    def tug_poses(self, i: int, progress: ArrayLike) -> NDArray[np.float64]:
        """The tug's poses on segment ``i`` at ``progress``, shape (len(progress), 3)."""
        p = np.atleast_1d(np.asarray(progress, dtype=float))
        a = self.amount(i)
        f = p / a if a > 0.0 else np.ones_like(p)
        return self.segments[i].poses_at_fraction(f)

    def poses(self, i: int, progress: ArrayLike) -> NDArray[np.float64]:
        """Every body's pose on segment ``i``: shape (len(progress), n + 1, 3), the tug first,
        then each trailer at its axle midpoint."""
        tug = self.tug_poses(i, progress)
        th = self.headings(i, progress)
        return chain_poses(tug, th, self.hitches)

    def end_headings(self) -> NDArray[np.float64]:
        return self.traces[-1].th[-1] if self.traces else np.zeros(self.n)


def chain_poses(tug: NDArray[np.float64], th: NDArray[np.float64],
                hitches: Sequence[Hitch]) -> NDArray[np.float64]:
    """Poses of every body from the tug's poses (m, 3) and the trailer headings (m, n)."""
    m, n = tug.shape[0], len(hitches)
    out = np.empty((m, n + 1, 3))
    out[:, 0] = tug
    x, y, t = tug[:, 0], tug[:, 1], tug[:, 2]
    for j, hz in enumerate(hitches):
        hx = x + hz.hitch_x_m * np.cos(t)
        hy = y + hz.hitch_x_m * np.sin(t)
        t = th[:, j]
        x = hx - hz.drawbar_m * np.cos(t)
        y = hy - hz.drawbar_m * np.sin(t)
        out[:, j + 1, 0], out[:, j + 1, 1], out[:, j + 1, 2] = x, y, t
    return out


def hitch_angles(poses: NDArray[np.float64]) -> NDArray[np.float64]:
    """Angle of each trailer to the body ahead (ahead minus trailer, wrapped to [-pi, pi)),
    from :meth:`TrainTrace.poses` output, shape (m, n)."""
    d = poses[:, :-1, 2] - poses[:, 1:, 2]
    return (d + math.pi) % (2.0 * math.pi) - math.pi


def trace_train(segments: Sequence[Segment], trailers: Sequence,
                start_headings: Sequence[float] | None = None,
                tol: float = LOCAL_TOL_RAD) -> TrainTrace:
    """Integrate the trailer headings along a plan.

    Parameters
    ----------
    segments : sequence of Segment
        The tug's planned route.
    trailers : sequence of Trailer (or Hitch)
        In towing order.
    start_headings : sequence of float, optional
        Trailer headings at the start, radians; default in line with the tug.
    tol : float
        Local error tolerance per step, radians.
    """
    segs = tuple(segments)
    hz = tuple(t if isinstance(t, Hitch) else Hitch(float(t.hitch_x_m), float(t.drawbar_m))
               for t in trailers)
    if start_headings is None:
        th0 = segs[0].start[2] if segs else 0.0
        y = [th0] * len(hz)
    else:
        y = [float(v) for v in start_headings]
    motions = [TugMotion.of(s) for s in segs]
    if hz:
        need = sum(fewest_steps(m, hz) for m in motions) * len(hz)
        if not need <= TRAIN_STEP_BUDGET:
            raise TrainBudgetError(need, len(hz), sum(s.length_m for s in segs),
                                   "would need")
    left = TRAIN_STEP_BUDGET / max(1, len(hz))
    traces, bound = [], 0.0
    for m in motions:
        tr, err, growth = integrate_segment(m, hz, y, tol, left)
        left -= tr.tried
        bound = bound * math.exp(growth * tr.motion.amount) + err
        traces.append(tr)
        y = list(tr.th[-1])
    return TrainTrace(segs, hz, traces, bound)
