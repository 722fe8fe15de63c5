"""Shared models and proving runs for the non-polynomial tests."""

from __future__ import annotations

import json

import pytest

import proofkit
from proofkit.audit import FormatError, audit_text
from proofkit.proofs import ProveRun, prove_model
from proofkit.provenance import check_provenance

# Continuous culture (chemostat) with saturating uptake, yield 1, maximal rate 1:
# published form (Smith and Waltman, The Theory of the Chemostat, 1995, ch. 1):
# s' = D (s0 - s) - m s/(ks + s) b, b' = m s/(ks + s) b - D b; coexistence at
# s* = ks D/(m - D), b* = s0 - s*. With D = 1/2, ks = 1, m = 1, s0 = 4: s* = 1, b* = 3.
CULTURE = """system chemostat
parameter D = 1/2
parameter ks = 1
parameter s0 = 4
state s, b
let growth = s/(ks + s)
ds/dt = D*(s0 - s) - growth*b
db/dt = growth*b - D*b
equilibrium washout at s = 4, b = 0
equilibrium coexist at s = 1, b = 3
claim coexist stable
claim washout unstable
"""

# The damped swing equation of the issue, in a box domain.
SWING = """system swing
state x1, x2
dx1/dt = x2
dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))
domain x1 >= -3 and x1 <= 3 and x2 >= -3 and x2 <= 3
equilibrium op at x1 = 0, x2 = 0
equilibrium saddle at x1 = pi/3, x2 = 0
claim op stable
claim saddle unstable
"""

# Pendulum with friction (published: Khalil, Nonlinear Systems, 3rd ed., 2002; example and
# section numbers (Example 4.3 / Sec. 1.2.1): memory):
# x1' = x2, x2' = -(g/l) sin x1 - (k/m) x2, here g/l = 10, k/m = 1.
PENDULUM = """system pendulum
state x1, x2
dx1/dt = x2
dx2/dt = -10*sin(x1) - x2
equilibrium down at x1 = 0, x2 = 0
claim down stable
"""


def prove_text(text: str, name: str = "test.pk") -> ProveRun:
    return prove_model(proofkit.parse(text, name))


def full_audit_ok(text: str) -> bool:
    """Core audit and provenance both accept (no claim rejected)."""
    try:
        report = audit_text(text)
    except FormatError:
        return False
    return report.accepted and check_provenance(json.loads(text)).ok


@pytest.fixture(scope="session")
def culture_run() -> ProveRun:
    return prove_text(CULTURE, "culture.pk")


@pytest.fixture(scope="session")
def swing_run() -> ProveRun:
    return prove_text(SWING, "swing.pk")


@pytest.fixture(scope="session")
def pendulum_run() -> ProveRun:
    return prove_text(PENDULUM, "pendulum.pk")
