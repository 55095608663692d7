"""Check: does the footprint swept along a plan stay clear, and by how much?

- :mod:`sweep`: the conservative swept footprint of a segment.
- :mod:`obstacles`: the floor plan's solids and doors in spatial indexes.
- :mod:`clearance`: :class:`~clearance.RouteChecker` and ``check_route``, composed of
  :mod:`segment_parts` (per-segment results kept by value), :mod:`clearance_pass` (pieces
  against solids and doors; the least clearance), :mod:`violations` (where a hit starts, one
  violation per stretch) and :mod:`waypoints` (``waypoint_blocked``); the answers are in
  :mod:`results`, the shared overlap geometry in :mod:`contact`.
- :mod:`sizing`: the inverse questions (widest, longest footprint; door widths needed).

May import: :mod:`kinematics.errors`, :mod:`kinematics.files`, :mod:`kinematics.motion`.
"""
