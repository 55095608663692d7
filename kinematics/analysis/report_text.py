"""Plain-text summaries of planned routes for the terminal (``swathe plan`` without --json).

Waypoints are counted from 1 here, as in the window and the rendered picture; segments are
numbered from 0, as their indices in ``plan --json``.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

CAUTION = ("Swathe is a planning aid, not a safety certification. Verify every route on site, "
           "keep the clearances that the applicable machine-safety standards (for example "
           "ISO 3691-4 and ANSI/ITSDF B56.5) and local fire and building codes require, and "
           "defer to licensed practice.")


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


def format_plan_text(plans: Sequence[Any], project: Any = None) -> str:
    """A readable listing of every planned route: segments, issues, chosen headings and the
    planner's notes."""
    out: list[str] = []
    if project is not None:
        c = project.chassis
        out.append(f"Chassis: {c.name} ({c.drive})")
    for pl in plans:
        out.append("")
        out.append(f"Route {pl.name!r}: {len(pl.segments)} segments, {pl.length_m:.3f} m, "
                   f"drive {pl.drive}")
        for i, seg in enumerate(pl.segments):
            out.append(_segment_line(i, seg))
        for wi, h in sorted(getattr(pl, "chosen_headings", {}).items()):
            out.append(f"  note: heading at waypoint {wi + 1} chosen as {h:.1f} deg")
        for note in getattr(pl, "notes", ()):
            out.append(f"  note: {note}")
        for issue in getattr(pl, "issues", ()):
            out.append(f"  {issue.kind.upper()}: {issue.message}")
    out.append("")
    out.append(CAUTION)
    return "\n".join(out) + "\n"
