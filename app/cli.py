"""The ``swathe`` command: the workbench, and plan / check / schedule / render / find for scripts.

Every subcommand calls ``kinematics`` only (render also draws with Qt, offscreen). Bad input
exits 2 with one line on stderr naming the file, the place in it and what was expected.
"""

from __future__ import annotations

import argparse
import os
import stat
import sys
from collections.abc import Sequence
from pathlib import Path

from kinematics.errors import SwatheInputError

SUBCOMMANDS = ("plan", "check", "schedule", "render", "find")
EXIT_OK, EXIT_VIOLATION, EXIT_BAD_INPUT, EXIT_INTERNAL = 0, 1, 2, 3
MIN_TOLERANCE_MM, MAX_TOLERANCE_MM = 0.1, 1000.0


class _Parser(argparse.ArgumentParser):
    """argparse that reports usage mistakes in the same one-line form (exit 2)."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(EXIT_BAD_INPUT, f"{self.prog}: {message} (see --help)\n")


def build_parser() -> argparse.ArgumentParser:
    p = _Parser(prog="swathe", description=(
        "Lay out drivable routes for wheeled robots and carts on a floor plan, check the swept "
        "footprint against walls and obstacles, and export wheel-rate schedules. Without a "
        "subcommand, opens the workbench (on the bundled demo if no project is given)."))
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    def common(sp: argparse.ArgumentParser, route_required: bool = False) -> None:
        sp.add_argument("project", metavar="PROJECT", help="a *.swathe.json project file")
        sp.add_argument("--route", metavar="NAME", required=route_required,
                        help="only this route" if not route_required else "the route to use")

    sp = sub.add_parser("plan", help="the drivable segments of each route")
    common(sp)
    sp.add_argument("--json", action="store_true", help="print JSON for scripts")

    sp = sub.add_parser("check", help="swept-footprint check of each route "
                                      "(exit 1 if anything is in the way)")
    common(sp)
    sp.add_argument("--json", action="store_true", help="print JSON for scripts")
    sp.add_argument("--tolerance-mm", type=float, default=2.0, metavar="MM",
                    help="how much the swept region may exceed the true one (default 2 mm)")
    sp.add_argument("--sizing", action="store_true",
                    help="also answer: widest and longest footprint that clears, and the door "
                         "widths the chassis needs (slower)")
    sp.add_argument("--traffic", action="store_true",
                    help="also list where two routes' swept bands overlap (conflict areas) "
                         "and, where two routes meet head-on in a corridor, whether they can "
                         "pass side by side")

    sp = sub.add_parser("schedule", help="segment-wise wheel-rate schedule of one route")
    common(sp, route_required=True)
    sp.add_argument("--format", choices=("csv", "json"), default="json",
                    help="output format (default json)")
    sp.add_argument("-o", "--output", metavar="FILE", help="write to FILE (atomically) "
                                                            "instead of standard output")
    sp.add_argument("--dt", type=float, default=0.1, metavar="SECONDS",
                    help="time step of the samples, CSV and JSON (default 0.1 s)")
    sp.add_argument("--samples", action="store_true",
                    help="CSV: one row per time step (pose, speed, yaw rate, curvature, each "
                         "wheel's rate and angle) after '#' lines naming chassis, limits and "
                         "units, instead of one row per segment")

    sp = sub.add_parser("render", help="a PNG picture of plan, route, swept area and "
                                       "violations, without a screen")
    common(sp)
    sp.add_argument("-o", "--output", metavar="FILE.png", required=True)
    sp.add_argument("--plots", metavar="PLOTS.png",
                    help="also write the speed and wheel-rate plots of the route (--route, "
                         "else the first route) with the limits drawn")
    sp.add_argument("--plots-against", choices=("time", "distance"), default="time",
                    help="x axis of --plots (default time)")
    sp.add_argument("--width", type=int, default=1600, help="image width in pixels")
    sp.add_argument("--height", type=int, default=1000, help="image height in pixels")

    sp = sub.add_parser("find", help="search a drivable, clear route through a route's "
                                     "waypoints (exit 1 if none within the time limit)")
    common(sp, route_required=True)
    sp.add_argument("--json", action="store_true", help="print JSON for scripts")
    sp.add_argument("--time-limit", type=float, default=10.0, metavar="S",
                    help="seconds the search may take (default 10)")
    sp.add_argument("--repair", action="store_true",
                    help="keep the legs that pass as sketched; search only the failing ones")
    sp.add_argument("-o", "--output", metavar="NEW_PROJECT",
                    help="write a copy of the project with the route replaced by the found one")
    return p


def _selected_routes(project, name: str | None):
    if not project.routes:
        raise SwatheInputError(str(project.path or "<project>"), "routes",
                               "the list is empty; expected at least one route")
    if name is None:
        return list(project.routes)
    return [project.route(name)]


def cmd_plan(args: argparse.Namespace) -> int:
    from kinematics.analysis.report_text import route_stops
    from kinematics.files.jsonio import dumps
    from kinematics.files.project import load_project
    from kinematics.plan.planner import plan_route

    project = load_project(args.project)
    routes = _selected_routes(project, args.route)
    plans = [plan_route(r, project.chassis_for(r)) for r in routes]
    if args.json:
        out = []
        for pl, r in zip(plans, routes):
            d = pl.to_dict()
            d["chassis"] = project.chassis_for(r).name
            if r.stops:
                d["stops"] = [s.to_dict() for s in route_stops(pl, r)]
            out.append(d)
        sys.stdout.write(dumps({"routes": out}))
        return EXIT_OK
    from kinematics.analysis.report_text import format_plan_text

    sys.stdout.write(format_plan_text(plans, project))
    return EXIT_OK


def cmd_check(args: argparse.Namespace) -> int:
    from kinematics.analysis.report_text import format_check_text, route_stops
    from kinematics.analysis.results import check_with_vehicle
    from kinematics.check.clearance import ObstacleIndex
    from kinematics.files.jsonio import dumps
    from kinematics.files.project import load_project
    from kinematics.plan.planner import plan_route

    if not (MIN_TOLERANCE_MM <= args.tolerance_mm <= MAX_TOLERANCE_MM):
        # The sweep's work grows as 1 / sqrt(tolerance): bound it before sweeping.
        raise SwatheInputError("command line", "--tolerance-mm",
                               f"expected a number of millimetres from {MIN_TOLERANCE_MM:g} "
                               f"to {MAX_TOLERANCE_MM:g}")
    project = load_project(args.project)
    index = ObstacleIndex(project.floorplan)
    tol = args.tolerance_mm / 1000.0
    checks = []
    stops: dict[str, list] = {}
    vehicles: list = []
    for route in _selected_routes(project, args.route):
        chassis = project.chassis_for(route)
        plan = plan_route(route, chassis)
        stops[route.name] = route_stops(plan, route)
        chk = check_with_vehicle(plan, chassis, index, route=route, tolerance_m=tol)
        if args.sizing:
            import dataclasses

            from kinematics.check.sizing import attach_sizing

            chk = attach_sizing(chk, plan, dataclasses.replace(project, chassis=chassis), index,
                                tolerance_m=tol)
        checks.append(chk)
        vehicles.append(chassis)
    report = None
    if args.traffic:
        from kinematics.check.traffic import band_of, traffic

        report = traffic([band_of(c, v) for c, v in zip(checks, vehicles)], index)
    if args.json:
        out = []
        for c in checks:
            d = c.to_dict()
            if stops.get(c.name):
                d["stops"] = [s.to_dict() for s in stops[c.name]]
            out.append(d)
        doc: dict = {"routes": out}
        if report is not None:
            doc["traffic"] = report
        sys.stdout.write(dumps(doc))
    else:
        text = format_check_text(checks, stops)
        if report is not None:
            from kinematics.analysis.report_text import CHECK_CAUTION
            from kinematics.check.traffic import format_traffic_text

            # The traffic section above the caution, which stays the last line.
            text = text.replace(CHECK_CAUTION, format_traffic_text(report) + "\n"
                                + CHECK_CAUTION)
        sys.stdout.write(text)
    return EXIT_OK if all(c.clear for c in checks) else EXIT_VIOLATION


def cmd_schedule(args: argparse.Namespace) -> int:
    from kinematics.files.jsonio import atomic_write_pieces
    from kinematics.files.project import load_project
    from kinematics.plan.planner import plan_route
    from kinematics.timing.schedule import (
        build_schedule,
        samples_csv_pieces,
        schedule_json_pieces,
        schedule_to_csv,
    )

    if not (args.dt > 0) or args.dt > 60:
        raise SwatheInputError("command line", "--dt",
                               "expected a time step above 0 s and at most 60 s")
    project = load_project(args.project)
    route = project.route(args.route)
    if args.output:
        _check_output_path(args.output)
    chassis = project.chassis_for(route)
    wheel = [k for k in chassis.defaulted if k.endswith("wheel_radius_m")]
    if wheel:  # a schedule turns speeds into wheel rates: a guessed radius makes them wrong
        raise SwatheInputError(args.project, wheel[0],
                               "missing; a schedule needs the wheel radius in metres")
    plan = plan_route(route, chassis)
    sched = build_schedule(route.name, list(plan.segments), chassis, dt_s=args.dt,
                           zones=project.floorplan.zones, route=route,
                           file=args.project, place=_route_place(project, route))
    if args.format == "csv":
        pieces = (samples_csv_pieces(sched) if args.samples
                  else iter([schedule_to_csv(sched)]))
    else:  # a near-limit schedule is ~130 MB of JSON: written a block of samples at a time
        pieces = schedule_json_pieces(sched)
    if args.output:
        _write_output(args.output, "-o", lambda: atomic_write_pieces(args.output, pieces))
    else:
        for piece in pieces:
            sys.stdout.write(piece)
    # The schedule is written either way; a route that fails its check says so and exits 1.
    from kinematics.analysis.results import check_with_vehicle
    from kinematics.check.clearance import ObstacleIndex

    chk = check_with_vehicle(plan, chassis, ObstacleIndex(project.floorplan), route=route)
    if not chk.clear:
        v = chk.violations[0] if chk.violations else None
        what = (f"{v.kind} at station {v.station_m:.2f} m: {v.message}" if v is not None
                else "the check fails")
        sys.stderr.write(f"swathe: warning: route {route.name!r} does not pass its check "
                         f"({what}); the schedule is written but the route is not clear\n")
        return EXIT_VIOLATION
    return EXIT_OK


def _route_place(project, route) -> str:
    """The key path of ``route`` in its project, for messages."""
    return f"routes[{list(project.routes).index(route)}]"


def _check_output_path(path: str, flag: str = "-o") -> None:
    """Refuse an output path that cannot take a new file: a folder, a device, a missing or
    unusable folder, too long a name (one line, exit 2; the write itself is atomic)."""
    from kinematics.files.jsonio import one_line, os_reason

    shown = one_line(path, 300)
    try:
        parent = Path(path).resolve().parent
        target = os.stat(path) if os.path.lexists(path) else None
        parent_ok = parent.is_dir()
    except (OSError, ValueError) as exc:
        reason = os_reason(exc) if isinstance(exc, OSError) else "not a usable file name"
        raise SwatheInputError(shown, flag, reason) from None
    if target is not None and stat.S_ISDIR(target.st_mode):
        raise SwatheInputError(shown, flag, "is a folder; expected the name of a file to write")
    if target is not None and not stat.S_ISREG(target.st_mode):
        raise SwatheInputError(shown, flag, "is not a regular file (a device or pipe?); leave "
                                            "out -o to write to standard output")
    if not parent_ok:
        raise SwatheInputError(shown, flag, f"the folder {one_line(str(parent), 300)} does "
                                            "not exist")
    if len(os.fsencode(Path(path).name)) + 16 > _name_max(parent):
        raise SwatheInputError(shown, flag, "the file name is longer than the file system "
                                            "allows")


def _name_max(folder: Path) -> int:
    try:
        return int(os.pathconf(folder, "PC_NAME_MAX"))
    except (OSError, ValueError):
        return 255


def _write_output(path: str, flag: str, write) -> None:
    """Run ``write`` (an atomic write of ``path``); an OS failure is bad input naming the
    file and the option, not an internal error."""
    from kinematics.files.jsonio import one_line, os_reason

    try:
        write()
    except OSError as exc:
        reason = os_reason(exc).replace("cannot be read", "cannot be written")
        raise SwatheInputError(one_line(path, 300), flag, reason) from None


def cmd_render(args: argparse.Namespace) -> int:
    from kinematics.files.project import load_project

    if args.width < 200 or args.height < 150 or args.width > 10000 or args.height > 10000:
        raise SwatheInputError("command line", "--width/--height",
                               "expected an image between 200x150 and 10000x10000 pixels")
    project = load_project(args.project)
    if args.route is not None:
        project.route(args.route)
    _check_output_path(args.output)
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from app.render import image_format_for, render_project_png

    if image_format_for(args.output) is None:
        from kinematics.files.jsonio import one_line

        raise SwatheInputError(one_line(args.output, 300), "-o",
                               f"cannot write a {one_line(Path(args.output).suffix, 20)} "
                               "picture; expected a name ending .png, .jpg or .jpeg")

    if args.plots:
        _check_output_path(args.plots, "--plots")
        if image_format_for(args.plots) is None:
            from kinematics.files.jsonio import one_line

            raise SwatheInputError(one_line(args.plots, 300), "--plots",
                                   f"cannot write a {one_line(Path(args.plots).suffix, 20)} "
                                   "picture; expected a name ending .png, .jpg or .jpeg")
    _write_output(args.output, "-o", lambda: render_project_png(
        project, args.output, route_name=args.route, size=(args.width, args.height)))
    if args.plots:
        from app.plots import render_plot_png
        from kinematics.plan.planner import plan_route
        from kinematics.timing.schedule import build_schedule

        if not project.routes:
            raise SwatheInputError(args.project, "routes", "no route to plot")
        route = project.route(args.route) if args.route else project.routes[0]
        chassis = project.chassis_for(route)
        plan = plan_route(route, chassis)
        sched = build_schedule(route.name, list(plan.segments), chassis,
                               zones=project.floorplan.zones, route=route,
                               file=args.project, place=_route_place(project, route))
        _write_output(args.plots, "--plots", lambda: render_plot_png(
            sched, args.plots, size=(args.width, max(args.height * 7 // 10, 150)),
            x_axis=args.plots_against))
    return EXIT_OK


def _with_project(exc: SwatheInputError, argv: list[str]) -> str:
    """The message of ``exc``; a refusal the planner or the check raised about a route (it
    names the route, not the file) is given the project file in front."""
    if len(argv) > 1 and argv[0] in SUBCOMMANDS and exc.file and not (
            exc.file.startswith(("<", "command line")) or os.path.sep in exc.file
            or exc.file == argv[1]) and exc.place.startswith(("waypoints", "segment ", "trailers")):
        return f"{argv[1]}: route {exc.file!r}: {exc.place}: {exc.expected}".encode(
            "utf-8", "backslashreplace").decode("utf-8")
    return exc.message


def _moved_floorplan_ref(ref, src_dir: Path, out_dir: Path):
    """The floor plan reference of a project read from ``src_dir``, as seen from ``out_dir``."""
    def rel(name: str) -> str:
        return os.path.relpath((src_dir / name).resolve(), out_dir.resolve())
    if isinstance(ref, str):
        return rel(ref)
    if isinstance(ref, dict) and isinstance(ref.get("file"), str):
        return {**ref, "file": rel(ref["file"])}
    return ref


def cmd_find(args: argparse.Namespace) -> int:
    import math

    from kinematics.files.jsonio import dumps
    from kinematics.files.project import Project, load_project, save_project
    from kinematics.plan.search import FindSettings, RouteFinder, replace_route

    lim = args.time_limit
    if not (math.isfinite(lim) and lim > 0.0):
        raise SwatheInputError("command line", "--time-limit",
                               f"expected a positive number of seconds, got {lim:g}")
    project = load_project(args.project)
    route = project.route(args.route)
    if args.output:
        _check_output_path(args.output)
    finder = RouteFinder(project, settings=FindSettings(time_limit_s=lim),
                         chassis=project.chassis_for(route))
    res = finder.repair(route) if args.repair else finder.find(route)
    if args.json:
        sys.stdout.write(dumps({"routes": [res.to_dict()]}))
    elif res.found:
        sys.stdout.write(
            f"route {route.name}: found, {len(res.route.waypoints)} waypoints, "
            f"{res.plan.length_m:.2f} m, least clearance {res.check.min_clearance_m:.3f} m, "
            f"{res.expanded_nodes} nodes in {res.time_s:.2f} s\n")
        for w in res.route.waypoints:
            h = "" if w.heading_deg is None else f", {w.heading_deg:.2f} deg"
            sys.stdout.write(f"  ({w.x:.3f}, {w.y:.3f}{h})\n")
        for note in res.notes:
            sys.stdout.write(f"  note: {note}\n")
    if not res.found:
        sys.stderr.write(f"swathe: route {route.name}: {res.reason}\n")
        return EXIT_VIOLATION
    if args.output:
        out = Path(args.output)
        src = Path(args.project).parent
        new = replace_route(project, res.route)
        new = Project(new.floorplan, new.chassis, new.routes,
                      _moved_floorplan_ref(new.floorplan_ref, src, out.parent), None, new.extra)
        _write_output(args.output, "-o", lambda: save_project(new, out))
    return EXIT_OK


COMMANDS = {"plan": cmd_plan, "check": cmd_check, "schedule": cmd_schedule,
            "render": cmd_render, "find": cmd_find}


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``swathe`` console script; returns the exit code."""
    argv = list(sys.argv[1:] if argv is None else argv)
    try:
        if argv and argv[0] in SUBCOMMANDS or (argv and argv[0] in ("-h", "--help")):
            args = build_parser().parse_args(argv)
            return COMMANDS[args.command](args)
        looks_like_file = argv and (Path(argv[0]).exists() or "." in Path(argv[0]).name
                                    or "/" in argv[0] or "\\" in argv[0])
        if argv and not argv[0].startswith("-") and not looks_like_file:
            sys.stderr.write(f"swathe: unknown command {argv[0]!r} (commands: "
                             + ", ".join(SUBCOMMANDS) + "; see --help)\n")
            return EXIT_BAD_INPUT
        if len(argv) > 1:
            build_parser().error("expected at most one PROJECT to open")
        if argv and argv[0].startswith("-"):
            build_parser().error(f"unknown option {argv[0]}")
        project = argv[0] if argv else None
        if project is not None:
            from kinematics.files.jsonio import check_input_file

            check_input_file(project, "project file")
        from app.main_window import run_workbench

        return run_workbench(project)
    except SwatheInputError as exc:
        sys.stderr.write(f"swathe: {_with_project(exc, argv)}\n")
        return EXIT_BAD_INPUT
    except BrokenPipeError:
        return EXIT_OK
    except KeyboardInterrupt:
        return 130
    except Exception as exc:  # noqa: BLE001 - the edge turns every failure into one line
        if os.environ.get("SWATHE_DEBUG"):
            raise
        sys.stderr.write(f"swathe: internal error: {type(exc).__name__}: {exc} "
                         "(set SWATHE_DEBUG=1 for details; please report it)\n")
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
