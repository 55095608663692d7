"""Capture (or compare) the JSON of ``plan``, ``check`` and ``schedule`` on every sample.

``python tests/golden_outputs.py`` rewrites ``tests/fixtures/cli_outputs.json.gz``; the test
``tests/test_golden_outputs.py`` compares the current outputs against it.
"""

from __future__ import annotations

import gzip
import json
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
SAMPLES = ROOT / "sample_floorplans"
FIXTURE = Path(__file__).resolve().parent / "fixtures" / "cli_outputs.json.gz"


def _run(argv: list[str]) -> str:
    import contextlib
    import io

    from app.cli import main

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        main(argv)
    return buf.getvalue()


def capture() -> dict[str, dict]:
    """Every sample project's plan/check JSON and each route's schedule JSON, parsed."""
    from kinematics.files.project import load_project

    out: dict[str, dict] = {}
    for path in sorted(SAMPLES.glob("*.swathe.json")):
        entry: dict = {
            "plan": json.loads(_run(["plan", str(path), "--json"])),
            "check": json.loads(_run(["check", str(path), "--json"])),
            "schedule": {},
        }
        for route in load_project(path).routes:
            entry["schedule"][route.name] = json.loads(
                _run(["schedule", str(path), "--route", route.name, "--format", "json"]))
        out[path.name] = entry
    return out


def load() -> dict[str, dict]:
    """The captured outputs."""
    return json.loads(gzip.decompress(FIXTURE.read_bytes()))


def differences(expected: object, actual: object, where: str = "") -> list[str]:
    """Where ``actual`` differs from ``expected``, tolerating only keys ``actual`` adds.

    Numbers compare exactly (the JSON float text round-trips), so an empty answer means the
    outputs are byte-identical apart from added keys.
    """
    if isinstance(expected, dict):
        if not isinstance(actual, dict):
            return [f"{where}: expected an object, got {type(actual).__name__}"]
        out: list[str] = []
        for k, v in expected.items():
            if k not in actual:
                out.append(f"{where}.{k}: missing")
            else:
                out.extend(differences(v, actual[k], f"{where}.{k}"))
        return out
    if isinstance(expected, list):
        if not isinstance(actual, list) or len(actual) != len(expected):
            n = len(actual) if isinstance(actual, list) else type(actual).__name__
            return [f"{where}: expected a list of {len(expected)}, got {n}"]
        out = []
        for i, (e, a) in enumerate(zip(expected, actual)):
            out.extend(differences(e, a, f"{where}[{i}]"))
        return out
    if type(expected) is not type(actual) or expected != actual:
        return [f"{where}: expected {expected!r}, got {actual!r}"]
    return []


if __name__ == "__main__":
    sys.path.insert(0, str(ROOT))
    FIXTURE.parent.mkdir(exist_ok=True)
    text = json.dumps(capture(), indent=0, sort_keys=True) + "\n"
    # mtime=0: the same outputs give the same bytes, so an unchanged fixture shows no diff.
    FIXTURE.write_bytes(gzip.compress(text.encode(), mtime=0))
    print(f"wrote {FIXTURE}")
