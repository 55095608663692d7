"""Timing: how fast a plan may be driven, and what each wheel does then.

Owns the speed profile under every limit (:mod:`profile`) and the per-segment and sampled
wheel schedules with their CSV and JSON exports (:mod:`schedule`).

May import: :mod:`kinematics.errors`, :mod:`kinematics.files`, :mod:`kinematics.motion`,
:mod:`kinematics.check`, :mod:`kinematics.plan`.
"""
