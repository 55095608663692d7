"""The region a footprint sweeps along line, arc, clothoid and pivot segments, within a
stated tolerance.

A rigid body that moves continuously from placement ``P0`` to ``P1`` sweeps exactly
``P0 ∪ P1 ∪ (the region swept by its boundary)``: a point covered at some instant and not at
the start must have crossed the outline on the way (the boundary-sweep theorem of
swept-volume computation, e.g. Abdel-Malek, Blackmore and Joy, "Swept volumes: foundations,
perspectives and applications", 2006). So any simple polygon, convex or not, is swept by
sweeping its edges, and no decomposition is needed.

- A **translation** (a line segment) sweeps each edge into a parallelogram; for a convex
  footprint the whole result is the convex hull of the start and end placements. Exact.
- A **rotation** about a fixed centre ``Q`` (arcs rotate the body about the arc centre,
  pivots about the reference point) sweeps an edge exactly as follows. Split the edge at the
  foot of the perpendicular from ``Q`` so that every piece moves monotonically away from
  ``Q``; a circle of radius ``rho`` about ``Q`` then meets the piece at one polar angle
  ``alpha(rho)`` and the swept piece is ``{rho in [r1, r2], psi in [alpha(rho),
  alpha(rho) + phi]}``: bounded by the piece at the start, the arc traced by its far end,
  the piece at the end and the arc traced by its near end. The only approximation is drawing
  those two arcs as polylines: the far arc by a circumscribed polyline (tangents at equal
  steps, vertices at ``r2 / cos(h)``, outside the circle by at most ``r2 (sec h - 1)``), the
  near arc by chords (inside the circle by at most the sagitta ``r1 (1 - cos h)``). Both
  errors push the region outward, so the result CONTAINS the true swept region and exceeds
  it by at most the tolerance; ``h`` is chosen from the tolerance and the farthest vertex.
  Rotations are cut into chunks of at most 90 degrees so each piece stays a simple polygon.
- A **clothoid** (curvature linear in distance, sharpness ``sigma``) is cut into chunks of
  length ``l``; over each chunk the true motion is compared with a stand-in arc of the
  chunk's mean curvature (same length, same heading change) starting at the chunk's true
  start position with its heading set off by ``-d sigma l^2 / 16`` (``d`` the direction).
  Along the chunk the clothoid's heading minus the mean-curvature arc's is ``d sigma (u^2 -
  l u) / 2``, between 0 and ``-d sigma l^2 / 8``; the offset puts the stand-in's heading in
  the middle, so the two headings differ by at most ``|sigma| l^2 / 16`` everywhere, and
  their reference points by at most the integral of that, ``|sigma| l^3 / 16``
  (``|e^{ia} - e^{ib}| <= |a - b|``). A footprint point at distance ``r <= r_far`` from the
  reference point is therefore within ``dev = |sigma| l^2 (l + r_far) / 16`` of its stand-in
  place: half the ``r_far`` term of the arc started on the clothoid's own heading, so each
  chunk may be about 1.4 times as long and a clothoid needs about 0.7 times the parts. Each
  chunk is swept as that arc (a rotation, above) with the footprint grown by ``dev`` (a mitred
  offset, whose corners stick out a little further; its excess is taken off the arcs' share,
  or every part is grown round where a sharp corner's mitre would take too much), with the
  fewest chunks that keep ``dev`` within ``_CLOTHOID_SHARE`` (0.3) of the tolerance; the
  excess stays within the tolerance as for holonomic lines below. A chunk whose mean
  curvature is almost 0 uses the straight translation as its stand-in, with the arc's own
  deviation from it added to ``dev``.
- A **holonomic line that turns the body** (mecanum, swerve) translates at a constant rate
  while the heading turns linearly. Over a short chunk it differs from the constant-twist
  (circular) motion between the same two poses by a pure translation of at most
  ``rho * phi**2 / 8`` (the linear-interpolation error bound ``u(1-u)/2 max|g''|`` applied to
  ``g(u) = exp(i u phi)``), so each chunk is swept as a rotation and then grown by that bound.
  Where the body turns so little that its farthest vertex moves by at most a quarter of the
  tolerance (``r_far |phi|``), the line is swept as a translation of the start placement grown
  by ``r_far |phi|``: the circular stand-in's centre would lie so far away that rounding in
  its coordinates exceeds the tolerance.
  Those rotation chunks number about ``sqrt(L phi / (2 tol))``: they grow with the line's
  length. A long line is instead cut into chunks turning by at most ``2 dev / r_far`` (``dev``
  = 0.32 of the tolerance), however long: over a chunk the body's heading stays within
  ``ph / 2`` of the chunk's middle heading, so every footprint point stays within
  ``r_far ph / 2 <= dev`` of where the footprint at the middle heading puts it, and the chunk
  is swept as the exact translation of that footprint grown by ``dev`` (a mitred offset,
  limit 2: it contains the round offset and lies within ``2 dev`` of the outline). It
  contains the true region and exceeds it by at most ``dev + 2 dev`` = 0.96 of the
  tolerance. Each turning line takes whichever way makes fewer vertices.

Every segment's work is estimated from these chunk counts before anything is swept
(:func:`sweep_cost`); one beyond :data:`SWEEP_WORK_BUDGET` is refused as bad input
(:class:`SweepBudgetError`, which the route check names by route and segment).

Size: the module runs past 600 lines on purpose: every segment kind's sweep shares the footprint
preparation, the rotation pieces and the chunk counts that the work estimate reads, so split
by kind the parts would import each other's internals.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Sequence
from dataclasses import dataclass, replace

import numpy as np
import shapely
from numpy.typing import ArrayLike, NDArray
from shapely.geometry import Polygon
from shapely.geometry.base import BaseGeometry

from kinematics.errors import ValidationError
from kinematics.files.curves import CURVE_EXCESS_M
from kinematics.motion.segments import Segment

#: Default bound on how far the swept region may exceed the true one, metres.
DEFAULT_TOLERANCE_M = 0.002
#: A clearance this little below the margin (or a margin zone's) still keeps it, metres:
#: the rounding of floating-point distances (a body set exactly at the margin measures
#: 0.04999999999999998 m from a wall 0.05 m away). One micrometre: far below the check's
#: tolerance and the millimetres every report rounds to.
MARGIN_SLACK_M = 1e-6


def sweep_allowance(tolerance_m: float) -> float:
    """How far a check's swept regions may exceed the true ones for a stated ``tolerance_m``:
    the tolerance less what flattening the floor plan's curves may add
    (:data:`kinematics.files.curves.CURVE_EXCESS_M`, 0.5 mm), never under half of it. With
    the default 2 mm the swept region gets 1.5 mm, so a clearance to a drawn circle or arc is
    still at most 2 mm below the truth (1.5 mm sweep + 0.5 mm flattening).

    >>> sweep_allowance(0.002)
    0.0015
    """
    t = float(tolerance_m)
    return max(t - CURVE_EXCESS_M, 0.5 * t)


#: Largest rotation swept as one piece (keeps every edge piece a simple polygon).
MAX_CHUNK_RAD = math.pi / 2.0
#: Share of the tolerance spent on drawing arcs; the rest is slack for rounding.
_ARC_SHARE = 0.95
#: Grid of the fallback union (see :func:`union_parts`), metres.
UNION_GRID_M = 1e-9
#: Buffer segments per quarter circle when growing holonomic chunks.
_QUAD_SEGS = 4
#: A holonomic line whose farthest vertex turns by at most this share of the tolerance is
#: swept as a translation grown by that turn.
_TINY_TURN_SHARE = 0.25
#: Share of the tolerance a turning holonomic line swept as grown translations grows the
#: footprint by (spent three times: the growth, the body's own turn within a chunk, and the
#: mitred corners' excess, at most one more growth at a mitre limit of 2).
_GROWN_SHARE = 0.32
#: Most work one segment's sweep may take, in polygon vertices made (plus
#: :data:`_CHUNK_WORK` per chunk made one at a time in Python): about 2 s on one core of a
#: 2020s laptop. :func:`sweep_cost` estimates it before any sweeping; a segment beyond it is
#: refused (:class:`SweepBudgetError`). The demo's routes take under 2 000 per segment.
SWEEP_WORK_BUDGET = 1_500_000
#: Work counted per chunk swept by its own Python call (measured: one rotation chunk costs
#: about as much as 100 vertices made in one vectorised call).
_CHUNK_WORK = 100

@dataclass(frozen=True, eq=False)
class Footprint:
    """A footprint outline prepared once for sweeping: counter-clockwise vertex ring (body
    frame, not closed), whether it is convex, and its farthest vertex radius."""

    ring: NDArray[np.float64]
    convex: bool
    r_far_m: float
    polygon: Polygon

    @property
    def key(self) -> tuple[tuple[float, float], ...]:
        """A hashable value identifying the outline (for caches)."""
        return tuple(map(tuple, self.ring.tolist()))


FootprintLike = Footprint | Polygon | Sequence[Sequence[float]] | NDArray[np.float64]


def prepare_footprint(footprint: FootprintLike) -> Footprint:
    """The footprint as a :class:`Footprint` (returned unchanged if it already is one).

    Parameters
    ----------
    footprint : Footprint, Polygon or sequence of (x, y)
        Body frame, metres; a simple polygon.
    """
    if isinstance(footprint, Footprint):
        return footprint
    if isinstance(footprint, Polygon):
        pts = np.asarray(footprint.exterior.coords, dtype=float)
    else:
        pts = np.asarray(footprint, dtype=float).reshape(-1, 2)
    if len(pts) > 1 and np.all(pts[0] == pts[-1]):
        pts = pts[:-1]
    keep = np.r_[True, np.any(np.diff(pts, axis=0) != 0.0, axis=1)]
    pts = pts[keep]
    if len(pts) < 3:
        raise ValueError("a footprint needs at least 3 distinct points")
    x, y = pts[:, 0], pts[:, 1]
    if np.dot(x, np.roll(y, -1)) - np.dot(np.roll(x, -1), y) < 0.0:
        pts = pts[::-1]
    ring = np.ascontiguousarray(pts)
    ring.setflags(write=False)
    return Footprint(ring, _is_convex(ring), float(np.hypot(ring[:, 0], ring[:, 1]).max()),
                     Polygon(ring))


def footprint_ring(footprint: FootprintLike) -> NDArray[np.float64]:
    """The footprint outline as an ``(N, 2)`` array, counter-clockwise, not closed."""
    return prepare_footprint(footprint).ring


def as_polygon(footprint: FootprintLike) -> Polygon:
    """The footprint as a shapely polygon (body frame)."""
    if isinstance(footprint, Polygon):
        return footprint
    return prepare_footprint(footprint).polygon


def _place(ring: NDArray[np.float64], poses: NDArray[np.float64]) -> NDArray[np.float64]:
    """Footprint vertices at each pose, shape ``(len(poses), N, 2)``."""
    c = np.cos(poses[:, 2])[:, None]
    s = np.sin(poses[:, 2])[:, None]
    x = poses[:, 0:1] + c * ring[None, :, 0] - s * ring[None, :, 1]
    y = poses[:, 1:2] + s * ring[None, :, 0] + c * ring[None, :, 1]
    return np.stack([x, y], axis=-1)


def _place_one(ring: NDArray[np.float64], pose: Sequence[float]) -> NDArray[np.float64]:
    """Footprint vertices at one pose, shape ``(N, 2)`` (the same map as :func:`_place`)."""
    c, s = math.cos(pose[2]), math.sin(pose[2])
    out = np.empty_like(ring)
    out[:, 0] = pose[0] + c * ring[:, 0] - s * ring[:, 1]
    out[:, 1] = pose[1] + s * ring[:, 0] + c * ring[:, 1]
    return out


def placed_footprints(footprint: FootprintLike, poses: ArrayLike) -> NDArray[np.object_]:
    """The footprint placed at each pose, as an array of shapely polygons.

    Parameters
    ----------
    footprint : Polygon or sequence of (x, y)
        Body frame: x forward, y left, origin at the reference point.
    poses : array_like, shape (N, 3)
        ``(x_m, y_m, heading_rad)`` in the plan frame.

    Returns
    -------
    numpy.ndarray of Polygon, shape (N,)

    Examples
    --------
    >>> p = placed_footprints([(0, 0), (1, 0), (1, 1), (0, 1)], [(2.0, 0.0, 0.0)])
    >>> p[0].bounds
    (2.0, 0.0, 3.0, 1.0)
    """
    ring = prepare_footprint(footprint).ring
    poses = np.atleast_2d(np.asarray(poses, dtype=float))
    return shapely.polygons(_place(ring, poses))


def _is_convex(ring: NDArray[np.float64]) -> bool:
    d1 = np.roll(ring, -1, axis=0) - ring
    d2 = np.roll(d1, -1, axis=0)
    cross = d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]
    return bool(np.all(cross >= -1e-12 * max(1.0, float(np.abs(ring).max()) ** 2)))


def _rotate(p: NDArray[np.float64], ang: float) -> NDArray[np.float64]:
    c, s = math.cos(ang), math.sin(ang)
    out = np.empty_like(p)
    out[..., 0] = c * p[..., 0] - s * p[..., 1]
    out[..., 1] = s * p[..., 0] + c * p[..., 1]
    return out


def arc_steps(r_max: float, phi: float, tol: float) -> int:
    """Polyline steps so an arc of radius ``r_max`` turning ``phi`` is drawn within ``tol``.

    The circumscribed polyline lies outside the circle by ``r (sec h - 1)`` with half-step
    ``h``; chords lie inside by ``r (1 - cos h)``, which is smaller. So
    ``h = acos(1 / (1 + tol / r))``.
    """
    if r_max <= tol or phi == 0.0:
        return 1
    h = math.acos(1.0 / (1.0 + tol / r_max))
    return max(1, math.ceil(abs(phi) / (2.0 * h)))


def _monotone_pieces(rel: NDArray[np.float64], sense: float) -> NDArray[np.float64]:
    """Leading edge pieces of the ring (relative to the centre), split at the foot of the
    perpendicular from the centre.

    Returns ``(M, 2, 2)``: near end first, far end second, so each piece moves away from
    the centre monotonically. Only pieces whose velocity (rotation of sign ``sense``) points
    out of the footprint are kept: a point the body newly covers is first reached by the
    outline moving outward over it, so trailing pieces add nothing to the swept region.
    """
    return monotone_pieces_many(rel[None], np.array([sense], dtype=float))[0]


def monotone_pieces_many(rel: NDArray[np.float64], sense: NDArray[np.float64],
                         moving: NDArray[np.bool_] | None = None
                         ) -> tuple[NDArray[np.float64], NDArray[np.intp]]:
    """:func:`_monotone_pieces` of many rings ``rel`` ``(K, N, 2)`` at once, ring ``k``
    rotating with sign ``sense[k]``; a ring whose ``moving[k]`` is false has none.

    Returns the pieces ``(M, 2, 2)`` ring by ring, each ring's in the one-ring order (whole
    edges, then the near and far halves of split edges), and the ring each belongs to.
    """
    a = rel
    b = np.roll(rel, -1, axis=1)
    d = b - a
    dd = np.einsum("kij,kij->ki", d, d)
    ok = dd > 1e-24
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(ok, -np.einsum("kij,kij->ki", a, d) / np.where(ok, dd, 1.0), 0.0)
    split = ok & (t > 1e-9) & (t < 1.0 - 1e-9)
    foot = a + t[..., None] * d
    first = np.concatenate([a, a, foot], axis=1)                     # (K, 3N, 2)
    second = np.concatenate([b, foot, b], axis=1)
    pieces = np.stack([first, second], axis=2)                       # (K, 3N, 2, 2)
    valid = np.concatenate([ok & ~split, split, split], axis=1)
    # Counter-clockwise ring: the outward normal of edge direction (dx, dy) is (dy, -dx);
    # the velocity of point p under rotation is sense * (-py, px).
    dirs = pieces[:, :, 1] - pieces[:, :, 0]
    mid = 0.5 * (pieces[:, :, 0] + pieces[:, :, 1])
    vn = np.asarray(sense, dtype=float)[:, None] * (-mid[..., 1] * dirs[..., 1]
                                                     - mid[..., 0] * dirs[..., 0])
    length = np.hypot(dirs[..., 0], dirs[..., 1])
    valid &= (vn >= 0.0) & (length > 1e-12)
    if moving is not None:
        valid &= np.asarray(moving, dtype=bool)[:, None]
    pc = pieces[valid]
    owner = np.broadcast_to(np.arange(len(rel))[:, None], valid.shape)[valid]
    r0 = np.hypot(pc[:, 0, 0], pc[:, 0, 1])
    r1 = np.hypot(pc[:, 1, 0], pc[:, 1, 1])
    flip = r0 > r1
    pc[flip] = pc[flip][:, ::-1]
    return pc, owner


def _edge_rotation_rings(pieces: NDArray[np.float64], phi: float, n: int
                         ) -> NDArray[np.float64]:
    """Outline of the region each monotone piece sweeps rotating by ``phi`` about 0.

    Shape ``(M, 2n + 3, 2)``: near end, far end, circumscribed far arc (n vertices), far end
    rotated, near end rotated, inscribed near arc (n - 1 vertices) back to the start.
    """
    near, far = pieces[:, 0], pieces[:, 1]
    r1 = np.hypot(near[:, 0], near[:, 1])
    r2 = np.hypot(far[:, 0], far[:, 1])
    a1 = np.arctan2(near[:, 1], near[:, 0])
    a2 = np.arctan2(far[:, 1], far[:, 0])
    h = phi / (2.0 * n)
    k_out = (2.0 * np.arange(n) + 1.0) * h
    ang_out = a2[:, None] + k_out[None, :]
    rad_out = (r2 / math.cos(h))[:, None]
    outer = np.stack([rad_out * np.cos(ang_out), rad_out * np.sin(ang_out)], axis=-1)
    k_in = phi * (1.0 - np.arange(1, n) / n)
    ang_in = a1[:, None] + k_in[None, :]
    inner = np.stack([r1[:, None] * np.cos(ang_in), r1[:, None] * np.sin(ang_in)], axis=-1)
    far_r = _rotate(far, phi)
    near_r = _rotate(near, phi)
    return np.concatenate([near[:, None], far[:, None], outer, far_r[:, None],
                           near_r[:, None], inner], axis=1)


def rotation_parts(ring_world: NDArray[np.float64], centre: Sequence[float], phi: float,
                   tol: float) -> list[NDArray[np.float64]]:
    """Polygon outlines whose union contains the region ``ring_world`` sweeps rotating by
    ``phi`` (signed, rad) about ``centre``, and exceeds it by at most ``tol``.

    Returns a list of ``(K, V, 2)`` coordinate arrays (placements, then edge pieces).
    """
    q = np.asarray(centre, dtype=float)
    rel = ring_world - q
    r_max = float(np.hypot(rel[:, 0], rel[:, 1]).max())
    m = max(1, math.ceil(abs(phi) / MAX_CHUNK_RAD - 1e-12))
    phi_c = phi / m
    n = arc_steps(r_max, phi_c, tol)
    base = _monotone_pieces(rel, math.copysign(1.0, phi))
    placements = np.stack([_rotate(rel, k * phi_c) for k in range(m + 1)]) + q
    out = [placements]
    if abs(phi_c) * r_max <= 1e-12:
        return out
    chunk0 = _edge_rotation_rings(base, phi_c, n)
    for k in range(m):
        out.append(_rotate(chunk0, k * phi_c) + q)
    return out


def translation_parts(ring_world: NDArray[np.float64], v: Sequence[float], convex: bool
                      ) -> list[NDArray[np.float64]]:
    """Polygon outlines whose union is exactly the region ``ring_world`` sweeps moving by
    ``v``: each edge's parallelogram plus both placements (one hull if convex)."""
    v = np.asarray(v, dtype=float)
    end = ring_world + v
    if convex or float(np.hypot(*v)) <= 1e-12:
        return [np.stack([ring_world, end])]
    a = ring_world
    b = np.roll(ring_world, -1, axis=0)
    d = b - a
    # Leading edges only (outward normal (dy, -dx) of a counter-clockwise ring along v).
    lead = d[:, 1] * v[0] - d[:, 0] * v[1]
    keep = lead > 1e-12
    quads = np.stack([a[keep], b[keep], b[keep] + v, a[keep] + v], axis=1)
    return [np.stack([ring_world, end]), quads]


def _polys(parts: list[NDArray[np.float64]], hull_first: bool) -> NDArray[np.object_]:
    geoms = []
    for k, arr in enumerate(parts):
        if hull_first and k == 0 and arr.shape[0] == 2:
            geoms.append(shapely.convex_hull(shapely.multipoints(arr.reshape(-1, 2))))
            continue
        geoms.extend(shapely.polygons(arr))
    return np.asarray(geoms, dtype=object)


def union_parts(geoms: NDArray[np.object_]) -> BaseGeometry:
    """The union of swept parts, made robustly, containing every part.

    GEOS's floating-point union (seen with GEOS 3.14) can drop a piece of a part where many
    nearly coincident edges meet: 3 cm in cases random tests found. The union is therefore
    made on a ``UNION_GRID_M`` grid (snap rounding, which does not lose area) and grown by two
    grid steps with mitred corners, so it still contains every part and exceeds the exact
    union by far less than the slack the sweep keeps below its tolerance.
    """
    geoms = geoms[~shapely.is_empty(geoms)]
    bad = ~shapely.is_valid(geoms)
    if bad.any():
        geoms = geoms.copy()
        geoms[bad] = shapely.make_valid(geoms[bad])
    if len(geoms) == 1:
        return geoms[0]
    out = shapely.union_all(geoms, grid_size=UNION_GRID_M)
    return shapely.buffer(out, 2.0 * UNION_GRID_M, join_style="mitre")


def _holonomic_chunks(seg: Segment, tol: float) -> tuple[int, float]:
    """Chunks for a turning holonomic line swept as rotations (module docstring), and the
    translation bound of each chunk: the fewest chunks ``m`` with
    ``dev = l ph^2 / (16 sin(ph / 2)) <= tol / 4`` for chunks of length ``l = L / m`` and turn
    ``ph = phi / m`` (about ``sqrt(L phi / (2 tol))``; :func:`sweep_cost` bounds it first)."""
    ell, phi = seg.length_m, abs(seg.turn_rad)
    m = max(1, math.ceil(phi / MAX_CHUNK_RAD - 1e-12))
    while True:
        le, ph = ell / m, phi / m
        dev = 0.0 if ph == 0.0 else le * ph * ph / (16.0 * math.sin(ph / 2.0))
        if dev <= 0.25 * tol:
            return m, dev
        m = max(m + 1, math.ceil(m * math.sqrt(dev / (0.25 * tol))))


def _turning_translation_chunks(seg: Segment, r_far: float, tol: float) -> int:
    """Chunks for a turning holonomic line swept as translations of the footprint grown by
    ``dev = _GROWN_SHARE * tol`` (module docstring): each chunk turns by at most
    ``2 dev / r_far``."""
    return max(1, math.ceil(abs(seg.turn_rad) * r_far / (2.0 * _GROWN_SHARE * tol) - 1e-12))


class SweepBudgetError(ValidationError):
    """A segment whose sweep would take more than :data:`SWEEP_WORK_BUDGET`: bad input
    (a line of kilometres turning the body, a tolerance far below the default), refused
    before any sweeping. ``work`` is the estimate; the route checker names route and segment
    (``file`` and ``place`` are left empty here)."""

    def __init__(self, seg: Segment, work: float, tolerance_m: float) -> None:
        self.work = float(work)
        super().__init__("", "", _budget_text(seg, work))

    @property
    def message(self) -> str:
        """As :attr:`SwatheInputError.message`; just the reason while no file is named."""
        return super().message if self.file or self.place else self.expected


def _budget_text(seg: Segment, work: float) -> str:
    turn = f" whose body turns {math.degrees(abs(seg.turn_rad)):.4g} deg" \
        if seg.kind == "line" and seg.turn_rad else ""
    what = {"line": f"this {seg.length_m:.6g} m line{turn}",
            "arc": f"this {seg.length_m:.6g} m arc",
            "clothoid": f"this {seg.length_m:.6g} m clothoid",
            "pivot": f"this {math.degrees(abs(seg.turn_rad)):.4g} deg pivot"}.get(seg.kind,
                                                                                "this segment")
    return (f"sweeping {what} would make about {work:.2g} polygon vertices (at most "
            f"{SWEEP_WORK_BUDGET:.2g} per segment); split it with waypoints or raise the "
            f"tolerance")


def _rotation_work(n_ring: int, r_max: float, phi: float, tol: float) -> float:
    """Vertices :func:`rotation_parts` makes for a ring of ``n_ring`` vertices."""
    m = max(1, math.ceil(abs(phi) / MAX_CHUNK_RAD - 1e-12))
    n = arc_steps(r_max, phi / m, tol)
    return (m + 1) * n_ring + m * 2 * n_ring * (2 * n + 3)


def _holonomic_method(fp: Footprint, seg: Segment, tol: float) -> tuple[str, float]:
    """How a turning holonomic line is swept (``"rotations"`` or ``"translations"``,
    whichever makes less work; module docstring) and that work."""
    n_ring = len(fp.ring)
    m_r, dev = _holonomic_chunks(seg, tol)
    ph = abs(seg.turn_rad) / m_r
    rho = (seg.length_m / m_r) / (2.0 * math.sin(ph / 2.0))
    rot_tol = tol - dev - dev / math.cos(math.pi / (4 * _QUAD_SEGS))
    # Each chunk one rotation call; the buffer of every part roughly triples its vertices.
    rot = m_r * (_CHUNK_WORK + 3.0 * _rotation_work(n_ring, rho + fp.r_far_m, ph, rot_tol))
    m_t = _turning_translation_chunks(seg, fp.r_far_m, tol)
    g = len(_grown(fp.key, _GROWN_SHARE * tol).ring)
    # Convex: one ring of 2 g vertices per chunk; else both placements and the leading quads.
    per = 2 * g + 1 if fp.convex else 2 * (g + 1) + 5 * g
    trans = _CHUNK_WORK + m_t * float(per)
    return ("rotations", rot) if rot < trans else ("translations", trans)


def sweep_cost(footprint: FootprintLike, seg: Segment,
               tolerance_m: float = DEFAULT_TOLERANCE_M) -> float:
    """Estimated work of :func:`swept_parts` for ``seg``, in polygon vertices made (plus
    :data:`_CHUNK_WORK` per chunk swept by its own call), computed from the chunk counts
    alone, before any sweeping: compare with :data:`SWEEP_WORK_BUDGET`."""
    fp = prepare_footprint(footprint)
    n_ring, r_far = len(fp.ring), fp.r_far_m
    tol = _ARC_SHARE * float(tolerance_m)
    if seg.kind == "clothoid":
        m, _dev = clothoid_chunks(seg, r_far, tol)
        kmax = float(seg.max_abs_curvature)
        m = max(m, math.ceil(seg.length_m * kmax / MAX_CHUNK_RAD - 1e-12))
        if kmax <= 0.0:
            return m * 6.0 * n_ring
        le = seg.length_m / m
        n = arc_steps(1.0 / kmax + r_far, le * kmax, tol)
        return m * (2.0 * n_ring + 2 * n_ring * (2 * n + 3))
    if seg.kind == "pivot" or (seg.kind == "arc" and seg.curvature != 0.0):
        r_c = 0.0 if seg.kind == "pivot" else abs(1.0 / seg.curvature)
        return _CHUNK_WORK + _rotation_work(n_ring, r_c + r_far, seg.turn_rad, tol)
    turn = abs(seg.turn_rad) * r_far
    if seg.kind == "line" and turn > _TINY_TURN_SHARE * tol and seg.length_m > 1e-12:
        return _holonomic_method(fp, seg, tol)[1]
    if seg.kind == "line" and turn > 1e-12 and seg.length_m <= 1e-12:
        return _CHUNK_WORK + _rotation_work(n_ring, r_far, seg.turn_rad, tol)
    return _CHUNK_WORK + 6.0 * n_ring


def _check_budget(fp: Footprint, seg: Segment, tolerance_m: float) -> None:
    work = sweep_cost(fp, seg, tolerance_m)
    if not work <= SWEEP_WORK_BUDGET:
        raise SweepBudgetError(seg, work, tolerance_m)


@functools.lru_cache(maxsize=64)
def _grown(fp_key: tuple, dev: float) -> Footprint:
    """The footprint grown by ``dev`` with mitred corners (limit 2: no point more than
    ``2 dev`` from the outline, and the round offset inside)."""
    ring = np.array(fp_key, dtype=float)
    return prepare_footprint(shapely.buffer(Polygon(ring), dev, join_style="mitre",
                                            mitre_limit=2.0))


def _grown_translation_parts(fp: Footprint, seg: Segment, tol: float) -> NDArray[np.object_]:
    """A turning holonomic line swept chunk by chunk as translations of the footprint grown
    by ``dev``, each at the chunk's middle heading (module docstring): ``m`` does not grow
    with the line's length, only with its turn times the farthest vertex radius."""
    dev = _GROWN_SHARE * tol
    g = _grown(fp.key, dev)
    m = _turning_translation_chunks(seg, fp.r_far_m, tol)
    f = np.linspace(0.0, 1.0, m + 1)
    poses = seg.poses_at_fraction(f)
    mid = seg.poses_at_fraction(0.5 * (f[:-1] + f[1:]))[:, 2]
    a = poses[:-1].copy()
    b = poses[1:].copy()
    a[:, 2] = mid
    b[:, 2] = mid
    pa, pb = _place(g.ring, a), _place(g.ring, b)
    v = (b[:, :2] - a[:, :2])[:, None, :]                        # (m, 1, 2)
    d = np.roll(pa, -1, axis=1) - pa                              # (m, N, 2)
    cross = d[..., 0] * v[..., 1] - d[..., 1] * v[..., 0]         # < 0: a leading edge
    if g.convex:
        # The Minkowski sum of a convex ring and the segment [0, v], drawn directly: every
        # vertex twice, moved by v after (slot 1) or before (slot 0) a leading edge (outward
        # normal (dy, -dx) along v), so the leading chain is the end placement's and the
        # trailing chain the start's, joined by the two edges along v (repeated points where
        # a vertex is not a joint). The same region as the convex hull of both placements.
        lead = cross < 0.0
        out = np.empty((len(pa), 2 * pa.shape[1], 2))
        out[:, 0::2] = pa + np.roll(lead, 1, axis=1)[..., None] * v
        out[:, 1::2] = pa + lead[..., None] * v
        return np.asarray(shapely.polygons(out), dtype=object)
    # Leading edges only, as translation_parts: the placements and their parallelograms
    # are exactly the region a translation sweeps.
    keep = cross < -1e-12 * max(1.0, float(np.abs(pa).max()))
    a_e, b_e = pa[keep], np.roll(pa, -1, axis=1)[keep]
    vv = np.broadcast_to(v, pa.shape)[keep]
    quads = np.stack([a_e, b_e, b_e + vv, a_e + vv], axis=1)
    return np.concatenate([shapely.polygons(pa), shapely.polygons(pb),
                           shapely.polygons(quads) if len(quads) else []]).astype(object)


def _rigid_centre(a: Sequence[float], b: Sequence[float]) -> NDArray[np.float64]:
    """Fixed point of the rotation by ``b[2] - a[2]`` carrying position a to position b."""
    phi = b[2] - a[2]
    c, s = math.cos(phi), math.sin(phi)
    rhs = np.array([b[0] - (c * a[0] - s * a[1]), b[1] - (s * a[0] + c * a[1])])
    m = np.array([[1.0 - c, s], [-s, 1.0 - c]])
    return np.linalg.solve(m, rhs)


def clothoid_chunks(seg: Segment, r_far: float, tol: float) -> tuple[int, float]:
    """The fewest chunks of a clothoid whose stand-in deviation ``dev`` stays within
    ``_CLOTHOID_SHARE`` of the tolerance, and that ``dev`` (module docstring)."""
    ell = seg.length_m
    target = _CLOTHOID_SHARE * tol
    sigma = abs(seg.sharpness)
    if sigma == 0.0 or ell == 0.0:
        return 1, 0.0
    # dev(l) = sigma l^2 (l + r_far) / 16 grows with l and is at least both sigma l^3 / 16
    # and sigma r_far l^2 / 16, so the longest chunk allowed is at most the smaller of the
    # lengths those two give: start from the chunk count that length needs, count up.
    l_max = (16.0 * target / sigma) ** (1.0 / 3.0)
    if r_far > 0.0:
        l_max = min(l_max, math.sqrt(16.0 * target / (sigma * r_far)))
    m = max(1, math.ceil(ell / l_max - 1e-9))
    while clothoid_deviation(seg, r_far, ell / m) > target:
        m += 1
    return m, clothoid_deviation(seg, r_far, ell / m)


#: Share of the tolerance a clothoid chunk's stand-in may deviate by (it is spent twice, once
#: growing the parts and once as excess; the arcs get what is left). 0.3, not 0.4: the band
#: exceeds the dense union by at most ~1.7 mm either way, but the boundary Hausdorff
#: distance (which also counts a notch of a non-convex footprint that the band fills) came
#: to 2.23 mm with 0.4 on tests/test_clothoid.py's reversing case, 2.07 mm with 0.3 (found
#: by trying; the bound above is on the band's excess, not on that distance).
_CLOTHOID_SHARE = 0.3
#: A clothoid chunk with mean |curvature| below this (1/m) is swept as a translation.
_STRAIGHT_CHUNK_PER_M = 1e-6


def clothoid_deviation(seg: Segment, r_far: float, le: float) -> float:
    """The stand-in deviation ``sigma l^2 (l + r_far) / 16`` of chunks of ``le`` (module
    docstring: each chunk's stand-in arc starts ``clothoid_heading_offset`` off the clothoid's
    heading)."""
    sigma = abs(seg.sharpness)
    return sigma * le * le * (le + r_far) / 16.0


def clothoid_heading_offset(seg: Segment, le: float) -> float:
    """The heading ``-d sigma l^2 / 16`` a chunk's stand-in arc starts off the clothoid's by,
    the middle of the range ``[min(0, -d sigma l^2 / 8), max(0, -d sigma l^2 / 8)]`` their
    difference takes along a chunk of ``le`` (``d`` the direction, ``sigma`` signed)."""
    return -seg.direction * seg.sharpness * le * le / 16.0


def _rotation_chunks(ring: NDArray[np.float64], starts: NDArray[np.float64],
                     kap: NDArray[np.float64], phi: NDArray[np.float64], tol: float,
                     keep_end: NDArray[np.bool_] | None = None) -> NDArray[np.object_]:
    """:func:`rotation_parts` of many chunks at once (each turning by at most
    ``MAX_CHUNK_RAD``): chunk ``k`` places the footprint at ``starts[k]`` and rotates it by
    ``phi[k]`` about the centre of curvature ``1 / kap[k]``. The same polygons as one call
    per chunk, with the arcs of every chunk drawn with the most steps any of them needs.
    ``keep_end`` (default all) says which chunks keep their end placement: a chunk followed by
    another one that starts where it truly ends may drop it (see :func:`_clothoid_parts`)."""
    placed = _place(ring, starts)                                  # (m, N, 2)
    r = 1.0 / kap
    q = np.stack([starts[:, 0] - r * np.sin(starts[:, 2]),
                  starts[:, 1] + r * np.cos(starts[:, 2])], axis=-1)
    rel = placed - q[:, None, :]
    r_max = np.hypot(rel[..., 0], rel[..., 1]).max(axis=1)
    n = max(arc_steps(float(rm), float(ph), tol) for rm, ph in zip(r_max, phi))
    c, s_ = np.cos(phi)[:, None], np.sin(phi)[:, None]
    end = np.stack([c * rel[..., 0] - s_ * rel[..., 1], s_ * rel[..., 0] + c * rel[..., 1]],
                   axis=-1) + q[:, None, :]
    if keep_end is not None:
        end = end[keep_end]
    out = list(shapely.polygons(placed)) + list(shapely.polygons(end))
    # Monotone leading pieces of every chunk (as _monotone_pieces, chunk by chunk).
    pc, chunk = monotone_pieces_many(rel, np.sign(phi), np.abs(phi) * r_max > 1e-12)
    if pc.shape[0]:
        rings = _edge_rotation_rings_many(pc, phi[chunk], n) + q[chunk][:, None, :]
        out.extend(shapely.polygons(rings))
    return np.asarray(out, dtype=object)


def _edge_rotation_rings_many(pieces: NDArray[np.float64], phi: NDArray[np.float64], n: int
                              ) -> NDArray[np.float64]:
    """:func:`_edge_rotation_rings` with one rotation angle per piece."""
    near, far = pieces[:, 0], pieces[:, 1]
    r1 = np.hypot(near[:, 0], near[:, 1])
    r2 = np.hypot(far[:, 0], far[:, 1])
    a1 = np.arctan2(near[:, 1], near[:, 0])
    a2 = np.arctan2(far[:, 1], far[:, 0])
    h = phi / (2.0 * n)
    k_out = (2.0 * np.arange(n) + 1.0)[None, :] * h[:, None]
    ang_out = a2[:, None] + k_out
    rad_out = (r2 / np.cos(h))[:, None]
    outer = np.stack([rad_out * np.cos(ang_out), rad_out * np.sin(ang_out)], axis=-1)
    k_in = phi[:, None] * (1.0 - np.arange(1, n)[None, :] / n)
    ang_in = a1[:, None] + k_in
    inner = np.stack([r1[:, None] * np.cos(ang_in), r1[:, None] * np.sin(ang_in)], axis=-1)
    c, s = np.cos(phi), np.sin(phi)
    far_r = np.stack([c * far[:, 0] - s * far[:, 1], s * far[:, 0] + c * far[:, 1]], axis=-1)
    near_r = np.stack([c * near[:, 0] - s * near[:, 1], s * near[:, 0] + c * near[:, 1]],
                      axis=-1)
    return np.concatenate([near[:, None], far[:, None], outer, far_r[:, None],
                           near_r[:, None], inner], axis=1)


def _clothoid_parts(ring: NDArray[np.float64], convex: bool, r_far: float, seg: Segment,
                    tol: float) -> tuple[NDArray[np.object_], float]:
    m, dev = clothoid_chunks(seg, r_far, tol)
    # Each chunk one rotation piece (at most MAX_CHUNK_RAD), as rotation_parts would cut it.
    m = max(m, math.ceil(seg.length_m * seg.max_abs_curvature / MAX_CHUNK_RAD - 1e-12))
    dev = clothoid_deviation(seg, r_far, seg.length_m / m)
    le = seg.length_m / m
    st = np.linspace(0.0, seg.length_m, m + 1)
    poses = seg.poses_at(st)
    # Every chunk's stand-in starts at the true position, its heading set off so that the
    # heading difference along the chunk swings evenly about 0 (module docstring).
    starts = poses[:-1].copy()
    starts[:, 2] += clothoid_heading_offset(seg, le)
    kap = seg.curvature_at(0.5 * (st[:-1] + st[1:]))
    # Straight stand-ins deviate from the arc of their chunk by |k| l^2 / 2 + r_far |k| l.
    straight_dev = _STRAIGHT_CHUNK_PER_M * (le * le / 2.0 + r_far * le)
    dev_all = dev + (straight_dev if np.any(np.abs(kap) < _STRAIGHT_CHUNK_PER_M) else 0.0)
    # Grow the footprint by dev once (a mitred offset contains the round one) instead of
    # buffering every part: the placements of a grown outline are the grown placements.
    grown = prepare_footprint(shapely.buffer(Polygon(ring), dev_all, join_style="mitre",
                                             mitre_limit=2.0))
    over = float(shapely.hausdorff_distance(grown.polygon, Polygon(ring))) - dev_all
    rot_tol = tol - dev_all - (dev_all + max(over, 0.0))
    if rot_tol <= 0.1 * tol:  # a sharp corner's mitre: buffer the parts round instead
        rot_tol = tol - dev_all - dev_all / math.cos(math.pi / (4 * _QUAD_SEGS))
        grown = None
    else:
        ring, convex = grown.ring, grown.convex
    d = seg.direction
    curved = np.abs(kap) >= _STRAIGHT_CHUNK_PER_M
    geoms: list = []
    if curved.any():
        # A stand-in's end placement lies inside its start placement and the sweep of its
        # leading edge pieces (a point covered at the end and not at the start was crossed
        # by a leading piece on the way): so only the last chunk of a run keeps it.
        keep_end = np.r_[~curved[1:], True][curved]
        geoms.extend(_rotation_chunks(ring, starts[curved], kap[curved],
                                      d * le * kap[curved], rot_tol, keep_end))
    for k in np.flatnonzero(~curved):
        placed = _place_one(ring, starts[k])
        th = starts[k, 2]
        v = (d * le * math.cos(th), d * le * math.sin(th))
        geoms.extend(_polys(translation_parts(placed, v, convex), convex))
    return np.asarray(geoms, dtype=object), (0.0 if grown is not None else dev_all)


@functools.lru_cache(maxsize=64)
def _footprint_of_key(fp_key: tuple) -> Footprint:
    """:func:`prepare_footprint` of a :attr:`Footprint.key`, kept (every clothoid of a check
    starts from the same footprint)."""
    return prepare_footprint(np.array(fp_key, dtype=float))


@functools.lru_cache(maxsize=1024)
def _local_clothoid_parts(fp_key: tuple, kappa0: float, kappa1: float, length_m: float,
                          direction: int, tol: float) -> tuple[NDArray[np.object_], float]:
    """:func:`_clothoid_parts` of the clothoid starting at ``(0, 0, 0)``, kept: its parts
    depend on the pose only through a rigid motion, and a route's CC turns of one radius
    share their clothoids (every corner eases in and out along the same two)."""
    from kinematics.motion.segments import clothoid

    fp = _footprint_of_key(fp_key)
    seg = clothoid((0.0, 0.0, 0.0), kappa0, kappa1, length_m, direction)
    return _clothoid_parts(fp.ring, fp.convex, fp.r_far_m, seg, tol)


@functools.lru_cache(maxsize=1024)
def _local_clothoid_swept(fp_key: tuple, kappa0: float, kappa1: float, length_m: float,
                          direction: int, tol: float) -> NDArray[np.object_]:
    """:func:`swept_parts` of the clothoid starting at ``(0, 0, 0)`` (finished: valid,
    grown), kept for :func:`_moved`."""
    return _finish_parts(*_local_clothoid_parts(fp_key, kappa0, kappa1, length_m, direction,
                                                tol))


def _moved(geoms: NDArray[np.object_], pose: Sequence[float]) -> NDArray[np.object_]:
    """``geoms`` (body frame of a start pose ``(0, 0, 0)``) moved rigidly to ``pose``:
    distances, validity and the tolerance are kept, to rounding."""
    x, y, th = (float(v) for v in pose)
    c, s_ = math.cos(th), math.sin(th)
    rot = np.array([[c, s_], [-s_, c]])
    off = np.array([x, y])
    return shapely.transform(geoms, lambda p: p @ rot + off)


def _placed_clothoid_parts(fp: Footprint, seg: Segment, tol: float
                           ) -> tuple[NDArray[np.object_], float]:
    """The clothoid's parts, from :func:`_local_clothoid_parts` moved to its start pose."""
    geoms, dev = _local_clothoid_parts(fp.key, float(seg.kappa0), float(seg.kappa1),
                                       float(seg.length_m), int(seg.direction), float(tol))
    return _moved(geoms, seg.start), dev


@functools.lru_cache(maxsize=256)
def _local_clothoid_union(fp_key: tuple, kappa0: float, kappa1: float, length_m: float,
                          direction: int, tol: float) -> BaseGeometry:
    """:func:`union_parts` of :func:`_local_clothoid_swept`, kept like the parts."""
    return union_parts(_local_clothoid_swept(fp_key, kappa0, kappa1, length_m, direction, tol))


def swept_union_maker(footprint: FootprintLike, seg: Segment,
                      tolerance_m: float = DEFAULT_TOLERANCE_M):
    """For a clothoid, a function giving the union of :func:`swept_parts` (the same parts,
    unioned once per clothoid shape in its start frame and moved rigidly, as the parts are:
    a collision's overlap depth needs the union, and a drag meets the same clothoids again);
    ``None`` for other kinds, whose union is made from their parts."""
    if seg.kind != "clothoid":
        return None
    fp = prepare_footprint(footprint)
    args = (fp.key, float(seg.kappa0), float(seg.kappa1), float(seg.length_m),
            int(seg.direction), _ARC_SHARE * float(tolerance_m))

    def make() -> BaseGeometry:
        return _moved(np.asarray([_local_clothoid_union(*args)], dtype=object), seg.start)[0]

    return make


def clear_caches() -> None:
    """Forget the kept clothoid parts (benchmarks measuring a cold check call this)."""
    _local_clothoid_parts.cache_clear()
    _local_clothoid_swept.cache_clear()
    _local_clothoid_union.cache_clear()
    _footprint_of_key.cache_clear()
    _grown.cache_clear()


def segment_parts(footprint: FootprintLike, seg: Segment,
                  tolerance_m: float = DEFAULT_TOLERANCE_M
                  ) -> tuple[NDArray[np.object_], float]:
    """Convex-or-simple polygons whose union is the conservative swept region of ``seg``.

    Returns the polygons and a growth (metres) still to be added by buffering (non-zero only
    for holonomic lines that turn the body).
    """
    fp = prepare_footprint(footprint)
    _check_budget(fp, seg, tolerance_m)
    ring, convex, r_far = fp.ring, fp.convex, fp.r_far_m
    tol = _ARC_SHARE * float(tolerance_m)
    placed0 = _place_one(ring, seg.start)
    if seg.kind == "clothoid":
        return _placed_clothoid_parts(fp, seg, tol)
    if seg.kind == "pivot":
        parts = rotation_parts(placed0, seg.start[:2], seg.turn_rad, tol)
        return _polys(parts, False), 0.0
    if seg.kind == "arc" and seg.curvature != 0.0:
        parts = rotation_parts(placed0, seg.arc_centre(), seg.turn_rad, tol)
        return _polys(parts, False), 0.0
    if seg.kind == "line" and seg.course_rad is None and seg.turn_rad == 0.0:
        d = seg.direction * seg.length_m
        v = (d * math.cos(seg.start[2]), d * math.sin(seg.start[2]))
        return _polys(translation_parts(placed0, v, convex), convex), 0.0
    end = seg.end
    v = (end[0] - seg.start[0], end[1] - seg.start[1])
    if 1e-12 < abs(seg.turn_rad) * r_far <= _TINY_TURN_SHARE * tol and seg.length_m > 1e-12:
        # A body turning this little stays within r_far * |turn| of its start orientation
        # translated along the line; the circular stand-in would pivot about a centre so far
        # away that its coordinates lose more than the tolerance to rounding.
        return _polys(translation_parts(placed0, v, convex), convex), \
            abs(seg.turn_rad) * r_far
    if seg.turn_rad != 0.0 and abs(seg.turn_rad) * r_far > 1e-12:
        if seg.length_m <= 1e-12:
            parts = rotation_parts(placed0, seg.start[:2], seg.turn_rad, tol)
            return _polys(parts, False), 0.0
        if _holonomic_method(fp, seg, tol)[0] == "translations":
            return _grown_translation_parts(fp, seg, tol), 0.0
        m, dev = _holonomic_chunks(seg, tol)
        poses = seg.poses_at_fraction(np.linspace(0.0, 1.0, m + 1))
        placed = _place(ring, poses)
        # The circular stand-in differs from the true motion by ``dev`` both ways: once
        # covered by the buffer, once as excess.
        rot_tol = tol - dev - dev / math.cos(math.pi / (4 * _QUAD_SEGS))
        geoms: list = []
        for k in range(m):
            q = _rigid_centre(poses[k], poses[k + 1])
            geoms.extend(_polys(rotation_parts(placed[k], q, poses[k + 1, 2] - poses[k, 2],
                                               rot_tol), False))
        return np.asarray(geoms, dtype=object), dev
    return _polys(translation_parts(placed0, v, convex), convex), 0.0


def swept_parts(footprint: FootprintLike, seg: Segment,
                tolerance_m: float = DEFAULT_TOLERANCE_M) -> NDArray[np.object_]:
    """Polygons whose union is :func:`swept_segment` (valid, non-empty), without the union.

    Distances and predicates against the union are the minimum / any over the parts, so a
    checker can skip the union, which costs more than the parts.
    """
    if not tolerance_m > 0.0:
        raise ValueError("tolerance_m must be > 0")
    if seg.kind == "clothoid":
        fp = prepare_footprint(footprint)
        _check_budget(fp, seg, tolerance_m)
        local = _local_clothoid_swept(fp.key, float(seg.kappa0), float(seg.kappa1),
                                      float(seg.length_m), int(seg.direction),
                                      _ARC_SHARE * float(tolerance_m))
        return _moved(local, seg.start)
    geoms, dev = segment_parts(footprint, seg, tolerance_m)
    return _finish_parts(geoms, dev)


def _finish_parts(geoms: NDArray[np.object_], dev: float) -> NDArray[np.object_]:
    """Parts without empties, made valid, grown by ``dev`` (see :func:`swept_parts`)."""
    geoms = geoms[~shapely.is_empty(geoms)]
    bad = ~shapely.is_valid(geoms)
    if bad.any():
        geoms = geoms.copy()
        geoms[bad] = shapely.make_valid(geoms[bad])
    if dev > 0.0:
        geoms = shapely.buffer(geoms, dev / math.cos(math.pi / (4 * _QUAD_SEGS)),
                               quad_segs=_QUAD_SEGS)
        geoms = geoms[~shapely.is_empty(geoms)]
    return geoms


def swept_segment(footprint: FootprintLike, seg: Segment,
                  tolerance_m: float = DEFAULT_TOLERANCE_M) -> BaseGeometry:
    """The region the footprint sweeps along one segment, conservative and tight.

    The result contains every placement of the footprint along ``seg`` and lies within
    ``tolerance_m`` (Hausdorff distance) of the true swept region.

    Parameters
    ----------
    footprint : Polygon or sequence of (x, y)
        Any simple polygon, body frame.
    seg : Segment
    tolerance_m : float
        How far the result may exceed the true swept region, metres (> 0).

    Returns
    -------
    shapely Polygon (a MultiPolygon only through rounding in degenerate cases)

    Examples
    --------
    >>> from kinematics.motion.segments import line
    >>> g = swept_segment([(-0.5, -0.5), (0.5, -0.5), (0.5, 0.5), (-0.5, 0.5)],
    ...                   line((0, 0, 0), 2.0))
    >>> round(g.area, 9)
    3.0
    """
    if not tolerance_m > 0.0:
        raise ValueError("tolerance_m must be > 0")
    geoms, dev = segment_parts(footprint, seg, tolerance_m)
    out = union_parts(geoms)
    if dev > 0.0:
        # Buffer draws its round joins inscribed; enlarging the radius by 1/cos of the half
        # step keeps the whole disc of radius ``dev`` inside.
        out = out.buffer(dev / math.cos(math.pi / (4 * _QUAD_SEGS)), quad_segs=_QUAD_SEGS)
    return out


def swept_route(footprint: FootprintLike, segments: Sequence[Segment],
                tolerance_m: float = DEFAULT_TOLERANCE_M) -> list[BaseGeometry]:
    """One conservative swept region per segment (see :func:`swept_segment`).

    Keeping one piece per segment lets callers reuse the pieces of unchanged segments.
    """
    return [swept_segment(footprint, s, tolerance_m) for s in segments]


def sub_segment(seg: Segment, fraction: float) -> Segment:
    """The first ``fraction`` (0..1) of ``seg``, same start; pivots by fraction of turn."""
    f = float(min(max(fraction, 0.0), 1.0))
    if seg.kind == "pivot":
        return replace(seg, turn_rad=seg.turn_rad * f)
    if seg.kind == "clothoid":
        k1 = seg.kappa0 + (seg.kappa1 - seg.kappa0) * f
        return replace(seg, length_m=seg.length_m * f, kappa1=k1,
                       turn_rad=seg.direction * seg.length_m * f * 0.5 * (seg.kappa0 + k1))
    return replace(seg, length_m=seg.length_m * f, turn_rad=seg.turn_rad * f)


def farthest_radius(footprint: FootprintLike) -> float:
    """Largest distance of a footprint vertex from the reference point, metres."""
    return prepare_footprint(footprint).r_far_m


def travel_m(footprint: FootprintLike, seg: Segment) -> float:
    """An upper bound on how far any footprint point moves along ``seg``, metres."""
    r_far = prepare_footprint(footprint).r_far_m
    if seg.kind == "clothoid":
        return seg.length_m * (1.0 + r_far * seg.max_abs_curvature)
    if seg.kind == "arc" and seg.curvature != 0.0:
        return (abs(1.0 / seg.curvature) + r_far) * abs(seg.turn_rad)
    return seg.length_m + r_far * abs(seg.turn_rad)
