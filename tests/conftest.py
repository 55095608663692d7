"""Shared test setup: Qt runs offscreen, hypothesis has a CI-friendly profile."""

from __future__ import annotations

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from hypothesis import HealthCheck, settings  # noqa: E402

settings.register_profile("swathe", deadline=None,
                          suppress_health_check=[HealthCheck.too_slow])
settings.load_profile("swathe")
