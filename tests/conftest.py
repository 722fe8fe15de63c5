"""Shared test set-up: the hypothesis profiles.

``HYPOTHESIS_PROFILE=deep`` runs the property tests far harder than the
default ``ci`` profile that keeps the default run short on two cores.
"""

from __future__ import annotations

import os

from hypothesis import HealthCheck, settings

# The default profile is derandomized so that a CI run is reproducible; the deep
# profile draws fresh examples every run.
settings.register_profile(
    "ci",
    max_examples=40,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow],
)
settings.register_profile(
    "deep", max_examples=2000, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
