"""The headless analysis (kinematics.analysis.results) that the window, report, picture and CLI
share: tested here without Qt."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

from kinematics.analysis import results as an
from kinematics.files.project import load_project

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "sample_floorplans" / "demo.swathe.json"


def _cli_check(path: Path) -> dict:
    out = subprocess.run([sys.executable, "-m", "app.cli", "check", str(path), "--json"],
                         capture_output=True, text=True, cwd=ROOT)
    return json.loads(out.stdout)


def test_compute_results_agrees_with_swathe_check():
    # Source: /work/shared/contract.md, `check --json` (the CLI is the reference the window
    # and the report must agree with); the demo's corridor-to-sluice is meant to fail
    # (sample_floorplans/README.md).
    project = load_project(DEMO)
    plans, checks, errors = an.compute_results(project)
    assert not errors
    cli = {r["name"]: r for r in _cli_check(DEMO)["routes"]}
    assert set(checks) == set(cli) == {r.name for r in project.routes}
    for name, chk in checks.items():
        assert chk.clear == cli[name]["clear"]
        # The JSON writes numbers rounded (kinematics.files.jsonio), so compare to 1 nm.
        assert abs(chk.min_clearance_m - cli[name]["min_clearance_m"]) < 1e-9
        assert [v.kind for v in an.violations_of(chk)] == \
            [v["kind"] for v in cli[name]["violations"]]
        assert [d["label"] for d in an.door_results(chk)] == \
            [d["label"] for d in cli[name]["doors"]]
    assert not checks["corridor-to-sluice"].clear
    text, ok = an.verdict_text(checks, errors)
    n = sum(len(r["violations"]) for r in cli.values())
    assert ok is False and text.startswith(f"{n} VIOLATION")
    least = min(r["min_clearance_m"] for r in cli.values())
    assert text.endswith(f"min clearance {round(least, 6):.3f} m")


def test_door_clearances_keep_the_least_per_door():
    # Source: contract `doors` (each door's least clearance); the least over routes by label.
    project = load_project(DEMO)
    _plans, checks, _ = an.compute_results(project)
    by_label = an.door_clearances(checks)
    cli = _cli_check(DEMO)["routes"]
    want: dict[str, float] = {}
    for r in cli:
        for d in r["doors"]:
            if d["min_clearance_m"] is not None:
                want[d["label"]] = min(d["min_clearance_m"], want.get(d["label"], 1e9))
    assert by_label and set(by_label) == set(want)
    assert all(abs(by_label[k] - want[k]) < 1e-9 for k in want)


def test_words_for_clearances_and_violations():
    # Source: common practice (an overlap is a negative clearance; "-0 mm" is never written).
    assert an.clearance_words(-0.098) == "overlaps by 98\u00a0mm"
    assert an.clearance_words(-0.0004) == "least clearance 0\u00a0mm"

    class V:
        kind, amount_m = "clearance", 0.0123

    assert an.violation_label(V()) == "short of margin 12 mm"
    V.kind = "infeasible"
    assert an.violation_label(V()) == "no connection"
    assert an.verdict_text({}) == ("NO ROUTES", None)
    assert an.verdict_text({"a": None}) == ("NOT CHECKED", None)


def test_route_to_plot_prefers_the_named_then_the_failing():
    class C:
        def __init__(self, n):
            self.violations = [object()] * n

    plans = {"a": 1, "b": 2}
    checks = {"a": C(0), "b": C(2)}
    assert an.plot_route_names(plans, checks)[0] == "b"
    assert an.plot_route_names(plans, checks, "a") == ["a"]
