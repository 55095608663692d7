"""Route > Find route and Route > Repair route: the route finder in the background.

The search (:class:`kinematics.plan.search.RouteFinder`) runs on the thread pool behind a
progress dialog with Cancel (:mod:`app.workers`). The poses it expanded are drawn faintly on
the canvas; a found route replaces the current one as one undoable edit, which the user can
then drag like any sketched route. Nothing changes when the search is cancelled, finds
nothing, or the route was edited while it ran.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QObject
from PySide6.QtGui import QAction, QColor

from kinematics.plan.search import FindResult, FindSettings, RouteFinder, SearchStopped

from .workers import Cancelled, CancelToken, ProgressDialog, run_in_background

#: Colour of the searched area (the palette's sky blue), drawn faint.
SEARCHED_RGBA = (86, 180, 233, 60)
#: Most searched poses drawn (an even subsample beyond that).
MAX_DRAWN = 20000


class RouteFinderActions(QObject):
    """The Route menu's find and repair actions of one main window.

    Parameters
    ----------
    window : MainWindow
        Needs ``doc``, ``canvas`` (with its pyqtgraph ``plot``), ``menuBar()``,
        ``statusBar()`` and ``show_error``.
    time_limit_s : float
        How long a search may run.
    """

    def __init__(self, window: Any, time_limit_s: float = 10.0) -> None:
        super().__init__(window)
        self.window = window
        self.time_limit_s = float(time_limit_s)
        self.job = None
        self.dialog: ProgressDialog | None = None
        self.last_result: FindResult | None = None
        self.searched_item: pg.ScatterPlotItem | None = None
        self.act_find = QAction("&Find route", window)
        self.act_find.setToolTip("Search a drivable, clear route through the current route's "
                                 "waypoints and put it in its place (undoable)")
        self.act_find.triggered.connect(lambda: self.start(repair=False))
        self.act_repair = QAction("&Repair route", window)
        self.act_repair.setToolTip("Keep the legs that pass; search again only the failing "
                                   "ones")
        self.act_repair.triggered.connect(lambda: self.start(repair=True))
        self.act_clear = QAction("&Hide searched area", window)
        self.act_clear.triggered.connect(self.clear_searched)
        window.doc.projectReplaced.connect(self.clear_searched)

    def install(self, before: QAction | None = None) -> None:
        """Add the Route menu to the window's menu bar (before ``before`` if given)."""
        mb = self.window.menuBar()
        menu = mb.addMenu("&Route") if before is None else None
        if menu is None:
            from PySide6.QtWidgets import QMenu

            menu = QMenu("&Route", mb)
            mb.insertMenu(before, menu)
        menu.addAction(self.act_find)
        menu.addAction(self.act_repair)
        menu.addSeparator()
        menu.addAction(self.act_clear)
        self.menu = menu

    # -- running ---------------------------------------------------------------------------
    @property
    def running(self) -> bool:
        return self.job is not None and self.job.running

    def start(self, repair: bool = False) -> bool:
        """Start a find (or repair) of the current route; ``False`` when none can start."""
        doc = self.window.doc
        route = doc.route()
        if route is None or self.running:
            return False
        project = doc.project
        index = doc.obstacle_index()
        route_i = doc.current_route
        settings = FindSettings(time_limit_s=self.time_limit_s)

        def work(token: CancelToken) -> FindResult:
            finder = RouteFinder(project, index, settings,
                                 chassis=project.chassis_for(route))

            def progress(fraction: float, nodes: int) -> None:
                token.report(fraction, f"Searching: {nodes} poses tried")
            try:
                if repair:
                    return finder.repair(route, progress, token)
                return finder.find(route, progress, token)
            except SearchStopped:
                raise Cancelled() from None

        what = "Repairing" if repair else "Finding"
        dlg = ProgressDialog(f"{what} route {route.name!r}...", self.window)
        self.dialog = dlg
        self.act_find.setEnabled(False)
        self.act_repair.setEnabled(False)
        self.job = run_in_background(
            work, done_cb=lambda res: self._done(res, route_i, route),
            error_cb=self._failed, cancelled_cb=self._cancelled, parent=dlg,
            before_start=dlg.attach)
        return True

    def cancel(self) -> None:
        if self.job is not None:
            self.job.cancel()

    def _end(self) -> None:
        self.act_find.setEnabled(True)
        self.act_repair.setEnabled(True)

    def _done(self, res: FindResult, route_i: int, route: Any) -> None:
        self._end()
        self.last_result = res
        self.show_searched(res.searched)
        doc = self.window.doc
        bar = self.window.statusBar()
        if not res.found or res.route is None:
            self.window.show_error("No route found", res.reason)
            return
        if route_i >= len(doc.project.routes) or doc.project.routes[route_i] != route:
            bar.showMessage("The route changed while the search ran; its result was dropped.",
                            8000)
            return
        if res.route != route:
            what = "Repair" if res.legs != tuple(range(len(route.waypoints) - 1)) else "Find"
            doc.set_route(route_i, res.route, f"{what} route {route.name!r}")
        least = res.check.min_clearance_m if res.check is not None else None
        least_txt = "" if least is None else f", least clearance {least * 1000:.0f} mm"
        bar.showMessage(f"Route {route.name!r}: {len(res.route.waypoints)} waypoints"
                        f"{least_txt}, {res.expanded_nodes} poses in {res.time_s:.2f} s"
                        + (f" ({res.notes[-1]})" if res.notes else ""), 12000)

    def _failed(self, text: str) -> None:
        self._end()
        self.window.show_error("Cannot search a route", text)

    def _cancelled(self) -> None:
        self._end()
        self.window.statusBar().showMessage("Search cancelled; the route is unchanged.", 6000)

    # -- the searched area -----------------------------------------------------------------
    def show_searched(self, xy: np.ndarray) -> None:
        """Draw the poses the search expanded, faintly, under the routes."""
        self.clear_searched()
        if xy is None or len(xy) == 0:
            return
        if len(xy) > MAX_DRAWN:
            xy = xy[np.linspace(0, len(xy) - 1, MAX_DRAWN).astype(int)]
        item = pg.ScatterPlotItem(x=xy[:, 0], y=xy[:, 1], size=4, pen=None,
                                  brush=pg.mkBrush(QColor(*SEARCHED_RGBA)), pxMode=True)
        item.setZValue(-5)
        self.window.canvas.plot.addItem(item)
        self.searched_item = item

    def clear_searched(self) -> None:
        if self.searched_item is not None:
            self.window.canvas.plot.removeItem(self.searched_item)
            self.searched_item = None
