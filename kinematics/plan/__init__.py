"""Plan: from waypoints to drivable segments.

Owns corner fillets (:mod:`fillet`), Dubins and Reeds-Shepp shortest paths (:mod:`dubins`,
:mod:`reeds_shepp`) and the route planner (:mod:`planner`); the search planner and transition
curves belong here too. It sits above :mod:`kinematics.check` so a search can use the check.

May import: :mod:`kinematics.errors`, :mod:`kinematics.files`, :mod:`kinematics.motion`,
:mod:`kinematics.check`.
"""
