"""Shared test set-up: hypothesis profiles and paths.

``HYPOTHESIS_PROFILE=deep`` runs the property tests far harder than the
default ``ci`` profile that keeps the default run short on two cores.
"""

from __future__ import annotations

import os
from pathlib import Path

from hypothesis import HealthCheck, settings

settings.register_profile(
    "ci", max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.register_profile(
    "deep", max_examples=2000, deadline=None, suppress_health_check=[HealthCheck.too_slow]
)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))

ROOT = Path(__file__).resolve().parent.parent
WORKED = ROOT / "worked"
