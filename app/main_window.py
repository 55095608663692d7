"""The workbench window: the canvas in the middle, panels docked around it, files and undo.

``run_workbench(project_path)`` is what the ``swathe`` command calls: it creates the
application, offers to recover an autosave a crash left behind, opens the project (the bundled
demo when none is given), shows the window and runs the event loop.

Every failure of user input (a bad project, floor plan, DXF or SVG) becomes one dialog that
names the file and the place in it; the open document is never replaced by a broken one.
"""

from __future__ import annotations

import dataclasses
import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

from PySide6.QtCore import QSettings, Qt, QTimer, Signal
from PySide6.QtGui import QAction, QActionGroup, QKeySequence
from PySide6.QtWidgets import (
    QApplication,
    QCheckBox,
    QComboBox,
    QDialog,
    QDialogButtonBox,
    QDockWidget,
    QDoubleSpinBox,
    QFileDialog,
    QFormLayout,
    QHBoxLayout,
    QInputDialog,
    QLabel,
    QMainWindow,
    QMessageBox,
    QToolBar,
    QVBoxLayout,
    QWidget,
)

from kinematics.analysis.report_text import CAUTION as SAFETY_CAUTION
from kinematics.errors import SwatheInputError
from kinematics.files.project import Route, Waypoint, route_transitions

from .autosave import AutosaveEntry, Autosaver, discard, pending_autosaves, recover_into
from .canvas import PlanCanvas
from .document import Document, clearance_words

SAMPLES = Path(__file__).resolve().parents[1] / "sample_floorplans"
DEMO_PROJECT = SAMPLES / "demo.swathe.json"
PROJECT_FILTER = "Swathe projects (*.swathe.json);;JSON (*.json);;All files (*)"
FLOOR_FILTER = ("Floor plans (*.floor.json *.dxf *.svg);;Swathe floor plan (*.floor.json);;"
                "DXF drawing (*.dxf);;SVG drawing (*.svg);;All files (*)")
OPEN_FILTER = ("Swathe projects (*.swathe.json);;Floor plans, for a new project "
               "(*.floor.json *.dxf *.svg);;JSON (*.json);;All files (*)")
MAX_RECENT = 8
ROLES = ("ignore", "walls", "obstacles", "doors", "keep-out zone", "slow zone",
         "margin zone", "one-way zone")
#: A zone role's kind, and its number's ``(key, suffix, minimum, maximum, default)``.
ZONE_ROLES = {"keep-out zone": ("keep_out", None), "slow zone": ("slow", ("speed_mps", " m/s",
                                                                        0.01, 1000.0, 0.5)),
              "margin zone": ("margin", ("margin_m", " m", 0.0, 100.0, 0.3)),
              "one-way zone": ("one_way", ("direction_deg", " deg", -360.0, 360.0, 0.0))}


def _version() -> str:
    try:
        from importlib.metadata import version

        return version("swathe")
    except Exception:  # noqa: BLE001 - a source checkout without metadata still runs
        return "0.1"


class DxfImportDialog(QDialog):
    """Pick the role of each DXF layer, the drawing units and the wall thickness."""

    def __init__(self, path: Path, layers: list[str], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        from kinematics.files.dxf_import import guess_role

        self.setWindowTitle(f"Import {path.name}")
        lay = QVBoxLayout(self)
        lay.addWidget(QLabel("What does each layer of the drawing hold?"))
        form = QFormLayout()
        self.combos: dict[str, QComboBox] = {}
        self.values: dict[str, QDoubleSpinBox] = {}  # a zone layer's speed, margin, direction
        for name in layers:
            cb = QComboBox()
            cb.addItems(ROLES)
            guess = guess_role(name)
            cb.setCurrentText(guess if guess in ROLES else "walls")
            spin = QDoubleSpinBox()
            spin.setDecimals(2)
            row = QWidget()
            hl = QHBoxLayout(row)
            hl.setContentsMargins(0, 0, 0, 0)
            hl.addWidget(cb, 1)
            hl.addWidget(spin)
            form.addRow(name, row)
            self.combos[name] = cb
            self.values[name] = spin
            cb.currentTextChanged.connect(lambda role, sp=spin: self._role_changed(role, sp))
            self._role_changed(cb.currentText(), spin)
        self.units = QComboBox()
        self.units.addItems(["from the file", "mm", "cm", "m", "in", "ft"])
        form.addRow("Drawing units", self.units)
        self.thickness = QDoubleSpinBox()
        self.thickness.setRange(0.01, 2.0)
        self.thickness.setDecimals(3)
        self.thickness.setSingleStep(0.05)
        self.thickness.setValue(0.1)
        self.thickness.setSuffix(" m")
        form.addRow("Thickness of open wall lines", self.thickness)
        lay.addLayout(form)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)

    @staticmethod
    def _role_changed(role: str, spin: QDoubleSpinBox) -> None:
        """Show the number a zone layer needs (speed cap, margin, direction) beside it."""
        field = ZONE_ROLES.get(role, (None, None))[1]
        spin.setVisible(field is not None)
        if field is not None:
            _key, suffix, lo, hi, default = field
            spin.setRange(lo, hi)
            spin.setSuffix(suffix)
            spin.setValue(default)

    def options(self) -> dict[str, Any]:
        """Options for :func:`kinematics.files.loader.load_floorplan`, as a project file's
        import object holds them (zone layers as ``{"layer", "kind", ...}``)."""
        roles: dict[str, list[str]] = {"walls": [], "obstacles": [], "doors": []}
        zones: list[dict[str, Any]] = []
        for name, cb in self.combos.items():
            role = cb.currentText()
            if role in roles:
                roles[role].append(name)
            elif role in ZONE_ROLES:
                kind, field = ZONE_ROLES[role]
                z: dict[str, Any] = {"layer": name, "kind": kind}
                if field is not None:
                    z[field[0]] = self.values[name].value()
                zones.append(z)
        opts: dict[str, Any] = {"layers": roles, "wall_thickness_m": self.thickness.value()}
        if zones:
            opts["zones"] = zones
        if self.units.currentIndex() > 0:
            opts["units"] = self.units.currentText()
        return opts


class SvgImportDialog(QDialog):
    """The SVG drawing's scale, and which of its groups (layers) are zones."""

    def __init__(self, path: Path, groups: list[str], parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.setWindowTitle(f"Import {path.name}")
        lay = QVBoxLayout(self)
        form = QFormLayout()
        self.scale = QDoubleSpinBox()
        self.scale.setDecimals(6)
        self.scale.setRange(1e-6, 1000.0)
        self.scale.setValue(0.01)
        self.scale.setSuffix(" m")
        form.addRow("Metres per SVG unit (0.01: drawn in cm)", self.scale)
        if groups:
            form.addRow(QLabel("Groups read as zones (the rest as drawn):"))
        self.combos: dict[str, QComboBox] = {}
        self.values: dict[str, QDoubleSpinBox] = {}
        for name in groups:
            cb = QComboBox()
            cb.addItems(["as drawn", *ZONE_ROLES])
            spin = QDoubleSpinBox()
            spin.setDecimals(2)
            row = QWidget()
            hl = QHBoxLayout(row)
            hl.setContentsMargins(0, 0, 0, 0)
            hl.addWidget(cb, 1)
            hl.addWidget(spin)
            form.addRow(name, row)
            self.combos[name] = cb
            self.values[name] = spin
            cb.currentTextChanged.connect(
                lambda role, sp=spin: DxfImportDialog._role_changed(role, sp))
            DxfImportDialog._role_changed(cb.currentText(), spin)
        lay.addLayout(form)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Ok
                                   | QDialogButtonBox.StandardButton.Cancel)
        buttons.accepted.connect(self.accept)
        buttons.rejected.connect(self.reject)
        lay.addWidget(buttons)

    def options(self) -> dict[str, Any]:
        """Options for :func:`kinematics.files.loader.load_floorplan`, as a project file's
        import object holds them."""
        opts: dict[str, Any] = {"metres_per_unit": self.scale.value()}
        zones = []
        for name, cb in self.combos.items():
            if cb.currentText() in ZONE_ROLES:
                kind, field = ZONE_ROLES[cb.currentText()]
                z: dict[str, Any] = {"layer": name, "kind": kind}
                if field is not None:
                    z[field[0]] = self.values[name].value()
                zones.append(z)
        if zones:
            opts["zones"] = zones
        return opts


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


class MainWindow(QMainWindow):
    """The Swathe workbench.

    Parameters
    ----------
    doc : Document, optional
    settings : QSettings, optional
        Where recent files are kept (tests pass their own).
    autosave_dir : Path, optional
        Where autosaves go (default: the application-data folder).
    """

    taskFinished = Signal()

    def __init__(self, doc: Document | None = None, settings: QSettings | None = None,
                 autosave_dir: Path | None = None) -> None:
        super().__init__()
        self.doc = doc if doc is not None else Document()
        self.settings = settings if settings is not None else QSettings("Swathe", "Swathe")
        self.autosaver = Autosaver(self.doc, directory=autosave_dir)
        self.error_box: QMessageBox | None = None
        self.about_box: QMessageBox | None = None
        self._task: Any = None  # the running background job, if any
        self.first_shown_at: float | None = None
        self._last_hover_shown = ""
        self.setAcceptDrops(True)
        self.resize(1360, 860)

        self.canvas = PlanCanvas(self.doc, self)
        self.setCentralWidget(self.canvas)
        self._build_actions()
        self._build_menus()
        self._build_toolbars()
        self._build_docks()
        self._build_status()

        d = self.doc
        d.fileStateChanged.connect(self._update_title)
        d.routesChanged.connect(self._refresh_route_bar)
        d.currentRouteChanged.connect(self._refresh_route_bar)
        d.projectReplaced.connect(self._refresh_route_bar)
        d.chassisChanged.connect(self._refresh_route_bar)  # the transitions default follows it
        d.resultsChanged.connect(self._refresh_summary)
        # A message about the project before ("Opened demo.swathe.json") no longer holds.
        d.projectReplaced.connect(self.statusBar().clearMessage)
        d.currentRouteChanged.connect(lambda _i: self._refresh_summary())
        self.canvas.cursorMoved.connect(self._cursor)
        self.canvas.hoverInfo.connect(self._hover)
        self.canvas.message.connect(lambda m: self.statusBar().showMessage(m, 6000))
        self.canvas.selectionChanged.connect(self._selection_changed)
        self.canvas.modeChanged.connect(self._mode_changed)
        self._refresh_route_bar()
        self._refresh_summary()
        self._update_title()
        self._rebuild_recent()

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

    # -- status -----------------------------------------------------------------------------
    #: Pixels kept free between the hover read-out and the summary on the right.
    STATUS_GAP_PX = 16

    def status_room_px(self) -> int:
        """How wide a status message may be without running into the summary."""
        sb = self.statusBar()
        right = min([w.x() for w in (self.summary_label, self.cursor_label) if w.isVisible()]
                    or [sb.width()])
        return max(0, right - 8 - self.STATUS_GAP_PX)  # Qt starts messages 6 px in

    def _hover(self, text: str) -> None:
        self.hover_text = text
        shown = text
        if text:
            # Cut with an ellipsis where the summary starts (the canvas's tooltip has it all).
            shown = self.statusBar().fontMetrics().elidedText(
                text, Qt.TextElideMode.ElideRight, self.status_room_px())
            self.statusBar().showMessage(shown)
        elif self.statusBar().currentMessage() == self._last_hover_shown:
            self.statusBar().clearMessage()
        self._last_hover_shown = shown

    def _cursor(self, x: float, y: float) -> None:
        self.cursor_label.setText(f"x {x:8.2f} m   y {y:8.2f} m")

    def _update_title(self) -> None:
        name = self.doc.path.name if self.doc.path else "untitled"
        self.setWindowTitle(f"{name}[*] — Swathe")
        self.setWindowModified(self.doc.dirty)

    def _refresh_summary(self) -> None:
        r = self.doc.route()
        if r is None:
            self.summary_label.setText("No route yet: press A and click twice on the plan.")
            return
        err = self.doc.error(r.name)
        chk = self.doc.check(r.name)
        if err and chk is None:
            self.summary_label.setText(f"{r.name}: cannot plan — {err}")
            return
        if chk is None:
            self.summary_label.setText(f"{r.name}: not checked")
            return
        plan = self.doc.plan(r.name)
        from kinematics.motion.segments import path_length

        length = path_length(plan.segments) if plan is not None else 0.0
        n = len(chk.violations)
        state = "all clear" if chk.clear else f"{n} problem{'s' if n != 1 else ''}"
        mc = chk.min_clearance_m
        near = clearance_words(mc) if mc is not None else "nothing solid"
        self.summary_label.setText(f"{r.name}: {length:.1f} m, {state}, {near}  ")

    def _selection_changed(self, i: int) -> None:
        r = self.doc.route()
        has = r is not None and 0 <= i < len(r.waypoints)
        self.act_delete.setEnabled(has)
        self.act_clear_heading.setEnabled(has and r.waypoints[i].heading_deg is not None)

    def _mode_changed(self, mode: str) -> None:
        if mode in self.plan_mode_actions:
            self.plan_mode_actions[mode].setChecked(True)
        else:
            (self.act_add if mode == "add" else self.act_select).setChecked(True)

    def _toggle_band(self, on: bool) -> None:
        self.canvas.show_band = on
        self.canvas.refresh_routes()

    def _set_outlines(self, spacing: float | None) -> None:
        self.canvas.outline_spacing_m = spacing
        self.canvas.refresh_routes()

    def _clear_heading(self) -> None:
        i = self.canvas.selected
        if self.doc.route() is not None and i >= 0:
            self.doc.set_waypoint_heading(self.doc.current_route, i, None)
            self._selection_changed(i)

    # -- routes -----------------------------------------------------------------------------
    def _refresh_route_bar(self, *_args) -> None:
        names = self.doc.route_names()
        self.route_combo.blockSignals(True)
        # Refill only when the names changed: a drag emits routesChanged on every step.
        if names != [self.route_combo.itemText(k) for k in range(self.route_combo.count())]:
            self.route_combo.clear()
            self.route_combo.addItems(names)
        if self.route_combo.currentIndex() != self.doc.current_route:
            self.route_combo.setCurrentIndex(self.doc.current_route)
        self.route_combo.blockSignals(False)
        r = self.doc.route()
        for w in (self.radius_spin, self.reverse_check, self.transitions_check,
                  self.act_route_rename, self.act_route_remove, self.act_export):
            w.setEnabled(r is not None)
        if r is not None:
            if self.radius_spin.value() != r.turn_radius_m:
                self.radius_spin.blockSignals(True)
                self.radius_spin.setValue(r.turn_radius_m)
                self.radius_spin.blockSignals(False)
            if self.reverse_check.isChecked() != r.reverse:
                self.reverse_check.setChecked(r.reverse)
            cc = route_transitions(r, self.doc.project.chassis) == "clothoid"
            if self.transitions_check.isChecked() != cc:
                self.transitions_check.setChecked(cc)
        self._selection_changed(self.canvas.selected)

    def new_route(self, name: str | None = None) -> None:
        """Add a route with two waypoints across the middle of the view and make it current."""
        (x0, x1), (y0, y1) = self.canvas.view.viewRange()
        ym = (y0 + y1) / 2.0
        wps = (Waypoint(x0 + 0.35 * (x1 - x0), ym), Waypoint(x0 + 0.65 * (x1 - x0), ym))
        self.doc.add_route(Route(name or self.doc.unique_route_name(), wps))

    def rename_route(self, new_name: str) -> bool:
        r = self.doc.route()
        if r is None:
            return False
        try:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, name=new_name))
        except ValueError as exc:
            self.show_error("Cannot rename the route", str(exc))
            return False
        return True

    def _menu_rename_route(self) -> None:
        r = self.doc.route()
        if r is None:
            return
        name, ok = QInputDialog.getText(self, "Rename route", "New name:", text=r.name)
        if ok and name.strip() and name != r.name:
            self.rename_route(name.strip())

    def _remove_route(self) -> None:
        r = self.doc.route()
        if r is None:
            return
        # Undoable, so no question first; the status says what went and how to get it back.
        self.doc.remove_route(self.doc.current_route)
        key = self.act_undo.shortcut().toString(QKeySequence.SequenceFormat.NativeText)
        self.statusBar().showMessage(f"Removed route {r.name!r}; {key or 'Undo'} restores it",
                                     10000)

    def _radius_edited(self) -> None:
        r = self.doc.route()
        v = round(self.radius_spin.value(), 4)
        if r is not None and v != r.turn_radius_m:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, turn_radius_m=v))

    def _transitions_edited(self, on: bool) -> None:
        r = self.doc.route()
        want = "clothoid" if on else "none"
        if r is not None and r.transitions != want:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, transitions=want))

    def _reverse_edited(self, on: bool) -> None:
        r = self.doc.route()
        if r is not None and on != r.reverse:
            self.doc.set_route(self.doc.current_route, dataclasses.replace(r, reverse=on))

    # -- messages ---------------------------------------------------------------------------
    def show_error(self, title: str, text: str) -> QMessageBox:
        """One window-modal message; kept in ``error_box`` (it does not block the caller)."""
        box = QMessageBox(QMessageBox.Icon.Warning, title, text, QMessageBox.StandardButton.Ok,
                          self)
        box.setWindowModality(Qt.WindowModality.WindowModal)
        box.open()
        self.error_box = box
        return box

    def show_input_error(self, exc: SwatheInputError, action: str) -> QMessageBox:
        return self.show_error(f"Swathe could not {action}",
                               f"{exc.message}\n\nNothing was changed in the open project.")

    def show_guide(self) -> QDialog:
        """Help > Guide: modes, shortcuts (read from the actions now) and words."""
        from .guide import GuideDialog

        if self.guide_box is None:
            self.guide_box = GuideDialog(self)
        else:
            self.guide_box.reload()
        self.guide_box.show()
        self.guide_box.raise_()
        return self.guide_box

    def show_about(self) -> QMessageBox:
        box = QMessageBox(self)
        box.setWindowTitle("About Swathe")
        box.setIcon(QMessageBox.Icon.Information)
        box.setTextFormat(Qt.TextFormat.RichText)
        box.setText(f"<h3>Swathe {_version()}</h3><p>Lay out routes for wheeled robots and "
                    "carts on a floor plan, see the swept footprint, find what is in the way "
                    "and export wheel-rate schedules.</p>"
                    f"<p><b>Caution.</b> {SAFETY_CAUTION}</p>")
        box.open()
        self.about_box = box
        return box

    # -- files ------------------------------------------------------------------------------
    def confirm_discard(self) -> bool:
        """Ask to save unsaved changes; True when the caller may go on."""
        if not self.doc.dirty:
            return True
        ans = QMessageBox.question(
            self, "Unsaved changes", f"Save the changes to {self.doc.title().rstrip(' *')}?",
            QMessageBox.StandardButton.Save | QMessageBox.StandardButton.Discard
            | QMessageBox.StandardButton.Cancel)
        if ans == QMessageBox.StandardButton.Save:
            return self._menu_save()
        return ans == QMessageBox.StandardButton.Discard

    @staticmethod
    def is_floorplan_path(path: str | Path) -> bool:
        """A floor-plan file (native, DXF or SVG) rather than a project."""
        p = Path(path)
        return p.name.lower().endswith(".floor.json") or p.suffix.lower() in (".dxf", ".svg")

    def ask_new_from_plan(self, path: Path) -> bool:
        """Asked when Open project is given a floor plan: start a new project on it?"""
        ans = QMessageBox.question(
            self, "Open a floor plan",
            f"{path.name} is a floor plan, not a project.\n\nStart a new project on it?",
            QMessageBox.StandardButton.Yes | QMessageBox.StandardButton.Cancel)
        return ans == QMessageBox.StandardButton.Yes

    def new_project_from_floorplan(self, path: str | Path, options: dict[str, Any] | None = None,
                                   background: bool = True) -> bool:
        """A new project (default chassis, no routes) on the floor plan at ``path``."""
        self.doc.new_project()
        return self.open_floorplan_file(path, options, background)

    def open_project_file(self, path: str | Path) -> bool:
        """Open a project; a bad file shows one message and keeps the current document.

        Given a floor plan instead, offers a new project on it."""
        if self.is_floorplan_path(path):
            if not self.ask_new_from_plan(Path(path)):
                return False
            return self.new_project_from_floorplan(path)
        try:
            self.doc.open_project(path)
        except SwatheInputError as exc:
            self.show_input_error(exc, "open the project")
            return False
        self._add_recent(Path(path))
        self.canvas.fit()
        self.statusBar().showMessage(f"Opened {Path(path).name}", 5000)
        return True

    def open_floorplan_file(self, path: str | Path, options: dict[str, Any] | None = None,
                            background: bool = True) -> bool:
        """Use a floor plan file (native, DXF or SVG) in the open project.

        For DXF without ``options`` the layer dialog asks; for SVG the scale is asked.
        Loading runs off the GUI thread with a cancellable progress dialog.
        """
        p = Path(path).resolve()
        suffix = p.suffix.lower()
        if options is None:
            options = {}
            if suffix == ".dxf":
                try:
                    from kinematics.files.dxf_import import dxf_layers

                    layers = dxf_layers(p)
                except SwatheInputError as exc:
                    self.show_input_error(exc, "read the drawing")
                    return False
                dlg = DxfImportDialog(p, layers, self)
                if dlg.exec() != QDialog.DialogCode.Accepted:
                    return False
                options = dlg.options()
            elif suffix == ".svg":
                try:
                    from kinematics.files.svg_import import svg_groups

                    groups = svg_groups(p)
                except SwatheInputError as exc:
                    self.show_input_error(exc, "read the drawing")
                    return False
                sdlg = SvgImportDialog(p, groups, self)
                if sdlg.exec() != QDialog.DialogCode.Accepted:
                    return False
                options = sdlg.options()
        if suffix in (".dxf", ".svg"):
            ref: str | dict = {"file": str(p), **options}
        else:
            ref = str(p)

        def load():
            from kinematics.files.floorplan import zone_layers_from
            from kinematics.files.loader import load_floorplan

            opts = dict(options)
            if opts.get("zones"):  # the import object's zone layers, as a project reads them
                opts["zones"] = zone_layers_from(opts["zones"], str(p), "zones")
            return load_floorplan(p, **opts)

        def done(fp) -> None:
            self.doc.set_floorplan(fp, ref)
            self._add_recent(p)
            self.canvas.fit()
            self.statusBar().showMessage(f"Floor plan {p.name}: {len(fp.walls)} walls, "
                                         f"{len(fp.obstacles)} obstacles, {len(fp.doors)} doors"
                                         + (f", {len(fp.zones)} zones" if fp.zones else ""),
                                         8000)

        def failed(text: str) -> None:
            if str(p) not in text:
                text = f"{p}: {text}"
            self.show_error("Swathe could not import the floor plan",
                            f"{text}\n\nNothing was changed in the open project.")

        if not background:
            from .workers import error_text

            try:
                done(load())
            except Exception as exc:  # noqa: BLE001 - every failure becomes one dialog
                failed(error_text(exc))
                return False
            return True
        self.run_task(f"Reading {p.name}...", load, done, failed)
        return True

    def run_task(self, label: str, fn: Callable[[], Any], done: Callable[[Any], None],
                 failed: Callable[[str], None]) -> None:
        """Run ``fn`` off the GUI thread behind a progress dialog; Cancel drops its result."""
        from .workers import ProgressDialog, run_in_background

        dlg = ProgressDialog(label, self)
        dlg.setRange(0, 0)  # the importers report no fractions: a busy bar

        # The job may finish before anything can be connected to it after it starts, so
        # every ending goes through the callbacks, which are connected before the start.
        def end() -> None:
            dlg.reset()
            dlg.close()
            dlg.deleteLater()
            self._task = None
            self.taskFinished.emit()

        def ok(out: Any) -> None:
            end()
            done(out)

        def bad(text: str) -> None:
            end()
            failed(text)

        def cancelled() -> None:
            end()
            self.statusBar().showMessage("Cancelled; the open project is unchanged.", 5000)

        job = run_in_background(lambda _token: fn(), done_cb=ok, error_cb=bad,
                                cancelled_cb=cancelled, parent=self)
        dlg.canceled.connect(job.cancel)
        self._task = job

    def save_to(self, path: str | Path | None = None) -> bool:
        try:
            target = self.doc.save(path)
        except (OSError, ValueError) as exc:
            self.show_error("Swathe could not save", f"{path or self.doc.path}: {exc}")
            return False
        self._add_recent(target)
        self.statusBar().showMessage(f"Saved {target}", 5000)
        return True

    def export_schedule(self, path: str | Path, fmt: str | None = None) -> bool:
        """Write the current route's schedule as CSV or JSON (by ``fmt`` or the suffix)."""
        from kinematics.files.jsonio import atomic_write_text, dumps
        from kinematics.timing.schedule import schedule_to_csv, schedule_to_dict

        r = self.doc.route()
        if r is None:
            self.show_error("Nothing to export", "The project has no route yet.")
            return False
        sched = self.doc.schedule(r.name)
        if sched is None:
            self.show_error("Nothing to export", f"Route {r.name!r} could not be planned: "
                            f"{self.doc.error(r.name) or 'no drivable segments'}")
            return False
        p = Path(path)
        fmt = fmt or ("csv" if p.suffix.lower() == ".csv" else "json")
        text = schedule_to_csv(sched) if fmt == "csv" else dumps(schedule_to_dict(sched))
        try:
            atomic_write_text(p, text)
        except OSError as exc:
            self.show_error("Swathe could not export", f"{p}: {exc.strerror or exc}")
            return False
        self.statusBar().showMessage(f"Schedule of {r.name!r} written to {p}", 6000)
        return True

    def current_sizing(self) -> dict | None:
        """The results panel's sizing answers if they still hold for what is open."""
        panel = self.results_panel
        return panel.current_sizing() if hasattr(panel, "current_sizing") else None

    def export_report(self, path: str | Path) -> bool:
        """Write the one-page report (PDF or PNG by the suffix) of every route.

        The sizing answers the results panel holds for the current route go into the report
        (answers made stale by an edit do not).
        """
        from .report import export_report

        p = Path(path)
        QApplication.setOverrideCursor(Qt.CursorShape.WaitCursor)
        try:
            export_report(self.doc.project, p, sizing=self.current_sizing())
        except SwatheInputError as exc:
            self.show_error("Swathe could not write the report", exc.message)
            return False
        except OSError as exc:
            self.show_error("Swathe could not write the report", f"{p}: {exc.strerror or exc}")
            return False
        finally:
            QApplication.restoreOverrideCursor()
        self.statusBar().showMessage(f"Report written to {p}", 6000)
        return True

    def export_picture(self, path: str | Path) -> bool:
        """Write the plan picture as ``swathe render PROJECT -o FILE.png`` does."""
        from .render import render_project_png

        p = Path(path)
        if p.suffix.lower() != ".png":
            self.show_error("Swathe could not write the picture",
                            f"{p}: expected a file name ending in .png")
            return False
        QApplication.setOverrideCursor(Qt.CursorShape.WaitCursor)
        try:
            render_project_png(self.doc.project, p)
        except SwatheInputError as exc:
            self.show_error("Swathe could not write the picture", exc.message)
            return False
        except OSError as exc:
            self.show_error("Swathe could not write the picture", f"{p}: {exc.strerror or exc}")
            return False
        finally:
            QApplication.restoreOverrideCursor()
        self.statusBar().showMessage(f"Picture written to {p}", 6000)
        return True

    def _export_base(self) -> Path:
        name = self.doc.path.name if self.doc.path else "untitled.swathe.json"
        for end in (".swathe.json", ".json"):
            if name.endswith(end):
                name = name[: -len(end)]
                break
        return Path(self._start_dir()) / name

    def _menu_report(self) -> None:
        path, chosen = QFileDialog.getSaveFileName(
            self, "Export report", str(self._export_base()) + ".report.pdf",
            "PDF (*.pdf);;PNG picture of the page (*.png)")
        if path:
            if Path(path).suffix.lower() not in (".pdf", ".png"):
                path += ".png" if chosen.startswith("PNG") else ".pdf"
            self.export_report(path)

    def _menu_picture(self) -> None:
        path, _ = QFileDialog.getSaveFileName(self, "Export plan picture",
                                              str(self._export_base()) + ".png", "PNG (*.png)")
        if path:
            if Path(path).suffix.lower() != ".png":
                path += ".png"
            self.export_picture(path)

    def _start_dir(self) -> str:
        return str(self.doc.path.parent) if self.doc.path else str(Path.home())

    def _menu_new(self) -> None:
        if self.confirm_discard():
            self.doc.new_project()
            self.statusBar().showMessage(
                f"New project: open a floor plan ({_keys(self.act_open_plan)}) or draw walls, "
                f"then press {_keys(self.act_add)} to add a route.", 8000)

    def _menu_open(self) -> None:
        if not self.confirm_discard():
            return
        path, _ = QFileDialog.getOpenFileName(self, "Open project", self._start_dir(),
                                              OPEN_FILTER)
        if path:
            self.open_project_file(path)

    def _menu_new_from_plan(self) -> None:
        if not self.confirm_discard():
            return
        path, _ = QFileDialog.getOpenFileName(self, "New project from floor plan",
                                              self._start_dir(), FLOOR_FILTER)
        if path:
            self.new_project_from_floorplan(path)

    def _menu_open_plan(self) -> None:
        path, _ = QFileDialog.getOpenFileName(self, "Open floor plan", self._start_dir(),
                                              FLOOR_FILTER)
        if path:
            self.open_floorplan_file(path)

    def _menu_save(self) -> bool:
        if self.doc.path is None or not self.doc.path.parent.exists():
            return self._menu_save_as()
        return self.save_to()

    def _menu_save_as(self) -> bool:
        start = str(self.doc.path) if self.doc.path else str(Path.home() / "untitled.swathe.json")
        path, _ = QFileDialog.getSaveFileName(self, "Save project as", start, PROJECT_FILTER)
        if not path:
            return False
        if not path.endswith(".json"):
            path += ".swathe.json"
        return self.save_to(path)

    def _menu_export(self) -> None:
        r = self.doc.route()
        if r is None:
            return
        safe = "".join(c if c.isalnum() or c in "-_" else "_" for c in r.name)
        path, chosen = QFileDialog.getSaveFileName(
            self, "Export schedule", str(Path(self._start_dir()) / f"{safe}.schedule.csv"),
            "CSV (*.csv);;JSON (*.json)")
        if path:
            self.export_schedule(path, "json" if chosen.startswith("JSON") else None)

    def open_any(self, path: str | Path) -> bool:
        """Open a dropped or recent file: a project, or a floor plan for this project."""
        p = Path(path)
        name = p.name.lower()
        if name.endswith(".floor.json") or p.suffix.lower() in (".dxf", ".svg"):
            return self.open_floorplan_file(p)
        if not self.confirm_discard():
            return False
        return self.open_project_file(p)

    # -- recent files -----------------------------------------------------------------------
    def recent_files(self) -> list[str]:
        v = self.settings.value("recent_files", [])
        if isinstance(v, str):
            v = [v]
        return [str(x) for x in (v or [])]

    def _add_recent(self, path: Path) -> None:
        s = str(Path(path).resolve())
        items = [s] + [x for x in self.recent_files() if x != s]
        self.settings.setValue("recent_files", items[:MAX_RECENT])
        self._rebuild_recent()

    def _rebuild_recent(self) -> None:
        self.recent_menu.clear()
        items = self.recent_files()
        for k, p in enumerate(items):
            a = self.recent_menu.addAction(f"&{k + 1} {Path(p).name}   ({Path(p).parent})")
            a.triggered.connect(lambda _c=False, q=p: self.open_any(q))
        self.recent_menu.setEnabled(bool(items))

    # -- drag and drop ----------------------------------------------------------------------
    @staticmethod
    def _dropped_path(mime) -> Path | None:
        for url in mime.urls() if mime.hasUrls() else []:
            if url.isLocalFile():
                p = Path(url.toLocalFile())
                if p.name.lower().endswith(".json") or p.suffix.lower() in (".dxf", ".svg"):
                    return p
        return None

    def dragEnterEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        if self._dropped_path(ev.mimeData()) is not None:
            ev.acceptProposedAction()
        else:
            ev.ignore()

    def dropEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        p = self._dropped_path(ev.mimeData())
        if p is not None:
            ev.acceptProposedAction()
            QTimer.singleShot(0, lambda: self.open_any(p))

    # -- recovery and life cycle ------------------------------------------------------------
    def offer_recovery(self, ask: Callable[[AutosaveEntry], bool] | None = None,
                       choose: Callable[[list[AutosaveEntry]], AutosaveEntry | None]
                       | None = None) -> bool:
        """Offer the autosaves a crash left; True if one was recovered.

        ``choose`` picks one of the entries (newest first) or ``None``; by default the
        recovery dialog asks the user, who may also delete some or keep them all for later.
        ``ask`` is the older form: a yes or no for the newest. Entries not recovered stay on
        disk unless the user deleted them.
        """
        entries = pending_autosaves(self.autosaver.directory)
        if not entries:
            return False
        if choose is None and ask is not None:
            def choose(es: list[AutosaveEntry]) -> AutosaveEntry | None:
                return es[0] if ask(es[0]) else None
        if choose is None:
            from .recovery import RecoveryDialog

            def choose(es: list[AutosaveEntry]) -> AutosaveEntry | None:
                dlg = RecoveryDialog(es, self)
                dlg.exec()
                return dlg.chosen

        entry = choose(entries)
        if entry is None:
            return False
        try:
            recover_into(self.doc, entry)
        except SwatheInputError as exc:
            self.show_input_error(exc, "recover the autosave")
            return False
        # The recovered work is autosaved again under this session; an untitled project's
        # old copy (named after the crashed process) is then no longer needed.
        try:
            written = self.autosaver.save_now()
        except OSError:
            written = entry.file
        if written != entry.file:
            discard(entry)
        self.canvas.fit()
        return True

    def showEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        super().showEvent(ev)
        if not self._legend_tabified:
            self._legend_tabified = True
            self.tabifyDockWidget(self.results_dock, self.legend_dock)
            self.results_dock.raise_()
        if self.first_shown_at is None:
            self.first_shown_at = time.perf_counter()

    def closeEvent(self, ev) -> None:  # noqa: N802 - Qt's name
        if not self.confirm_discard():
            ev.ignore()
            return
        self.autosaver.shutdown()
        ev.accept()


def run_workbench(project_path: str | None) -> int:
    """Open the workbench on ``project_path`` (default: the bundled demo) and run it.

    Returns the application's exit code.
    """
    app = QApplication.instance() or QApplication(sys.argv[:1])
    app.setApplicationName("Swathe")
    app.setOrganizationName("Swathe")
    win = MainWindow()
    recovered = win.offer_recovery()
    if not recovered:
        target = Path(project_path) if project_path else DEMO_PROJECT
        if target.exists():
            win.open_project_file(target)
        else:
            win.statusBar().showMessage(f"{target} not found; starting an empty project", 8000)
    win.show()
    return int(app.exec())
