"""A clearance grid of the floor plan, and the obstacle-aware 2D distance the route finder uses.

:class:`ClearanceGrid` rasterises the solids (walls and obstacles) of a floor plan on a square
grid and holds, for every cell centre, the Euclidean distance to the nearest cell whose centre
lies within half a cell diagonal of a solid (``scipy.ndimage.distance_transform_edt``). With
``hd`` the half diagonal, any point ``q`` in a cell whose value is ``e`` lies at a true
distance from the nearest solid in ``[e - 2 hd, e + 2 hd]``: every solid point has an
occupied centre within ``hd``, and ``q`` is within ``hd`` of its cell's centre (triangle
inequality, both ways). The finder uses the lower bound to skip the exact check of a motion
that stays far from every solid, and never to accept one that comes near.

:meth:`ClearanceGrid.distance_to` is the length of the shortest 8-connected grid path from a
goal cell to every cell over the cells where the reference point may stand (its distance to a
solid may be at least the inscribed radius of the footprint about the reference point plus
the margin, by the upper bound): the "2D grid distance around the solids" term of the Hybrid A*
heuristic (Dolgov, Thrun, Montemerlo and Diebel, "Path planning for autonomous vehicles in
unknown semi-structured environments", 2010, section 3), by Dijkstra's algorithm
(``scipy.sparse.csgraph.dijkstra``).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
import shapely
from numpy.typing import NDArray
from scipy import ndimage
from scipy.sparse import csr_matrix
from scipy.sparse.csgraph import dijkstra

#: Most cells a grid may hold; the cell grows on very large plans to stay below it.
MAX_CELLS = 600_000


class ClearanceGrid:
    """Distance from grid cells to the solids, and the free cells for the reference point.

    Parameters
    ----------
    geometries : array of shapely geometries
        The solids.
    bounds : (xmin, ymin, xmax, ymax)
        The area searched, metres.
    cell_m : float
        Requested cell size (raised where the area would need more than ``MAX_CELLS``).
    free_radius_m : float
        A cell is free for the reference point unless the upper bound of its distance to a
        solid is below this (the footprint's inscribed radius about the reference point plus
        the margin): no clear pose has its reference point in a cell that is not free.
    """

    def __init__(self, geometries: NDArray[np.object_], bounds: Sequence[float], cell_m: float,
                 free_radius_m: float) -> None:
        x0, y0, x1, y1 = (float(v) for v in bounds)
        area = max(x1 - x0, 1e-3) * max(y1 - y0, 1e-3)
        cell = max(float(cell_m), math.sqrt(area / MAX_CELLS))
        self.cell_m = cell
        self.hd = cell * math.sqrt(2.0) / 2.0
        self.nx = max(2, int(math.ceil((x1 - x0) / cell)) + 1)
        self.ny = max(2, int(math.ceil((y1 - y0) / cell)) + 1)
        self.x0, self.y0 = x0, y0
        xs = x0 + cell * np.arange(self.nx)
        ys = y0 + cell * np.arange(self.ny)
        gx, gy = np.meshgrid(xs, ys, indexing="ij")
        occupied = np.zeros(gx.shape, dtype=bool)
        if len(geometries):
            # Each grown solid marks the cell centres it covers, tested only within its own
            # bounding box (a point inside a polygon intersects it too: one predicate covers
            # both); the union of the marks is that of the grown solids' union.
            grown = shapely.buffer(geometries, self.hd, quad_segs=2)
            lo_i = np.ceil((shapely.bounds(grown)[:, 0] - x0) / cell)
            lo_j = np.ceil((shapely.bounds(grown)[:, 1] - y0) / cell)
            hi_i = np.floor((shapely.bounds(grown)[:, 2] - x0) / cell)
            hi_j = np.floor((shapely.bounds(grown)[:, 3] - y0) / cell)
            for g, a, b, c, d in zip(grown, lo_i, lo_j, hi_i, hi_j):
                a, b = max(int(a), 0), max(int(b), 0)
                c, d = min(int(c), self.nx - 1), min(int(d), self.ny - 1)
                if a > c or b > d:
                    continue
                win = (slice(a, c + 1), slice(b, d + 1))
                occupied[win] |= shapely.intersects_xy(g, gx[win], gy[win])
        if occupied.any():
            self.edt = ndimage.distance_transform_edt(~occupied) * cell
        else:
            self.edt = np.full(gx.shape, np.inf)
        self.free = (self.edt + 2.0 * self.hd) >= free_radius_m
        self._graph = None

    # -- lookups -----------------------------------------------------------------------------
    def cell_of(self, x: NDArray[np.float64] | float, y: NDArray[np.float64] | float
                ) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
        i = np.clip(np.rint((np.asarray(x) - self.x0) / self.cell_m), 0, self.nx - 1)
        j = np.clip(np.rint((np.asarray(y) - self.y0) / self.cell_m), 0, self.ny - 1)
        return i.astype(np.int64), j.astype(np.int64)

    def lower_bound(self, x: float, y: float) -> float:
        """A distance from point (x, y) to the nearest solid no larger than the true one."""
        i, j = self.cell_of(x, y)
        return float(self.edt[i, j]) - 2.0 * self.hd

    def upper_bound(self, x: float, y: float) -> float:
        """A distance from point (x, y) to the nearest solid no smaller than the true one."""
        i, j = self.cell_of(x, y)
        return float(self.edt[i, j]) + 2.0 * self.hd

    def surely_near(self, x: NDArray[np.float64], y: NDArray[np.float64], dist: NDArray[np.float64]
                    | float) -> bool:
        """Some point (x, y) inside the grid lies nearer a solid than its ``dist``: its cell's
        upper bound (``edt + 2 hd``) is below it. Points outside the grid are passed over
        (the bound is not kept there), so ``False`` proves nothing."""
        fi = (np.asarray(x) - self.x0) / self.cell_m
        fj = (np.asarray(y) - self.y0) / self.cell_m
        inside = (fi >= -0.5) & (fi <= self.nx - 0.5) & (fj >= -0.5) & (fj <= self.ny - 0.5)
        if not inside.any():
            return False
        i = np.clip(np.rint(fi[inside]), 0, self.nx - 1).astype(np.int64)
        j = np.clip(np.rint(fj[inside]), 0, self.ny - 1).astype(np.int64)
        d = np.broadcast_to(np.asarray(dist, dtype=float), inside.shape)[inside]
        return bool(np.any(self.edt[i, j] + 2.0 * self.hd < d))

    # -- the 2D distance ---------------------------------------------------------------------
    def _build_graph(self) -> None:
        ids = np.arange(self.nx * self.ny).reshape(self.nx, self.ny)
        rows, cols, w = [], [], []
        pairs = ((ids[:-1, :], ids[1:, :], 1.0), (ids[:, :-1], ids[:, 1:], 1.0),
                 (ids[:-1, :-1], ids[1:, 1:], math.sqrt(2.0)),
                 (ids[:-1, 1:], ids[1:, :-1], math.sqrt(2.0)))
        free = self.free.ravel()
        for a, b, step in pairs:
            a, b = a.ravel(), b.ravel()
            ok = free[a] & free[b]
            a, b = a[ok], b[ok]
            # Both directions stored: Dijkstra need not symmetrise the graph on every call.
            rows += [a, b]
            cols += [b, a]
            w.append(np.full(2 * a.size, self.cell_m * step))
        n = self.nx * self.ny
        self._graph = csr_matrix((np.concatenate(w), (np.concatenate(rows),
                                                      np.concatenate(cols))), shape=(n, n))

    def distance_to(self, x: float, y: float) -> NDArray[np.float64]:
        """Grid path length (m) from every cell to the cell of (x, y), ``inf`` where cut off.

        Shape ``(nx, ny)``. The goal cell counts as free even where the grid's bounds call it
        blocked (the exact check decides there).
        """
        if self._graph is None:
            self._build_graph()
        i, j = self.cell_of(x, y)
        goal = int(i) * self.ny + int(j)
        d = dijkstra(self._graph, directed=True, indices=goal)
        if np.isfinite(d).sum() <= 1:
            # The goal cell is hemmed in by blocked cells: measure to its free neighbours.
            ii, jj = np.meshgrid(np.arange(max(0, i - 3), min(self.nx, i + 4)),
                                 np.arange(max(0, j - 3), min(self.ny, j + 4)), indexing="ij")
            near = (ii * self.ny + jj).ravel()
            near = near[self.free.ravel()[near]]
            if near.size:
                d = dijkstra(self._graph, directed=True, indices=near, min_only=True)
                d[goal] = 0.0
        return d.reshape(self.nx, self.ny)
