"""One idea per module: no module in kinematics/ or app/ is over ~600 lines unless its docstring
says why, in a paragraph that starts with ``Size:``."""

from __future__ import annotations

import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
LIMIT = 600  # Source: the project's own rule (DEVELOPERS.md, "modules under ~600 lines")


def _modules() -> list[Path]:
    return sorted(p for part in ("kinematics", "app") for p in (ROOT / part).rglob("*.py"))


def _size_reason(path: Path) -> str | None:
    doc = ast.get_docstring(ast.parse(path.read_text(encoding="utf-8"))) or ""
    paras = [" ".join(p.split()) for p in doc.split("\n\n")]
    for p in paras:
        if p.startswith("Size:"):
            return p[len("Size:"):].strip()
    return None


def test_every_long_module_states_why():
    # Source: common practice (a module a reader can hold); the threshold is this project's.
    modules = _modules()
    assert len(modules) > 60  # the walk found the tree
    long = {p.relative_to(ROOT).as_posix(): len(p.read_text(encoding="utf-8").splitlines())
            for p in modules}
    long = {k: n for k, n in long.items() if n > LIMIT}
    missing = [f"{k} ({n} lines)" for k, n in long.items() if not _size_reason(ROOT / k)]
    assert not missing, "over 600 lines without a 'Size:' reason in the docstring: " + \
        ", ".join(missing)
    # A reason is a sentence, not a word.
    for k in long:
        assert len(_size_reason(ROOT / k) or "") >= 40, k


def test_the_rule_would_catch_a_long_module(tmp_path):
    # The check itself: a long module without the paragraph is found, with it is not.
    f = tmp_path / "m.py"
    body = "x = 1\n" * (LIMIT + 5)
    f.write_text('"""A module."""\n' + body)
    assert _size_reason(f) is None
    f.write_text('"""A module.\n\nSize: one table of constants that a reader looks up, not\n'
                 'reads through.\n"""\n' + body)
    assert _size_reason(f) == ("one table of constants that a reader looks up, not reads "
                               "through.")
