"""Shared test setup: Qt runs offscreen, hypothesis has a CI-friendly profile."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from hypothesis import HealthCheck, settings  # noqa: E402

# derandomize: every run draws the same examples, so the suite gives the same answer every
# time (a run that found a failure and the next that did not was the old behaviour); the
# examples a search ever found are kept with @example beside each test. The database is
# off so a local run cannot differ from CI by what an earlier run stored.
settings.register_profile("swathe", deadline=None, derandomize=True, database=None,
                          print_blob=True, suppress_health_check=[HealthCheck.too_slow])
# For a search beyond the fixed examples (not part of pass/fail):
# pytest --hypothesis-profile=explore
settings.register_profile("explore", deadline=None, max_examples=2000,
                          suppress_health_check=[HealthCheck.too_slow])
settings.load_profile("swathe")
