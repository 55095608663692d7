"""The command line says what a user needs to trust an output (issue: trust pass)."""

from __future__ import annotations

import json

from tests.test_cli import BLOCKED, CHASSIS, CLEAR, run, write_project


def test_schedule_of_a_failing_route_is_written_warns_once_and_exits_1(tmp_path, capsys):
    # Source: shared/contract.md, version 1 additions: schedule of a route that fails its
    # check still writes the schedule, prints one warning line on stderr, and exits 1.
    p = write_project(tmp_path, [CLEAR, BLOCKED])
    out_file = tmp_path / "s.json"
    code, _, err = run(["schedule", p, "--route", "blocked", "-o", out_file], capsys)
    assert code == 1
    assert len(err.strip().splitlines()) == 1
    assert "warning" in err and "'blocked'" in err and "collision" in err
    assert json.loads(out_file.read_text())["route"] == "blocked"
    code, _, err = run(["schedule", p, "--route", "clear", "-o", out_file], capsys)
    assert code == 0 and err == ""


def test_schedule_refuses_a_missing_wheel_radius(tmp_path, capsys):
    # A schedule's wheel rates are speed / wheel radius: a silent default makes them wrong.
    # Source: rolling without slipping, omega = v / r (Siegwart et al., Introduction to
    # Autonomous Mobile Robots, ch. 3); shared/contract.md exit 2 for bad input.
    chassis = {k: v for k, v in CHASSIS.items() if k != "wheel_radius_m"}
    p = write_project(tmp_path, [CLEAR], chassis)
    code, out, err = run(["schedule", p, "--route", "clear"], capsys)
    assert code == 2 and out == ""
    assert "chassis.wheel_radius_m" in err and str(p) in err and len(err.splitlines()) == 1
    # plan and check do not need it
    assert run(["check", p], capsys)[0] == 0


def test_unknown_command_names_the_commands(capsys):
    # Source: shared/contract.md (the commands table; bad input exits 2 with one message).
    code, _, err = run(["x", "y"], capsys)
    assert code == 2
    assert "unknown command 'x'" in err and "plan, check, schedule, render" in err
    assert "PROJECT" not in err
    code, _, err = run(["chek"], capsys)
    assert code == 2 and "unknown command 'chek'" in err


def test_dt_zero_message_does_not_offer_the_refused_value(tmp_path, capsys):
    # Source: common practice (a range message states the accepted range, and a time step
    # must be above zero).
    p = write_project(tmp_path, [CLEAR])
    code, _, err = run(["schedule", p, "--route", "clear", "--dt", "0"], capsys)
    assert code == 2 and "--dt" in err
    assert "between 0" not in err and "above 0 s" in err


def test_empty_routes_is_said_and_exits_2(tmp_path, capsys):
    # Source: shared/contract.md (bad input exits 2 with one message naming file and key).
    p = write_project(tmp_path, [])
    for cmd in ("plan", "check"):
        code, out, err = run([cmd, p], capsys)
        assert code == 2 and out == ""
        assert "routes" in err and "empty" in err and str(p) in err


def test_schedule_times_strictly_increase_on_a_plain_line(tmp_path, capsys):
    # The measured case: t = 2.4 s twice on a plain line (profile knot between speeding up
    # and cruising). Source: shared/contract.md, version 1 additions (t_s strictly
    # increasing, always).
    import csv
    import io

    p = write_project(tmp_path, [CLEAR])
    for extra in ([], ["--dt", "0.1"], ["--dt", "0.037"]):
        code, out, _ = run(["schedule", p, "--route", "clear", "--format", "json", "--samples",
                            *extra], capsys)
        assert code == 0
        t = [s["t_s"] for s in json.loads(out)["samples"]]
        assert len(t) > 20 and all(b > a for a, b in zip(t, t[1:])), extra
        code, out, _ = run(["schedule", p, "--route", "clear", "--format", "csv", "--samples",
                            *extra], capsys)
        rows = list(csv.DictReader(io.StringIO("\n".join(
            ln for ln in out.splitlines() if not ln.startswith("#")))))
        t = [float(r["t_s"]) for r in rows]
        assert len(t) > 20 and all(b > a for a, b in zip(t, t[1:])), extra


def test_paths_in_messages_are_as_given_and_resolved_where_it_helps(tmp_path, capsys,
                                                                     monkeypatch):
    # Source: common practice (a message names the file as the user typed it; a path inside
    # a project is relative to the project's folder, so say where it was looked for).
    sub = tmp_path / "site"
    sub.mkdir()
    proj = {"swathe_project": 1, "floorplan": "plans/level2.floor.json", "chassis": CHASSIS,
            "routes": [CLEAR]}
    (sub / "p.swathe.json").write_text(json.dumps(proj))
    monkeypatch.chdir(tmp_path)
    code, out, err = run(["check", "site/p.swathe.json"], capsys)
    assert code == 2 and out == ""
    assert err.startswith("swathe: site/p.swathe.json: ")
    assert "'plans/level2.floor.json'" in err
    assert "site/plans/level2.floor.json" in err
    assert len(err.strip().splitlines()) == 1
    code, _, err = run(["check", "site/missing.swathe.json"], capsys)
    assert code == 2 and err.startswith("swathe: site/missing.swathe.json: ")
