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
    names = [m.name for m in pkgutil.iter_modules(kinematics.__path__)]
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
        "    importlib.import_module('kinematics.' + n)\n"
        "print('ok')\n"
    )
    root = Path(kinematics.__file__).resolve().parents[1]
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=root)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == "ok"
