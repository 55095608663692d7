"""The plan scene: what to draw, as styled primitives, for the two painters that draw it.

The interactive canvas (:mod:`app.canvas`) and the picture and report painter
(:mod:`app.render`) both draw from here, so a wall, a door, a route, a swept band, a footprint
outline and each violation's marker look the same in the window, the PNG and the report:

- :data:`STYLES`: the one table of strokes and fills by role (colours from :mod:`app.palette`);
- :data:`VIOLATION_SHAPES` and :func:`marker_polygon`: the one marker outline per violation
  kind (a triangle for "short of margin" points up everywhere);
- :func:`floorplan_layer`, :func:`route_layer`, :func:`violation_layer`: the primitives
  (filled polygons, polylines, markers, labels with placement hints) built from the analysis
  (:mod:`kinematics.analysis.results`) and the core's plans and checks;
- :func:`zone_layer`, :func:`zone_caption`, :data:`ZONE_WORDS`: how zones look (one style per
  kind in :data:`STYLES`, ``zone_<kind>``: fill, hatch pattern, outline dash, ink);
- :func:`legend_rows`: the legend's rows, in the order and words every legend uses;
- the geometry the primitives are placed at (points along segments, outline poses, the swept
  band's per-segment pieces) is :mod:`app.scene_geometry`'s, read from here as well.

It lives in ``app/`` because it is about drawing (roles, pixels, colours), but it imports no
Qt: the primitives are plain data (shapely geometry, numpy arrays, strings), so a test can
read a scene without a screen and each painter turns it into its own Qt objects. The canvas
keeps its per-segment caches for the route being dragged (the drag step must stay within a
frame) and takes their styles from :data:`STYLES`; everything else it draws comes from the
layers here.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from kinematics.analysis.results import (
    VIOLATION_WORDS,
    door_clearances,
    violation_label,
    violations_of,
)

from .palette import (
    BLACK,
    BLUE,
    GREEN,
    OBSTACLE_FILL,
    ORANGE,
    PURPLE,
    SKY,
    VERMILLION,
    WALL_FILL,
)
from .scene_geometry import (  # noqa: F401 - the geometry is read from app.scene too
    band_bounds,
    band_piece,
    band_pieces,
    outline_poses,
    place_footprint,
    sample_path,
    sample_segments,
    segment_outline_poses,
    segment_outline_stations,
    segment_samples,
    swept_geometry,
)

INK = "#1A1A1A"
FAINT_INK = "#5C5C5C"
#: Route path colours in turn (one per route, by its place in the project), dark on white and
#: none of them the doors' orange.
ROUTE_COLOURS = (BLUE, PURPLE, GREEN, BLACK)


@dataclass(frozen=True)
class Stroke:
    """A line: colour, width in pixels at the default size, dash and opacity (0-255)."""

    colour: str
    width_px: float = 1.0
    dash: str = "solid"  # "solid" | "dash" | "dot" | "dashdot"
    alpha: int = 255


#: Hatch patterns an area may carry over its fill (each painter maps them to its brushes).
HATCH_PATTERNS = ("bdiag", "fdiag", "cross", "hor", "ver")


@dataclass(frozen=True)
class Fill:
    """An area fill; ``hatch`` adds lines of ``hatch_colour`` (opacity ``hatch_alpha``) over
    it in ``pattern`` (one of :data:`HATCH_PATTERNS`: diagonal up or down, diagonal cross,
    horizontal, vertical)."""

    colour: str
    alpha: int = 255
    hatch: bool = False
    hatch_colour: str = "#6E6E6E"
    pattern: str = "bdiag"
    hatch_alpha: int = 255


@dataclass(frozen=True)
class Style:
    """How one role is drawn: its outline (or ``None``), its fill (or ``None``), and for
    labels the ink of the text."""

    stroke: Stroke | None = None
    fill: Fill | None = None
    ink: str = INK


#: The one style table. Widths are screen pixels (the canvas draws them as they are; the
#: picture scales them with its layout unit).
STYLES: dict[str, Style] = {
    "wall": Style(Stroke(BLACK, 0.8), Fill(WALL_FILL)),
    "obstacle": Style(Stroke(BLACK, 1.0), Fill(OBSTACLE_FILL, hatch=True)),
    # A door: a white gap through whatever is drawn under it, then the orange opening.
    "door_gap": Style(Stroke("#FFFFFF", 6.0)),
    "door": Style(Stroke(ORANGE, 4.0)),
    "jamb": Style(Stroke(BLACK, 1.0), Fill(ORANGE)),
    "band": Style(None, Fill(SKY, 100)),
    "outline": Style(Stroke("#3D3D3D", 1.1)),
    "waypoint": Style(Stroke(BLACK, 1.5), Fill("#FFFFFF")),
    "violation": Style(Stroke(BLACK, 1.5), Fill(VERMILLION)),
    "violation_label": Style(Stroke(VERMILLION, 1.0), Fill("#FFFFFF", 225), ink="#5A1E00"),
    "door_label": Style(Stroke(ORANGE, 1.0), Fill("#FFFFFF", 225), ink="#7A4A00"),
    "obstacle_label": Style(None, Fill("#FFFFFF", 210), ink=INK),
    "zone_label": Style(None, Fill("#FFFFFF", 215), ink=INK),
}


def _darker(colour: str, factor: float = 1.4) -> str:
    """``colour`` with its brightness divided by ``factor`` (hue and saturation kept)."""
    rgb = [int(colour[i:i + 2], 16) for i in (1, 3, 5)]
    return "#" + "".join(f"{round(c / factor):02X}" for c in rgb)


# -- zones ----------------------------------------------------------------------------------
#: The zone kinds in legend order; each differs by its hatching and outline as well as its
#: colour (never by colour alone): keep-out cross-hatched vermillion with a solid outline,
#: slow horizontal orange lines dashed, margin diagonal sky-blue dotted, one-way vertical
#: green dash-dotted with arrows along its direction.
ZONE_KINDS = ("keep_out", "slow", "margin", "one_way")
_ZONE_LOOK = {"keep_out": (VERMILLION, "cross", "solid"), "slow": (ORANGE, "hor", "dash"),
              "margin": (SKY, "fdiag", "dot"), "one_way": (GREEN, "ver", "dashdot")}
for _kind, (_colour, _pattern, _dash) in _ZONE_LOOK.items():
    STYLES["zone_" + _kind] = Style(
        Stroke(_colour, 1.6, _dash),
        Fill(_colour, 45, hatch=True, hatch_colour=_colour, pattern=_pattern, hatch_alpha=200),
        ink=_darker(_colour))
STYLES["zone_arrow"] = Style(Stroke(GREEN, 1.0), Fill(GREEN))
ZONE_WORDS = {"keep_out": "keep-out zone", "slow": "slow zone (cap)",
              "margin": "margin zone (margin)", "one_way": "one-way zone (arrows)"}
#: One-way arrows: spacing and half length in pixels at the default size.
ZONE_ARROW_STEP_PX = 40.0
ZONE_ARROW_R_PX = 7.0
#: Marker sizes in pixels (radius) at the default size.
JAMB_R_PX = 3.0
WAYPOINT_R_PX = 7.5
VIOLATION_R_PX = 8.0
#: A waypoint's heading handle (the knob at the end of its heading line, in the route's
#: colour, dragged to turn the
#: heading): a small filled disc, a shape no violation marker has (a diamond marks a blocked
#: waypoint).
HANDLE_SHAPE = "circle"
HANDLE_R_PX = 5.0
#: A turn on the spot: the ring's radius and its line's width, pixels at the default size
#: (:func:`app.qstyle.pivot_paths`), in the route's colour.
PIVOT_R_PX = 11.0
PIVOT_WIDTH_PX = 2.0
#: Route lines, pixels.
ROUTE_WIDTH_PX = 2.5
#: A fixed heading: a line from the waypoint along it, in the route's colour (the window's
#: heading handle, and the picture's heading line), this wide in pixels.
HEADING_WIDTH_PX = 2.0


def route_style(k: int, direction: int = 1) -> Stroke:
    """The stroke of the ``k``-th route of the project; reverse travel is dashed."""
    return Stroke(ROUTE_COLOURS[k % len(ROUTE_COLOURS)], ROUTE_WIDTH_PX,
                  "solid" if direction > 0 else "dash")


# -- markers --------------------------------------------------------------------------------
#: Marker shape per violation kind.
VIOLATION_SHAPES = {"collision": "cross", "clearance": "triangle", "turn_radius": "square",
                    "infeasible": "star", "waypoint_blocked": "diamond", "keep_out": "hexagon",
                    "wrong_way": "chevron"}


def marker_polygon(shape: str) -> np.ndarray | None:
    """The marker's outline for radius 1 in screen axes (x right, y down), closed implicitly;
    ``None`` for a circle."""
    if shape == "cross":
        # A plus sign of arm half-width w, turned 45 degrees into an X.
        w = 0.3
        plus = np.array([(-w, -1), (w, -1), (w, -w), (1, -w), (1, w), (w, w), (w, 1),
                         (-w, 1), (-w, w), (-1, w), (-1, -w), (-w, -w)], float)
        c45 = math.sqrt(0.5)
        return np.column_stack([c45 * (plus[:, 0] - plus[:, 1]),
                                c45 * (plus[:, 0] + plus[:, 1])])
    if shape == "triangle":  # points up on the screen, as a warning sign does
        return np.array([(0.0, -1.0), (0.95, 0.75), (-0.95, 0.75)])
    if shape == "square":
        s = 0.8
        return np.array([(-s, -s), (s, -s), (s, s), (-s, s)])
    if shape == "star":
        k = np.arange(10)
        rr = np.where(k % 2 == 0, 1.0, 0.45)
        a = -math.pi / 2 + k * math.pi / 5
        return np.column_stack([rr * np.cos(a), rr * np.sin(a)])
    if shape == "diamond":
        return np.array([(0.0, -1.0), (1.0, 0.0), (0.0, 1.0), (-1.0, 0.0)])
    if shape == "hexagon":
        k = np.arange(6)
        return np.column_stack([np.cos(k * math.pi / 3), np.sin(k * math.pi / 3)])
    if shape == "arrow":  # points right (turned by a marker's angle): a one-way direction
        return np.array([(-1.0, -0.12), (0.3, -0.12), (0.3, -0.5), (1.0, 0.0), (0.3, 0.5),
                         (0.3, 0.12), (-1.0, 0.12)])
    if shape == "chevron":  # points right, as along a one-way direction
        w = 0.45
        return np.array([(-1, -1), (-1 + w, -1), (1, 0), (-1 + w, 1), (-1, 1),
                         (1 - 1.5 * w, 0)], float)
    return None


# -- primitives -----------------------------------------------------------------------------
@dataclass
class Polygons:
    """Filled shapely polygons of one role."""

    role: str
    geoms: list[Any]


@dataclass
class Polyline:
    """An open line in plan metres (``xy`` of shape (n, 2)) drawn with ``stroke``."""

    xy: np.ndarray
    stroke: Stroke
    role: str = "path"


@dataclass
class Marker:
    """A constant-pixel marker of ``shape`` at plan point ``(x, y)``; ``text`` is drawn in it."""

    role: str
    shape: str
    x: float
    y: float
    r_px: float
    stroke: Stroke | None = None
    text: str = ""
    #: Turned this much counter-clockwise on the plan (an arrow along a one-way direction).
    angle_rad: float = 0.0


@dataclass
class Label:
    """A text label at plan point ``(x, y)`` with placement hints for the painter.

    ``along`` (a unit plan-frame vector) asks first for the spots past the anchor in that
    direction and its opposite (a door's name goes past its jambs, off the route through the
    opening); ``force`` keeps the label even where it must overlap; ``priority`` orders the
    placement (lower first); ``offset_px`` is the gap from the anchor, plus ``reach_m`` metres
    of the plan (half a door's width: its name goes beyond the jamb); ``fit_m``, where set,
    shows the label only where its text fits across that many metres (an obstacle's name
    inside it).
    """

    role: str
    text: str
    x: float
    y: float
    priority: int = 0
    force: bool = False
    along: tuple[float, float] | None = None
    offset_px: float = 11.0
    small: bool = False
    reach_m: float = 0.0
    fit_m: float | None = None
    #: Text colour where it differs from the role's (a zone's name in its kind's colour).
    ink: str | None = None
    #: A zone's name: ``(x, y)`` is the middle of its top edge and the label sits just under
    #: it where the area below is taller than twice the text (``inside_m`` is that height in
    #: metres), else on ``centre``.
    inside_m: float | None = None
    centre: tuple[float, float] | None = None


@dataclass
class Layer:
    """Primitives in drawing order (polygons, then lines, then markers, then labels)."""

    polygons: list[Polygons] = field(default_factory=list)
    lines: list[Polyline] = field(default_factory=list)
    markers: list[Marker] = field(default_factory=list)
    labels: list[Label] = field(default_factory=list)


# -- layers ---------------------------------------------------------------------------------
def floorplan_layer(fp: Any, checks: dict | None = None, solids_list: Sequence[Any] | None = None
                    ) -> Layer:
    """Walls, obstacles, doors and the plan's names.

    A door a checked route passes is labelled with its width and least clearance, always
    shown; other doors with their width, where there is room.
    """
    if solids_list is None:
        from kinematics.files.floorplan import solids

        solids_list = solids(fp)
    layer = Layer()
    layer.polygons.append(Polygons("wall", [s.geometry for s in solids_list
                                            if s.kind == "wall"]))
    obstacles = [s for s in solids_list if s.kind == "obstacle"]
    layer.polygons.append(Polygons("obstacle", [s.geometry for s in obstacles]))
    for s in obstacles:
        if s.label:
            c = s.geometry.representative_point()
            b = s.geometry.bounds
            layer.labels.append(Label("obstacle_label", s.label, c.x, c.y, priority=3,
                                      offset_px=0.0, fit_m=b[2] - b[0]))
    for d in fp.doors:
        xy = np.array([d.a, d.b], float)
        layer.lines.append(Polyline(xy, STYLES["door_gap"].stroke, "door_gap"))
        layer.lines.append(Polyline(xy, STYLES["door"].stroke, "door"))
        for q in (d.a, d.b):
            layer.markers.append(Marker("jamb", "circle", float(q[0]), float(q[1]),
                                        JAMB_R_PX))
    layer.labels.extend(door_labels(fp, checks))
    return layer


def door_labels(fp: Any, checks: dict | None = None) -> list[Label]:
    """Each door's label, one per door in the plan's order, as both painters show it: its
    name and width (``"lift 1 1.10 m"``), and where a checked route passes it the least
    clearance there too (``", clearance 250 mm"``, always shown); other doors' labels small,
    shown where there is room."""
    clear = door_clearances(checks or {})
    out = []
    for d in fp.doors:
        text = f"{d.label or 'door'} {d.width_m:.2f} m"
        passed = d.label in clear
        if passed:
            text += f", clearance {clear[d.label] * 1000:.0f} mm"
        dx, dy = d.b[0] - d.a[0], d.b[1] - d.a[1]
        n = math.hypot(dx, dy) or 1.0
        out.append(Label("door_label", text, *map(float, d.midpoint),
                         priority=1 if passed else 2, force=passed,
                         along=(dx / n, dy / n), small=not passed, offset_px=6.0,
                         reach_m=n / 2))
    return out


def route_layer(route: Any, k: int, plan: Any, footprint: Sequence[tuple[float, float]],
                outline_count: int = 8, outline_spacing_m: float | None = None) -> Layer:
    """One route: its path (dashed in reverse), footprint outlines and numbered waypoints.

    Outlines: ``outline_count`` spread evenly along the route (the picture), or, with
    ``outline_spacing_m``, every that many metres along each segment
    (:func:`segment_outline_poses`, the window's). The swept band is :func:`band_pieces` (one
    piece per segment, in the ``band`` style of :data:`STYLES`), which both painters fill.
    """
    layer = Layer()
    if plan is not None:
        segs = list(plan.segments)
        if outline_spacing_m:
            poses = [segment_outline_poses(seg, outline_spacing_m, i == len(segs) - 1)
                     for i, seg in enumerate(segs)]
            poses = np.vstack(poses) if poses else np.zeros((0, 3))
        else:
            poses = outline_poses(segs, outline_count)
        for pose in poses:
            ring = place_footprint(footprint, pose)
            layer.lines.append(Polyline(np.vstack([ring, ring[:1]]), STYLES["outline"].stroke,
                                        "outline"))
        for xy, direction, _i in sample_path(list(plan.segments)):
            layer.lines.append(Polyline(xy, route_style(k, direction), "path"))
    colour = ROUTE_COLOURS[k % len(ROUTE_COLOURS)]
    for i, w in enumerate(route.waypoints):
        layer.markers.append(Marker("waypoint", "circle", float(w.x), float(w.y),
                                    WAYPOINT_R_PX, Stroke(colour, 2.0), str(i + 1)))
    return layer


def violation_layer(checks: dict, forced: int = 8) -> Layer:
    """Every violation's marker, and its label: the worst ``forced`` always, the rest where
    there is room."""
    layer = Layer()
    allv = [v for chk in checks.values() for v in violations_of(chk)]
    for v in allv:
        layer.markers.append(Marker("violation", VIOLATION_SHAPES.get(v.kind, "circle"),
                                    float(v.x), float(v.y), VIOLATION_R_PX))
    worst = sorted(allv, key=lambda v: -(getattr(v, "amount_m", 0.0) or 0.0))
    for k, v in enumerate(worst):
        layer.labels.append(Label("violation_label", violation_label(v), float(v.x),
                                  float(v.y), priority=0, force=k < forced,
                                  offset_px=VIOLATION_R_PX + 3.0))
    return layer


def zone_caption(zone: Any) -> str:
    """``ward: 0.4 m/s``: the zone's name and its number, for the plan."""
    name = zone.label or zone.kind.replace("_", "-")
    if zone.kind == "slow":
        return f"{name}: {zone.speed_mps:g} m/s"
    if zone.kind == "margin":
        return f"{name}: {zone.margin_m * 1000:.0f} mm"
    if zone.kind == "one_way":
        return f"{name}: one way"
    return name


def zone_layer(zones: Sequence[Any], arrow_step_m: float | None = None) -> Layer:
    """The zones: one filled, hatched and outlined polygon set per kind (role ``zone_<kind>``,
    in :data:`ZONE_KINDS` order, drawn under the solids), the one-way arrows (markers turned
    along the zone's direction, every ``arrow_step_m`` metres on a grid inside it; none when
    ``None``) and each zone's name with its number."""
    from shapely.geometry import Point, Polygon

    layer = Layer()
    by_kind: dict[str, list[Any]] = {k: [] for k in ZONE_KINDS}
    for z in zones:
        if z.kind not in by_kind or len(z.points) < 3:
            continue
        poly = Polygon(z.points)
        if not poly.is_valid or poly.area <= 0:
            continue
        by_kind[z.kind].append(poly)
        c = poly.representative_point()
        x0, y0, x1, y1 = poly.bounds
        layer.labels.append(Label("zone_label", zone_caption(z), c.x, y1, priority=4,
                                  offset_px=0.0, small=True, ink=STYLES["zone_" + z.kind].ink,
                                  inside_m=y1 - y0, centre=(c.x, c.y)))
        if z.kind == "one_way" and z.direction_deg is not None and arrow_step_m:
            step = max(float(arrow_step_m), 1e-3)
            a = math.radians(z.direction_deg)
            xs = np.arange(x0 + step / 2, x1, step)
            ys = np.arange(y0 + step / 2, y1, step)
            if len(xs) * len(ys) > 20000:  # a zone too large for arrows at this zoom
                continue
            for x in xs:
                for y in ys:
                    if poly.contains(Point(x, y)):
                        layer.markers.append(Marker("zone_arrow", "arrow", float(x), float(y),
                                                    ZONE_ARROW_R_PX, angle_rad=a))
    for kind in ZONE_KINDS:
        if by_kind[kind]:
            layer.polygons.append(Polygons("zone_" + kind, by_kind[kind]))
    return layer


def zone_legend_rows(zones: Sequence[Any]) -> list[tuple[str, str, Any]]:
    """``("zone", words, kind)`` for each zone kind present, in :data:`ZONE_KINDS` order."""
    present = {z.kind for z in zones}
    return [("zone", ZONE_WORDS[k], k) for k in ZONE_KINDS if k in present]


def legend_rows(route_names: Sequence[str], checks: dict,
                route_index: dict[str, int] | None = None,
                zone_rows: Sequence[tuple[str, str, Any]] = (),
                zones: Sequence[Any] = ()) -> list[tuple[str, str, Any]]:
    """``(kind, words, argument)`` per legend row: the plan's parts (the zone kinds present in
    ``zones``, or the rows given as ``zone_rows``), each route by its colour, the route's
    marks, and every violation kind (``(none)`` where the routes have none; the zone rules
    only where a route breaks one). A zone row's argument is its kind: its style is
    ``STYLES["zone_" + kind]``."""
    rows: list[tuple[str, str, Any]] = [("wall", "wall", None), ("obstacle", "obstacle", None),
                                        ("door", "door opening (width, clearance)", None)]
    rows += list(zone_rows) or zone_legend_rows(zones)
    for k, name in enumerate(route_names):
        kk = route_index.get(name, k) if route_index else k
        rows.append(("path", f"route {name}", ROUTE_COLOURS[kk % len(ROUTE_COLOURS)]))
    rows += [("reverse", "driven in reverse", None), ("pivot", "turn on the spot", None),
             ("band", "swept area", None), ("outline", "footprint outline", None),
             ("waypoint", "waypoint (number)", None)]
    kinds = {v.kind for chk in checks.values() for v in violations_of(chk)}
    for kind in VIOLATION_SHAPES:
        if kind in ("keep_out", "wrong_way") and kind not in kinds:
            continue  # zone rules: listed when a route breaks one
        rows.append(("violation", VIOLATION_WORDS[kind] + ("" if kind in kinds else " (none)"),
                     kind))
    return rows
