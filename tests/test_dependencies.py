"""Every third-party package the product imports is a runtime dependency in pyproject.toml.

A package only in the test extra passes the suite but breaks `pip install -e . && swathe` on a
fresh machine (it did once: scipy).
"""

from __future__ import annotations

import ast
import sys
from pathlib import Path

import pytest

tomllib = pytest.importorskip("tomllib")  # Python 3.11+

ROOT = Path(__file__).resolve().parents[1]
# Import names that differ from their distribution names (each package's own documentation).
DIST_OF = {"PySide6": "pyside6-essentials", "shiboken6": "pyside6-essentials",
           "pyqtgraph": "pyqtgraph", "defusedxml": "defusedxml"}


def _runtime_distributions() -> set[str]:
    data = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    names = set()
    for req in data["project"]["dependencies"]:
        name = req.split(";")[0]
        for stop in "<>=!~[ ":
            name = name.split(stop)[0]
        names.add(name.strip().lower())
    return names


def test_product_imports_are_runtime_dependencies():
    # Source: Python packaging (PEP 621 `dependencies` are what `pip install .` brings).
    stdlib = set(sys.stdlib_module_names)
    runtime = _runtime_distributions()
    missing = []
    for folder in ("kinematics", "app"):
        for path in sorted((ROOT / folder).rglob("*.py")):
            tree = ast.parse(path.read_text(encoding="utf-8"))
            for node in ast.walk(tree):
                if isinstance(node, ast.Import):
                    tops = [a.name.split(".")[0] for a in node.names]
                elif isinstance(node, ast.ImportFrom) and not node.level and node.module:
                    tops = [node.module.split(".")[0]]
                else:
                    continue
                for top in tops:
                    if top in stdlib or top in ("kinematics", "app", "__future__"):
                        continue
                    dist = DIST_OF.get(top, top).lower()
                    if dist not in runtime:
                        missing.append(f"{path.relative_to(ROOT)}: {top}")
    assert not missing, "imported but not a runtime dependency:\n" + "\n".join(sorted(set(missing)))
