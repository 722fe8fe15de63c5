"""Shared test set-up: the hypothesis profiles.

``ci`` (the default): 40 derandomized examples per property, so a CI run is
reproducible and the default run stays short on two cores.
``deep`` (run by hand, see DEVELOPERS.md): 500 fresh random examples per
property; it must pass too, so a property may only state what is true of every
example (filter with ``assume``, never ``return``).
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
    "deep",
    max_examples=500,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much],
)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "ci"))
