"""The Qt shell of Swathe: the workbench window, its views and the ``swathe`` command.

Everything here draws or edits the :class:`app.document.Document`; all computation goes
through :mod:`kinematics`, which never imports Qt.
"""

SAFETY_CAUTION = (
    "Swathe is a planning aid, not a safety certification. Verify every route on site, keep "
    "the clearances that the applicable machine-safety standards (for example ISO 3691-4 and "
    "ANSI/ITSDF B56.5) and local fire and building codes require, and defer to licensed "
    "practice."
)
