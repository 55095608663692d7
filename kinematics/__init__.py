"""Swathe's computational core: drive kinematics, path segments, planners, swept checks,
speed profiles and schedules, and file input/output.

Pure Python on numpy and shapely; nothing here imports Qt.
"""

__version__ = "0.1.0"
