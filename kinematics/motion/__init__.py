"""Motion: how a chassis moves, in closed form.

Owns poses and the SE(2) exponential map (:mod:`se2`), path segments with their poses
(:mod:`segments`) and the per-drive forward and inverse kinematics (:mod:`drives`).

May import: :mod:`kinematics.errors`, :mod:`kinematics.files`.
"""
