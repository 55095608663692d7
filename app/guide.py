"""Help > Guide (F1): what each mode does, every shortcut, and the words Swathe uses.

The modes and shortcuts are read from the window's own actions when the guide opens, so a key
added, changed or removed shows here without anyone editing a help text; the glossary and the
safety caution are fixed text.
"""

from __future__ import annotations

import html
from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtGui import QAction, QKeySequence
from PySide6.QtWidgets import QDialog, QDialogButtonBox, QTextBrowser, QVBoxLayout, QWidget

from kinematics.analysis.report_text import CAUTION

#: The words of the check and the plan, as Swathe uses them (common practice in the trade).
GLOSSARY = (
    ("footprint", "The chassis outline seen from above in its own frame: x forward, y to the "
                  "left, metres, the reference point at (0, 0)."),
    ("station", "Distance along the route from its start, in metres: where on the route "
                "something happens (a violation, a door, a hover read-out)."),
    ("swept path", "Every place the footprint covers while the chassis drives the route: the "
                   "union of the footprint over all its poses."),
    ("band", "The swept path as the plan draws it: the pale blue area along the route."),
    ("clearance", "The least distance from the footprint to the nearest wall or obstacle; a "
                  "negative clearance is an overlap."),
    ("margin", "The clearance a route must keep everywhere (chassis key margin_m; a margin "
               "zone may ask for more). Less than the margin is a violation."),
)


def action_words(a: QAction) -> str:
    """The action's name as its menu shows it, without the ``&`` mnemonic marks."""
    return a.text().replace("&&", "\0").replace("&", "").replace("\0", "&").rstrip(".")


def action_keys(a: QAction) -> list[str]:
    """Every shortcut of the action as the user types it."""
    return [k.toString(QKeySequence.SequenceFormat.NativeText) for k in a.shortcuts()
            if not k.isEmpty()]


def shortcut_rows(window: QWidget) -> list[tuple[str, str]]:
    """``(keys, what)`` for every action of ``window`` (and its children) with a shortcut,
    in menu order where the action has one; each action once."""
    rows: list[tuple[str, str]] = []
    seen: set[int] = set()
    for a in window.findChildren(QAction):
        keys = action_keys(a)
        if not keys or id(a) in seen:
            continue
        seen.add(id(a))
        what = action_words(a) or a.toolTip() or a.objectName()
        rows.append((", ".join(keys), what))
    return rows


def _mode_rows(window: Any) -> list[tuple[str, str, str]]:
    """``(name, keys, what it does)`` for each canvas mode, from the mode actions."""
    acts = [window.act_select, window.act_add, *getattr(window, "plan_mode_actions", {}).values()]
    return [(action_words(a), ", ".join(action_keys(a)),
             a.toolTip() or a.statusTip()) for a in acts]


def guide_html(window: Any) -> str:
    """The guide's text (HTML) for ``window``, read from its actions now."""
    e = html.escape
    parts = ["<h2>Swathe guide</h2>",
             "<p>Sketch a route on the floor plan; Swathe plans a path the chassis can drive, "
             "sweeps its footprint along it and lists what is in the way (Check results), "
             "with speed and wheel rates below. Hover over a route to read its station, "
             "clearance, speed and wheel rates.</p>",
             "<h3>Modes</h3><table cellspacing='0' cellpadding='3'>"]
    for name, keys, what in _mode_rows(window):
        parts.append(f"<tr><td><b>{e(name)}</b></td><td>{e(keys)}</td><td>{e(what)}</td></tr>")
    parts.append("</table><h3>Shortcuts</h3><table cellspacing='0' cellpadding='3'>")
    for keys, what in shortcut_rows(window):
        parts.append(f"<tr><td><b>{e(keys)}</b></td><td>{e(what)}</td></tr>")
    parts.append("</table><h3>Words</h3><dl>")
    for word, meaning in GLOSSARY:
        parts.append(f"<dt><b>{e(word)}</b></dt><dd>{e(meaning)}</dd>")
    parts.append(f"</dl><p><b>Caution.</b> {e(CAUTION)}</p>")
    return "".join(parts)


class GuideDialog(QDialog):
    """The guide in a window of its own (not modal: it can stay open beside the plan)."""

    def __init__(self, window: Any) -> None:
        super().__init__(window)
        self.setWindowTitle("Swathe guide")
        self.resize(640, 620)
        lay = QVBoxLayout(self)
        self.text = QTextBrowser()
        self.text.setOpenExternalLinks(False)
        lay.addWidget(self.text)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close)
        buttons.rejected.connect(self.close)
        lay.addWidget(buttons)
        self.setWindowModality(Qt.WindowModality.NonModal)
        self.window_ = window
        self.reload()

    def reload(self) -> None:
        """Read the modes and shortcuts from the window's actions again."""
        self.text.setHtml(guide_html(self.window_))

    def plain_text(self) -> str:
        return self.text.toPlainText()
