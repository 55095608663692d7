"""Check: does the footprint swept along a plan stay clear, and by how much?

Owns the conservative swept footprint (:mod:`sweep`), the obstacle index and the route check
with its violations and door clearances (:mod:`clearance`), and the inverse sizing questions
(:mod:`sizing`).

May import: :mod:`kinematics.errors`, :mod:`kinematics.files`, :mod:`kinematics.motion`.
"""
