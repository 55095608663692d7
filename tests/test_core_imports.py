"""The core never needs Qt: every kinematics module imports in a process without it."""

from __future__ import annotations

import pkgutil
import subprocess
import sys
from pathlib import Path

import kinematics


def test_kinematics_imports_without_qt():
    # Source: project rule (kinematics/ is pure Python + numpy + shapely); checked by blocking
    # every Qt binding in a fresh interpreter and importing each module.
    names = [m.name for m in pkgutil.walk_packages(kinematics.__path__, "kinematics.")]
    assert names, "no kinematics modules found"
    code = (
        "import sys\n"
        "class Block:\n"
        "    def find_spec(self, name, path=None, target=None):\n"
        "        qt = ('PySide6', 'PyQt5', 'PyQt6', 'pyqtgraph', 'shiboken6')\n"
        "        if name.split('.')[0] in qt:\n"
        "            raise ImportError('Qt is not allowed in kinematics: ' + name)\n"
        "sys.meta_path.insert(0, Block())\n"
        "import importlib\n"
        f"for n in {names!r}:\n"
        "    importlib.import_module(n)\n"
        "print('ok')\n"
    )
    root = Path(kinematics.__file__).resolve().parents[1]
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=root)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "ok"


# The declared order of the core's parts (kinematics/__init__.py): a module may import its own
# part and parts before it, never one after it.
LAYERS = ["errors", "files", "motion", "check", "plan", "timing", "analysis"]


def _part(module: str) -> str | None:
    bits = module.split(".")
    if bits[0] != "kinematics" or len(bits) < 2:
        return None
    return bits[1]


def _imports_of(path: Path, module: str) -> list[str]:
    import ast

    tree = ast.parse(path.read_text(encoding="utf-8"))
    pkg = module.rsplit(".", 1)[0] if path.name != "__init__.py" else module
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [a.name for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = pkg.split(".")
                base = base[: len(base) - node.level + 1]
                name = ".".join(base + ([node.module] if node.module else []))
            else:
                name = node.module or ""
            found.append(name)
            found += [f"{name}.{a.name}" for a in node.names]
    return found


def test_parts_import_one_way_without_circles():
    # Source: project rule (kinematics/__init__.py states the order); walked with Python's ast.
    root = Path(kinematics.__file__).resolve().parent
    graph: dict[str, set[str]] = {}
    bad = []
    for path in sorted(root.rglob("*.py")):
        rel = path.relative_to(root.parent).with_suffix("")
        module = ".".join(rel.parts[:-1] if rel.name == "__init__" else rel.parts)
        mine = _part(module)
        assert mine is None or mine in LAYERS or mine == "__init__", f"{module}: undeclared part"
        graph[module] = set()
        for name in _imports_of(path, module):
            other = _part(name)
            if other is None or other not in LAYERS:
                continue
            graph[module].add(name)
            if mine in LAYERS and LAYERS.index(other) > LAYERS.index(mine):
                bad.append(f"{module} imports {name} (against {' -> '.join(LAYERS)})")
    assert not bad, "\n".join(bad)
    assert len(graph) > 10
    # No circles between modules either (an import of a module or a name in it).
    modules = set(graph)
    edges = {m: {t for t in graph[m] for t in (t, t.rsplit(".", 1)[0]) if t in modules and t != m}
             for m in graph}
    state: dict[str, int] = {}

    def visit(m: str, trail: list[str]) -> None:
        state[m] = 1
        for t in edges[m]:
            if state.get(t) == 1 and not t.endswith(tuple(LAYERS)):
                raise AssertionError("import circle: " + " -> ".join(trail + [m, t]))
            if t not in state:
                visit(t, trail + [m])
        state[m] = 2

    for m in sorted(modules):
        if m not in state:
            visit(m, [])
