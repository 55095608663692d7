"""What the window, the report, the picture and the CLI compute about a project, headless.

- :func:`compute_results`: plan and check every route (or one), with one line per failure;
- :func:`verdict_text`, :func:`clearance_words`: the verdict and the least clearance in words;
- :func:`violations_of`, :func:`door_results`, :func:`door_clearances`: a check's violations
  and doors as every view lists them; :data:`VIOLATION_WORDS`, :func:`violation_label`: the
  word and the label beside each violation's marker;
- :func:`sizing_answers`, :func:`sizing_lines`: the inverse sizing questions and their lines;
- :func:`chassis_lines`, :func:`project_title`: the chassis summary and the project's name;
- :func:`plot_route_names`: which route a report plots.

Everything here returns plain values (text, numbers, the core's result objects); ``app/``
only shows them. Nothing imports Qt.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from kinematics.errors import SwatheInputError

#: Word shown beside each violation kind's marker, in legends and in tables.
VIOLATION_WORDS = {"collision": "overlap", "clearance": "short of margin",
                   "turn_radius": "radius short", "infeasible": "no connection",
                   "waypoint_blocked": "waypoint blocked", "keep_out": "in keep-out zone",
                   "wrong_way": "against one-way zone"}
MPS2 = "m/s\u00b2"


@dataclass
class RouteResult:
    """What the picture and the report need of one route."""

    name: str
    plan: Any = None
    check: Any = None
    error: str | None = None


def compute_results(project: Any, route_name: str | None = None,
                    tolerance_m: float | None = None) -> tuple[dict, dict, dict]:
    """Plan and check every route (or just ``route_name``).

    Returns
    -------
    plans, checks, errors : dict
        By route name: the ``RoutePlan`` (or ``None``), the ``RouteCheck`` (or ``None`` when
        the route could not be checked) and the one-line reason where something failed.
    """
    from kinematics.check.clearance import ObstacleIndex
    from kinematics.plan.planner import plan_route

    routes = [project.route(route_name)] if route_name is not None else list(project.routes)
    plans: dict[str, Any] = {}
    checks: dict[str, Any] = {}
    errors: dict[str, str] = {}
    index = None
    for r in routes:
        try:
            plans[r.name] = plan_route(r, vehicle_of(project, r))
        except (SwatheInputError, ValueError) as exc:
            plans[r.name] = None
            checks[r.name] = None
            errors[r.name] = getattr(exc, "message", None) or f"route {r.name!r}: {exc}"
            continue
        try:
            if index is None:
                index = ObstacleIndex(project.floorplan)
            kw: dict[str, Any] = {"route_name": r.name}
            if tolerance_m is not None:
                kw["tolerance_m"] = tolerance_m
            checks[r.name] = check_with_vehicle(plans[r.name], vehicle_of(project, r), index,
                                                route=r, **kw)
        except (SwatheInputError, ValueError) as exc:
            checks[r.name] = None
            errors[r.name] = getattr(exc, "message", None) or f"route {r.name!r}: {exc}"
    return plans, checks, errors


def vehicle_of(project: Any, route: Any) -> Any:
    """The chassis that drives ``route``: the fleet member it names, else the default."""
    if hasattr(project, "chassis_for"):
        return project.chassis_for(route)
    return project.chassis


def check_with_vehicle(plan: Any, chassis: Any, index: Any, route: Any = None,
                       route_name: str = "", tolerance_m: float | None = None,
                       tug_check: Any = None) -> Any:
    """The route check of ``plan`` for ``chassis`` and every trailer it tows, labelled with
    the vehicle's name (:func:`kinematics.check.train.check_train`)."""
    from kinematics.check.train import check_train

    kw: dict[str, Any] = {}
    if tolerance_m is not None:
        kw["tolerance_m"] = tolerance_m
    chk = check_train(plan, chassis, index, route_name=route_name or getattr(route, "name", ""),
                      route=route, tug_check=tug_check, **kw)
    chk.chassis_name = chassis.name
    return chk


def violations_of(check: Any) -> list[Any]:
    """The check's violations (none for a route not checked)."""
    return list(getattr(check, "violations", None) or []) if check is not None else []


def door_results(check: Any) -> list[dict]:
    """The doors a check reports, as ``{"label", "min_clearance_m", ...}`` dicts."""
    if check is None:
        return []
    out = []
    for d in getattr(check, "doors", None) or []:
        if isinstance(d, dict):
            out.append(dict(d))
        elif hasattr(d, "to_dict"):
            out.append(d.to_dict())
        else:
            out.append({"label": getattr(d, "label", ""),
                        "min_clearance_m": getattr(d, "min_clearance_m", None)})
    return out


def door_clearances(checks: dict) -> dict[str, float]:
    """The least clearance at each door any checked route passes, by door label."""
    out: dict[str, float] = {}
    for chk in checks.values():
        for d in door_results(chk):
            v = d.get("min_clearance_m")
            lab = d.get("label", "")
            if v is not None:
                out[lab] = min(v, out.get(lab, math.inf))
    return out


def verdict_text(checks: dict, errors: dict | None = None) -> tuple[str, bool | None]:
    """One line for the title, and ``True`` clear / ``False`` not / ``None`` unknown."""
    errors = errors or {}
    known = [c for c in checks.values() if c is not None]
    if not checks:
        return "NO ROUTES", None
    if not known:
        return "NOT CHECKED", None
    n = sum(len(violations_of(c)) for c in known)
    mins = [c.min_clearance_m for c in known
            if getattr(c, "min_clearance_m", None) is not None
            and math.isfinite(c.min_clearance_m)]
    tail = f", min clearance {min(mins):.3f} m" if mins else ""
    unchecked = len(checks) - len(known)
    extra = f" ({unchecked} route{'s' if unchecked != 1 else ''} not checked)" if unchecked else ""
    clear = all(getattr(c, "clear", False) for c in known) and n == 0
    if clear and not unchecked:
        return f"CLEAR{tail}", True
    if clear:
        return f"CLEAR{tail}{extra}", None
    return f"{n} VIOLATION{'S' if n != 1 else ''}{tail}{extra}", False


def clearance_words(min_clearance_m: float) -> str:
    """The least clearance in words; a negative one is an overlap and says so."""
    mm = min_clearance_m * 1000.0
    if round(mm) < 0:
        return f"overlaps by {-mm:.0f}\u00a0mm"
    return f"least clearance {max(mm, 0.0):.0f}\u00a0mm"  # never "-0 mm"


def violation_label(v: Any) -> str:
    """The words beside a violation's marker: its kind's word and its amount."""
    word = VIOLATION_WORDS.get(v.kind, v.kind)
    amount = getattr(v, "amount_m", None)
    if v.kind == "infeasible" or amount is None or not math.isfinite(amount):
        return word
    return f"{word} {amount * 1000:.0f} mm"


def project_title(project: Any) -> str:
    """A name for the project: its file name without the suffixes, else the plan's name."""
    path = getattr(project, "path", None)
    if path is not None:
        name = Path(path).name
        for suffix in (".swathe.json", ".json"):
            if name.endswith(suffix):
                return name[: -len(suffix)]
        return name
    return project.floorplan.name or "untitled project"


def plot_route_names(plans: dict, checks: dict, route_name: str | None = None) -> list[str]:
    """Routes in the order a report tries to plot one: the named one, else those with
    violations first, then every planned route."""
    if route_name is not None:
        return [route_name]
    return [n for n, c in checks.items() if violations_of(c)] + list(plans)


# -- sizing ---------------------------------------------------------------------------------
def sizing_answers(project: Any, route_name: str,
                   progress: Callable[[float, str], None] | None = None,
                   cancel: Callable[[], bool] | None = None,
                   tolerance_m: float | None = None) -> dict:
    """The sizing answers for one route.

    ``progress(fraction, what)`` is told how far the search is; ``cancel()`` is polled and
    stops it with :class:`kinematics.check.sizing.SizingCancelled`.

    Returns
    -------
    dict
        :func:`kinematics.check.sizing.sizing_dict` (``widest``, ``longest``, ``doors``) plus
        ``route``: what the check JSON's ``sizing`` holds, for display and for the report.
    """
    from kinematics.check import sizing
    from kinematics.check.clearance import ObstacleIndex
    from kinematics.plan.planner import plan_route

    say = progress or (lambda _f, _w: None)
    route = project.route(route_name)
    say(0.0, "planning the route")
    chassis = vehicle_of(project, route)
    plan = plan_route(route, chassis)
    say(0.01, "building the obstacle index")
    index = ObstacleIndex(project.floorplan)
    if cancel is not None and cancel():
        raise sizing.SizingCancelled()

    def step(f: float) -> None:
        f = max(0.0, min(1.0, float(f)))
        what = ("widest footprint that clears" if f < 0.4 else
                "longest footprint that clears" if f < 0.8 else "door widths needed")
        say(0.01 + 0.99 * f, what)

    kw: dict[str, Any] = {"progress": step, "cancel": cancel}
    if tolerance_m is not None:
        kw["tolerance_m"] = tolerance_m
    out = dict(sizing.sizing_dict(plan, chassis, index, **kw))
    out["route"] = route_name
    say(1.0, "done")
    return out


def sizing_lines(answers: dict) -> list[str]:
    """Readable lines for the sizing answers (the panel and the report share them).

    ``answers`` is the check JSON's ``sizing`` object (:func:`kinematics.check.sizing.sizing_dict`).
    """
    lines = []
    for key, words in (("widest", "Widest footprint that clears"),
                       ("longest", "Longest footprint that clears")):
        d = answers.get(key)
        if not isinstance(d, dict):
            continue
        cur = d.get("current_m")
        now = f" (now {cur:.3f} m)" if isinstance(cur, (int, float)) else ""
        mx = d.get("max_m")
        if mx is None:
            lines.append(f"{words}: none \u2014 even a sliver of this outline is in the way"
                         + now)
        elif d.get("bounded", True) is False:
            lines.append(f"{words}: at least {mx:.3f} m (the search stopped there){now}")
        else:
            lines.append(f"{words}: {mx:.3f} m{now}")
    doors = answers.get("doors") or []
    for d in doors:
        if not isinstance(d, dict):
            continue
        label = d.get("label") or f"door {d.get('door', '?')}"
        need = d.get("width_needed_m")
        have = d.get("width_m")
        is_ = f" (is {have:.3f} m)" if isinstance(have, (int, float)) else ""
        if need is None:
            lines.append(f"Door {label}: widening it alone does not clear{is_}")
        else:
            lines.append(f"Door {label} needs {need:.3f} m{is_}")
    if not doors and ("widest" in answers or "longest" in answers):
        lines.append("No door on this route.")
    return lines


def report_sizing_lines(checks: dict, sizing: Any) -> list[str]:
    """The report's sizing lines: the answers given, else those the checks carry."""
    if sizing:
        if isinstance(sizing, dict) and "route" in sizing:
            return [f"Route {sizing['route']}:"] + sizing_lines(sizing)
        return sizing_lines(sizing)
    lines: list[str] = []
    for name, chk in checks.items():
        s = getattr(chk, "sizing", None) if chk is not None else None
        if s:
            d = s.to_dict() if hasattr(s, "to_dict") else s
            got = sizing_lines(d if isinstance(d, dict) else {})
            if got:
                lines += [f"Route {name}:"] + got
    return lines


# -- chassis --------------------------------------------------------------------------------
def _fmt(v: Any, unit: str = "", digits: int = 3) -> str:
    if v is None:
        return "none"
    if isinstance(v, float) and not math.isfinite(v):
        return "\u2014"
    return f"{v:.{digits}f}{(' ' + unit) if unit else ''}"


def chassis_lines(c: Any) -> list[tuple[str, str]]:
    """(label, value) rows describing a chassis for the report."""
    fp = c.footprint
    xs = [q[0] for q in fp]
    ys = [q[1] for q in fp]
    rows = [("Name", c.name), ("Drive", c.drive),
            ("Footprint", f"{max(xs) - min(xs):.3f} m long x {max(ys) - min(ys):.3f} m wide, "
                          f"{len(fp)} corners; x {min(xs):.3f}..{max(xs):.3f} m, "
                          f"y {min(ys):.3f}..{max(ys):.3f} m"),
            ("Margin", _fmt(c.margin_m, "m")),
            ("Wheel radius", _fmt(c.wheel_radius_m, "m"))]
    for key, label, unit in (("track_m", "Track", "m"), ("wheelbase_m", "Wheelbase", "m"),
                             ("max_steer_deg", "Max steer", "deg")):
        v = getattr(c, key)
        if v is not None:
            rows.append((label, _fmt(v, unit, 3 if unit == "m" else 1)))
    if c.min_turn_radius_m:
        rows.append(("Min turn radius", _fmt(c.min_turn_radius_m, "m")))
    lim = [f"speed {_fmt(c.max_speed_mps, 'm/s', 2)}",
           f"accel {_fmt(c.max_accel_mps2, MPS2, 2)}"]
    if c.max_decel_mps2 is not None:
        lim.append(f"decel {_fmt(c.max_decel_mps2, MPS2, 2)}")
    if c.max_wheel_rate_radps is not None:
        lim.append(f"wheel rate {_fmt(c.max_wheel_rate_radps, 'rad/s', 1)}")
    if c.max_lateral_accel_mps2 is not None:
        lim.append(f"lateral accel {_fmt(c.max_lateral_accel_mps2, MPS2, 2)}")
    if c.max_yaw_rate_dps is not None:
        lim.append(f"yaw rate {_fmt(c.max_yaw_rate_dps, 'deg/s', 0)}")
    rows.append(("Limits", ", ".join(lim)))
    for k, t in enumerate(getattr(c, "trailers", ()) or ()):
        rows.append((f"Trailer {k + 1}", f"{t.name}: hitch {t.hitch_x_m:+.3f} m, drawbar "
                     f"{t.drawbar_m:.3f} m, jackknife limit {t.max_hitch_deg:g} deg"))
    return rows


def route_vehicle_lines(project: Any, names: Any = None) -> list[tuple[str, str]]:
    """(route, vehicle) rows: which fleet member drives each route (``names``: those only),
    with the carts it tows."""
    rows = []
    for r in project.routes:
        if names is not None and r.name not in names:
            continue
        c = vehicle_of(project, r)
        tows = ", ".join(t.name for t in getattr(c, "trailers", ()) or ())
        rows.append((r.name, c.name + (f" towing {tows}" if tows else "")))
    return rows
