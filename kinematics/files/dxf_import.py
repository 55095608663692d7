"""Import a floor plan from a DXF drawing (read with ezdxf) into the Swathe model.

What is read, from model space only:

- LINE, LWPOLYLINE and POLYLINE (2D and 3D; bulges become circular arcs), ARC, CIRCLE,
  ELLIPSE and SPLINE; INSERT block references are exploded with their full transform
  (insertion point, scale, rotation, block base point, MINSERT rows and columns), nested to
  any depth. An entity on layer ``0`` inside a block takes the layer of its INSERT, as in
  the DXF convention.
- Curves are flattened outward, so a clearance is never read larger than the drawing's: a
  circle becomes a circumscribed polygon whose vertices lie at most :data:`SAGITTA_M` (1 mm)
  outside it; arcs and polyline bulges become chords whose sagitta,
  ``r (1 - cos(dtheta / 2))`` for a chord spanning ``dtheta``, is at most 1 mm, and
  ellipses and splines use ezdxf's adaptive flattening to the same 1 mm, in plan metres
  after every block transform. An outline holding such chords is then grown by 1 mm (a
  solid outward, a wall on both faces: its thickness plus 2 mm), so the flattened solid
  contains the true one and exceeds it by at most 2 mm.
- Units come from the header variable ``$INSUNITS`` (1 inch, 2 foot, 4 millimetre,
  5 centimetre, 6 metre, ...); ``0`` (unitless) is read as metres. ``units=`` ("mm", "cm",
  "m", "in", "ft") overrides the header: architects often draw in millimetres and leave
  the header unset.
- Layers: ``layers={"walls": [...], "obstacles": [...], "doors": [...]}`` names the layers
  of each role (case-insensitive, as DXF layer names are); entities on layers not named
  are skipped. Without ``layers`` the role is guessed from the layer name: a name holding
  ``door`` is a door layer; ``obstacle``, ``fixture``, ``furniture`` or ``rack`` an
  obstacle layer; every other layer (``wall`` or not) is read as walls, so an unlayered
  drawing still gives solid geometry.
- On a wall or obstacle layer a closed outline (closed polyline, circle, or a polyline
  whose last point is its first) is a solid :class:`~kinematics.files.floorplan.Obstacle`; an
  open one is a :class:`~kinematics.files.floorplan.Wall` of ``wall_thickness_m``.
- ``zones=[ZoneLayer(...)]`` (in a project: ``"zones": [{"layer", "kind", ...}]``) turns
  every closed outline on a named layer into a zone of that kind (open ones there are
  skipped); a zone layer is read only as zones, whatever ``layers`` says.
- On a door layer a LINE (or a two-point open polyline) is a door opening between its
  ends; other door-layer geometry (swing arcs, leaves) is skipped. A door is labelled by
  the nearest TEXT or MTEXT on a door layer within 1 m of its midpoint, else ``door N``.

An unreadable, non-DXF or damaged file raises :class:`~kinematics.errors.FileReadError`
naming the file and, where ezdxf reports one, the line.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Iterator
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from kinematics.errors import FileReadError, ValidationError
from kinematics.files.curves import (
    FLATTEN_TOLERANCE_M,
    arc_points,
    circle_points_outside,
    grow_outline,
    grown_thickness,
)
from kinematics.files.floorplan import Door, FloorPlan, Obstacle, Wall, Zone, ZoneLayer
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
def guess_role(layer: str) -> str:
    """The role a layer plays when no ``layers`` mapping is given.

    Parameters
    ----------
    layer : str
        A DXF layer name.

    Returns
    -------
    str
        ``"doors"``, ``"obstacles"`` or ``"walls"`` (the fallback for any other name).

    Examples
    --------
    >>> guess_role("A-DOOR"), guess_role("Racking"), guess_role("WALLS"), guess_role("0")
    ('doors', 'obstacles', 'walls', 'walls')
    """
    low = layer.lower()
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


def _line_of(exc: BaseException) -> str:
    m = re.search(r"line\s+(\d+)", str(exc))
    return f"line {m.group(1)}" if m else ""


def _check_complete(path: Path) -> None:
    """Refuse an ASCII DXF that does not end with its EOF marker: it was cut short.

    ezdxf reads a truncated file without complaint, silently losing whatever followed the
    cut (often the whole ENTITIES section).
    """
    try:
        with path.open("rb") as fh:
            head = fh.read(4096)
            fh.seek(0, 2)
            size = fh.tell()
            fh.seek(max(0, size - 256))
            tail = fh.read()
    except OSError as exc:
        raise FileReadError(str(path), "", f"cannot be read ({exc.strerror})") from None
    if head.startswith(b"AutoCAD Binary DXF") or b"SECTION" not in head.upper():
        return  # binary DXF has no text marker; a non-DXF file is ezdxf's to refuse
    lines = [ln.strip() for ln in tail.splitlines() if ln.strip()]
    if not lines or lines[-1].upper() != b"EOF":
        raise FileReadError(str(path), "end of file",
                            "the DXF file ends early (no EOF marker); it may be truncated")


def _read_doc(path: Path):  # -> ezdxf Drawing
    import ezdxf
    from ezdxf import recover

    if not path.exists():
        raise FileReadError(str(path), "", "file not found")
    if path.is_dir():
        raise FileReadError(str(path), "", "is a folder, expected a DXF file")
    _check_complete(path)
    try:
        return ezdxf.readfile(path)
    except ezdxf.DXFStructureError as exc:
        first = exc
    except UnicodeDecodeError as exc:
        raise FileReadError(str(path), f"byte {exc.start}",
                            "not a readable DXF file (text encoding error)") from None
    except OSError as exc:
        # ezdxf raises IOError both for unreadable files and for files that are not DXF.
        msg = exc.strerror or str(exc) or type(exc).__name__
        raise FileReadError(str(path), _line_of(exc), f"not a readable DXF file ({msg})") from None
    except Exception as exc:  # noqa: BLE001 - ezdxf's parser raises many kinds on garbage
        raise FileReadError(str(path), _line_of(exc),
                            f"not a readable DXF file ({type(exc).__name__}: {exc})") from None
    # A structure error may be a damaged but repairable file; ezdxf.recover tries harder.
    try:
        doc, auditor = recover.readfile(path)
    except Exception:  # noqa: BLE001 - report the first, clearer error
        raise FileReadError(str(path), _line_of(first),
                            f"damaged DXF file ({first})") from None
    if auditor.has_errors:
        raise FileReadError(str(path), _line_of(first),
                            f"damaged DXF file that could not be repaired ({first})")
    return doc


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
    except (TypeError, ValueError):
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


def _entity_shapes(e, sagitta: float) -> Iterator[tuple[np.ndarray, bool, bool]]:
    """Flattened outlines of one non-INSERT entity in its own (block) coordinates.

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
        a0 = math.radians(e.dxf.start_angle)
        a1 = math.radians(e.dxf.end_angle)
        sweep = (a1 - a0) % (2.0 * math.pi)
        if sweep == 0:
            sweep = 2.0 * math.pi
        pts = arc_points((c.x, c.y), e.dxf.radius, a0, sweep, sagitta)
        yield _to_wcs(e, pts, c.z), False, True
    elif t == "CIRCLE":
        c = e.dxf.center
        # Circumscribed: the polygon holds the circle (a block's affine map keeps that).
        pts = circle_points_outside((c.x, c.y), e.dxf.radius, sagitta)
        yield _to_wcs(e, pts, c.z), True, False
    elif t in ("ELLIPSE", "SPLINE"):
        pts = np.array([(v.x, v.y) for v in e.flattening(sagitta)], dtype=float)
        if len(pts) >= 2:
            closed = len(pts) > 2 and bool(np.allclose(pts[0], pts[-1], rtol=0, atol=1e-9))
            yield pts, closed, True


def _walk(entities: Iterable, matrix, parent_layer: str | None, sagitta: float, depth: int,
          file: str, shapes: list[_Shape], texts: list[tuple[float, float, str, str]]) -> None:
    for e in entities:
        t = e.dxftype()
        layer = e.dxf.get("layer", "0")
        if parent_layer is not None and layer == "0":
            layer = parent_layer
        handle = str(e.dxf.get("handle", "?"))
        if t == "INSERT":
            if depth >= _MAX_BLOCK_DEPTH:
                raise FileReadError(file, f"INSERT handle {handle}",
                                    f"blocks nested more than {_MAX_BLOCK_DEPTH} deep "
                                    "(a block that contains itself?)")
            inserts = e.multi_insert() if e.mcount > 1 else [e]
            for ins in inserts:
                block = ins.block()
                if block is None:
                    continue
                m = ins.matrix44()
                total = m if matrix is None else m @ matrix
                _walk(block, total, layer, sagitta, depth + 1, file, shapes, texts)
            continue
        if t in ("TEXT", "MTEXT"):
            p = e.dxf.insert
            if matrix is not None:
                p = matrix.transform(p)
            text = e.plain_text() if t == "MTEXT" else e.dxf.get("text", "")
            texts.append((p.x, p.y, str(text).strip(), layer))
            continue
        local_sagitta = sagitta / _max_scale(matrix)
        for pts, closed, curved in _entity_shapes(e, local_sagitta):
            if matrix is not None:
                v = matrix.transform_vertices([(x, y, 0.0) for x, y in pts])
                pts = np.array([(q.x, q.y) for q in v], dtype=float)
            if not np.all(np.isfinite(pts)):
                raise FileReadError(file, f"{t} handle {handle} on layer {layer!r}",
                                    "expected finite coordinates")
            shapes.append(_Shape(pts, closed, layer, t, handle, curved))


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


def _layer_names(doc) -> list[str]:
    names = {layer.dxf.name for layer in doc.layers}
    names.update(e.dxf.get("layer", "0") for e in doc.modelspace())
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
    return _layer_names(_read_doc(p))


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
    doc = _read_doc(p)
    scale, unit_name = _units_m(doc, units, file)
    present = _layer_names(doc)
    roles = _role_map(layers, present, file)
    # Flatten in drawing units with the sagitta target converted from metres.
    sagitta_du = SAGITTA_M / scale
    shapes: list[_Shape] = []
    texts: list[tuple[float, float, str, str]] = []
    try:
        _walk(doc.modelspace(), None, None, sagitta_du, 0, file, shapes, texts)
    except FileReadError:
        raise
    except Exception as exc:  # noqa: BLE001 - a file ezdxf accepted may still hold nonsense
        raise FileReadError(file, "", f"damaged DXF entity ({type(exc).__name__}: {exc})"
                            ) from None

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
            return guess_role(layer)
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
                zone_list.append(zone_of[sh.layer.lower()].zone(tuple(clean)))
            continue
        if closed:
            if math.dist(clean[0], clean[-1]) <= tol:
                clean = clean[:-1]
            if len(clean) >= 3:
                if sh.curved:
                    clean = [tuple(q) for q in grow_outline(np.array(clean), SAGITTA_M).tolist()]
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
        raise ValidationError(file, "layers" if roles else "",
                              f"no walls, obstacles or doors found on {which} "
                              f"(layers in the drawing: {', '.join(present) or 'none'})")
    extra = {"dxf_import": {"units": unit_name, "metres_per_unit": scale,
                            "layers": {role: sorted(n for n, r in used.items() if r == role)
                                       for role in ROLES}}}
    if zones:
        extra["dxf_import"]["zone_layers"] = sorted(n for n, r in used.items() if r == "zones")
    return FloorPlan(p.stem, tuple(walls), tuple(obstacles), tuple(doors), file, extra,
                     tuple(zone_list))
