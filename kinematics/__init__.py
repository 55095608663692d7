"""Swathe's computational core, in parts that import one way (lower may be imported by higher):

``errors`` -> ``files`` -> ``motion`` -> ``check`` -> ``plan`` -> ``timing`` -> ``analysis``

- :mod:`kinematics.files`: project and floor-plan models, validation, JSON / DXF / SVG readers.
- :mod:`kinematics.motion`: poses, segments, drive kinematics.
- :mod:`kinematics.check`: swept footprint, obstacle index, route check, sizing.
- :mod:`kinematics.plan`: fillets, Dubins, Reeds-Shepp, the route planner.
- :mod:`kinematics.timing`: speed profile and wheel schedules.
- :mod:`kinematics.analysis`: what the window, report and CLI show, computed headless.

Pure Python on numpy and shapely; nothing here imports Qt (``tests/test_core_imports.py``).
"""

__version__ = "0.1.0"
