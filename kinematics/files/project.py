"""The project: a floor plan, one chassis and its routes (``*.swathe.json``).

Loading checks every value and names the file and key path of the first mistake; saving is
atomic and keeps keys this version does not know, so a newer file survives a round trip.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from kinematics.errors import FileReadError, SwatheInputError, ValidationError
from kinematics.files.floorplan import (
    FloorPlan,
    check_footprint,
    floorplan_from_dict,
    floorplan_to_dict,
)
from kinematics.files.jsonio import check_input_file, one_line, read_json, write_json
from kinematics.files.validate import (
    MAX_BODY_M,
    MAX_COORD_M,
    MAX_ROUTE_SPAN_M,
    MAX_WAYPOINTS,
    MIN_BODY_M,
    MIN_STEER_DEG,
    Reader,
    join,
    too_spread,
)

FORMAT_VERSION = 1
DRIVES = ("differential", "bicycle", "ackermann", "mecanum", "swerve")
DRIVE_ALIASES = {"tracked": "differential", "skid-steer": "differential",
                 "skid_steer": "differential", "car": "ackermann"}
Point = tuple[float, float]


@dataclass(frozen=True)
class Waypoint:
    """A sketched point; ``heading_deg`` (plan frame, ccw from +x) where the user fixed one."""

    x: float
    y: float
    heading_deg: float | None = None

    def to_list(self) -> list[float]:
        if self.heading_deg is None:
            return [self.x, self.y]
        return [self.x, self.y, self.heading_deg]


@dataclass(frozen=True)
class Route:
    """A named route: waypoints, the radius it turns with, and whether it may reverse."""

    name: str
    waypoints: tuple[Waypoint, ...]
    turn_radius_m: float = 0.0
    reverse: bool = False
    extra: dict = field(default_factory=dict, compare=False)


@dataclass(frozen=True)
class Chassis:
    """The vehicle: drive type, dimensions, footprint (body frame) and limits."""

    name: str = "chassis"
    drive: str = "differential"
    footprint: tuple[Point, ...] = ((-0.3, -0.3), (0.6, -0.3), (0.6, 0.3), (-0.3, 0.3))
    margin_m: float = 0.05
    wheel_radius_m: float = 0.1
    track_m: float | None = None
    wheelbase_m: float | None = None
    max_steer_deg: float | None = None
    min_turn_radius_m: float = 0.0
    max_speed_mps: float = 1.0
    max_accel_mps2: float = 0.5
    max_decel_mps2: float | None = None
    max_wheel_rate_radps: float | None = None
    max_lateral_accel_mps2: float | None = None
    max_yaw_rate_dps: float | None = None
    effective_track_factor: float = 1.0
    extra: dict = field(default_factory=dict, compare=False)


@dataclass(frozen=True)
class Project:
    """A floor plan, a chassis and its routes; ``path`` is where it was read from."""

    floorplan: FloorPlan
    chassis: Chassis
    routes: tuple[Route, ...] = ()
    floorplan_ref: str | dict | None = None
    path: Path | None = None
    extra: dict = field(default_factory=dict, compare=False)

    def route(self, name: str) -> Route:
        for r in self.routes:
            if r.name == name:
                return r
        names = ", ".join(repr(r.name) for r in self.routes) or "none"
        raise ValidationError(str(self.path or "<project>"), "routes",
                              f"no route named {name!r} (routes: {names})")


# Which dimensions each drive needs (besides wheel_radius_m and footprint).
REQUIRED = {
    "differential": ("track_m",),
    "bicycle": ("wheelbase_m", "max_steer_deg"),
    "ackermann": ("wheelbase_m", "track_m", "max_steer_deg"),
    "mecanum": ("wheelbase_m", "track_m"),
    "swerve": ("wheelbase_m", "track_m"),
}

_POSITIVE = ("wheel_radius_m", "track_m", "wheelbase_m", "max_speed_mps", "max_accel_mps2",
             "max_decel_mps2", "max_wheel_rate_radps", "max_lateral_accel_mps2",
             "max_yaw_rate_dps", "effective_track_factor")
_NON_NEGATIVE = ("margin_m", "min_turn_radius_m")


def _zero_or_sized(r: Reader, radius: float | None, place: str) -> None:
    """A turn radius is 0 (on the spot) or at least :data:`MIN_BODY_M`: a radius of a few
    nanometres (or a denormal) is no turn a chassis makes and overflows the arc algebra."""
    if radius is not None and 0.0 < radius < MIN_BODY_M:
        raise r.fail(place, f"expected 0 (turn on the spot) or at least {MIN_BODY_M:g} m, "
                            f"got {radius:g}")


def chassis_from_dict(d: Any, file: str, place: str = "chassis") -> Chassis:
    """Build and check a :class:`Chassis` from its JSON object."""
    r = Reader(file)
    d = r.obj(d, place)
    drive_raw = r.text(r.get(d, "drive", place), join(place, "drive"))
    drive = DRIVE_ALIASES.get(drive_raw.strip().lower(), drive_raw.strip().lower())
    if drive not in DRIVES:
        raise r.fail(join(place, "drive"), f"unknown drive {drive_raw!r}; expected one of "
                     + ", ".join(DRIVES) + " (or tracked, skid-steer)")
    fp_place = join(place, "footprint")
    footprint = r.points(r.get(d, "footprint", place), fp_place, 3, MAX_BODY_M)
    check_footprint(footprint, file, fp_place)
    vals: dict[str, Any] = {}
    for key in _POSITIVE:
        size = key.endswith("_m")
        vals[key] = r.opt_number(d, key, place, None, positive=True,
                                 minimum=MIN_BODY_M if size else None,
                                 maximum=MAX_BODY_M if size else None)
    for key in _NON_NEGATIVE:
        vals[key] = r.opt_number(d, key, place, None, non_negative=True,
                                 maximum=MAX_BODY_M if key.endswith("_m") else None)
    _zero_or_sized(r, vals["min_turn_radius_m"], join(place, "min_turn_radius_m"))
    steer = r.opt_number(d, "max_steer_deg", place, None, positive=True,
                         minimum=MIN_STEER_DEG, maximum=89.0)
    for key in REQUIRED[drive]:
        v = steer if key == "max_steer_deg" else vals[key]
        if v is None:
            raise r.fail(join(place, key), f"missing; a {drive} chassis needs {key}")
    if drive == "differential" and vals["track_m"] is None:
        raise r.fail(join(place, "track_m"), "missing; a differential chassis needs track_m")
    name = r.text(d.get("name", "chassis"), join(place, "name"))
    known = {"name", "drive", "footprint", "max_steer_deg", *_POSITIVE, *_NON_NEGATIVE}
    extra = r.extras(d, known, place)
    defaults = Chassis()
    return Chassis(
        name=name, drive=drive, footprint=footprint,
        margin_m=vals["margin_m"] if vals["margin_m"] is not None else defaults.margin_m,
        wheel_radius_m=vals["wheel_radius_m"] or defaults.wheel_radius_m,
        track_m=vals["track_m"], wheelbase_m=vals["wheelbase_m"], max_steer_deg=steer,
        min_turn_radius_m=vals["min_turn_radius_m"] or 0.0,
        max_speed_mps=vals["max_speed_mps"] or defaults.max_speed_mps,
        max_accel_mps2=vals["max_accel_mps2"] or defaults.max_accel_mps2,
        max_decel_mps2=vals["max_decel_mps2"],
        max_wheel_rate_radps=vals["max_wheel_rate_radps"],
        max_lateral_accel_mps2=vals["max_lateral_accel_mps2"],
        max_yaw_rate_dps=vals["max_yaw_rate_dps"],
        effective_track_factor=vals["effective_track_factor"] or 1.0,
        extra=extra,
    )


def chassis_to_dict(c: Chassis) -> dict:
    d: dict[str, Any] = {"name": c.name, "drive": c.drive,
                         "footprint": [list(p) for p in c.footprint], "margin_m": c.margin_m,
                         "wheel_radius_m": c.wheel_radius_m}
    for key in ("track_m", "wheelbase_m", "max_steer_deg"):
        v = getattr(c, key)
        if v is not None:
            d[key] = v
    d["min_turn_radius_m"] = c.min_turn_radius_m
    d["max_speed_mps"] = c.max_speed_mps
    d["max_accel_mps2"] = c.max_accel_mps2
    for key in ("max_decel_mps2", "max_wheel_rate_radps", "max_lateral_accel_mps2",
                "max_yaw_rate_dps"):
        v = getattr(c, key)
        if v is not None:
            d[key] = v
    if c.effective_track_factor != 1.0:
        d["effective_track_factor"] = c.effective_track_factor
    for k, v in c.extra.items():
        d.setdefault(k, v)
    return d


def route_from_dict(d: Any, file: str, place: str) -> Route:
    r = Reader(file)
    d = r.obj(d, place)
    name = r.text(r.get(d, "name", place), join(place, "name"))
    wp_place = join(place, "waypoints")
    items = r.lst(r.get(d, "waypoints", place), wp_place)
    if len(items) < 2:
        raise r.fail(wp_place, f"expected at least 2 waypoints, got {len(items)}")
    if len(items) > MAX_WAYPOINTS:
        raise r.fail(wp_place, f"expected at most {MAX_WAYPOINTS} waypoints, got {len(items)}")
    wps = []
    for i, w in enumerate(items):
        p = join(wp_place, i)
        if not isinstance(w, list) or len(w) not in (2, 3):
            raise r.fail(p, "expected a waypoint [x, y] or [x, y, heading_deg]")
        x = r.number(w[0], join(p, 0), minimum=-MAX_COORD_M, maximum=MAX_COORD_M)
        y = r.number(w[1], join(p, 1), minimum=-MAX_COORD_M, maximum=MAX_COORD_M)
        h = None if len(w) == 2 or w[2] is None else r.number(w[2], join(p, 2),
                                                               minimum=-360.0, maximum=360.0)
        wps.append(Waypoint(x, y, h))
    far = too_spread([(w.x, w.y) for w in wps])
    if far is not None:
        raise r.fail(join(wp_place, far), f"waypoints spread over more than "
                     f"{MAX_ROUTE_SPAN_M / 1000:g} km; expected metres on a floor plan")
    radius = r.opt_number(d, "turn_radius_m", place, 0.0, non_negative=True,
                          maximum=MAX_ROUTE_SPAN_M)
    _zero_or_sized(r, radius, join(place, "turn_radius_m"))
    reverse = r.boolean(d.get("reverse", False), join(place, "reverse"))
    extra = r.extras(d, {"name", "waypoints", "turn_radius_m", "reverse"}, place)
    return Route(name, tuple(wps), float(radius or 0.0), reverse, extra)


def route_to_dict(rt: Route) -> dict:
    d: dict[str, Any] = {"name": rt.name, "waypoints": [w.to_list() for w in rt.waypoints],
                         "turn_radius_m": rt.turn_radius_m, "reverse": rt.reverse}
    for k, v in rt.extra.items():
        d.setdefault(k, v)
    return d


def _load_floorplan_ref(ref: Any, file: str, base_dir: Path) -> FloorPlan:
    from kinematics.files.loader import load_floorplan

    r = Reader(file)
    if isinstance(ref, str):
        name = r.text(ref, "floorplan")
        target = _floor_target(base_dir, name, file, "floorplan")
        return load_floorplan(target)
    if isinstance(ref, dict) and "file" in ref:
        fname = r.text(ref["file"], "floorplan.file")
        target = _floor_target(base_dir, fname, file, "floorplan.file")
        opts: dict[str, Any] = {}
        if target.suffix.lower() == ".dxf":
            if "layers" in ref:
                layers = r.obj(ref["layers"], "floorplan.layers")
                clean = {}
                for role, names in layers.items():
                    if role not in ("walls", "obstacles", "doors"):
                        raise r.fail(f"floorplan.layers.{role}",
                                     "expected one of walls, obstacles, doors")
                    lst = r.lst(names, f"floorplan.layers.{role}")
                    clean[role] = [r.text(n, f"floorplan.layers.{role}[{i}]")
                                   for i, n in enumerate(lst)]
                opts["layers"] = clean
            if "units" in ref:
                opts["units"] = r.text(ref["units"], "floorplan.units")
            if "wall_thickness_m" in ref:
                opts["wall_thickness_m"] = r.number(ref["wall_thickness_m"],
                                                    "floorplan.wall_thickness_m", positive=True)
        elif target.suffix.lower() == ".svg":
            if "metres_per_unit" in ref:
                opts["metres_per_unit"] = r.number(ref["metres_per_unit"],
                                                   "floorplan.metres_per_unit", positive=True)
        return load_floorplan(target, **opts)
    if isinstance(ref, dict):
        return floorplan_from_dict(ref, file, "floorplan", file)
    raise r.fail("floorplan", "expected a file name, an import object {\"file\": ...} "
                              "or an inline floor plan object")


def _floor_target(base_dir: Path, name: str, file: str, place: str) -> Path:
    """The floor plan file a project names, refused (naming the project and the key) when it
    is missing, a folder, not a regular file, unreadable or its name too long."""
    target = base_dir / name
    try:
        check_input_file(target, "floor plan file")
    except FileReadError as exc:
        reason = exc.expected
        if reason == "file not found":
            reason = f"was not found (looked for {one_line(str(target), 300)})"
        raise FileReadError(file, place,
                            f"the floor plan file {one_line(repr(name), 300)} {reason}") from None
    return target


def project_from_dict(d: Any, file: str, base_dir: Path | None = None) -> Project:
    """Build and check a :class:`Project` from the parsed ``*.swathe.json`` object."""
    r = Reader(file)
    d = r.obj(d, "")
    r.version(d, "swathe_project", FORMAT_VERSION)
    base = base_dir if base_dir is not None else Path(".")
    ref = r.get(d, "floorplan", "")
    fp = _load_floorplan_ref(ref, file, base)
    chassis = chassis_from_dict(r.get(d, "chassis", ""), file, "chassis")
    routes_raw = r.lst(d.get("routes", []), "routes")
    routes = tuple(route_from_dict(x, file, join("routes", i)) for i, x in enumerate(routes_raw))
    seen: set[str] = set()
    for i, rt in enumerate(routes):
        if rt.name in seen:
            raise r.fail(join(join("routes", i), "name"), f"route name {rt.name!r} is used twice")
        seen.add(rt.name)
    extra = r.extras(d, {"swathe_project", "floorplan", "chassis", "routes"}, "")
    return Project(fp, chassis, routes, copy.deepcopy(ref), None, extra)


def load_project(path: str | Path) -> Project:
    """Read and check a ``*.swathe.json`` project and the floor plan it names."""
    p = Path(path)
    d = read_json(p)
    proj = project_from_dict(d, str(p), p.parent)
    return Project(proj.floorplan, proj.chassis, proj.routes, proj.floorplan_ref, p, proj.extra)


def project_to_dict(p: Project, inline_floorplan: bool = False) -> dict:
    """The ``*.swathe.json`` object; the floor plan stays a reference unless inlined."""
    ref = p.floorplan_ref
    if inline_floorplan or ref is None or (isinstance(ref, dict) and "file" not in ref):
        ref = floorplan_to_dict(p.floorplan)
    d: dict[str, Any] = {"swathe_project": FORMAT_VERSION, "floorplan": ref,
                         "chassis": chassis_to_dict(p.chassis),
                         "routes": [route_to_dict(rt) for rt in p.routes]}
    for k, v in p.extra.items():
        d.setdefault(k, v)
    return d


def save_project(p: Project, path: str | Path, inline_floorplan: bool = False) -> None:
    """Write the project atomically (temporary file, then rename)."""
    write_json(path, project_to_dict(p, inline_floorplan))


__all__ = ["Waypoint", "Route", "Chassis", "Project", "load_project", "save_project",
           "project_from_dict", "project_to_dict", "chassis_from_dict", "chassis_to_dict",
           "route_from_dict", "route_to_dict", "SwatheInputError", "DRIVES"]
