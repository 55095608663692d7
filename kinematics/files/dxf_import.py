"""Import a floor plan from a DXF drawing (read with ezdxf) into the Swathe model.

What is read, from model space only:

- LINE, LWPOLYLINE and POLYLINE (2D and 3D; bulges become circular arcs), ARC, CIRCLE,
  ELLIPSE and SPLINE; INSERT block references are exploded with their full transform
  (insertion point, scale, rotation, block base point, MINSERT rows and columns), nested to
  any depth. An entity on layer ``0`` inside a block takes the layer of its INSERT, as in
  the DXF convention.
- Curves are flattened outward, so a clearance is never read larger than the drawing's: a
  circle becomes a circumscribed polygon whose vertices lie at most :data:`SAGITTA_M` (0.25 mm)
  outside it; arcs and polyline bulges become chords whose sagitta,
  ``r (1 - cos(dtheta / 2))`` for a chord spanning ``dtheta``, is at most 0.25 mm,
  and ellipses and splines are sampled evenly to the same 0.25 mm (for a spline, Wang's bound on
  each Bezier piece), their size checked first, in plan metres
  after every block transform. An outline holding such chords is then grown by 0.25 mm
  (a solid outward, a wall on both faces: its thickness plus 0.5 mm), so the flattened solid
  contains the true one and exceeds it by at most
  :data:`~kinematics.files.curves.CURVE_EXCESS_M` (0.5 mm), which the check keeps back from
  its tolerance.
- Units come from the header variable ``$INSUNITS`` (1 inch, 2 foot, 4 millimetre,
  5 centimetre, 6 metre, ...); ``0`` (unitless) is read as metres. ``units=`` ("mm", "cm",
  "m", "in", "ft") overrides the header: architects often draw in millimetres and leave
  the header unset.
- Layers: ``layers={"walls": [...], "obstacles": [...], "doors": [...]}`` names the layers
  of each role (case-insensitive, as DXF layer names are); entities on layers not named
  are skipped. Without ``layers`` the role is guessed from the layer name: a name holding
  ``door`` is a door layer; ``obstacle``, ``fixture``, ``furniture`` or ``rack`` an
  obstacle layer; ``Defpoints`` (the layer CAD programs keep for dimension construction
  points, never printed) is skipped; every other layer (``wall`` or not) is read as walls,
  so an unlayered drawing still gives solid geometry.
- On a wall or obstacle layer a closed outline (closed polyline, circle, or a polyline
  whose last point is its first) is a solid :class:`~kinematics.files.floorplan.Obstacle`; an
  open one is a :class:`~kinematics.files.floorplan.Wall` of ``wall_thickness_m``.
- ``zones=[ZoneLayer(...)]`` (in a project: ``"zones": [{"layer", "kind", ...}]``) turns
  every closed outline on a named layer into a zone of that kind (open ones there are
  skipped); a zone layer is read only as zones, whatever ``layers`` says. A curved zone
  outline is flattened outward as a solid's is (circumscribed circles, other curves grown
  by the chord tolerance), whatever its kind: a keep-out, margin or slow zone then covers
  every place the drawn one could, and a one-way zone is judged over that slightly larger
  area too.
- On a door layer a LINE (or a two-point open polyline) is a door opening between its
  ends; other door-layer geometry (swing arcs, leaves) is skipped. A door is labelled by
  the nearest TEXT or MTEXT on a door layer within 1 m of its midpoint, else ``door N``.

An unreadable, non-DXF or damaged file raises :class:`~kinematics.errors.FileReadError`
naming the file and, where ezdxf reports one, the line.

Size: one reader: ezdxf's document walk with INSERT transforms, each entity type's outward
flattening, the layer roles and the messages that name the entity and line; the chord helpers
shared with SVG are in kinematics/files/curves.py.
"""

from __future__ import annotations

import codecs
import contextlib
import io
import logging
import math
import re
import warnings
from collections import Counter
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from kinematics.errors import FileReadError, ValidationError
from kinematics.files.curves import (
    FLATTEN_TOLERANCE_M,
    MAX_CHORDS,
    arc_points,
    chord_count,
    circle_points_outside,
    grow_outline,
    grown_thickness,
)
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall, Zone, ZoneLayer
from kinematics.files.jsonio import one_line, read_input_bytes
from kinematics.files.validate import MAX_COORD_M

SAGITTA_M = FLATTEN_TOLERANCE_M
"""Largest distance between a curve and the chords that replace it, in plan metres."""

UNITS_M = {"mm": 0.001, "cm": 0.01, "m": 1.0, "in": 0.0254, "ft": 0.3048}
"""Metres per drawing unit for the ``units`` override."""

# $INSUNITS codes (DXF reference, HEADER section); 0 = unitless, read as metres.
INSUNITS_M = {0: 1.0, 1: 0.0254, 2: 0.3048, 3: 1609.344, 4: 0.001, 5: 0.01, 6: 1.0,
              7: 1000.0, 8: 2.54e-8, 9: 2.54e-5, 10: 0.9144, 11: 1e-10, 12: 1e-9, 13: 1e-6,
              14: 0.1, 15: 10.0, 16: 100.0}
INSUNITS_NAMES = {0: "unitless (read as metres)", 1: "in", 2: "ft", 3: "mi", 4: "mm",
                  5: "cm", 6: "m", 7: "km", 8: "microinch", 9: "mil", 10: "yd",
                  11: "angstrom", 12: "nm", 13: "micron", 14: "dm", 15: "dam", 16: "hm"}

ROLES = ("walls", "obstacles", "doors")
_OBSTACLE_WORDS = ("obstacle", "fixture", "furniture", "rack")
_MAX_BLOCK_DEPTH = 32
_LABEL_RADIUS_M = 1.0
MAX_ENTITIES = 200_000
"""Most entities read, counting each block reference's contents once per reference (blocks
that insert blocks many times over multiply quickly); a drawing beyond it is refused."""
MAX_POINTS = 2_000_000
"""Most points all flattened outlines may hold together; a drawing beyond it is refused."""
MAX_SPLINE_DEGREE = 11
MAX_SPLINE_POINTS = 10_000
"""Largest spline degree and number of control or fit points read (CAD programs write
degree 2 or 3 and a few hundred points)."""
READ_TYPES = frozenset({"LINE", "LWPOLYLINE", "POLYLINE", "ARC", "CIRCLE", "ELLIPSE",
                        "SPLINE", "INSERT", "TEXT", "MTEXT"})
"""The entity types read; others are skipped and counted in the import summary."""


def guess_role(layer: str) -> str:
    """The role a layer plays when no ``layers`` mapping is given.

    Parameters
    ----------
    layer : str
        A DXF layer name.

    Returns
    -------
    str
        ``"doors"``, ``"obstacles"``, ``"ignore"`` (``Defpoints``, the never-printed layer of
        dimension construction points) or ``"walls"`` (the fallback for any other name).

    Examples
    --------
    >>> guess_role("A-DOOR"), guess_role("Racking"), guess_role("WALLS"), guess_role("0")
    ('doors', 'obstacles', 'walls', 'walls')
    >>> guess_role("DEFPOINTS")
    'ignore'
    """
    low = layer.lower()
    if low == "defpoints":
        return "ignore"
    if "door" in low:
        return "doors"
    if any(w in low for w in _OBSTACLE_WORDS):
        return "obstacles"
    return "walls"


@dataclass
class _Shape:
    """One flattened piece of geometry in drawing units (world coordinates)."""

    points: np.ndarray  # (n, 2)
    closed: bool
    layer: str
    dxftype: str
    handle: str
    curved: bool = False  # chords inside a curve: grow by the sagitta when building the plan


def _line_of(exc: BaseException) -> int | None:
    m = re.search(r"line:?\s*(\d+)", str(exc))
    return int(m.group(1)) if m else None


@dataclass
class _Where:
    """Where an entity of an ASCII DXF starts: its line, type, handle and layer."""

    line: int
    dxftype: str
    handle: str = ""
    layer: str = ""

    def what(self) -> str:
        text = self.dxftype or "entity"
        if self.handle:
            text += f" handle {self.handle}"
        if self.layer:
            text += f" on layer {one_line(repr(self.layer), 60)}"
        return one_line(text, 120)

    def describe(self) -> str:
        return f"{self.what()}, line {self.line}"


@dataclass
class _TagIndex:
    """A pass over an ASCII DXF's group codes: the first malformed tag (with its line) and
    where each entity starts, to name the place of whatever ezdxf later refuses."""

    starts: list[_Where] = field(default_factory=list)
    by_handle: dict[str, _Where] = field(default_factory=dict)
    problem: tuple[int, str] | None = None

    @classmethod
    def scan(cls, data: bytes) -> _TagIndex:
        from ezdxf.lldxf.types import BINARY_DATA, POINT_CODES, TYPE_TABLE

        idx = cls()
        lines = data.split(b"\n")
        n = len(lines) - (1 if lines and not lines[-1].strip() else 0)
        cur: _Where | None = None
        i = 0
        while i + 1 < n:
            raw_code, value = lines[i], lines[i + 1].rstrip(b"\r")
            try:
                code = int(raw_code)
            except ValueError:
                idx.problem = (i + 1, "expected a group code (a whole number), got "
                               + one_line(repr(raw_code.decode("latin-1")), 40))
                return idx
            if code == 0:
                name = value.strip().decode("latin-1")
                cur = _Where(i + 2, name)
                idx.starts.append(cur)
            elif cur is not None and code == 5:
                cur.handle = value.strip().decode("latin-1")
                idx.by_handle.setdefault(cur.handle.upper(), cur)
            elif cur is not None and code == 8:
                cur.layer = value.strip().decode("latin-1", "replace")
            if code in POINT_CODES:
                nxt = lines[i + 2].strip() if i + 2 < n else b""
                if nxt != str(code + 10).encode():
                    idx.problem = (i + 3, f"group code {code} (an x coordinate) is not followed "
                                          f"by its y coordinate (group code {code + 10})")
                    return idx
            kind = TYPE_TABLE.get(code, str)
            if kind is not str and code not in BINARY_DATA:
                try:
                    float(value) if kind is float else int(float(value))
                except (ValueError, OverflowError):
                    idx.problem = (i + 2, f"expected a number for group code {code}, got "
                                   + one_line(repr(value.decode("latin-1")), 40))
                    return idx
            i += 2
        return idx

    def around(self, line: int) -> str:
        """``line N`` with the entity holding that line, if any."""
        best = None
        for w in self.starts:
            if w.line > line:
                break
            best = w
        if best is None:
            return f"line {line}"
        return f"line {line} (in {best.what()} from line {best.line})"

    def place_for(self, message: str) -> str:
        """The best place for an ezdxf message: its line, the entity of a handle it names, a
        header variable it names, else the first entity of a type it names."""
        line = _line_of(Exception(message))
        if line is not None:
            return self.around(line)
        for h in re.findall(r"#([0-9A-Fa-f]+)\b|handle\s+([0-9A-Fa-f]+)", message):
            w = self.by_handle.get((h[0] or h[1]).upper())
            if w is not None:
                return w.describe()
        names = [w.dxftype for w in self.starts]
        for word in re.findall(r"[A-Z_][A-Z0-9_]{2,}", message):
            if word in names:
                return self.starts[names.index(word)].describe()
        return ""


def _check_complete(path: Path, data: bytes) -> None:
    """Refuse an ASCII DXF that does not end with its EOF marker: it was cut short.

    ezdxf reads a truncated file without complaint, silently losing whatever followed the
    cut (often the whole ENTITIES section).
    """
    tail = data[-256:]
    lines = [ln.strip() for ln in tail.splitlines() if ln.strip()]
    if not lines or lines[-1].upper() != b"EOF":
        last = data.count(b"\n") + 1
        raise FileReadError(str(path), f"line {last} (end of file)",
                            "the DXF file ends early (no EOF marker); it may be truncated")


class _LibraryOutput:
    """Catches what ezdxf logs (through ``logging``), warns or prints while it reads, so
    the edge prints Swathe's one line only; the caught lines go to the import summary."""

    def __init__(self) -> None:
        self.lines: list[str] = []

    @contextlib.contextmanager
    def capture(self) -> Iterator[None]:
        logger = logging.getLogger("ezdxf")
        outer = self

        class _Keep(logging.Handler):
            def emit(self, record: logging.LogRecord) -> None:
                try:
                    outer._add(record.getMessage())
                except Exception:  # noqa: BLE001 - a malformed log record is not fatal
                    outer._add(str(record.msg))

        handler = _Keep(logging.DEBUG)
        old_propagate, old_level = logger.propagate, logger.level
        logger.addHandler(handler)
        logger.propagate = False
        if logger.level == logging.NOTSET or logger.level > logging.WARNING:
            logger.setLevel(logging.WARNING)
        printed = io.StringIO()
        try:
            with warnings.catch_warnings(record=True) as caught, \
                    contextlib.redirect_stdout(printed), contextlib.redirect_stderr(printed):
                warnings.simplefilter("always")
                yield
        finally:
            logger.removeHandler(handler)
            logger.propagate, logger.level = old_propagate, old_level
            for w in caught:
                self._add(str(w.message))
            for ln in printed.getvalue().splitlines():
                self._add(ln)

    def _add(self, text: str) -> None:
        t = one_line(text, 160)
        if t and len(self.lines) < 50 and t not in self.lines:
            self.lines.append(t)


def _read_doc(path: Path, out: _LibraryOutput | None = None):  # -> ezdxf Drawing
    out = out or _LibraryOutput()
    data = read_input_bytes(path, "DXF file")
    file = one_line(str(path), 300)
    # A UTF-8 byte-order mark (from text editors on some systems) is not part of the DXF
    # text: ezdxf would read it as part of the first group code. Source: the Unicode
    # standard (EF BB BF encodes U+FEFF, the byte-order mark).
    bom = data.startswith(codecs.BOM_UTF8)
    if bom:
        data = data[len(codecs.BOM_UTF8):]
    index = _TagIndex()
    binary = data.startswith(b"AutoCAD Binary DXF")
    if not binary and b"SECTION" in data[:4096].upper():
        index = _TagIndex.scan(data)
        if index.problem is not None:
            line, what = index.problem
            raise FileReadError(file, index.around(line), f"damaged DXF file: {what}")
        _check_complete(path, data)
    with out.capture():
        doc = _parse_doc(path, file, index, data if bom else None)
        try:
            doc.modelspace()
        except Exception as exc:  # noqa: BLE001 - a damaged layout table
            where = index.place_for("LAYOUT") or "OBJECTS section"
            raise FileReadError(file, where, "damaged DXF file: it has no usable model space "
                                f"({one_line(type(exc).__name__ + ': ' + str(exc), 80)})"
                                ) from None
    return doc, index


def _parse_doc(path: Path, file: str, index: _TagIndex, utf8: bytes | None = None):
    """The ezdxf document of ``path``; ``utf8``: the file's bytes after a UTF-8 byte-order
    mark, read as UTF-8 text (what the mark says) instead of the file."""
    import ezdxf
    from ezdxf import recover

    def place(exc: BaseException) -> str:
        return index.place_for(str(exc)) or "structure (ezdxf names no line)"

    def read_file():
        if utf8 is None:
            return ezdxf.readfile(path)
        return ezdxf.read(io.StringIO(utf8.decode("utf-8")))

    def recover_file():
        if utf8 is None:
            return recover.readfile(path)
        return recover.read(io.BytesIO(utf8))

    try:
        return read_file()
    except ezdxf.DXFStructureError as exc:
        first: BaseException = exc
    except UnicodeDecodeError as exc:
        skipped = 0 if utf8 is None else len(codecs.BOM_UTF8)
        raise FileReadError(file, f"byte {exc.start + skipped}",
                            "not a readable DXF file (text encoding error)") from None
    except (OSError, LookupError) as exc:
        # ezdxf raises IOError both for unreadable files and for files that are not DXF;
        # LookupError for an unknown code page.
        msg = one_line(getattr(exc, "strerror", None) or str(exc) or type(exc).__name__)
        where = index.place_for(str(exc)) or ("line 1" if index.starts or not
                                                path.stat().st_size else "start of file")
        raise FileReadError(file, where, f"not a readable DXF file ({msg})") from None
    except MemoryError:
        raise
    except Exception as exc:  # noqa: BLE001 - ezdxf's parser raises many kinds on garbage
        first = exc
    # A structure error may be a damaged but repairable file; ezdxf.recover tries harder.
    try:
        doc, auditor = recover_file()
    except MemoryError:
        raise
    except Exception:  # noqa: BLE001 - report the first, clearer error
        raise FileReadError(file, place(first), "damaged DXF file "
                            f"({one_line(type(first).__name__ + ': ' + str(first))})") from None
    if auditor.has_errors:
        err = auditor.errors[0]
        ent = getattr(err, "entity", None)
        handle = _safe_attr(ent, "handle", "") if ent is not None else ""
        where = index.by_handle.get(str(handle).upper())
        raise FileReadError(file, where.describe() if where else place(first),
                            "damaged DXF file that could not be repaired "
                            f"({one_line(getattr(err, 'message', '') or str(first))})")
    return doc


def _safe_attr(entity, name: str, default):  # noqa: ANN001 - any ezdxf entity
    """``entity.dxf.name``, or ``default`` when the entity has no such attribute (damaged
    files hold entities of unknown types, or of types without a layer)."""
    try:
        return entity.dxf.get(name, default)
    except Exception:  # noqa: BLE001 - ezdxf raises DXFAttributeError, DXFValueError, ...
        return default


def _units_m(doc, units: str | None, file: str) -> tuple[float, str]:
    if units is not None:
        key = units.strip().lower()
        if key not in UNITS_M:
            raise ValidationError(file, "units", f"unknown units {units!r}; expected one of "
                                  + ", ".join(UNITS_M))
        return UNITS_M[key], key
    code = doc.header.get("$INSUNITS", 0)
    try:
        code = int(code)
    except (TypeError, ValueError, OverflowError):
        code = 0
    if code not in INSUNITS_M:
        raise FileReadError(file, "header $INSUNITS",
                            f"unsupported drawing units code {code}; give the units "
                            "(mm, cm, m, in, ft) explicitly")
    return INSUNITS_M[code], INSUNITS_NAMES[code]


# -- flattening -------------------------------------------------------------------------------
def bulge_points(p0: tuple[float, float], p1: tuple[float, float], bulge: float,
                 sagitta: float) -> np.ndarray:
    """Points from ``p0`` to ``p1`` (both included) along a polyline segment with ``bulge``.

    The bulge is ``tan(theta / 4)`` for the included angle ``theta``, positive
    counter-clockwise (DXF reference, LWPOLYLINE group code 42). The centre lies at
    ``mid + n (L / 2) cot(theta / 2)`` with ``n`` the chord's left normal.
    """
    x0, y0 = p0
    x1, y1 = p1
    chord = math.hypot(x1 - x0, y1 - y0)
    if bulge == 0 or chord == 0 or not math.isfinite(bulge):
        return np.array([p0, p1], dtype=float)
    theta = 4.0 * math.atan(bulge)
    nx, ny = -(y1 - y0) / chord, (x1 - x0) / chord
    d = 0.5 * chord / math.tan(theta / 2.0)
    cx, cy = 0.5 * (x0 + x1) + nx * d, 0.5 * (y0 + y1) + ny * d
    radius = chord / (2.0 * abs(math.sin(theta / 2.0)))
    pts = arc_points((cx, cy), radius, math.atan2(y0 - cy, x0 - cx), theta, sagitta)
    pts[0] = p0
    pts[-1] = p1
    return pts


def _polyline_with_bulges(xyb: list[tuple[float, float, float]], closed: bool,
                          sagitta: float) -> np.ndarray:
    pieces: list[np.ndarray] = []
    n = len(xyb)
    last = n if closed else n - 1
    for i in range(last):
        x0, y0, b = xyb[i]
        x1, y1, _ = xyb[(i + 1) % n]
        seg = bulge_points((x0, y0), (x1, y1), b, sagitta)
        pieces.append(seg if not pieces else seg[1:])
    if not pieces:
        return np.array([[xyb[0][0], xyb[0][1]]], dtype=float)
    return np.vstack(pieces)


def _to_wcs(entity, pts2: np.ndarray, elevation: float) -> np.ndarray:
    """OCS points (with the entity's elevation) to world x, y."""
    ocs = entity.ocs()
    if not ocs.transform:
        return pts2
    out = ocs.points_to_wcs([(x, y, elevation) for x, y in pts2])
    return np.array([(v.x, v.y) for v in out], dtype=float)


def _max_scale(matrix) -> float:
    """Largest stretch the block transform applies in the plan (xy) plane."""
    if matrix is None:
        return 1.0
    m = np.array([[matrix[0, 0], matrix[0, 1]], [matrix[1, 0], matrix[1, 1]]], dtype=float)
    s = float(np.linalg.svd(m, compute_uv=False)[0]) if np.all(np.isfinite(m)) else 1.0
    return s if s > 0 else 1.0


def _bezier_chords(ctrl: np.ndarray, sagitta: float) -> int:
    """Chords for a Bezier piece of control points ``ctrl`` (k, 2) within ``sagitta``:
    Wang's bound, distance <= d (d - 1) / (8 n^2) max |P[i+2] - 2 P[i+1] + P[i]|
    (Wang, "Some properties of the Bezier curve", 1984; also Filip, Magedson and
    Markot, "Surface algorithms using bounds on derivatives", CAGD 3, 1986)."""
    d = len(ctrl) - 1
    if d < 2:
        return 1
    m = float(np.max(np.hypot(*(ctrl[2:] - 2.0 * ctrl[1:-1] + ctrl[:-2]).T)))
    n = math.sqrt(d * (d - 1) * m / (8.0 * sagitta)) if m > 0 else 1.0
    if not n < MAX_CHORDS:
        raise _EntityError(f"a curve of degree {d} this large needs more than {MAX_CHORDS} "
                           "chords to flatten")
    return max(1, math.ceil(n))


def _bezier_eval(ctrl: np.ndarray, n: int) -> np.ndarray:
    """Points at ``n + 1`` evenly spaced parameters of a Bezier piece (de Casteljau)."""
    t = np.linspace(0.0, 1.0, n + 1)[:, None, None]
    p = np.broadcast_to(ctrl, (n + 1, *ctrl.shape)).copy()
    while p.shape[1] > 1:
        p = (1.0 - t) * p[:, :-1] + t * p[:, 1:]
    return p[:, 0]


class _EntityError(Exception):
    """One entity cannot be read; the walk names it."""


def _spline_points(e, sagitta: float, limit: float) -> np.ndarray:
    """A SPLINE flattened within ``sagitta``, its size and complexity checked first."""
    degree = int(e.dxf.get("degree", 3))
    count = max(e.control_point_count(), e.fit_point_count())
    if not 1 <= degree <= MAX_SPLINE_DEGREE:
        raise _EntityError(f"spline degree {degree}; expected 1 to {MAX_SPLINE_DEGREE}")
    if count > MAX_SPLINE_POINTS:
        raise _EntityError(f"{count} spline points; expected at most {MAX_SPLINE_POINTS}")
    raw = np.array([tuple(v)[:2] for v in (e.control_points if e.control_point_count()
                                            else e.fit_points)], dtype=float).reshape(-1, 2)
    _check_size(raw, limit)
    bs = e.construction_tool()
    ctrl = np.array([tuple(v)[:2] for v in bs.control_points], dtype=float)
    _check_size(ctrl, limit)
    pieces: list[np.ndarray] = []
    if not bs.is_rational:
        try:
            beziers = [np.array([tuple(v)[:2] for v in b], dtype=float)
                       for b in bs.bezier_decomposition()]
        except Exception:  # noqa: BLE001 - an unclamped spline: sample its spans instead
            beziers = []
        if beziers:
            total = 0
            counts = []
            for b in beziers:
                counts.append(_bezier_chords(b, sagitta))
                total += counts[-1]
                if total > MAX_CHORDS:
                    raise _EntityError(f"the spline needs more than {MAX_CHORDS} chords to "
                                       "flatten")
            for b, n in zip(beziers, counts):
                pts = _bezier_eval(b, n)
                pieces.append(pts if not pieces else pts[1:])
            return np.vstack(pieces)
    # Rational or unclamped: sample each knot span as finely as the control polygon's
    # second differences ask (Wang's count, an estimate here rather than a bound).
    knots = np.array(bs.knots(), dtype=float)
    lo, hi = knots[bs.degree], knots[-bs.degree - 1]
    edges = np.unique(knots[(knots >= lo) & (knots <= hi)])
    if edges.size < 2 or not np.all(np.isfinite(edges)):
        raise _EntityError("the spline's knots do not span a curve")
    per_span = _bezier_chords(ctrl, sagitta)
    if per_span * (edges.size - 1) > MAX_CHORDS:
        raise _EntityError(f"the spline needs more than {MAX_CHORDS} chords to flatten")
    ts = np.unique(np.concatenate([np.linspace(a, b, per_span + 1)
                                   for a, b in zip(edges[:-1], edges[1:])]))
    return np.array([tuple(v)[:2] for v in bs.points(ts)], dtype=float)


def _ellipse_points(e, sagitta: float, limit: float) -> np.ndarray:
    """An ELLIPSE flattened within ``sagitta``: evenly spaced parameters, as many as the
    circle of its larger semi-axis needs (an ellipse is that circle squeezed, which only
    shortens the gap between arc and chord)."""
    ct = e.construction_tool()
    centre = np.array([tuple(ct.center)[:2]], dtype=float)
    a = math.hypot(*tuple(ct.major_axis)[:3])
    radius = a * max(1.0, abs(float(ct.ratio)))
    _check_size(centre, limit, radius)
    span = float(ct.param_span)
    try:
        n = chord_count(radius, span, sagitta)
    except ValueError as exc:
        raise _EntityError(str(exc)) from None
    params = float(ct.start_param) + span * np.linspace(0.0, 1.0, n + 1)
    return np.array([tuple(v)[:2] for v in ct.vertices(params)], dtype=float)


def _check_size(pts: np.ndarray, limit: float, radius: float = 0.0) -> None:
    """Refuse points that are not finite or lie beyond ``limit`` (drawing units), before
    any flattening is tried on them."""
    if not (np.all(np.isfinite(pts)) and math.isfinite(radius)):
        raise _EntityError("expected finite coordinates")
    if pts.size and float(np.abs(pts).max()) + abs(radius) > limit:
        raise _EntityError(f"lies more than {MAX_COORD_M / 1000:g} km from the origin; "
                           "move the drawing near the origin (or check its units)")


def _entity_shapes(e, sagitta: float, limit: float = math.inf
                   ) -> Iterator[tuple[np.ndarray, bool, bool]]:
    """Flattened outlines of one non-INSERT entity in its own (block) coordinates, its size
    checked against ``limit`` (drawing units) before any flattening.

    Yields ``(points, closed, curved)``; ``curved`` marks chords that lie inside a curve and
    must be grown outward by the sagitta.
    """
    t = e.dxftype()
    if t == "LINE":
        s, en = e.dxf.start, e.dxf.end
        yield np.array([(s.x, s.y), (en.x, en.y)], dtype=float), False, False
    elif t == "LWPOLYLINE":
        xyb = [(p[0], p[1], p[2]) for p in e.get_points("xyb")]
        if not xyb:
            return
        _check_size(np.array([(x, y) for x, y, _ in xyb], dtype=float), limit)
        pts = _polyline_with_bulges(xyb, bool(e.closed), sagitta)
        curved = any(b != 0 for _, _, b in xyb)
        yield _to_wcs(e, pts, e.dxf.get("elevation", 0.0)), bool(e.closed), curved
    elif t == "POLYLINE":
        if e.is_poly_face_mesh or e.is_polygon_mesh:
            return
        verts = list(e.vertices)
        if not verts:
            return
        closed = bool(e.is_closed)
        if e.is_2d_polyline:
            xyb = [(v.dxf.location.x, v.dxf.location.y, v.dxf.get("bulge", 0.0)) for v in verts]
            _check_size(np.array([(x, y) for x, y, _ in xyb], dtype=float), limit)
            pts = _polyline_with_bulges(xyb, closed, sagitta)
            elev = e.dxf.get("elevation", (0.0, 0.0, 0.0))
            z = elev[2] if hasattr(elev, "__len__") else float(elev)
            yield _to_wcs(e, pts, z), closed, any(b != 0 for _, _, b in xyb)
        else:
            pts = np.array([(v.dxf.location.x, v.dxf.location.y) for v in verts], dtype=float)
            if closed:
                pts = np.vstack([pts, pts[:1]])
            yield pts, closed, False
    elif t == "ARC":
        c = e.dxf.center
        _check_size(np.array([(c.x, c.y)], dtype=float), limit, float(e.dxf.radius))
        a0 = math.radians(e.dxf.start_angle)
        a1 = math.radians(e.dxf.end_angle)
        sweep = (a1 - a0) % (2.0 * math.pi)
        if sweep == 0:
            sweep = 2.0 * math.pi
        pts = arc_points((c.x, c.y), e.dxf.radius, a0, sweep, sagitta)
        yield _to_wcs(e, pts, c.z), False, True
    elif t == "CIRCLE":
        c = e.dxf.center
        _check_size(np.array([(c.x, c.y)], dtype=float), limit, float(e.dxf.radius))
        # Circumscribed: the polygon holds the circle (a block's affine map keeps that).
        pts = circle_points_outside((c.x, c.y), e.dxf.radius, sagitta)
        yield _to_wcs(e, pts, c.z), True, False
    elif t in ("ELLIPSE", "SPLINE"):
        pts = (_ellipse_points(e, sagitta, limit) if t == "ELLIPSE"
               else _spline_points(e, sagitta, limit))
        if len(pts) >= 2:
            closed = len(pts) > 2 and bool(np.allclose(pts[0], pts[-1], rtol=0, atol=1e-9))
            yield pts, closed, True


class _Walker:
    """Walks model space and the blocks it references, within the entity and point budgets,
    naming the entity (type, handle, layer, line) of anything it cannot read."""

    def __init__(self, file: str, index: _TagIndex, sagitta: float, limit: float) -> None:
        self.file = file
        self.index = index
        self.sagitta = sagitta
        self.limit = limit  # drawing units
        self.shapes: list[_Shape] = []
        self.texts: list[tuple[float, float, str, str]] = []
        self.skipped: Counter[str] = Counter()
        self.entities = 0
        self.points = 0
        self._block_sizes: dict[str, int] = {}

    def where(self, t: str, handle: str, layer: str) -> str:
        w = self.index.by_handle.get(handle.upper()) if handle else None
        text = f"{one_line(t, 40) or 'entity'} handle {one_line(handle, 20) or '?'} on layer " \
               f"{one_line(repr(layer), 60)}"
        return f"{text}, line {w.line}" if w is not None else text

    def block_size(self, block, depth: int = 0) -> int:  # noqa: ANN001 - ezdxf BlockLayout
        """Entities a block expands to, its references counted with their repeats."""
        name = str(_safe_attr(block.block, "name", "")) if block.block is not None else ""
        if name in self._block_sizes:
            return self._block_sizes[name]
        if depth >= _MAX_BLOCK_DEPTH:
            return MAX_ENTITIES + 1
        self._block_sizes[name] = MAX_ENTITIES + 1  # a block inside itself is too big
        total = 0
        for e in block:
            total += 1
            if _safe_type(e) == "INSERT":
                inner = _safe_block(e)
                if inner is not None:
                    total += _repeat(e) * self.block_size(inner, depth + 1)
            if total > MAX_ENTITIES:
                break
        self._block_sizes[name] = min(total, MAX_ENTITIES + 1)
        return self._block_sizes[name]

    def walk(self, entities: Iterable, matrix, parent_layer: str | None, depth: int) -> None:
        for e in entities:
            t = _safe_type(e)
            layer = _clean_text(_safe_attr(e, "layer", "0"))
            if parent_layer is not None and layer == "0":
                layer = parent_layer
            handle = str(_safe_attr(e, "handle", ""))
            self.entities += 1
            if t not in READ_TYPES:
                self.skipped[t or "unnamed"] += 1
                continue
            try:
                self._one(e, t, layer, handle, matrix, depth)
            except FileReadError:
                raise
            except MemoryError:
                raise
            except _EntityError as exc:
                raise FileReadError(self.file, self.where(t, handle, layer),
                                    one_line(str(exc))) from None
            except Exception as exc:  # noqa: BLE001 - a file ezdxf accepted may hold nonsense
                raise FileReadError(self.file, self.where(t, handle, layer),
                                    f"damaged {t} entity ({type(exc).__name__}: "
                                    f"{one_line(str(exc), 120)})") from None

    def _one(self, e, t: str, layer: str, handle: str, matrix, depth: int) -> None:  # noqa: ANN001
        if t == "INSERT":
            if depth >= _MAX_BLOCK_DEPTH:
                raise _EntityError(f"blocks nested more than {_MAX_BLOCK_DEPTH} deep "
                                   "(a block that contains itself?)")
            block = e.block()
            if block is None:
                self.skipped["INSERT of a missing block"] += 1
                return
            size = _repeat(e) * self.block_size(block)
            if self.entities + size > MAX_ENTITIES:
                raise _EntityError(f"its block expands to more than {MAX_ENTITIES} entities "
                                   "with the rest of the drawing (blocks inserting blocks "
                                   "many times over?)")
            inserts = e.multi_insert() if e.mcount > 1 else [e]
            for ins in inserts:
                m = ins.matrix44()
                total = m if matrix is None else m @ matrix
                self.walk(block, total, layer, depth + 1)
            return
        if t in ("TEXT", "MTEXT"):
            p = e.dxf.insert
            if matrix is not None:
                p = matrix.transform(p)
            text = e.plain_text() if t == "MTEXT" else e.dxf.get("text", "")
            self.texts.append((p.x, p.y, _clean_text(text).strip(), layer))
            return
        stretch = _max_scale(matrix)
        local_sagitta = self.sagitta / stretch
        offset = 0.0 if matrix is None else float(np.abs(np.array(matrix.get_row(3)[:2])).max())
        local_limit = max(self.limit - offset, 0.0) / stretch
        for pts, closed, curved in _entity_shapes(e, local_sagitta, local_limit):
            self.points += len(pts)
            if self.points > MAX_POINTS:
                raise _EntityError(f"the drawing's outlines hold more than {MAX_POINTS} "
                                   "points once flattened")
            if matrix is not None:
                v = matrix.transform_vertices([(x, y, 0.0) for x, y in pts])
                pts = np.array([(q.x, q.y) for q in v], dtype=float)
            if not np.all(np.isfinite(pts)):
                raise _EntityError("expected finite coordinates")
            self.shapes.append(_Shape(pts, closed, layer, t, handle, curved))


def _safe_type(e) -> str:  # noqa: ANN001 - any ezdxf entity
    try:
        return str(e.dxftype())
    except Exception:  # noqa: BLE001
        return ""


def _safe_block(e):  # noqa: ANN001 - an INSERT
    try:
        return e.block()
    except Exception:  # noqa: BLE001
        return None


def _repeat(e) -> int:  # noqa: ANN001 - an INSERT
    """How many times an INSERT places its block (MINSERT rows times columns)."""
    try:
        return max(1, int(e.dxf.get("row_count", 1))) * max(1, int(e.dxf.get("column_count", 1)))
    except Exception:  # noqa: BLE001
        return 1


def _role_map(layers: dict[str, list[str]] | None, present: list[str], file: str
              ) -> dict[str, str] | None:
    """Lower-case layer name -> role, or ``None`` to guess from names."""
    if layers is None:
        return None
    out: dict[str, str] = {}
    known = {n.lower(): n for n in present}
    for role, names in layers.items():
        if role not in ROLES:
            raise ValidationError(file, f"layers.{role}", "expected one of walls, obstacles, doors")
        for name in names:
            low = name.lower()
            if low in out and out[low] != role:
                raise ValidationError(file, f"layers.{role}",
                                      f"layer {name!r} is already given as {out[low]}")
            if low not in known:
                avail = ", ".join(repr(n) for n in present) or "none"
                raise ValidationError(file, f"layers.{role}",
                                      f"layer {name!r} is not in the drawing (layers: {avail})")
            out[low] = role
    return out


def _clean_text(value: object) -> str:
    """A name or label from the drawing as text that can be written out: bytes the code
    page could not decode (kept by ezdxf as lone surrogates) become ``\\udcxx`` escapes."""
    return str(value).encode("utf-8", "backslashreplace").decode("utf-8")


def _layer_names(doc) -> list[str]:
    names = {_clean_text(_safe_attr(layer, "name", "0")) for layer in doc.layers}
    names.update(_clean_text(_safe_attr(e, "layer", "0")) for e in doc.modelspace())
    return sorted(names, key=lambda n: (n.lower(), n))


def dxf_layers(path: str | Path) -> list[str]:
    """The layer names of a DXF file (the layer table and every layer model space uses).

    Parameters
    ----------
    path : str or Path
        The DXF file.

    Returns
    -------
    list of str
        Layer names, sorted case-insensitively.
    """
    p = Path(path)
    doc, _ = _read_doc(p)
    return _layer_names(doc)


def _dedupe_points(pts: np.ndarray, tol: float) -> list[tuple[float, float]]:
    out: list[tuple[float, float]] = []
    for x, y in pts:
        q = (float(x), float(y))
        if not out or math.dist(q, out[-1]) > tol:
            out.append(q)
    return out


def import_dxf(path: str | Path, layers: dict[str, list[str]] | None = None,
               units: str | None = None, wall_thickness_m: float = 0.1,
               zones: tuple[ZoneLayer, ...] = ()) -> FloorPlan:
    """Read a DXF drawing as a :class:`~kinematics.files.floorplan.FloorPlan` in metres.

    Parameters
    ----------
    path : str or Path
        The DXF file (ASCII or binary).
    layers : dict, optional
        ``{"walls": [...], "obstacles": [...], "doors": [...]}``: the layers of each role;
        others are skipped. Without it roles are guessed from layer names (see the module
        docstring) and unrecognised layers are walls.
    units : str, optional
        ``"mm"``, ``"cm"``, ``"m"``, ``"in"`` or ``"ft"``; overrides ``$INSUNITS``.
    wall_thickness_m : float
        Thickness given to open outlines on wall and obstacle layers.
    zones : tuple of ZoneLayer
        Layers whose closed outlines are zones.

    Returns
    -------
    FloorPlan
        Walls, obstacles and doors in plan metres; ``extra["dxf_import"]`` records the units
        and the role of each layer.

    Raises
    ------
    FileReadError
        The file is missing, not DXF, or damaged beyond repair.
    ValidationError
        Unknown ``units``, ``layers`` naming a layer the drawing lacks, or no geometry at
        all on the layers read.
    """
    p = Path(path)
    file = str(p)
    if not (isinstance(wall_thickness_m, (int, float)) and math.isfinite(wall_thickness_m)
            and wall_thickness_m > 0):
        raise ValidationError(file, "wall_thickness_m", "expected a positive number of metres")
    library = _LibraryOutput()
    doc, index = _read_doc(p, library)
    scale, unit_name = _units_m(doc, units, file)
    present = _layer_names(doc)
    roles = _role_map(layers, present, file)
    # Flatten in drawing units with the sagitta target converted from metres.
    walker = _Walker(file, index, SAGITTA_M / scale, MAX_COORD_M / scale)
    with library.capture():
        walker.walk(doc.modelspace(), None, None, 0)
    shapes, texts = walker.shapes, walker.texts

    zone_of = {z.layer.lower(): z for z in zones}
    known = {n.lower() for n in present}
    for i, z in enumerate(zones):
        if z.layer.lower() not in known:
            avail = ", ".join(repr(n) for n in present) or "none"
            raise ValidationError(file, f"zones[{i}].layer",
                                  f"layer {z.layer!r} is not in the drawing (layers: {avail})")

    def role_of(layer: str) -> str | None:
        if layer.lower() in zone_of:
            return "zones"
        if roles is None:
            guess = guess_role(layer)
            return None if guess == "ignore" else guess
        return roles.get(layer.lower())

    walls: list[Wall] = []
    obstacles: list[Obstacle] = []
    doors_raw: list[tuple[tuple[float, float], tuple[float, float]]] = []
    zone_list: list[Zone] = []
    used: dict[str, str] = {}
    tol = 1e-6  # metres: points closer than a micrometre are one point
    for sh in shapes:
        role = role_of(sh.layer)
        if role is None:
            continue
        pts = sh.points * scale
        if not np.all(np.isfinite(pts)):
            raise FileReadError(file, f"{sh.dxftype} handle {sh.handle}",
                                "expected finite coordinates")
        if np.abs(pts).max() > MAX_COORD_M:
            raise FileReadError(file, f"{sh.dxftype} handle {sh.handle} on layer {sh.layer!r}",
                                f"lies more than {MAX_COORD_M / 1000:g} km from the origin; "
                                "move the drawing near the origin (or check its units)")
        used.setdefault(sh.layer, role)
        clean = _dedupe_points(pts, tol)
        if role == "doors":
            if sh.dxftype in ("LINE", "LWPOLYLINE", "POLYLINE") and not sh.closed \
                    and len(clean) == 2:
                doors_raw.append((clean[0], clean[1]))
            continue
        closed = sh.closed or (len(clean) > 3 and math.dist(clean[0], clean[-1]) <= tol)
        if role == "zones":
            if closed and math.dist(clean[0], clean[-1]) <= tol:
                clean = clean[:-1]
            if closed and len(clean) >= 3:
                if sh.curved:  # outward as a solid: a cap or rule wherever it could apply
                    with np.errstate(all="ignore"):
                        grown = grow_outline(np.array(clean), SAGITTA_M)
                    clean = [tuple(q) for q in grown.tolist()]
                zone_list.append(zone_of[sh.layer.lower()].zone(tuple(clean)))
            continue
        if closed:
            if math.dist(clean[0], clean[-1]) <= tol:
                clean = clean[:-1]
            if len(clean) >= 3:
                if sh.curved:
                    with np.errstate(all="ignore"):  # a degenerate outline; its area is checked
                        grown = grow_outline(np.array(clean), SAGITTA_M)
                    clean = [tuple(q) for q in grown.tolist()]
                obstacles.append(Obstacle(tuple(clean), sh.layer))
        elif len(clean) >= 2:
            thickness = float(wall_thickness_m)
            if sh.curved:
                thickness = grown_thickness(thickness, SAGITTA_M)
            walls.append(Wall(tuple(clean), thickness))

    door_texts = [(x * scale, y * scale, s) for x, y, s, layer in texts
                  if s and role_of(layer) == "doors"]
    doors: list[Door] = []
    for i, (a, b) in enumerate(doors_raw):
        mid = ((a[0] + b[0]) / 2.0, (a[1] + b[1]) / 2.0)
        label = f"door {i + 1}"
        best = _LABEL_RADIUS_M
        for x, y, s in door_texts:
            d = math.dist(mid, (x, y))
            if d <= best:
                best, label = d, s
        doors.append(Door(a, b, label))

    if not (walls or obstacles or doors or zone_list):
        named = sorted({n for names in (layers or {}).values() for n in names})
        which = ("the layers " + ", ".join(repr(n) for n in named)) if named else "any layer"
        raise ValidationError(file, "layers" if roles else "model space",
                              f"no walls, obstacles or doors found on {which} "
                              f"(layers in the drawing: {', '.join(present) or 'none'})")
    extra = {"dxf_import": {"units": unit_name, "metres_per_unit": scale,
                            "layers": {role: sorted(n for n, r in used.items() if r == role)
                                       for role in ROLES},
                            "skipped": dict(sorted(walker.skipped.items())),
                            "warnings": list(library.lines)}}
    if zones:
        extra["dxf_import"]["zone_layers"] = sorted(n for n, r in used.items() if r == "zones")
    return FloorPlan(p.stem, tuple(walls), tuple(obstacles), tuple(doors), file, extra,
                     tuple(zone_list))
