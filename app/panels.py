"""Side panels of the workbench: the chassis editor, the check results and the schedule table.

Each panel draws the :class:`app.document.Document` and edits it only through its methods:

- :class:`ChassisPanel` edits the chassis (drive, dimensions, footprint, margin, limits); each
  accepted change is one undoable ``doc.set_chassis``. A value the core would refuse (a
  footprint that crosses itself, a size of zero) is shown as a message under the form and the
  document keeps its last good chassis.
- :class:`ResultsPanel` lists the violations (a click asks the canvas to zoom there), the door
  clearances, the least clearance, and on request the sizing answers (widest and longest
  footprint that clears, door widths needed), computed in the background with Cancel.
- :class:`ScheduleTable` shows the segment schedule and exports it as CSV or JSON, byte for
  byte what ``swathe schedule`` writes.

Each panel lives in its own module (:mod:`app.chassis_panel` with :mod:`app.chassis_form`,
:mod:`app.results_panel`, :mod:`app.schedule_panel`; shared tables in :mod:`app.tables`);
this module keeps their public names importable from one place, as the window and tests use.
"""

# ruff: noqa: F401 - this module re-exports the panels' names
from __future__ import annotations

from .chassis_form import (
    DIMENSION_FIELDS,
    DRIVE_TIPS,
    DRIVE_WORDS,
    FIELD_LABELS,
    FIELD_TIPS,
    LIMIT_FIELDS,
    PRESETS,
    USES,
    FootprintPreview,
    _spin,
    chassis_from_form,
    friendly_message,
    stale_words,
)
from .chassis_panel import ChassisPanel
from .document import clearance_words, new_drag_token
from .qstyle import MESSAGE_STYLE
from .results_panel import _VERDICT_STYLE, ResultsPanel, compute_sizing, marker_icon
from .schedule_panel import ScheduleTable, _fmt, _schedule_rows
from .tables import _item, _numbers_whole, _table
