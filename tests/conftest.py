"""Shared pytest configuration."""

from __future__ import annotations

import os

from hypothesis import HealthCheck, settings

# CI runs a fixed, bounded number of examples per property so the suite stays quick and
# repeatable; locally the default profile explores more.
settings.register_profile(
    "ci", max_examples=60, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow]
)
settings.register_profile("dev", max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
settings.load_profile("ci" if os.environ.get("CI") else "dev")
