"""The Qt shell of Swathe: the workbench window, its views and the ``swathe`` command.

Everything here draws or edits the :class:`app.document.Document`; all computation goes
through :mod:`kinematics`, which never imports Qt.
"""
