"""The workbench window's construction: actions, menus, toolbars, docks and the status bar.

Owns :class:`WindowBuild`, the part of :class:`app.main_window.MainWindow` that makes every
action (with its shortcut and tip), puts them in the menus and toolbars, docks the panels
(the bottom ones built after the first paint) and lays out the status bar.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtGui import QAction, QActionGroup, QKeySequence
from PySide6.QtWidgets import (
    QCheckBox,
    QComboBox,
    QDialog,
    QDockWidget,
    QDoubleSpinBox,
    QLabel,
    QToolBar,
    QWidget,
)


def _keys(action: QAction) -> str:
    """The action's shortcuts as the user types them ("Ctrl+Shift+O"), or "" if none."""
    return ", ".join(k.toString(QKeySequence.SequenceFormat.NativeText)
                     for k in action.shortcuts())


def _placeholder(text: str) -> QWidget:
    w = QLabel(text)
    w.setAlignment(Qt.AlignmentFlag.AlignCenter)
    w.setWordWrap(True)
    w.setStyleSheet("color: #555; padding: 12px;")
    return w


class WindowBuild:
    """Actions, menus, toolbars, docks and status bar of
    :class:`app.main_window.MainWindow` (a mixin: it uses the window's document and
    canvas)."""

    # -- construction -----------------------------------------------------------------------
    def _act(self, text: str, slot: Callable, shortcut: Any = None, tip: str = "") -> QAction:
        a = QAction(text, self)
        if shortcut is not None:
            if isinstance(shortcut, (list, tuple)):
                a.setShortcuts(list(shortcut))
            else:
                a.setShortcut(shortcut)
        if tip:
            a.setStatusTip(tip)
            a.setToolTip(tip)
        a.triggered.connect(lambda _checked=False: slot())
        return a

    def _build_actions(self) -> None:
        K = QKeySequence.StandardKey
        self.act_new = self._act("&New project", self._menu_new, K.New)
        self.act_open = self._act("&Open project...", self._menu_open, K.Open)
        self.act_new_from_plan = self._act("New project from floor p&lan...",
                                           self._menu_new_from_plan, None,
                                           "Start a new project on a floor plan "
                                           "(*.floor.json, DXF or SVG)")
        self.act_open_plan = self._act("Open &floor plan...", self._menu_open_plan,
                                       QKeySequence("Ctrl+Shift+O"),
                                       "Use a floor plan (*.floor.json, DXF or SVG)")
        self.act_save = self._act("&Save", self._menu_save, K.Save)
        self.act_save_as = self._act("Save &as...", self._menu_save_as, K.SaveAs)
        self.act_export = self._act("&Export schedule...", self._menu_export,
                                    QKeySequence("Ctrl+E"),
                                    "Write the wheel-rate schedule of the current route")
        self.act_report = self._act("Export &report (PDF or PNG)...", self._menu_report,
                                    QKeySequence("Ctrl+Shift+E"),
                                    "A one-page report of every route, with the sizing "
                                    "answers found for the current one")
        self.act_picture = self._act("Export plan &picture (PNG)...", self._menu_picture, None,
                                     "A picture of the plan, the routes, their swept bands "
                                     "and what is in the way")
        self.act_quit = self._act("&Quit", self.close, K.Quit)
        self.act_undo = self.doc.undo_stack.createUndoAction(self, "&Undo")
        self.act_undo.setShortcut(K.Undo)
        self.act_redo = self.doc.undo_stack.createRedoAction(self, "&Redo")
        self.act_redo.setShortcuts([QKeySequence("Ctrl+Shift+Z"), QKeySequence(K.Redo)])
        self.act_delete = self._act("&Delete waypoint", self.canvas.delete_selected,
                                    None, "Remove the selected waypoint")
        self.act_clear_heading = self._act("&Clear heading", self._clear_heading, None,
                                           "Let the planner choose the selected "
                                           "waypoint's heading")
        self.act_fit = self._act("&Fit to plan", self.canvas.fit, QKeySequence("F"))
        self.act_about = self._act("&About Swathe", self.show_about)
        self.act_guide = self._act("&Guide", self.show_guide, QKeySequence.StandardKey.HelpContents,
                                   "What each mode does, every shortcut, and the words used")
        if self.act_guide.shortcut().isEmpty():  # platforms without a standard help key
            self.act_guide.setShortcut(QKeySequence("F1"))
        self.guide_box: QDialog | None = None
        self.mode_group = QActionGroup(self)
        self.act_select = QAction("Select / move", self, checkable=True)
        self.act_select.setShortcut(QKeySequence("S"))
        self.act_select.setToolTip("Drag waypoints and heading handles; drag empty space to "
                                   "pan (S)")
        self.act_add = QAction("Add waypoints", self, checkable=True)
        self.act_add.setShortcut(QKeySequence("A"))
        self.act_add.setToolTip("Click to append waypoints to the current route; "
                                "Ctrl+click does the same in any mode (A)")
        for a, mode in ((self.act_select, "select"), (self.act_add, "add")):
            self.mode_group.addAction(a)
            a.triggered.connect(lambda _c=False, m=mode: self.canvas.set_mode(m))
        self.act_select.setChecked(True)
        # Plan tools (app/plan_gestures.py): drawing and measuring modes in the same group.
        self.plan_mode_actions: dict[str, QAction] = {}
        for mode, text, key, tip in (
                ("wall", "Draw wall", "W", "Click the wall's points; double-click or Enter "
                 "ends it (W)"),
                ("rect", "Draw rectangle", "R", "Click two opposite corners (R)"),
                ("polygon", "Draw polygon", "P", "Click the corners; double-click or Enter "
                 "ends it (P)"),
                ("circle", "Draw circle", "C", "Click the centre, then a point on the rim (C)"),
                ("door", "Place door", "D", "Click the two jambs; they snap to wall ends (D)"),
                ("measure", "Measure distance", "M", "Click two points (M)"),
                ("zone", "Draw zone", "Z", "Click the zone's corners; double-click or Enter "
                 "ends it, then give its kind (keep out, slow, margin, one way), its number "
                 "and label (Z)"),
                ("gap", "Gap between elements", "G", "Click two walls, obstacles, doors or "
                 "zones (G)")):
            a = QAction(text, self, checkable=True)
            # Short words on the toolbar, the full text in the Plan menu.
            a.setIconText({"measure": "Measure", "gap": "Gap"}.get(mode,
                                                                   text.split()[-1].title()))
            a.setShortcut(QKeySequence(key))
            a.setToolTip(tip)
            a.setStatusTip(tip)
            self.mode_group.addAction(a)
            a.triggered.connect(lambda _c=False, m=mode: self.canvas.set_mode(m))
            self.plan_mode_actions[mode] = a
        self.act_relabel = self._act("Re&label plan element...",
                                     lambda: self.canvas.plan_gestures.relabel(), None,
                                     "A new label for the selected obstacle, door or zone")
        self.act_edit_zone = self._act("Edit &zone rule...",
                                       lambda: self.canvas.plan_gestures.edit_zone(), None,
                                       "Change the selected zone's kind, speed cap, margin, "
                                       "direction or label")
        self.thickness_spin = QDoubleSpinBox()
        self.thickness_spin.setRange(0.01, 2.0)
        self.thickness_spin.setDecimals(3)
        self.thickness_spin.setSingleStep(0.05)
        self.thickness_spin.setSuffix(" m")
        self.thickness_spin.setValue(self.canvas.plan_gestures.thickness_m)
        self.thickness_spin.setToolTip("Thickness of the next wall drawn")
        self.thickness_spin.valueChanged.connect(
            lambda v: setattr(self.canvas.plan_gestures, "thickness_m", float(v)))
        self.act_band = QAction("Swept band", self, checkable=True, checked=True)
        self.act_band.toggled.connect(self._toggle_band)

    def _build_menus(self) -> None:
        mb = self.menuBar()
        f = mb.addMenu("&File")
        for a in (self.act_new, self.act_new_from_plan, self.act_open, self.act_open_plan):
            f.addAction(a)
        self.recent_menu = f.addMenu("Open &recent")
        f.addSeparator()
        for a in (self.act_save, self.act_save_as):
            f.addAction(a)
        f.addSeparator()
        f.addAction(self.act_export)
        f.addAction(self.act_report)
        f.addAction(self.act_picture)
        f.addSeparator()
        f.addAction(self.act_quit)
        e = mb.addMenu("&Edit")
        e.addAction(self.act_undo)
        e.addAction(self.act_redo)
        e.addSeparator()
        e.addAction(self.act_delete)
        e.addAction(self.act_clear_heading)
        e.addAction(self.act_relabel)
        e.addAction(self.act_edit_zone)
        pm = mb.addMenu("&Plan")
        for a in self.plan_mode_actions.values():
            pm.addAction(a)
        pm.addSeparator()
        pm.addAction(self.act_relabel)
        pm.addAction(self.act_edit_zone)
        v = mb.addMenu("&View")
        v.addAction(self.act_fit)
        v.addAction(self.act_band)
        outl = v.addMenu("Footprint &outlines")
        self.outline_group = QActionGroup(self)
        for label, val in (("None", None), ("Every 0.5 m", 0.5), ("Every 1 m", 1.0),
                           ("Every 2 m", 2.0)):
            a = outl.addAction(label)
            a.setCheckable(True)
            a.setChecked(val == self.canvas.outline_spacing_m)
            a.triggered.connect(lambda _c=False, s=val: self._set_outlines(s))
            self.outline_group.addAction(a)
        snap = v.addMenu("&Snap to grid")
        self.snap_group = QActionGroup(self)
        for label, val in (("Off", None), ("5 cm", 0.05), ("10 cm", 0.1), ("25 cm", 0.25),
                           ("50 cm", 0.5)):
            a = snap.addAction(label)
            a.setCheckable(True)
            a.setChecked(val is None)
            a.triggered.connect(lambda _c=False, s=val: setattr(self.canvas, "snap_m", s))
            self.snap_group.addAction(a)
        self.view_menu = v
        v.addSeparator()
        from .find_route import RouteFinderActions

        self.route_finder = RouteFinderActions(self)  # Route > Find / Repair route
        self.route_finder.install()
        h = mb.addMenu("&Help")
        h.addAction(self.act_guide)
        h.addSeparator()
        h.addAction(self.act_about)

    def _build_toolbars(self) -> None:
        tools = QToolBar("Tools", self)
        tools.setObjectName("tools")
        tools.addAction(self.act_select)
        tools.addAction(self.act_add)
        tools.addSeparator()
        tools.addAction(self.act_fit)
        tools.addAction(self.act_undo)
        tools.addAction(self.act_redo)
        self.addToolBar(tools)
        bar = QToolBar("Route", self)
        bar.setObjectName("route")
        bar.addWidget(QLabel(" Route "))
        self.route_combo = QComboBox()
        self.route_combo.setMinimumWidth(170)
        self.route_combo.setToolTip("The route being edited")
        self.route_combo.activated.connect(self.doc.set_current_route)
        bar.addWidget(self.route_combo)
        self.act_route_new = bar.addAction("New", self.new_route)
        self.act_route_new.setToolTip("Add a route with two waypoints in the middle of the view")
        self.act_route_rename = bar.addAction("Rename...", self._menu_rename_route)
        self.act_route_remove = bar.addAction("Remove", self._remove_route)
        self.act_route_remove.setToolTip("Remove the current route (Undo restores it)")
        # The same three in the Route menu, above the route finder.
        menu = self.route_finder.menu
        first = menu.actions()[0] if menu.actions() else None
        menu.insertActions(first, [self.act_route_new, self.act_route_rename,
                                   self.act_route_remove])
        menu.insertSeparator(first)
        bar.addSeparator()
        bar.addWidget(QLabel(" Turn radius "))
        self.radius_spin = QDoubleSpinBox()
        self.radius_spin.setRange(0.0, 50.0)
        self.radius_spin.setDecimals(2)
        self.radius_spin.setSingleStep(0.1)
        self.radius_spin.setSuffix(" m")
        self.radius_spin.setToolTip("Radius the route uses where it turns (never below the "
                                    "chassis minimum); 0 lets the chassis turn as tight as it can")
        self.radius_spin.editingFinished.connect(self._radius_edited)
        bar.addWidget(self.radius_spin)
        self.reverse_check = QCheckBox("May reverse")
        self.reverse_check.setToolTip("Allow reversing where the drive can reverse")
        self.reverse_check.clicked.connect(self._reverse_edited)
        bar.addWidget(self.reverse_check)
        self.transitions_check = QCheckBox("Transition curves")
        self.transitions_check.setToolTip(
            "Ease into and out of every turn with clothoids, so curvature, wheel rates and "
            "steer angles change smoothly (route key transitions; unset, it is on when the "
            "chassis gives a wheel-accel, yaw-accel or steer-rate limit)")
        self.transitions_check.clicked.connect(self._transitions_edited)
        bar.addWidget(self.transitions_check)
        self.addToolBar(bar)
        # The plan tools on a row of their own: on one row with the rest they overflowed
        # behind a ">>" button in windows up to ~1400 px wide.
        self.addToolBarBreak()
        plan = QToolBar("Plan tools", self)
        plan.setObjectName("plan_tools")
        plan.addWidget(QLabel(" Plan "))
        for a in self.plan_mode_actions.values():
            plan.addAction(a)
        plan.addWidget(QLabel(" wall "))
        plan.addWidget(self.thickness_spin)
        plan.addSeparator()
        plan.addAction(self.act_relabel)
        plan.addAction(self.act_edit_zone)
        self.act_relabel.setIconText("Relabel")
        self.act_edit_zone.setIconText("Zone rule")
        self.addToolBar(plan)

    def _dock(self, title: str, name: str, widget: QWidget,
              area: Qt.DockWidgetArea) -> QDockWidget:
        dock = QDockWidget(title, self)
        dock.setObjectName(name)
        dock.setWidget(widget)
        self.addDockWidget(area, dock)
        self.view_menu.addAction(dock.toggleViewAction())
        return dock

    def _panel(self, module: str, cls: str) -> QWidget | None:
        try:
            mod = __import__(f"app.{module}", fromlist=[cls])
            return getattr(mod, cls)(self.doc)
        except (ImportError, AttributeError):
            return None

    def _build_docks(self) -> None:
        L, R, B = (Qt.DockWidgetArea.LeftDockWidgetArea, Qt.DockWidgetArea.RightDockWidgetArea,
                   Qt.DockWidgetArea.BottomDockWidgetArea)
        # Every panel (the chassis editor and results list compile app.panels and app.render;
        # the plots are a pyqtgraph layout with a schedule per route: together a good part of
        # the startup) is built in the event-loop pass right after the plan is first shown, or
        # when first asked for; until then the docks hold empty widgets of their final size.
        self._later_panels: dict[str, QWidget | None] | None = None
        self.chassis_dock = self._dock("Chassis", "chassis", QWidget(), L)
        self.results_dock = self._dock("Check results", "results", QWidget(), R)
        self.plots_dock = self._dock("Speed and wheel rates", "plots", QWidget(), B)
        self.schedule_dock = self._dock("Schedule", "schedule", QWidget(), B)
        self.traffic_dock = self._dock("Traffic", "traffic", QWidget(), B)
        self.tabifyDockWidget(self.plots_dock, self.schedule_dock)
        self.tabifyDockWidget(self.schedule_dock, self.traffic_dock)
        self.plots_dock.raise_()
        self.resizeDocks([self.chassis_dock, self.results_dock], [300, 320],
                         Qt.Orientation.Horizontal)
        self.resizeDocks([self.plots_dock], [240], Qt.Orientation.Vertical)
        # Tabified beside the results once the window is shown (showEvent): a second tab
        # group made before the first show leaves a stray copy of a tab bar painted where the
        # window's first size put it (Qt 6.11; over the plots in a larger window).
        self.legend_dock = self._dock("Legend", "legend", QWidget(), R)
        self._legend_tabified = False
        self.canvas.firstPainted.connect(self._build_later_panels)

    def _build_later_panels(self) -> dict[str, QWidget | None]:
        """Build the side panels (once) and put them in their docks."""
        if self._later_panels is None:
            chassis = self._panel("panels", "ChassisPanel")
            results = self._panel("panels", "ResultsPanel")
            plots = self._panel("plots", "PlotsPanel")
            table = self._panel("panels", "ScheduleTable")
            legend = self._panel("legend", "LegendPanel")
            traffic = self._panel("traffic_panel", "TrafficPanel")
            self._later_panels = {"chassis": chassis, "results": results, "plots": plots,
                                  "schedule": table, "legend": legend, "traffic": traffic}
            self.traffic_dock.setWidget(traffic or _placeholder(
                "The traffic panel is not available in this build."))
            if traffic is not None:
                traffic.zoomRequested.connect(self.canvas.center_on)
                traffic.placeShown.connect(self.canvas.highlight_place)
            self.legend_dock.setWidget(legend or _placeholder(
                "The legend is not available in this build."))
            self.chassis_dock.setWidget(chassis or _placeholder(
                "The chassis editor is not available in this build."))
            self.results_dock.setWidget(results or _placeholder(
                "The results list is not available in this build."))
            if results is not None and hasattr(results, "zoomRequested"):
                results.zoomRequested.connect(self.canvas.center_on)
            if results is not None and hasattr(results, "solidCited"):
                results.solidCited.connect(self.canvas.plan_gestures.highlight)
            self.plots_dock.setWidget(plots or _placeholder(
                "Plots are not available in this build."))
            self.schedule_dock.setWidget(table or _placeholder(
                "The schedule table is not available in this build."))
        return self._later_panels

    @property
    def chassis_panel(self) -> QWidget | None:
        """The chassis editor (built on first use)."""
        return self._build_later_panels()["chassis"]

    @property
    def traffic_panel(self) -> QWidget | None:
        """The traffic panel between routes (built on first use)."""
        return self._build_later_panels()["traffic"]

    @property
    def results_panel(self) -> QWidget | None:
        """The check results list (built on first use)."""
        return self._build_later_panels()["results"]

    @property
    def plots_panel(self) -> QWidget | None:
        """The speed and wheel-rate plots (built on first use)."""
        return self._build_later_panels()["plots"]

    @property
    def schedule_table(self) -> QWidget | None:
        """The schedule table (built on first use)."""
        return self._build_later_panels()["schedule"]

    def _build_status(self) -> None:
        sb = self.statusBar()
        # Permanent widgets sit at the right; the left is for messages and the hover read-out.
        self.summary_label = QLabel()
        self.cursor_label = QLabel("x —  y —")
        self.cursor_label.setMinimumWidth(190)
        sb.addPermanentWidget(self.summary_label)
        sb.addPermanentWidget(self.cursor_label)
        self.hover_text = ""
