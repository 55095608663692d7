"""The project: a floor plan, one chassis and its routes (``*.swathe.json``).

Loading checks every value and names the file and key path of the first mistake; saving is
atomic and keeps keys this version does not know, so a newer file survives a round trip.

Size: the project model and its file format together: every dataclass (waypoint, stop, route,
trailer, chassis, project) with its reader and writer, which must name the same keys; splitting
the model from its I/O would put each key in two places.
"""

from __future__ import annotations

import copy
import dataclasses
import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from shapely.geometry import Point as ShapelyPoint

from kinematics.errors import FileReadError, SwatheInputError, ValidationError
from kinematics.files.floorplan import (
    FloorPlan,
    check_footprint,
    floorplan_from_dict,
    floorplan_to_dict,
    zone_layers_from,
)
from kinematics.files.jsonio import (
    check_input_file,
    collector_held,
    one_line,
    read_json,
    write_json,
)
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


def drive_word(drive: str) -> str:
    """``drive`` spelt as the trade writes it in a sentence (Ackermann is a name; the file
    key stays ``ackermann``).

    >>> drive_word("ackermann"), drive_word("mecanum")
    ('Ackermann', 'mecanum')
    """
    return "Ackermann" if drive == "ackermann" else drive


def a_drive(drive: str) -> str:
    """``drive`` with its article, spelt as the trade writes it for a message.

    >>> a_drive("ackermann"), a_drive("differential")
    ('an Ackermann', 'a differential')
    """
    word = drive_word(drive)
    return ("an " if word[:1].lower() in "aeiou" else "a ") + word


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
class Stop:
    """The chassis comes to rest at waypoint ``waypoint`` (0-based) and waits ``dwell_s``."""

    waypoint: int
    dwell_s: float

    def to_dict(self) -> dict:
        return {"waypoint": self.waypoint, "dwell_s": self.dwell_s}


#: Longest dwell read at one stop, s (a day). Common practice.
MAX_DWELL_S = 86400.0


@dataclass(frozen=True)
class Route:
    """A named route: waypoints, the radius it turns with, whether it may reverse, and the
    waypoints where it stops and waits (``stops``, in waypoint order)."""

    name: str
    waypoints: tuple[Waypoint, ...]
    turn_radius_m: float = 0.0
    reverse: bool = False
    extra: dict = field(default_factory=dict, compare=False)
    chassis: str | None = None
    stops: tuple[Stop, ...] = ()
    #: ``"clothoid"``, ``"none"``, or ``None`` where the file does not say (see
    #: :func:`route_transitions`).
    transitions: str | None = None


TRANSITIONS = ("clothoid", "none")


def route_transitions(route: Route, chassis: Chassis) -> str:
    """The transitions a route is planned with: its own ``transitions`` where given, else
    ``"clothoid"`` if the chassis gives one of the rate limits that need them
    (:data:`TRANSITION_LIMITS`) and ``"none"`` otherwise, so older files keep their meaning."""
    if route.transitions is not None:
        return route.transitions
    return "clothoid" if any(getattr(chassis, k) is not None for k in TRANSITION_LIMITS) \
        else "none"


@dataclass(frozen=True)
class Trailer:
    """A towed body: hitched at ``hitch_x_m`` on the x axis of the body ahead (negative:
    behind that body's reference point, 0: on its axle); its own axle midpoint is
    ``drawbar_m`` behind the hitch, and ``footprint`` is in its own frame (origin at the axle
    midpoint, x forward). ``margin_m`` ``None``: the chassis margin; ``max_hitch_deg`` is the
    jackknife limit of the angle between it and the body ahead."""

    name: str
    hitch_x_m: float
    drawbar_m: float
    footprint: tuple[Point, ...]
    margin_m: float | None = None
    max_hitch_deg: float = 90.0
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
    trailers: tuple[Trailer, ...] = ()
    extra: dict = field(default_factory=dict, compare=False)
    max_steer_rate_dps: float | None = None
    max_wheel_accel_radps2: float | None = None
    max_yaw_accel_dps2: float | None = None
    defaulted: tuple[str, ...] = field(default=(), compare=False)
    """Key paths (``chassis.wheel_radius_m``) the file left out and a default filled in; an
    output that depends on one (a schedule and the wheel radius) refuses or says so."""

    def trailer_margin(self, i: int) -> float:
        """Margin kept by trailer ``i`` (its own, else the chassis margin), metres."""
        m = self.trailers[i].margin_m
        return self.margin_m if m is None else m


@dataclass(frozen=True)
class Project:
    """A floor plan, a chassis and its routes; ``path`` is where it was read from.

    ``chassis`` is the default vehicle; ``others`` the further members of the fleet (the
    file's ``fleet`` key); ``fleet_only`` says the file held ``fleet`` and no ``chassis``
    (then ``chassis`` is its first member and is written back as such).
    """

    floorplan: FloorPlan
    chassis: Chassis
    routes: tuple[Route, ...] = ()
    floorplan_ref: str | dict | None = None
    path: Path | None = None
    extra: dict = field(default_factory=dict, compare=False)
    others: tuple[Chassis, ...] = ()
    fleet_only: bool = False

    @property
    def fleet(self) -> tuple[Chassis, ...]:
        """Every vehicle of the project, the default one first."""
        return (self.chassis, *self.others)

    def vehicle(self, name: str | None) -> Chassis:
        """The fleet member named ``name`` (``None``: the default chassis)."""
        if name is None:
            return self.chassis
        for c in self.fleet:
            if c.name == name:
                return c
        names = ", ".join(repr(c.name) for c in self.fleet)
        raise ValidationError(str(self.path or "<project>"), "fleet",
                              f"no vehicle named {name!r} (fleet: {names})")

    def chassis_for(self, route: Route | str) -> Chassis:
        """The vehicle that drives ``route`` (a route or its name)."""
        rt = self.route(route) if isinstance(route, str) else route
        return self.vehicle(rt.chassis)

    def route(self, name: str) -> Route:
        for r in self.routes:
            if r.name == name:
                return r
        names = ", ".join(repr(r.name) for r in self.routes) or "none"
        raise ValidationError(str(self.path or "<project>"), "routes",
                              f"no route named {name!r} (routes: {names})")


def _refuse_millimetres(r: Reader, raw: Any, place: str) -> None:
    """Refuse a footprint typed in millimetres (every nonzero coordinate over 100 and all of
    them would fit as millimetres) with a hint naming the metre value of the first one."""
    if not isinstance(raw, list) or not raw:
        return
    vals: list[float] = []
    for p in raw:
        if not (isinstance(p, list) and len(p) == 2 and all(
                isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v)
                for v in p)):
            return
        vals.extend(float(v) for v in p)
    big = [v for v in vals if v != 0.0]
    if big and all(abs(v) > 100.0 for v in big) \
            and all(abs(v) / 1000.0 <= MAX_BODY_M for v in big):
        i = next(k for k, v in enumerate(vals) if v != 0.0)
        first = vals[i]
        raise r.fail(join(join(place, i // 2), i % 2),
                     f"sizes are in metres; did you mean {first / 1000.0:g}? "
                     f"(got {first:g}, which looks like millimetres)")


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
#: The largest value read for each limit that is not a size: far past any wheeled robot or
#: cart in a building (100 m/s, ~100 g, a wheel at 100 000 rad/s), so no drive is refused,
#: but a mutated 1e301 m/s2 cannot overflow the profile's algebra (common practice). The
#: least is LIMIT_MINIMUM: a denormal 5e-324 m/s overflowed the same algebra; slow limits
#: above it are left to the schedule's sample budget, which names --dt.
LIMIT_MINIMUM = 1.0e-12
LIMIT_MAXIMA = {"max_speed_mps": 100.0, "max_accel_mps2": 1000.0, "max_decel_mps2": 1000.0,
                "max_wheel_rate_radps": 1.0e5, "max_lateral_accel_mps2": 1000.0,
                "max_yaw_rate_dps": 1.0e5, "effective_track_factor": 100.0}
#: The rate-of-change limits (optional) and the range each is read in. Below the least a
#: transition curve would be longer than any building (common practice); above the largest
#: the number cannot be a drive's (a steering motor turning 20 turns a second, a wheel
#: gaining 10 000 rad/s each second).
TRANSITION_LIMITS = {"max_steer_rate_dps": (0.1, 7200.0),
                     "max_wheel_accel_radps2": (0.01, 10000.0),
                     "max_yaw_accel_dps2": (0.1, 100000.0)}


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
    raw_fp = r.get(d, "footprint", place)
    _refuse_millimetres(r, raw_fp, fp_place)
    footprint = r.points(raw_fp, fp_place, 3, MAX_BODY_M)
    check_footprint(footprint, file, fp_place)
    vals: dict[str, Any] = {}
    for key in _POSITIVE:
        size = key.endswith("_m")
        vals[key] = r.opt_number(d, key, place, None, positive=True,
                                 minimum=MIN_BODY_M if size else LIMIT_MINIMUM,
                                 maximum=MAX_BODY_M if size else LIMIT_MAXIMA.get(key))
    for key in _NON_NEGATIVE:
        vals[key] = r.opt_number(d, key, place, None, non_negative=True,
                                 maximum=MAX_BODY_M if key.endswith("_m") else None)
    _zero_or_sized(r, vals["min_turn_radius_m"], join(place, "min_turn_radius_m"))
    steer = r.opt_number(d, "max_steer_deg", place, None, positive=True,
                         minimum=MIN_STEER_DEG, maximum=89.0)
    for key in REQUIRED[drive]:
        v = steer if key == "max_steer_deg" else vals[key]
        if v is None:
            raise r.fail(join(place, key), f"missing; {a_drive(drive)} chassis needs {key}")
    if drive == "differential" and vals["track_m"] is None:
        raise r.fail(join(place, "track_m"), "missing; a differential chassis needs track_m")
    for key, (lo, hi) in TRANSITION_LIMITS.items():
        vals[key] = r.opt_number(d, key, place, None, positive=True, minimum=lo, maximum=hi)
    name = r.text(d.get("name", "chassis"), join(place, "name"))
    trailers = _trailers_from(r, d, place)
    known = {"name", "drive", "footprint", "max_steer_deg", "trailers", *_POSITIVE,
             *_NON_NEGATIVE, *TRANSITION_LIMITS}
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
        trailers=trailers, extra=extra,
        **{k: vals[k] for k in TRANSITION_LIMITS},
        defaulted=tuple(join(place, k) for k in ("wheel_radius_m",) if vals[k] is None),
    )


#: Most trailers one chassis may tow (hospital and factory tugs pull up to about six carts;
#: common practice).
MAX_TRAILERS = 10


def _trailers_from(r: Reader, d: dict, place: str) -> tuple[Trailer, ...]:
    if "trailers" not in d or d["trailers"] is None:
        return ()
    tp = join(place, "trailers")
    items = r.lst(d["trailers"], tp)
    if len(items) > MAX_TRAILERS:
        raise r.fail(tp, f"expected at most {MAX_TRAILERS} trailers, got {len(items)}")
    out = []
    seen: set[str] = set()
    for i, t in enumerate(items):
        out.append(trailer_from_dict(t, r.file, join(tp, i)))
        if out[-1].name in seen:
            raise r.fail(join(join(tp, i), "name"), f"trailer name {out[-1].name!r} is "
                         "used twice in this train")
        seen.add(out[-1].name)
    return tuple(out)


def trailer_from_dict(d: Any, file: str, place: str) -> Trailer:
    """Build and check one :class:`Trailer`: a positive drawbar, a simple footprint around
    its own axle midpoint (the origin of its frame)."""
    r = Reader(file)
    d = r.obj(d, place)
    name = r.text(r.get(d, "name", place), join(place, "name"))
    hitch = r.number(r.get(d, "hitch_x_m", place), join(place, "hitch_x_m"),
                     minimum=-MAX_BODY_M, maximum=MAX_BODY_M)
    drawbar = r.number(r.get(d, "drawbar_m", place), join(place, "drawbar_m"), positive=True,
                       minimum=MIN_BODY_M, maximum=MAX_BODY_M)
    fp_place = join(place, "footprint")
    raw_fp = r.get(d, "footprint", place)
    _refuse_millimetres(r, raw_fp, fp_place)
    footprint = r.points(raw_fp, fp_place, 3, MAX_BODY_M)
    poly = check_footprint(footprint, file, fp_place)
    if not poly.contains(ShapelyPoint(0.0, 0.0)):
        raise r.fail(fp_place, "expected a footprint around the trailer's axle midpoint (the "
                               "origin of its frame, x forward); this outline does not "
                               "contain (0, 0)")
    margin = r.opt_number(d, "margin_m", place, None, non_negative=True, maximum=MAX_BODY_M)
    limit = r.opt_number(d, "max_hitch_deg", place, 90.0, positive=True, minimum=MIN_STEER_DEG,
                         maximum=180.0)
    extra = r.extras(d, {"name", "hitch_x_m", "drawbar_m", "footprint", "margin_m",
                         "max_hitch_deg"}, place)
    return Trailer(name, hitch, drawbar, footprint, margin, float(limit), extra)


def trailer_to_dict(t: Trailer) -> dict:
    d: dict[str, Any] = {"name": t.name, "hitch_x_m": t.hitch_x_m, "drawbar_m": t.drawbar_m,
                         "footprint": [list(p) for p in t.footprint]}
    if t.margin_m is not None:
        d["margin_m"] = t.margin_m
    d["max_hitch_deg"] = t.max_hitch_deg
    for k, v in t.extra.items():
        d.setdefault(k, v)
    return d


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
    for key in TRANSITION_LIMITS:
        v = getattr(c, key)
        if v is not None:
            d[key] = v
    if c.effective_track_factor != 1.0:
        d["effective_track_factor"] = c.effective_track_factor
    if c.trailers:
        d["trailers"] = [trailer_to_dict(t) for t in c.trailers]
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
    transitions = None
    if d.get("transitions") is not None:
        transitions = r.text(d["transitions"], join(place, "transitions"))
        if transitions not in TRANSITIONS:
            raise r.fail(join(place, "transitions"), f"expected \"clothoid\" or \"none\", "
                         f"got {transitions!r}")
    stops = _stops_from(r, d.get("stops", []), join(place, "stops"), len(wps))
    vehicle = d.get("chassis")
    if vehicle is not None:
        vehicle = r.text(vehicle, join(place, "chassis"))
    extra = r.extras(d, {"name", "waypoints", "turn_radius_m", "reverse", "chassis", "stops",
                         "transitions"}, place)
    return Route(name, tuple(wps), float(radius or 0.0), reverse, extra, vehicle, stops,
                 transitions)


def _stops_from(r: Reader, value: Any, place: str, n_waypoints: int) -> tuple[Stop, ...]:
    out: list[Stop] = []
    for i, s in enumerate(r.lst(value, place)):
        sp = join(place, i)
        s = r.obj(s, sp)
        w = r.get(s, "waypoint", sp)
        if isinstance(w, bool) or not isinstance(w, int) or not 0 <= w < n_waypoints:
            raise r.fail(join(sp, "waypoint"), f"expected a waypoint index 0..{n_waypoints - 1}"
                         f" (0 is the first waypoint), got {w!r}")
        dwell = r.number(r.get(s, "dwell_s", sp), join(sp, "dwell_s"), non_negative=True,
                         maximum=MAX_DWELL_S)
        if any(o.waypoint == w for o in out):
            raise r.fail(join(sp, "waypoint"), f"waypoint {w} already has a stop")
        out.append(Stop(w, dwell))
    return tuple(sorted(out, key=lambda s: s.waypoint))


def route_to_dict(rt: Route) -> dict:
    d: dict[str, Any] = {"name": rt.name, "waypoints": [w.to_list() for w in rt.waypoints],
                         "turn_radius_m": rt.turn_radius_m, "reverse": rt.reverse}
    if rt.chassis is not None:
        d["chassis"] = rt.chassis
    if rt.stops:
        d["stops"] = [s.to_dict() for s in rt.stops]
    if rt.transitions is not None:
        d["transitions"] = rt.transitions
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
        if "zones" in ref and target.suffix.lower() in (".dxf", ".svg"):
            opts["zones"] = zone_layers_from(ref["zones"], file, "floorplan.zones")
        if target.suffix.lower() == ".svg":
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
    fleet_only = "chassis" not in d and "fleet" in d
    others: tuple[Chassis, ...] = ()
    if "fleet" in d:
        items = r.lst(d["fleet"], "fleet", 1 if fleet_only else 0)
        members = [chassis_from_dict(x, file, join("fleet", i)) for i, x in enumerate(items)]
        if fleet_only:
            chassis, others = members[0], tuple(members[1:])
        else:
            chassis = chassis_from_dict(d["chassis"], file, "chassis")
            others = tuple(members)
        names = {chassis.name: "chassis"} if not fleet_only else {}
        for i, c in enumerate(members):
            if c.name in names:
                raise r.fail(join(join("fleet", i), "name"), f"vehicle name {c.name!r} is "
                             f"used twice (also at {names[c.name]}); routes name their "
                             "vehicle by it")
            names[c.name] = join("fleet", i)
    else:
        chassis = chassis_from_dict(r.get(d, "chassis", ""), file, "chassis")
    fleet_names = {c.name for c in (chassis, *others)}
    routes_raw = r.lst(d.get("routes", []), "routes")
    routes = tuple(route_from_dict(x, file, join("routes", i)) for i, x in enumerate(routes_raw))
    seen: set[str] = set()
    for i, rt in enumerate(routes):
        if rt.name in seen:
            raise r.fail(join(join("routes", i), "name"), f"route name {rt.name!r} is used twice")
        seen.add(rt.name)
        if rt.chassis is not None and rt.chassis not in fleet_names:
            raise r.fail(join(join("routes", i), "chassis"), f"expected the name of a vehicle "
                         f"of this project, got {rt.chassis!r} (vehicles: "
                         + ", ".join(repr(n) for n in sorted(fleet_names)) + ")")
    extra = r.extras(d, {"swathe_project", "floorplan", "chassis", "routes", "fleet"}, "")
    return Project(fp, chassis, routes, copy.deepcopy(ref), None, extra, others, fleet_only)


def load_project(path: str | Path) -> Project:
    """Read and check a ``*.swathe.json`` project and the floor plan it names."""
    p = Path(path)
    with collector_held():
        d = read_json(p)
        proj = project_from_dict(d, str(p), p.parent)
    return dataclasses.replace(proj, path=p)


def project_to_dict(p: Project, inline_floorplan: bool = False) -> dict:
    """The ``*.swathe.json`` object; the floor plan stays a reference unless inlined."""
    ref = p.floorplan_ref
    if inline_floorplan or ref is None or (isinstance(ref, dict) and "file" not in ref):
        ref = floorplan_to_dict(p.floorplan)
    d: dict[str, Any] = {"swathe_project": FORMAT_VERSION, "floorplan": ref}
    if p.fleet_only:
        d["fleet"] = [chassis_to_dict(c) for c in p.fleet]
    else:
        d["chassis"] = chassis_to_dict(p.chassis)
        if p.others:
            d["fleet"] = [chassis_to_dict(c) for c in p.others]
    d["routes"] = [route_to_dict(rt) for rt in p.routes]
    for k, v in p.extra.items():
        d.setdefault(k, v)
    return d


def save_project(p: Project, path: str | Path, inline_floorplan: bool = False) -> None:
    """Write the project atomically (temporary file, then rename)."""
    write_json(path, project_to_dict(p, inline_floorplan))


__all__ = ["Waypoint", "Stop", "Route", "Chassis", "Trailer", "trailer_from_dict",
           "trailer_to_dict", "Project", "load_project", "save_project",
           "project_from_dict", "project_to_dict", "chassis_from_dict", "chassis_to_dict",
           "route_from_dict", "route_to_dict", "SwatheInputError", "DRIVES",
           "TRANSITIONS", "TRANSITION_LIMITS", "route_transitions"]
