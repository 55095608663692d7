"""Import a floor plan from an SVG drawing into the Swathe model.

The file is parsed with ``defusedxml.ElementTree``, so a hostile file cannot expand entities
(the "billion laughs" attack) or fetch external ones; such a file is refused with a
:class:`~kinematics.errors.FileReadError`.

What is read:

- ``path`` (commands M L H V Z C S Q T A, absolute and relative, SVG 1.1 section 8.3),
  ``line``, ``rect`` (rounded corners included), ``polyline``, ``polygon``, ``circle``,
  ``ellipse`` and ``use`` references; ``transform`` attributes (``matrix``, ``translate``,
  ``scale``, ``rotate``, ``skewX``, ``skewY``, SVG 1.1 section 7.6) on groups and elements,
  composed down the tree. Content of ``defs``, ``symbol`` (unless used), ``clipPath``,
  ``mask``, ``marker``, ``pattern`` and text is skipped, as is anything with
  ``display:none`` or ``visibility:hidden``.
- Curves are replaced by chords with bounded error: elliptical arcs (converted from endpoint
  to centre form, SVG 1.1 appendix F.6.5) by chords of sagitta at most
  :data:`TOLERANCE_M`; Bezier curves by uniform parameter steps chosen from the bound
  ``h**2 / 8 * max|B''|`` on the error of linear interpolation, so the polyline stays within
  the same 0.25 mm. The bound is applied in plan metres after every transform. Chords lie
  inside the curve, so an outline holding curves is then grown by the tolerance (a solid
  outward, a wall on both faces: its thickness plus 0.5 mm): the flattened solid contains the
  true one and exceeds it by at most 0.5 mm, and a clearance is never read larger.
- Units: one SVG user unit (of the root ``viewBox`` when there is one) is
  ``metres_per_unit`` metres (default 0.01, a drawing in centimetres). The SVG y axis
  points down; it is flipped so plan y points up: ``y_plan = (bottom - y) * metres_per_unit``
  where ``bottom`` is the bottom of the ``viewBox`` (else the ``height``, else 0), and
  ``x_plan = (x - left) * metres_per_unit``.
- Roles: a closed shape (``rect``, ``polygon``, ``circle``, ``ellipse``, a path subpath
  ending in Z) is an obstacle, an open one a wall. An element whose ``id`` or ``class``
  contains ``door`` (or inside a group so named) and is a ``line``, a two-point
  ``polyline`` or a two-point path is a door between its ends (other door-marked shapes,
  such as swing arcs, are skipped); ``wall`` in ``id``/``class`` forces a wall (a closed
  shape then becomes a closed wall line). A wall is as thick as its ``stroke-width``, else
  0.1 m.
- Zones: ``zones=[ZoneLayer(...)]`` (in a project: ``"zones": [{"layer", "kind", ...}]``)
  turns every closed shape whose ``id`` or Inkscape layer label (``inkscape:label``), or
  that of a group it sits in, is a named layer into a zone of that kind; open shapes there
  are skipped. A curved zone outline is grown outward by the tolerance as a solid's is,
  whatever its kind (a one-way zone too: its rule then holds over a slightly larger area).

Size: one reader: the SVG path grammar, transforms, shape elements and the tree walk that names
each element in its messages; the chord helpers it shares with DXF are in
kinematics/files/curves.py.
"""

from __future__ import annotations

import codecs
import math
import re
from dataclasses import dataclass
from pathlib import Path
from xml.etree.ElementTree import Element, ParseError

import numpy as np

from kinematics.errors import FileReadError, ValidationError
from kinematics.files.curves import (
    FLATTEN_TOLERANCE_M,
    MAX_CHORDS,
    chord_count,
    grow_outline,
    grown_thickness,
)
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall, Zone, ZoneLayer
from kinematics.files.jsonio import one_line, read_input_bytes
from kinematics.files.validate import MAX_COORD_M

_INKSCAPE_LABEL = "{http://www.inkscape.org/namespaces/inkscape}label"

TOLERANCE_M = FLATTEN_TOLERANCE_M
"""Largest distance between a curve and the chords that replace it, in plan metres."""

DEFAULT_WALL_THICKNESS_M = 0.1
_MAX_DEPTH = 200
_MAX_ELEMENTS = 200_000  # elements visited, counting each <use> expansion
MAX_POINTS = 2_000_000
"""Most points the flattened outlines of one drawing may hold; beyond it is refused."""
_SKIP = {"defs", "symbol", "clipPath", "mask", "marker", "pattern", "text", "title", "desc",
         "metadata", "style", "script", "linearGradient", "radialGradient", "filter",
         "foreignObject"}
# CSS absolute units in user units (CSS Values and Units 3: 96 px per inch).
_LENGTH_UNITS = {"": 1.0, "px": 1.0, "in": 96.0, "cm": 96.0 / 2.54, "mm": 96.0 / 25.4,
                 "pt": 96.0 / 72.0, "pc": 16.0}
_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_LENGTH = re.compile(r"^\s*([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*([a-z]*)\s*$")
_TRANSFORM = re.compile(r"\s*(matrix|translate|scale|rotate|skewX|skewY)\s*\(([^)]*)\)\s*,?")


class _SvgError(Exception):
    """A problem inside one element; turned into a FileReadError with the element's name."""


# -- transforms -------------------------------------------------------------------------------
def _matrix(a: float, b: float, c: float, d: float, e: float, f: float) -> np.ndarray:
    """SVG matrix(a b c d e f) as a 3x3 acting on column vectors [x, y, 1]."""
    return np.array([[a, c, e], [b, d, f], [0.0, 0.0, 1.0]])


def parse_transform(text: str) -> np.ndarray:
    """The 3x3 matrix of an SVG ``transform`` attribute (SVG 1.1 section 7.6).

    A list applies right to left: ``"translate(10) scale(2)"`` scales first.

    Examples
    --------
    >>> m = parse_transform("translate(10, 5) rotate(90)")
    >>> np.round(m @ [1.0, 0.0, 1.0], 9).tolist()
    [10.0, 6.0, 1.0]
    """
    m = np.eye(3)
    pos = 0
    text = text.strip()
    while pos < len(text):
        hit = _TRANSFORM.match(text, pos)
        if hit is None:
            raise _SvgError(f"transform: cannot read {text[pos:pos + 20]!r}")
        pos = hit.end()
        name = hit.group(1)
        args = [float(x) for x in _NUMBER.findall(hit.group(2))]
        n = len(args)
        if name == "matrix" and n == 6:
            t = _matrix(*args)
        elif name == "translate" and n in (1, 2):
            t = _matrix(1, 0, 0, 1, args[0], args[1] if n == 2 else 0.0)
        elif name == "scale" and n in (1, 2):
            t = _matrix(args[0], 0, 0, args[1] if n == 2 else args[0], 0, 0)
        elif name == "rotate" and n in (1, 3):
            r = math.radians(args[0])
            rot = _matrix(math.cos(r), math.sin(r), -math.sin(r), math.cos(r), 0, 0)
            if n == 3:
                cx, cy = args[1], args[2]
                rot = _matrix(1, 0, 0, 1, cx, cy) @ rot @ _matrix(1, 0, 0, 1, -cx, -cy)
            t = rot
        elif name == "skewX" and n == 1:
            t = _matrix(1, 0, math.tan(math.radians(args[0])), 1, 0, 0)
        elif name == "skewY" and n == 1:
            t = _matrix(1, math.tan(math.radians(args[0])), 0, 1, 0, 0)
        else:
            raise _SvgError(f"transform: {name} does not take {n} numbers")
        m = m @ t
    return m


def _stretch(m: np.ndarray) -> float:
    """Largest stretch of the linear part of ``m`` (its largest singular value)."""
    s = float(np.linalg.svd(m[:2, :2], compute_uv=False)[0]) if np.all(np.isfinite(m)) else 0.0
    return s if s > 0 else 1.0


# -- curves -----------------------------------------------------------------------------------
def _bezier_steps(ctrl: np.ndarray, tol: float) -> int:
    """Uniform steps so a Bezier's chords stay within ``tol``.

    Linear interpolation over a parameter step ``h`` errs by at most ``h**2 / 8 * max|B''|``
    (interpolation error theorem); ``max|B''|`` is bounded by the degree times (degree - 1)
    times the largest second difference of the control points.
    """
    deg = len(ctrl) - 1
    second = ctrl[2:] - 2.0 * ctrl[1:-1] + ctrl[:-2]
    bound = deg * (deg - 1) * float(np.max(np.hypot(second[:, 0], second[:, 1])))
    if not math.isfinite(bound):
        raise _SvgError("a curve has non-finite control points")
    n = math.sqrt(bound / (8.0 * tol)) if bound > 0 else 1.0
    if n > MAX_CHORDS:
        raise _SvgError("a curve is too large to flatten")
    return max(1, math.ceil(n))


def bezier_points(ctrl: np.ndarray, tol: float) -> np.ndarray:
    """Points along a quadratic or cubic Bezier (ends included) within ``tol`` of the curve."""
    n = _bezier_steps(ctrl, tol)
    t = np.linspace(0.0, 1.0, n + 1)[:, None]
    if len(ctrl) == 3:
        p0, p1, p2 = ctrl
        pts = (1 - t) ** 2 * p0 + 2 * (1 - t) * t * p1 + t ** 2 * p2
    else:
        p0, p1, p2, p3 = ctrl
        pts = ((1 - t) ** 3 * p0 + 3 * (1 - t) ** 2 * t * p1 + 3 * (1 - t) * t ** 2 * p2
               + t ** 3 * p3)
    pts[0], pts[-1] = ctrl[0], ctrl[-1]
    return pts


def arc_points(p1: tuple[float, float], rx: float, ry: float, phi_deg: float, large: bool,
               sweep: bool, p2: tuple[float, float], tol: float) -> np.ndarray:
    """Points along an SVG elliptical arc from ``p1`` to ``p2`` (both included).

    Endpoint to centre parameterisation as in SVG 1.1 appendix F.6.5, radii scaled up when
    too small (F.6.6). The chords span equal parameter steps; they stay within ``tol``
    because the arc is an affine image of a unit circle stretched by at most ``max(rx, ry)``.
    """
    x1, y1 = p1
    x2, y2 = p2
    rx, ry = abs(rx), abs(ry)
    if rx == 0 or ry == 0 or (x1, y1) == (x2, y2):
        return np.array([p1, p2], dtype=float)
    phi = math.radians(phi_deg)
    cp, sp = math.cos(phi), math.sin(phi)
    dx, dy = (x1 - x2) / 2.0, (y1 - y2) / 2.0
    x1p, y1p = cp * dx + sp * dy, -sp * dx + cp * dy
    lam = (x1p / rx) ** 2 + (y1p / ry) ** 2
    if lam > 1:
        rx, ry = rx * math.sqrt(lam), ry * math.sqrt(lam)
    num = rx * rx * ry * ry - rx * rx * y1p * y1p - ry * ry * x1p * x1p
    den = rx * rx * y1p * y1p + ry * ry * x1p * x1p
    coef = math.sqrt(max(0.0, num / den)) if den > 0 else 0.0
    if large == sweep:
        coef = -coef
    cxp, cyp = coef * rx * y1p / ry, -coef * ry * x1p / rx
    cx = cp * cxp - sp * cyp + (x1 + x2) / 2.0
    cy = sp * cxp + cp * cyp + (y1 + y2) / 2.0
    ux, uy = (x1p - cxp) / rx, (y1p - cyp) / ry
    vx, vy = (-x1p - cxp) / rx, (-y1p - cyp) / ry
    theta1 = math.atan2(uy, ux)
    dtheta = math.atan2(ux * vy - uy * vx, ux * vx + uy * vy)
    if not sweep and dtheta > 0:
        dtheta -= 2.0 * math.pi
    elif sweep and dtheta < 0:
        dtheta += 2.0 * math.pi
    try:
        n = chord_count(max(rx, ry), dtheta, tol)
    except ValueError as exc:
        raise _SvgError(str(exc)) from None
    t = theta1 + dtheta * np.linspace(0.0, 1.0, n + 1)
    pts = np.column_stack([cx + rx * cp * np.cos(t) - ry * sp * np.sin(t),
                           cy + rx * sp * np.cos(t) + ry * cp * np.sin(t)])
    pts[0], pts[-1] = p1, p2
    return pts


# -- path data --------------------------------------------------------------------------------
class _Scanner:
    """Reads numbers, flags and command letters from SVG path data (SVG 1.1 section 8.3.9)."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.pos = 0

    def _skip(self) -> None:
        t = self.text
        while self.pos < len(t) and (t[self.pos] in " \t\r\n\f,"):
            self.pos += 1

    def at_end(self) -> bool:
        self._skip()
        return self.pos >= len(self.text)

    def peek_command(self) -> str | None:
        self._skip()
        if self.pos < len(self.text) and self.text[self.pos] in "MmZzLlHhVvCcSsQqTtAa":
            return self.text[self.pos]
        return None

    def command(self) -> str:
        c = self.peek_command()
        if c is None:
            raise _SvgError(f"path data: expected a command letter at character {self.pos}")
        self.pos += 1
        return c

    def has_number(self) -> bool:
        self._skip()
        return self.pos < len(self.text) and self.text[self.pos] in "+-.0123456789"

    def number(self) -> float:
        self._skip()
        m = _NUMBER.match(self.text, self.pos)
        if m is None:
            raise _SvgError(f"path data: expected a number at character {self.pos}")
        self.pos = m.end()
        v = float(m.group())
        if not math.isfinite(v):
            raise _SvgError(f"path data: number out of range at character {m.start()}")
        return v

    def flag(self) -> bool:
        self._skip()
        if self.pos < len(self.text) and self.text[self.pos] in "01":
            self.pos += 1
            return self.text[self.pos - 1] == "1"
        raise _SvgError(f"path data: expected an arc flag 0 or 1 at character {self.pos}")


def parse_path(d: str, tol: float) -> list[tuple[np.ndarray, bool]]:
    """Subpaths of SVG path data as ``(points (n, 2), closed)``, curves flattened to ``tol``.

    Examples
    --------
    >>> [(p.tolist(), c) for p, c in parse_path("M0 0 h10 v5 z m1 1 l2 0", 0.1)]
    [([[0.0, 0.0], [10.0, 0.0], [10.0, 5.0], [0.0, 0.0]], True), ([[1.0, 1.0], [3.0, 1.0]], False)]
    """
    sc = _Scanner(d)
    subpaths: list[tuple[np.ndarray, bool]] = []
    pts: list[np.ndarray] = []
    cur = np.zeros(2)
    start = np.zeros(2)
    last_ctrl: np.ndarray | None = None
    last_cmd = ""

    flushed = [0]  # points in finished subpaths

    def flush(closed: bool) -> None:
        nonlocal pts
        if len(pts) >= 2:
            arr = np.vstack(pts)
            flushed[0] += len(arr)
            if closed and not np.array_equal(arr[0], arr[-1]):
                arr = np.vstack([arr, arr[:1]])
            subpaths.append((arr, closed))
        pts = []

    cmd = ""
    while not sc.at_end():
        c = sc.peek_command()
        if c is not None:
            cmd = sc.command()
        elif not cmd or cmd in "Zz":
            raise _SvgError(f"path data: expected a command letter at character {sc.pos}")
        elif cmd == "M":
            cmd = "L"
        elif cmd == "m":
            cmd = "l"
        rel = cmd.islower()
        up = cmd.upper()
        base = cur.copy() if rel else np.zeros(2)
        if up == "M":
            flush(False)
            cur = base + [sc.number(), sc.number()]
            start = cur.copy()
            pts = [cur.copy()]
            last_ctrl = None
        elif up == "Z":
            flush(True)
            cur = start.copy()
            last_ctrl = None
        else:
            if not pts:
                pts = [cur.copy()]
            if up == "L":
                new = base + [sc.number(), sc.number()]
                pts.append(new)
                last_ctrl = None
            elif up == "H":
                x = sc.number()
                new = np.array([cur[0] + x if rel else x, cur[1]])
                pts.append(new)
                last_ctrl = None
            elif up == "V":
                y = sc.number()
                new = np.array([cur[0], cur[1] + y if rel else y])
                pts.append(new)
                last_ctrl = None
            elif up in "CS":
                if up == "C":
                    c1 = base + [sc.number(), sc.number()]
                else:
                    c1 = 2 * cur - last_ctrl if (last_ctrl is not None
                                                 and last_cmd in "CcSs") else cur.copy()
                c2 = base + [sc.number(), sc.number()]
                new = base + [sc.number(), sc.number()]
                pts.extend(bezier_points(np.array([cur, c1, c2, new]), tol)[1:])
                last_ctrl = c2
            elif up in "QT":
                if up == "Q":
                    c1 = base + [sc.number(), sc.number()]
                else:
                    c1 = 2 * cur - last_ctrl if (last_ctrl is not None
                                                 and last_cmd in "QqTt") else cur.copy()
                new = base + [sc.number(), sc.number()]
                pts.extend(bezier_points(np.array([cur, c1, new]), tol)[1:])
                last_ctrl = c1
            elif up == "A":
                rx, ry, rot = sc.number(), sc.number(), sc.number()
                large, sweep = sc.flag(), sc.flag()
                new = base + [sc.number(), sc.number()]
                pts.extend(arc_points((cur[0], cur[1]), rx, ry, rot, large, sweep,
                                      (new[0], new[1]), tol)[1:])
                last_ctrl = None
            cur = np.asarray(new, dtype=float)
            if len(pts) + flushed[0] > MAX_POINTS:
                raise _SvgError(f"path data: more than {MAX_POINTS} points once its curves "
                                f"are flattened (at character {sc.pos})")
        last_cmd = cmd
        if up == "Z":
            # After Z only a command may follow (a number would be an error).
            if sc.has_number():
                raise _SvgError(f"path data: expected a command after Z at character {sc.pos}")
    flush(False)
    return subpaths


# -- elements ---------------------------------------------------------------------------------
def _local(tag: str) -> str:
    return tag.rsplit("}", 1)[-1] if isinstance(tag, str) else ""


def _style(el: Element) -> dict[str, str]:
    out: dict[str, str] = {}
    for part in el.get("style", "").split(";"):
        if ":" in part:
            k, v = part.split(":", 1)
            out[k.strip()] = v.strip()
    return out


def _prop(el: Element, name: str) -> str | None:
    return _style(el).get(name, el.get(name))


def _length(el: Element, name: str, default: float | None = 0.0) -> float:
    raw = _prop(el, name)
    if raw is None or raw.strip() == "":
        if default is None:
            raise _SvgError(f"attribute {name} is missing")
        return default
    m = _LENGTH.match(raw)
    if m is None or m.group(2) not in _LENGTH_UNITS:
        raise _SvgError(f"attribute {name}={raw!r}: expected a number (optionally px, mm, cm,"
                        " in, pt or pc)")
    v = float(m.group(1)) * _LENGTH_UNITS[m.group(2)]
    if not math.isfinite(v):
        raise _SvgError(f"attribute {name}={raw!r}: number out of range")
    return v


def _points_attr(el: Element) -> np.ndarray:
    nums = [float(x) for x in _NUMBER.findall(el.get("points", ""))]
    if len(nums) % 2:
        raise _SvgError("attribute points: expected pairs of numbers")
    arr = np.array(nums, dtype=float).reshape(-1, 2)
    if not np.all(np.isfinite(arr)):
        raise _SvgError("attribute points: number out of range")
    return arr


def _ellipse_points(cx: float, cy: float, rx: float, ry: float, tol: float) -> np.ndarray:
    try:
        n = max(4, chord_count(max(rx, ry), 2.0 * math.pi, tol))
    except ValueError as exc:
        raise _SvgError(str(exc)) from None
    t = np.linspace(0.0, 2.0 * math.pi, n + 1)
    pts = np.column_stack([cx + rx * np.cos(t), cy + ry * np.sin(t)])
    pts[-1] = pts[0]
    return pts


def _shapes(el: Element, tag: str, tol: float) -> list[tuple[np.ndarray, bool]]:
    """Outlines of one element in its own user units, ``(points, closed)``."""
    if tag == "line":
        p = np.array([[_length(el, "x1"), _length(el, "y1")],
                      [_length(el, "x2"), _length(el, "y2")]])
        return [(p, False)]
    if tag in ("polyline", "polygon"):
        p = _points_attr(el)
        if len(p) < 2:
            return []
        if tag == "polygon":
            return [(np.vstack([p, p[:1]]), True)]
        return [(p, False)]
    if tag == "rect":
        x, y = _length(el, "x"), _length(el, "y")
        w, h = _length(el, "width"), _length(el, "height")
        if w <= 0 or h <= 0:
            return []
        rx_raw, ry_raw = _prop(el, "rx"), _prop(el, "ry")
        rx = _length(el, "rx") if rx_raw not in (None, "", "auto") else None
        ry = _length(el, "ry") if ry_raw not in (None, "", "auto") else None
        rx, ry = (rx if rx is not None else ry), (ry if ry is not None else rx)
        rx = min(max(rx or 0.0, 0.0), w / 2.0)
        ry = min(max(ry or 0.0, 0.0), h / 2.0)
        if rx > 0 and ry > 0:
            d = (f"M{x + rx},{y} H{x + w - rx} A{rx},{ry} 0 0 1 {x + w},{y + ry} "
                 f"V{y + h - ry} A{rx},{ry} 0 0 1 {x + w - rx},{y + h} H{x + rx} "
                 f"A{rx},{ry} 0 0 1 {x},{y + h - ry} V{y + ry} A{rx},{ry} 0 0 1 {x + rx},{y} Z")
            return parse_path(d, tol)
        p = np.array([[x, y], [x + w, y], [x + w, y + h], [x, y + h], [x, y]])
        return [(p, True)]
    if tag == "circle":
        r = _length(el, "r")
        if r <= 0:
            return []
        return [(_ellipse_points(_length(el, "cx"), _length(el, "cy"), r, r, tol), True)]
    if tag == "ellipse":
        rx, ry = _length(el, "rx"), _length(el, "ry")
        if rx <= 0 or ry <= 0:
            return []
        return [(_ellipse_points(_length(el, "cx"), _length(el, "cy"), rx, ry, tol), True)]
    if tag == "path":
        return parse_path(el.get("d", ""), tol)
    return []


def _marker(el: Element) -> str | None:
    text = (el.get("id", "") + " " + el.get("class", "")).lower()
    if "door" in text:
        return "door"
    if "wall" in text:
        return "wall"
    return None


def _describe(el: Element, tag: str, number: int) -> str:
    ident = el.get("id")
    return f"<{tag} id={ident!r}>" if ident else f"<{tag}> (element {number})"


@dataclass
class _Found:
    points: np.ndarray  # (n, 2) in root user units
    closed: bool
    marker: str | None
    label: str
    thickness_units: float | None  # inherited stroke width, root user units
    two_point: bool
    names: tuple[str, ...] = ()  # ids and layer labels of the element and its groups
    curved: bool = False  # chords inside a curve: grow by the tolerance in the plan
    where: str = ""  # the element, for messages


class _Walker:
    def __init__(self, root: Element, tol_units: float, file: str) -> None:
        self.tol_units = tol_units
        self.file = file
        self.found: list[_Found] = []
        self.count = 0
        self.points = 0
        self.ids = {el.get("id"): el for el in root.iter() if el.get("id")}
        self.using: set[int] = set()

    def walk(self, el: Element, ctm: np.ndarray, marker: str | None, depth: int,
             via_use: bool = False, stroke: float | None = None,
             names: tuple[str, ...] = ()) -> None:
        tag = _local(el.tag)
        names = names + tuple(n.lower() for n in (el.get("id"), el.get(_INKSCAPE_LABEL))
                              if n)
        self.count += 1
        number = self.count
        if self.count > _MAX_ELEMENTS:
            raise FileReadError(self.file, _describe(el, tag, number),
                                f"more than {_MAX_ELEMENTS} elements once <use> references "
                                "are expanded (a reference bomb?)")
        if depth > _MAX_DEPTH:
            raise FileReadError(self.file, _describe(el, tag, number),
                                f"elements nested more than {_MAX_DEPTH} deep")
        if tag in _SKIP and not (tag == "symbol" and via_use):
            return
        if _prop(el, "display") == "none" or _prop(el, "visibility") in ("hidden", "collapse"):
            return
        try:
            m = ctm
            if el.get("transform"):
                m = ctm @ parse_transform(el.get("transform", ""))
            own = _marker(el)
            mk = own if own is not None else marker
            # stroke-width is inherited (SVG 1.1 section 11.4), in the user units where it
            # is set, so it is carried down already scaled to root units.
            if _prop(el, "stroke-width"):
                stroke = _length(el, "stroke-width") * _stretch(m)
            if tag in ("g", "a", "switch", "symbol") or (tag == "svg" and depth > 0):
                if tag == "svg":
                    m = m @ _matrix(1, 0, 0, 1, _length(el, "x"), _length(el, "y"))
                for child in el:
                    self.walk(child, m, mk, depth + 1, stroke=stroke, names=names)
                return
            if tag == "svg":
                for child in el:
                    self.walk(child, m, mk, depth + 1, stroke=stroke, names=names)
                return
            if tag == "use":
                href = el.get("href") or el.get("{http://www.w3.org/1999/xlink}href") or ""
                target = self.ids.get(href[1:]) if href.startswith("#") else None
                if target is None:
                    return
                if id(target) in self.using or any(t is el for t in target.iter()):
                    raise _SvgError(f"<use> refers to {href!r}, which contains the reference")
                m = m @ _matrix(1, 0, 0, 1, _length(el, "x"), _length(el, "y"))
                self.using.add(id(target))
                try:
                    self.walk(target, m, mk, depth + 1, via_use=True, stroke=stroke,
                              names=names)
                finally:
                    self.using.discard(id(target))
                return
            scale = _stretch(m)
            shapes = _shapes(el, tag, self.tol_units / scale)
            thickness = stroke
        except FileReadError:
            raise
        except _SvgError as exc:
            raise FileReadError(self.file, _describe(el, tag, number), str(exc)) from None
        except (ValueError, OverflowError, ZeroDivisionError, np.linalg.LinAlgError) as exc:
            raise FileReadError(self.file, _describe(el, tag, number),
                                f"cannot read the element ({exc})") from None
        label = el.get("id", "")
        two = tag == "line" or (tag in ("polyline", "path") and len(shapes) == 1
                                and len(shapes[0][0]) == 2)
        curved = (tag in ("circle", "ellipse")
                  or (tag == "path" and re.search(r"[CcSsQqTtAa]", el.get("d", "")) is not None)
                  or (tag == "rect" and any(len(q) > 5 for q, _ in shapes)))
        for pts, closed in shapes:
            world = pts @ m[:2, :2].T + m[:2, 2]
            if not np.all(np.isfinite(world)):
                raise FileReadError(self.file, _describe(el, tag, number),
                                    "coordinates out of range")
            self.points += len(world)
            if self.points > MAX_POINTS:
                raise FileReadError(self.file, _describe(el, tag, number),
                                    f"the drawing holds more than {MAX_POINTS} points once "
                                    "its curves are flattened")
            self.found.append(_Found(world, closed, mk, label, thickness, two, names, curved,
                                     _describe(el, tag, number)))


_NOT_CHARSETS = {"idna", "punycode", "unicode-escape", "raw-unicode-escape", "undefined",
                 "base64", "hex", "rot-13", "zlib", "bz2", "quopri", "uu"}
_DECLARED = re.compile(rb"""^\s*<\?xml[^>]*?encoding\s*=\s*["']([^"']*)["']""")


def _line_col(data: bytes | str, pos: int) -> str:
    nl = b"\n" if isinstance(data, bytes) else "\n"
    line = data.count(nl, 0, pos) + 1  # type: ignore[arg-type]
    col = pos - (data.rfind(nl, 0, pos) + 1) + 1  # type: ignore[arg-type]
    return f"line {line}, column {col}"


def _decode_xml(data: bytes, file: str) -> str:
    """The text of an XML file: its byte-order mark, else the encoding its declaration
    names, else UTF-8 (XML 1.0, appendix F); an unknown or undecodable encoding is refused
    with the line."""
    if data.startswith(codecs.BOM_UTF8):
        enc = "utf-8-sig"
    elif data.startswith((codecs.BOM_UTF32_LE, codecs.BOM_UTF32_BE)):
        enc = "utf-32"
    elif data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        enc = "utf-16"
    elif data.startswith(b"<\0?\0"):
        enc = "utf-16-le"
    elif data.startswith(b"\0<\0?"):
        enc = "utf-16-be"
    else:
        m = _DECLARED.match(data[:400])
        enc = m.group(1).decode("latin-1").strip() if m else "utf-8"
        try:
            info = codecs.lookup(enc)
        except LookupError:
            info = None
        if info is None or not getattr(info, "_is_text_encoding", True) \
                or info.name in _NOT_CHARSETS:
            raise FileReadError(file, "line 1", f"the XML declaration names the encoding "
                                f"{one_line(repr(enc), 60)}, which is not a known character "
                                "encoding; expected UTF-8, UTF-16 or ISO-8859-1")
    try:
        return data.decode(enc)
    except UnicodeDecodeError as exc:
        raise FileReadError(file, _line_col(data, exc.start),
                            f"not readable as {enc} text (byte 0x{data[exc.start]:02x})"
                            ) from None
    except (UnicodeError, ValueError, LookupError) as exc:
        raise FileReadError(file, "line 1", f"not readable as {enc} text "
                            f"({one_line(str(exc), 80)})") from None


def _read_root(p: Path) -> Element:
    import defusedxml
    import defusedxml.ElementTree as DET

    file = one_line(str(p), 300)
    data = read_input_bytes(p, "SVG file")
    text = _decode_xml(data, file)

    def line_of(token: str) -> str:
        i = text.find(token)
        return _line_col(text, i) if i >= 0 else "line 1"

    try:
        root = DET.fromstring(text, forbid_dtd=False, forbid_entities=True,
                              forbid_external=True)
    except defusedxml.EntitiesForbidden:
        raise FileReadError(file, line_of("<!ENTITY"), "refused: the file declares XML "
                            "entities, which an SVG floor plan does not need (possible "
                            "entity-expansion attack)") from None
    except (defusedxml.ExternalReferenceForbidden, defusedxml.DTDForbidden,
            defusedxml.NotSupportedError):
        raise FileReadError(file, line_of("<!DOCTYPE"), "refused: the file refers to "
                            "external XML resources") from None
    except ParseError as exc:
        line, col = getattr(exc, "position", (1, 0))
        reason = str(exc).split(":")[0]
        raise FileReadError(file, f"line {line}, column {col + 1}",
                            f"not well-formed XML ({one_line(reason, 80)})") from None
    except (ValueError, RecursionError, UnicodeError, LookupError) as exc:
        raise FileReadError(file, "line 1", "not a readable SVG file "
                            f"({one_line(str(exc), 120)})") from None
    if _local(root.tag) != "svg":
        raise FileReadError(file, "line 1", f"expected an <svg> root element, got "
                                            f"<{one_line(_local(root.tag), 40)}>")
    return root


def svg_groups(path: str | Path, limit: int = 500) -> list[str]:
    """The names a zone rule can match: each group's Inkscape layer label, else its id, in
    drawing order, without repeats (at most ``limit``). Raises :class:`FileReadError` as
    :func:`import_svg` would for an unreadable file."""
    root = _read_root(Path(path))
    out: list[str] = []
    for el in root.iter():
        if _local(el.tag) != "g":
            continue
        name = (el.get(_INKSCAPE_LABEL) or el.get("id") or "").strip()
        if name and name not in out:
            out.append(name)
            if len(out) >= limit:
                break
    return out


def import_svg(path: str | Path, metres_per_unit: float = 0.01,
               zones: tuple[ZoneLayer, ...] = ()) -> FloorPlan:
    """Read an SVG drawing as a :class:`~kinematics.files.floorplan.FloorPlan` in metres.

    Parameters
    ----------
    path : str or Path
        The SVG file.
    metres_per_unit : float
        Metres per SVG user unit (default 0.01: the drawing is in centimetres).
    zones : tuple of ZoneLayer
        Group or element ids (or Inkscape layer labels) whose closed shapes are zones.

    Returns
    -------
    FloorPlan
        Walls, obstacles and doors, plan frame (y up).

    Raises
    ------
    FileReadError
        The file is missing, not well-formed, hostile (entity declarations), not SVG, or an
        element cannot be read; the message names the line and column or the element.
    ValidationError
        ``metres_per_unit`` is not a positive number.
    """
    p = Path(path)
    file = str(p)
    if not (isinstance(metres_per_unit, (int, float)) and math.isfinite(metres_per_unit)
            and metres_per_unit > 0):
        raise ValidationError(file, "metres_per_unit", "expected a positive number")
    root = _read_root(p)
    left, bottom = 0.0, 0.0
    try:
        vb = root.get("viewBox")
        if vb:
            nums = [float(x) for x in _NUMBER.findall(vb)]
            if len(nums) != 4 or not all(math.isfinite(v) for v in nums):
                raise _SvgError(f"viewBox={vb!r}: expected four numbers")
            left, bottom = nums[0], nums[1] + nums[3]
        elif root.get("height") and not root.get("height", "").strip().endswith("%"):
            bottom = _length(root, "height")
    except _SvgError as exc:
        raise FileReadError(file, "<svg> (element 1)", str(exc)) from None
    walker = _Walker(root, TOLERANCE_M / metres_per_unit, file)
    try:
        # Overflow to infinity is looked for after each step; numpy need not warn of it.
        with np.errstate(all="ignore"):
            walker.walk(root, np.eye(3), None, 0)
    except RecursionError:
        raise FileReadError(file, "<svg> (element 1)", "elements nested too deeply") from None

    walls: list[Wall] = []
    obstacles: list[Obstacle] = []
    doors: list[Door] = []
    zone_list: list[Zone] = []
    zone_of = {z.layer.lower(): z for z in zones}

    def to_plan(pts: np.ndarray) -> tuple[tuple[float, float], ...]:
        x = (pts[:, 0] - left) * metres_per_unit
        y = (bottom - pts[:, 1]) * metres_per_unit
        out: list[tuple[float, float]] = []
        for q in zip(x.tolist(), y.tolist()):
            if not out or q != out[-1]:
                out.append(q)
        return tuple(out)

    for f in walker.found:
        with np.errstate(all="ignore"):
            pts = to_plan(f.points)
        if not all(math.isfinite(v) for q in pts for v in q):
            raise FileReadError(file, f.where, "coordinates out of range")
        if max(abs(v) for q in pts for v in q) > MAX_COORD_M:
            raise FileReadError(file, f.where, f"lies more than {MAX_COORD_M / 1000:g} "
                                "km from the origin; move the drawing near the origin (or "
                                "check metres_per_unit)")
        if f.marker == "door":
            if f.two_point and len(pts) == 2:
                doors.append(Door(pts[0], pts[1], f.label or f"door {len(doors) + 1}"))
            continue
        closed = f.closed or (len(pts) > 3 and pts[0] == pts[-1])
        rule = next((zone_of[n] for n in reversed(f.names) if n in zone_of), None)
        if rule is not None:
            ring = pts[:-1] if len(pts) > 1 and pts[0] == pts[-1] else pts
            if closed and len(ring) >= 3:
                if f.curved:  # outward as a solid: a cap or rule wherever it could apply
                    with np.errstate(all="ignore"):
                        grown = grow_outline(np.array(ring), TOLERANCE_M)
                    ring = tuple(tuple(q) for q in grown.tolist())
                zone_list.append(rule.zone(ring))
            continue
        if f.marker == "wall" or not closed:
            if len(pts) < 2:
                continue
            if closed and pts[0] != pts[-1]:
                pts = pts + (pts[0],)
            t = (f.thickness_units * metres_per_unit if f.thickness_units
                 else DEFAULT_WALL_THICKNESS_M)
            if f.curved:
                t = grown_thickness(t, TOLERANCE_M)
            walls.append(Wall(pts, t))
        else:
            ring = pts[:-1] if pts[0] == pts[-1] else pts
            if len(ring) >= 3 and f.curved:
                with np.errstate(all="ignore"):  # a degenerate outline; its area is checked
                    grown = grow_outline(np.array(ring), TOLERANCE_M)
                ring = tuple(tuple(q) for q in grown.tolist())
            if len(ring) >= 3:
                obstacles.append(Obstacle(ring, f.label))
    name = root.findtext("{http://www.w3.org/2000/svg}title") or root.findtext("title") or p.stem
    return FloorPlan(name.strip() or p.stem, tuple(walls), tuple(obstacles), tuple(doors),
                     file, {"svg_import": {"metres_per_unit": metres_per_unit}},
                     tuple(zone_list))


__all__ = ["import_svg", "parse_path", "parse_transform", "arc_points", "bezier_points"]
