"""Analysis: what the window, the report and the CLI all compute about a project, headless.

Owns the text of plans and reports (:mod:`report_text`) and whatever a view shows that is
computed from plans, checks and schedules.

May import: every other part of :mod:`kinematics`; nothing imports it but ``app/``.
"""
