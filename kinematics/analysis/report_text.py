"""Plain-text summaries for the terminal: ``swathe plan`` and ``swathe check`` without --json.

Waypoints are counted from 1 here, as in the window and the rendered picture; segments are
numbered from 0, as their indices in ``plan --json``.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from kinematics.files.project import drive_word

CAUTION = ("Swathe is a planning aid, not a safety certification. Verify every route on site, "
           "keep the clearances that the applicable machine-safety standards (for example "
           "ISO 3691-4 and ANSI/ITSDF B56.5) and local fire and building codes require, and "
           "defer to licensed practice.")
#: The short caution under ``swathe check``'s text report.
CHECK_CAUTION = ("Planning aid only, not a safety certification: verify on site and keep the "
                 "clearances that ISO 3691-4, ANSI/ITSDF B56.5 and local fire and building "
                 "codes require.")


def _segment_line(i: int, seg: Any) -> str:
    sx, sy, sh = seg.start
    ex, ey, eh = seg.end
    way = "fwd" if seg.direction > 0 else "rev"
    if seg.kind == "pivot":
        what = f"pivot {math.degrees(seg.turn_rad):+8.1f} deg on the spot"
    elif seg.kind == "arc":
        what = (f"arc   {seg.length_m:8.3f} m  R {seg.radius_m:.3f} m  "
                f"turn {math.degrees(seg.turn_rad):+7.1f} deg")
    elif seg.kind == "clothoid":
        what = (f"spiral{seg.length_m:8.3f} m  k {seg.kappa0:+.3f}->{seg.kappa1:+.3f} /m  "
                f"turn {math.degrees(seg.turn_rad):+7.1f} deg")
    else:
        what = f"line  {seg.length_m:8.3f} m"
        if seg.turn_rad:
            what += f"  body turns {math.degrees(seg.turn_rad):+7.1f} deg"
    return (f"  {i:3d}  {way}  {what:<48} ({sx:.2f}, {sy:.2f}, {math.degrees(sh):.1f}) -> "
            f"({ex:.2f}, {ey:.2f}, {math.degrees(eh):.1f})")


def route_stops(plan: Any, route: Any) -> list[Any]:
    """The route's stops placed on its planned path
    (:func:`kinematics.timing.zones.stops_on_path`), empty where it has none."""
    from kinematics.timing.zones import stops_on_path

    if route is None or not getattr(route, "stops", ()) or plan is None:
        return []
    return stops_on_path(plan.segments, route.waypoints, route.stops)


def stop_lines(stops: Sequence[Any]) -> list[str]:
    """One line per stop (waypoints counted from 1)."""
    return [f"  stop at waypoint {s.waypoint + 1}: station {s.station_m:.2f} m "
            f"({s.x:.2f}, {s.y:.2f}), waits {s.dwell_s:g} s" for s in stops]


def format_plan_text(plans: Sequence[Any], project: Any = None) -> str:
    """A readable listing of every planned route: segments, stops, issues, chosen headings
    and the planner's notes."""
    out: list[str] = []
    fleet = tuple(getattr(project, "fleet", ())) if project is not None else ()
    if project is not None:
        for c in fleet or (project.chassis,):
            tows = ", ".join(t.name for t in getattr(c, "trailers", ()))
            who = "Vehicle" if len(fleet) > 1 else "Chassis"
            out.append(f"{who}: {c.name} ({drive_word(c.drive)})"
                       + (f", towing {tows}" if tows else ""))
    for pl in plans:
        out.append("")
        who = ""
        if len(fleet) > 1:
            try:
                who = f", vehicle {project.chassis_for(pl.name).name!r}"
            except Exception:  # noqa: BLE001 - a plan not of this project: no vehicle named
                who = ""
        out.append(f"Route {pl.name!r}: {len(pl.segments)} segments, {pl.length_m:.3f} m, "
                   f"drive {drive_word(pl.drive)}{who}")
        for i, seg in enumerate(pl.segments):
            out.append(_segment_line(i, seg))
        if project is not None:
            route = next((r for r in project.routes if r.name == pl.name), None)
            out += stop_lines(route_stops(pl, route))
        for wi, h in sorted(getattr(pl, "chosen_headings", {}).items()):
            out.append(f"  note: heading at waypoint {wi + 1} chosen as {h:.1f} deg")
        for note in getattr(pl, "notes", ()):
            out.append(f"  note: {note}")
        for issue in getattr(pl, "issues", ()):
            out.append(f"  {issue.kind.upper()}: {issue.message}")
    out.append("")
    out.append(CAUTION)
    return "\n".join(out) + "\n"


def format_check_text(checks: Sequence[Any], stops: dict[str, list] | None = None) -> str:
    """A readable report of route checks for the terminal (``swathe check`` without --json)."""
    out: list[str] = []
    for c in checks:
        if c.min_clearance_m is None:
            least = "no walls or obstacles to measure"
        else:
            least = f"least clearance {c.min_clearance_m * 1000:.0f} mm"
            if c.min_clearance_at:
                a = c.min_clearance_at
                least += (f" at station {a['station_m']:.2f} m ({a['x']:.2f}, {a['y']:.2f})"
                          + (f" to {a['solid']}" if a.get("solid") else ""))
        state = "CLEAR" if c.clear else f"{len(c.violations)} problem(s)"
        who = f" (vehicle {c.chassis_name!r})" if getattr(c, "chassis_name", "") else ""
        out.append(f"Route {c.name!r}{who}: {state}; {least}; margin "
                   f"{c.margin_m * 1000:.0f} mm, tolerance {c.tolerance_m * 1000:.1f} mm")
        train = getattr(c, "train", None)
        for b in (train.bodies if train is not None else ()):
            bc = b["min_clearance_m"]
            txt = "-" if bc is None else f"{bc * 1000:.0f} mm"
            hitch = (f", largest hitch angle {b['max_hitch_deg']:.0f} deg"
                     if "max_hitch_deg" in b else "")
            out.append(f"  {b['body']}: least clearance {txt} (margin "
                       f"{b['margin_m'] * 1000:.0f} mm){hitch}")
        for v in c.violations:
            seg = "-" if v.segment is None else str(v.segment)
            out.append(f"  {v.kind:<16} seg {seg:>3}  station {v.station_m:8.2f} m  "
                       f"({v.x:.2f}, {v.y:.2f})  {v.amount_m * 1000:6.0f} mm  {v.message}")
        for p in c.doors:
            cl = "-" if p.min_clearance_m is None else f"{p.min_clearance_m * 1000:.0f} mm"
            cst = getattr(p, "min_clearance_station_m", None)
            if cst is not None:
                cl += f" at station {cst:.2f} m"
            out.append(f"  door {p.label!r} ({p.width_m:.3f} m wide) crossed at station "
                       f"{p.station_m:.2f} m: least clearance {cl}")
        out += stop_lines((stops or {}).get(c.name, ()))
        if c.sizing:
            for line_ in _sizing_lines(c.sizing):
                out.append("  " + line_)
        out.append("")
    out.append(CHECK_CAUTION)
    return "\n".join(out) + "\n"


def _sizing_lines(sizing: dict) -> list[str]:
    lines = []
    for key in ("widest", "longest"):
        s = sizing.get(key)
        if s:
            best = s.get("max_m")
            best_txt = "none clears" if best is None else f"{best:.3f} m"
            lines.append(f"{key} footprint that clears: {best_txt} "
                         f"(now {s.get('current_m', 0.0):.3f} m)")
    for d in sizing.get("doors", []) or []:
        need = d.get("width_needed_m")
        need_txt = "-" if need is None else f"{need:.3f} m"
        lines.append(f"door {d.get('label')!r} needs {need_txt} (now {d.get('width_m'):.3f} m)")
    return lines
