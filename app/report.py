"""A one-page route report: the picture, the verdict, the violations, doors, chassis, sizing.

Drawn with QPainter on an A4 page, as PDF (``QPdfWriter``) or PNG by the file suffix, the
same drawing for both: the plan picture from :func:`app.render.render_scene`, the verdict and
a violations table, the door-by-door clearances, a chassis summary (drive, dimensions,
footprint, limits), the sizing answers where they were computed, and the safety caution in
full. The file is written atomically (encoded in memory, then
:func:`kinematics.files.jsonio.atomic_write_bytes`).
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from PySide6.QtCore import QBuffer, QByteArray, QIODevice, QMarginsF, QRectF, Qt
from PySide6.QtGui import (
    QBrush,
    QColor,
    QFontMetricsF,
    QImage,
    QPageLayout,
    QPageSize,
    QPainter,
    QPdfWriter,
)

from kinematics.analysis.report_text import CAUTION, route_stops, stop_lines
from kinematics.analysis.results import (  # noqa: F401 - chassis_lines re-exported
    VIOLATION_WORDS,
    chassis_lines,
    compute_results,
    door_results,
    plot_route_names,
    project_title,
    report_sizing_lines,
    verdict_text,
    violations_of,
)
from kinematics.errors import SwatheInputError

from .render import (
    BLUE,
    FAINT_INK,
    INK,
    VERMILLION,
    draw_marker,
    ensure_app,
    font,
    image_png_bytes,
    pen,
    render_scene,
)

DPI = 150
#: A4 at 150 dots per inch, in pixels (ISO 216: 210 x 297 mm).
PAGE_PX = (round(210 / 25.4 * DPI), round(297 / 25.4 * DPI))
MAX_VIOLATION_ROWS = 10


def _table(p: QPainter, rect: QRectF, headers: Sequence[str], rows: Sequence[Sequence[Any]],
           widths: Sequence[float], u: float, right: Sequence[bool] | None = None,
           icons: Sequence[str | None] | None = None) -> float:
    """Draw a simple ruled table; returns the height used. Cells are elided to fit."""
    f_head = font(16.5 * u, bold=True)
    f_cell = font(16.5 * u)
    fm = QFontMetricsF(f_cell)
    row_h = fm.height() + 6 * u
    right = right or [False] * len(headers)
    total = sum(widths)
    xs = [rect.left()]
    for w in widths:
        xs.append(xs[-1] + rect.width() * w / total)
    y = rect.top()
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(QBrush(QColor("#EAEAEA")))
    p.drawRect(QRectF(rect.left(), y, rect.width(), row_h))
    p.setFont(f_head)
    p.setPen(QColor(INK))
    for k, h in enumerate(headers):
        cell = QRectF(xs[k] + 4 * u, y, xs[k + 1] - xs[k] - 8 * u, row_h)
        align = Qt.AlignmentFlag.AlignRight if right[k] else Qt.AlignmentFlag.AlignLeft
        p.drawText(cell, align | Qt.AlignmentFlag.AlignVCenter,
                   QFontMetricsF(f_head).elidedText(h, Qt.TextElideMode.ElideRight,
                                                    cell.width()))
    y += row_h
    p.setFont(f_cell)
    for r, row in enumerate(rows):
        if r % 2 == 1:
            p.setPen(Qt.PenStyle.NoPen)
            p.setBrush(QBrush(QColor("#F6F6F6")))
            p.drawRect(QRectF(rect.left(), y, rect.width(), row_h))
        for k, v in enumerate(row):
            x0 = xs[k] + 4 * u
            if k == 0 and icons is not None and icons[r]:
                draw_marker(p, icons[r], QRectF(x0, y, row_h, row_h).center(), row_h * 0.32)
                x0 += row_h
            cell = QRectF(x0, y, xs[k + 1] - x0 - 4 * u, row_h)
            align = Qt.AlignmentFlag.AlignRight if right[k] else Qt.AlignmentFlag.AlignLeft
            p.setPen(QColor(INK))
            p.setFont(f_cell)
            p.drawText(cell, align | Qt.AlignmentFlag.AlignVCenter,
                       fm.elidedText(str(v), Qt.TextElideMode.ElideRight, cell.width()))
        y += row_h
    p.setPen(pen("#C0C0C0", 1.0))
    p.drawLine(rect.left(), y, rect.right(), y)
    return y - rect.top()


def _heading(p: QPainter, x: float, y: float, w: float, text: str, u: float) -> float:
    f = font(22 * u, bold=True)
    p.setFont(f)
    p.setPen(QColor(INK))
    h = QFontMetricsF(f).height()
    p.drawText(QRectF(x, y, w, h), Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter,
               text)
    return h + 4 * u


def _paragraph(p: QPainter, rect: QRectF, text: str, px: float, colour: str = INK,
               bold: bool = False) -> float:
    f = font(px, bold)
    p.setFont(f)
    p.setPen(QColor(colour))
    flags = Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop | Qt.TextFlag.TextWordWrap
    br = p.boundingRect(rect, int(flags), text)
    p.drawText(rect, int(flags), text)
    return br.height()


def draw_report(p: QPainter, size: tuple[float, float], project: Any, plans: dict,
                checks: dict, errors: dict, route_name: str | None = None,
                sizing: Any = None, when: str | None = None) -> None:
    """Draw the report page onto ``p`` (device pixels, page ``size``)."""
    W, H = float(size[0]), float(size[1])
    u = W / PAGE_PX[0]
    m = 60 * u
    p.setRenderHint(QPainter.RenderHint.Antialiasing, True)
    p.setRenderHint(QPainter.RenderHint.TextAntialiasing, True)
    p.fillRect(QRectF(0, 0, W, H), QColor("#FFFFFF"))
    cw = W - 2 * m
    y = m * 0.8

    # Header: what, of which project, when; the verdict in words (colour only repeats it).
    names = [route_name] if route_name is not None else list(plans)
    y += _paragraph(p, QRectF(m, y, cw, 70 * u), "Swathe route report", 38 * u, INK, True)
    sub = (f"Project {project_title(project)}  \u00b7  plan {project.floorplan.name or '-'}  "
           f"\u00b7  route{'s' if len(names) != 1 else ''} {', '.join(names) or 'none'}")
    y += _paragraph(p, QRectF(m, y, cw, 60 * u), sub, 18 * u, FAINT_INK)
    y += _paragraph(p, QRectF(m, y, cw, 30 * u),
                    f"Generated {when or _dt.datetime.now().strftime('%Y-%m-%d %H:%M')}",
                    15 * u, FAINT_INK)
    verdict, ok = verdict_text(checks, errors)
    symbol = {True: "\u2713 ", False: "\u2717 ", None: ""}[ok]
    badge = QRectF(m, y + 8 * u, cw, 58 * u)
    p.setPen(Qt.PenStyle.NoPen)
    p.setBrush(QBrush(QColor({True: BLUE, False: VERMILLION, None: "#707070"}[ok])))
    p.drawRoundedRect(badge, 6 * u, 6 * u)
    p.setPen(QColor("#FFFFFF"))
    p.setFont(font(26 * u, True))
    p.drawText(badge, Qt.AlignmentFlag.AlignCenter, f"Verdict: {symbol}{verdict}")
    y = badge.bottom() + 12 * u
    for name, err in errors.items():
        y += _paragraph(p, QRectF(m, y, cw, 40 * u), f"\u26a0 {name}: {err}", 16 * u,
                        "#5A1E00", True)

    # The picture.
    pic_h = 660 * u
    p.save()
    p.translate(m, y)
    render_scene(p, project, plans, checks, route_name, (int(cw), int(pic_h)), errors=errors,
                 footer=False, title=False, scale=1.05 * u)
    p.restore()
    p.setPen(pen("#B0B0B0", 1.0))
    p.setBrush(Qt.BrushStyle.NoBrush)
    p.drawRect(QRectF(m, y, cw, pic_h))
    y += pic_h + 16 * u

    # Violations.
    allv = [(name, v) for name, chk in checks.items() for v in violations_of(chk)]
    y += _heading(p, m, y, cw, f"Violations ({len(allv)})", u)
    if allv:
        shown = allv[:MAX_VIOLATION_ROWS]
        one = len(checks) == 1  # one route: no route column, more room for the message
        rows = [[VIOLATION_WORDS.get(v.kind, v.kind)] + ([] if one else [name])
                + ["" if getattr(v, "segment", None) is None else v.segment,
                   f"{v.station_m:.2f}",
                   "" if getattr(v, "amount_m", None) is None else f"{v.amount_m * 1000:.0f}",
                   v.message] for name, v in shown]
        heads = ["Kind"] + ([] if one else ["Route"]) + ["Seg.", "Station (m)", "Amount (mm)",
                                                         "Message"]
        widths_v = [1.6] + ([] if one else [1.4]) + [0.5, 1.1, 1.2, 4.6 if one else 3.6]
        y += _table(p, QRectF(m, y, cw, 0), heads, rows, widths_v, u,
                    right=[False] + ([] if one else [False]) + [True, True, True, False],
                    icons=[v.kind for _n, v in shown])
        if len(allv) > len(shown):
            y += _paragraph(p, QRectF(m, y + 2 * u, cw, 30 * u),
                            f"\u2026 and {len(allv) - len(shown)} more (see "
                            "`swathe check --json` for the full list).", 15 * u, FAINT_INK)
    else:
        y += _paragraph(p, QRectF(m, y, cw, 30 * u), "None: the swept footprint keeps the "
                        "margin from every wall and obstacle.", 17 * u)
    y += 14 * u

    # Two columns: doors and sizing on the left, the chassis on the right.
    col_w = (cw - 30 * u) / 2
    ly = y
    ly += _heading(p, m, ly, col_w, "Doors passed", u)
    widths = {d.label: d.width_m for d in project.floorplan.doors}
    drows = []
    for name, chk in checks.items():
        for d in door_results(chk):
            c = d.get("min_clearance_m")
            lab = d.get("label", "")
            w = widths.get(lab)
            drows.append([lab or "(no label)", name, "" if w is None else f"{w:.3f}",
                          "" if c is None else f"{c * 1000:.0f}"])
    if drows:
        ly += _table(p, QRectF(m, ly, col_w, 0), ["Door", "Route", "Width (m)",
                                                  "Clearance (mm)"],
                     drows[:10], [1.0, 1.5, 1.0, 1.4], u, right=[False, False, True, True])
        if len(drows) > 10:
            ly += _paragraph(p, QRectF(m, ly + 2 * u, col_w, 30 * u),
                             f"\u2026 and {len(drows) - 10} more.", 15 * u, FAINT_INK)
    else:
        ly += _paragraph(p, QRectF(m, ly, col_w, 30 * u), "No door is passed.", 17 * u)
    ly += 14 * u
    # Stops: where each route rests and how long it waits (the plots include the dwell).
    slines = []
    for r in project.routes:
        if r.name in plans and getattr(r, "stops", ()):
            slines += [f"{r.name}: " + ln.strip() for ln in stop_lines(
                route_stops(plans[r.name], r))]
    if slines:
        ly += _heading(p, m, ly, col_w, "Stops", u)
        ly += _paragraph(p, QRectF(m, ly, col_w, 260 * u),
                         "\n".join(slines[:6]) + (f"\n\u2026 and {len(slines) - 6} more."
                                                   if len(slines) > 6 else ""), 16 * u)
        ly += 14 * u
    ly += _heading(p, m, ly, col_w, "What would fit", u)
    lines = report_sizing_lines(checks, sizing)
    text = "\n".join(lines) if lines else ("Not computed for this report (the results panel's "
                                           "\u201cFind the sizes that fit\u201d, or "
                                           "`swathe check --sizing`).")
    ly += _paragraph(p, QRectF(m, ly, col_w, 300 * u), text, 17 * u,
                     INK if lines else FAINT_INK)

    rx = m + col_w + 30 * u
    ry = y
    ry += _heading(p, rx, ry, col_w, "Chassis", u)
    f = font(16.5 * u)
    fb = font(16.5 * u, True)
    lab_w = 150 * u
    rows = chassis_lines(project.chassis)
    if len(getattr(project, "fleet", ())) > 1 or any(
            getattr(r, "chassis", None) for r in project.routes):
        # A fleet: the routes with their vehicles first, then the default chassis.
        from kinematics.analysis.results import route_vehicle_lines

        rows = [(f"Route {name}", who) for name, who in route_vehicle_lines(
            project, set(checks) or None)] + rows
    fmb = QFontMetricsF(fb)
    for label, value in rows:
        p.setFont(fb)
        p.setPen(QColor(INK))
        p.drawText(QRectF(rx, ry, col_w, 40 * u), Qt.AlignmentFlag.AlignLeft
                   | Qt.AlignmentFlag.AlignTop, label)
        if fmb.horizontalAdvance(label) > lab_w - 8 * u:
            ry += fmb.height() + 1 * u  # a long name (a fleet's route) has its own row
        p.setFont(f)
        flags = int(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop
                    | Qt.TextFlag.TextWordWrap)
        r = QRectF(rx + lab_w, ry, col_w - lab_w, 200 * u)
        br = p.boundingRect(r, flags, value)
        p.drawText(r, flags, value)
        ry += br.height() + 3 * u

    # The caution in full, boxed at the foot of the page.
    fcau = font(18 * u)
    flags = int(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop | Qt.TextFlag.TextWordWrap)
    p.setFont(fcau)
    inner = QRectF(m + 14 * u, 0, cw - 28 * u, 400 * u)
    need = p.boundingRect(inner, flags, CAUTION).height()
    box = QRectF(m, H - m * 0.7 - need - 60 * u, cw, need + 56 * u)
    top = max(ly, ry) + 10 * u
    if box.top() < top:  # a long table pushes the box down rather than overlapping it
        box.moveTop(min(top, H - box.height() - 4 * u))
    _plots_in_gap(p, QRectF(m, top + 6 * u, cw, box.top() - top - 24 * u), project, plans,
                  checks, route_name, u)
    p.setPen(pen(INK, 1.5 * u))
    p.setBrush(QBrush(QColor("#FFF8E6")))
    p.drawRect(box)
    p.setFont(font(20 * u, True))
    p.setPen(QColor(INK))
    p.drawText(QRectF(box.left() + 14 * u, box.top() + 8 * u, cw, 28 * u),
               Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter, "\u26a0 Safety")
    p.setFont(fcau)
    p.drawText(QRectF(box.left() + 14 * u, box.top() + 40 * u, cw - 28 * u, need + 8 * u),
               flags, CAUTION)


def _plots_in_gap(p: QPainter, rect: QRectF, project: Any, plans: dict, checks: dict,
                  route_name: str | None, u: float) -> None:
    """Speed and wheel rates of the route (the first with violations) where there is room."""
    if rect.height() < 300 * u:
        return
    for name in plot_route_names(plans, checks, route_name):
        plan = plans.get(name)
        if plan is None or not plan.segments:
            continue
        try:
            from kinematics.timing.schedule import build_schedule

            sched = build_schedule(name, list(plan.segments),
                                   project.chassis_for(name) if hasattr(project, "chassis_for")
                                   else project.chassis,
                                   zones=project.floorplan.zones,
                                   route=next((r for r in project.routes if r.name == name),
                                              None))
        except (SwatheInputError, ValueError):
            continue
        from .plots import draw_plots, hitch_limits_of

        h = min(rect.height(), 520 * u)
        draw_plots(p, QRectF(rect.left(), rect.top(), rect.width(), h), sched,
                   title=f"Speed and wheel rates: {name}", scale=1.1 * u,
                   hitch_limits=hitch_limits_of(getattr(sched, "chassis", None)))
        return


def report_bytes(project: Any, fmt: str, route_name: str | None = None, sizing: Any = None,
                 when: str | None = None) -> bytes:
    """The report as PDF or PNG bytes (``fmt`` ``"pdf"`` or ``"png"``)."""
    ensure_app()
    plans, checks, errors = compute_results(project, route_name)
    if fmt == "png":
        img = QImage(PAGE_PX[0], PAGE_PX[1], QImage.Format.Format_ARGB32)
        dpm = round(DPI / 0.0254)
        img.setDotsPerMeterX(dpm)
        img.setDotsPerMeterY(dpm)
        img.fill(QColor("#FFFFFF"))
        p = QPainter(img)
        try:
            draw_report(p, PAGE_PX, project, plans, checks, errors, route_name, sizing, when)
        finally:
            p.end()
        return image_png_bytes(img)
    if fmt != "pdf":
        raise ValueError(f"unknown report format {fmt!r}")
    data = QByteArray()
    buf = QBuffer(data)
    buf.open(QIODevice.OpenModeFlag.WriteOnly)
    writer = QPdfWriter(buf)
    writer.setResolution(DPI)
    writer.setPageLayout(QPageLayout(QPageSize(QPageSize.PageSizeId.A4),
                                     QPageLayout.Orientation.Portrait, QMarginsF(0, 0, 0, 0)))
    writer.setTitle(f"Swathe route report: {project_title(project)}")
    writer.setCreator("Swathe")
    p = QPainter(writer)
    try:
        size = (p.device().width(), p.device().height())
        draw_report(p, size, project, plans, checks, errors, route_name, sizing, when)
    finally:
        p.end()
    buf.close()
    return bytes(data.data())


def export_report(project: Any, path: str | Path, route_name: str | None = None,
                  sizing: Any = None, when: str | None = None) -> None:
    """Write the one-page report of ``project`` (or one route) as PDF or PNG, atomically.

    Parameters
    ----------
    project : Project
    path : str or Path
        ``*.pdf`` or ``*.png``.
    route_name : str, optional
        Only this route (default: every route).
    sizing : dict, optional
        Sizing answers computed earlier (``ResultsPanel.current_sizing()``); answers the
        check carries are used otherwise.
    when : str, optional
        The "Generated ..." time written on the page (default: now, to the minute).

    Raises
    ------
    SwatheInputError
        An unknown suffix or a missing folder.
    """
    from kinematics.files.jsonio import atomic_write_bytes

    p = Path(path)
    fmt = p.suffix.lower().lstrip(".")
    if fmt not in ("pdf", "png"):
        raise SwatheInputError(str(p), "", "expected a report file ending in .pdf or .png")
    if not p.resolve().parent.is_dir():
        raise SwatheInputError(str(p), "", f"the folder {p.resolve().parent} does not exist")
    atomic_write_bytes(p, report_bytes(project, fmt, route_name, sizing, when))
