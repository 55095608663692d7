"""The window's legend: the same rows, samples and words as the picture's and the report's.

Rows come from :func:`app.scene.legend_rows` (walls, obstacles, doors, every zone kind the
plan holds with its hatching, each route by its colour, the route's marks and the violation
kinds) and are painted by the picture's own legend painter (:mod:`app.render`), so a zone's
sample in the window is the one the exported picture shows. Redrawn when the plan, the routes
or the results change.
"""

from __future__ import annotations

from PySide6.QtCore import QRectF, QSize
from PySide6.QtGui import QPainter, QPaintEvent
from PySide6.QtWidgets import QScrollArea, QSizePolicy, QWidget

from . import render
from .scene import legend_rows

ROW_PX = 25.0
HEAD_PX = 28.0


class LegendView(QWidget):
    """Paints the legend of the document's plan and routes."""

    def __init__(self, doc, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.doc = doc
        self.setSizePolicy(QSizePolicy.Policy.Expanding, QSizePolicy.Policy.Fixed)
        # Not routesChanged: results (held back while a drag is live) follow every route edit.
        for sig in (doc.floorplanChanged, doc.resultsChanged, doc.projectReplaced):
            sig.connect(self._changed)
        self._stale = True
        self._changed()

    def _inputs(self) -> tuple[list[str], dict[str, int], dict, tuple]:
        project = self.doc.project
        names = [r.name for r in project.routes]
        checks = {}
        for n in names:
            chk = self.doc.check(n)
            if chk is not None:
                checks[n] = chk
        return names, {n: k for k, n in enumerate(names)}, checks, project.floorplan.zones

    def zone_rows(self) -> list[tuple[str, str, str]]:
        """The legend's zone rows ``("zone", words, kind)``, as the picture lists them."""
        return [r for r in self.rows() if r[0] == "zone"]

    def rows(self) -> list[tuple[str, str, object]]:
        names, index_of, checks, zones = self._inputs()
        return legend_rows(names, checks, index_of, zones=zones)

    def _changed(self) -> None:
        self._stale = True
        if self.isVisible():
            self.refresh()

    def refresh(self) -> None:
        """Size the legend to its rows and paint it anew."""
        self._stale = False
        self.setFixedHeight(int(HEAD_PX + ROW_PX * len(self.rows()) + 14))
        self.update()

    def showEvent(self, ev) -> None:  # noqa: N802
        if self._stale:
            self.refresh()
        super().showEvent(ev)

    def sizeHint(self) -> QSize:  # noqa: N802
        return QSize(260, self.height())

    def paintEvent(self, _ev: QPaintEvent) -> None:  # noqa: N802
        names, index_of, checks, zones = self._inputs()
        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing)
        render.draw_legend(p, QRectF(2, 2, self.width() - 4, self.height() - 4), names,
                           index_of, checks, 1.0, render.font(12), render.font(11), zones)
        p.end()


class LegendPanel(QScrollArea):
    """The legend in a scroll area, for a dock."""

    def __init__(self, doc, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.view = LegendView(doc)
        self.setWidget(self.view)
        self.setWidgetResizable(True)
        self.setMinimumWidth(220)


__all__ = ["LegendPanel", "LegendView"]
