"""The scene's geometry along a route: the points, poses and swept pieces both painters place
their primitives at (:mod:`app.scene` builds the styled layers from them).

- :func:`segment_samples`, :func:`sample_segments`, :func:`sample_path`: points along each
  segment for the route line and the hover read-out (the canvas keeps them per segment);
- :func:`outline_poses`, :func:`segment_outline_stations`, :func:`segment_outline_poses`,
  :func:`place_footprint`: where footprint outlines go (the picture's few spread along the
  route, the window's every so many metres along each segment);
- :func:`swept_geometry`, :func:`band_piece`, :func:`band_pieces`, :func:`band_bounds`: the
  swept band, one piece per segment, as both painters fill it.

Plain numpy and shapely, no Qt and no styles: what is drawn where, not how it looks.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import numpy as np


def segment_samples(seg: Any, step_m: float = 0.05) -> tuple[np.ndarray, np.ndarray]:
    """Points along one segment for drawing and hover: ``(xy (n, 2), station from its start)``.

    Arcs and clothoids a point every ``step_m`` and at most every 3 degrees; lines a point
    every half metre (the hover read-out finds its station among them); pivots one point.
    """
    if seg.kind in ("arc", "clothoid"):
        n = max(2, int(math.ceil(max(seg.length_m / step_m,
                                     abs(seg.turn_rad) / math.radians(3.0)))) + 1)
    elif seg.kind == "line":
        n = max(2, int(math.ceil(seg.length_m / 0.5)) + 1)
    else:
        n = 1
    f = np.linspace(0.0, 1.0, n)
    return seg.poses_at_fraction(f)[:, :2], f * seg.length_m


def sample_segments(segments: Sequence[Any], step_m: float = 0.05,
                    cache: dict | None = None
                    ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Poses along a path for drawing and hover: ``(xy, station_m, seg_index, direction)``.

    Each segment's points are :func:`segment_samples`'s. ``cache`` (a dict the caller keeps)
    holds each segment's points by segment value, so a drag samples only the segments that
    moved.
    """
    xy, st, idx, dirs = [], [], [], []
    s0 = 0.0
    for seg in segments:
        hit = cache.get((seg, step_m)) if cache is not None else None
        if hit is None:
            hit = segment_samples(seg, step_m)
            if cache is not None:
                cache[(seg, step_m)] = hit
        pts, ds = hit
        xy.append(pts)
        st.append(ds)
        idx.append(s0)  # the segment's start station, spread over its points below
        dirs.append(seg.direction)
        s0 += seg.length_m
    if not xy:
        z = np.zeros((0,))
        return np.zeros((0, 2)), z, z.astype(int), z.astype(int)
    # Per-point columns in a few array operations over the whole route (not per segment).
    counts = np.fromiter((len(p) for p in xy), dtype=np.int64, count=len(xy))
    stations = np.concatenate(st) + np.repeat(np.asarray(idx, dtype=float), counts)
    return (np.vstack(xy), stations, np.repeat(np.arange(len(xy)), counts),
            np.repeat(np.asarray(dirs), counts))


def sample_path(segments: Sequence[Any]) -> list[tuple[np.ndarray, int, int]]:
    """Polylines to draw: ``(xy (n, 2), direction, segment index)`` per line, arc or clothoid,
    with the points :func:`segment_samples` gives (the canvas draws the same points)."""
    return [(segment_samples(seg)[0], int(seg.direction), i) for i, seg in enumerate(segments)
            if seg.kind != "pivot"]


def outline_poses(segments: Sequence[Any], count: int = 8) -> np.ndarray:
    """Poses for footprint outlines: the start, the end and ``count`` in between."""
    from kinematics.motion.segments import path_length, poses_along

    if not segments:
        return np.zeros((0, 3))
    total = path_length(segments)
    if total <= 0:
        return np.array([segments[0].start, segments[-1].end], dtype=float)
    st = np.linspace(0.0, total, count + 2)
    poses = poses_along(segments, st)
    poses[-1] = segments[-1].end
    return poses


def segment_outline_stations(seg: Any, spacing_m: float, last: bool = False) -> np.ndarray:
    """Stations (metres from the segment's start) of the footprint outlines along one segment:
    every ``spacing_m`` from its start, and its end too when it is the route's ``last``; none
    for a turn on the spot (the next segment's first outline shows it). These are the
    window's outlines (View > Footprint outlines), kept per segment so a drag remakes only
    the segments that moved."""
    if seg.length_m <= 0.0:
        return np.zeros((0,))
    local = np.arange(0.0, seg.length_m, spacing_m)
    return np.append(local, seg.length_m) if last else local


def segment_outline_poses(seg: Any, spacing_m: float, last: bool = False) -> np.ndarray:
    """The poses ``(x, y, heading_rad)`` at :func:`segment_outline_stations`."""
    local = segment_outline_stations(seg, spacing_m, last)
    return seg.poses_at(local) if len(local) else np.zeros((0, 3))


def place_footprint(footprint: Sequence[tuple[float, float]], pose: Sequence[float]
                    ) -> np.ndarray:
    """The footprint's corners in the plan frame at ``pose`` ``(x, y, heading_rad)``."""
    fp = np.asarray(footprint, dtype=float)
    c, s = math.cos(pose[2]), math.sin(pose[2])
    return np.column_stack([pose[0] + c * fp[:, 0] - s * fp[:, 1],
                            pose[1] + s * fp[:, 0] + c * fp[:, 1]])


def swept_geometry(footprint: Sequence[tuple[float, float]], segments: Sequence[Any],
                   check: Any = None) -> Any:
    """The swept area of a route as one shapely geometry (``None`` if it cannot be had).

    Taken from the check when it carries it (``check.swept``), else from
    :func:`kinematics.check.sweep.swept_route`.
    """
    import shapely

    geom = getattr(check, "swept", None) if check is not None else None
    if geom is None:
        if not segments:
            return None
        from kinematics.check.sweep import swept_route

        geom = swept_route(footprint, list(segments))
    if isinstance(geom, (list, tuple)):
        parts = [getattr(p, "geometry", p) for p in geom]
        parts = [p for p in parts if p is not None]
        return shapely.union_all(parts) if parts else None
    return getattr(geom, "geometry", geom)


def band_piece(footprint: Sequence[tuple[float, float]], segment: Any,
               parts: Any = None) -> np.ndarray:
    """One segment's piece of the swept band: the polygons whose union is the area it sweeps
    (``parts``, the check's own, else swept now), oriented alike (exteriors
    counter-clockwise, holes clockwise). Filled with a non-zero winding rule they cover their
    union once without the union being computed."""
    import shapely

    if parts is None:
        from kinematics.check.sweep import swept_parts

        parts = swept_parts(footprint, segment)
    arr = np.asarray(list(parts), dtype=object).ravel()
    return shapely.orient_polygons(arr) if arr.size else arr


def band_pieces(footprint: Sequence[tuple[float, float]], segments: Sequence[Any],
                check: Any = None) -> list[np.ndarray]:
    """The swept band of a route, one :func:`band_piece` per segment, from the check's parts
    when it holds them for these segments (a train's include its trailers), as both painters
    draw it: the picture fills each route's pieces as one path, the canvas keeps each
    segment's piece by the segment's value so a drag remakes only the pieces that moved."""
    parts = tuple(getattr(check, "piece_parts", None) or ()) if check is not None else ()
    if len(parts) != len(segments):
        parts = (None,) * len(segments)
    return [band_piece(footprint, seg, raw) for seg, raw in zip(segments, parts)]


def band_bounds(pieces: Sequence[np.ndarray] | None) -> tuple[float, float, float, float] | None:
    """``(x0, y0, x1, y1)`` of a route's band pieces, or ``None`` when there is none."""
    import shapely

    arrs = [np.asarray(p, dtype=object).ravel() for p in pieces or ()]
    arrs = [a for a in arrs if a.size]
    if not arrs:
        return None
    b = shapely.total_bounds(np.concatenate(arrs))
    return None if not np.all(np.isfinite(b)) else tuple(float(v) for v in b)
