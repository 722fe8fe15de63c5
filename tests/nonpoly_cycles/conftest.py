"""Rational models with known periodic orbits (or known absence of them), and their runs.

Sources of the facts used here (labels as in tests/REFERENCES.md):

- Predator-prey with a saturating (Holling type II) response, the Rosenzweig-MacArthur
  model x' = x (1 - x/K) - x y/(1 + x), y' = y (m x/(1 + x) - d), here m = 2, d = 1, so
  the coexistence point is x* = d/(m - d) = 1, y* = (1 - x*/K)(1 + x*).
  memory: Rosenzweig and MacArthur (Am. Nat. 97, 1963) and Rosenzweig (Science 171,
  1971): the point is stable right of the hump of the prey isocline y = (1 - x/K)(1 + x),
  x* > (K - 1)/2, and unstable left of it; Hsu (Math. Biosci. 39, 1978): when stable it
  attracts the open quadrant (no periodic orbit there); Cheng (SIAM J. Math. Anal. 12,
  1981): when unstable there is exactly one limit cycle. computed: the trace of the
  Jacobian at the point is x*(K - 1 - 2x*)/(K(1 + x*)) (sympy, test_hump_criterion), and
  scipy solve_ivp shows the cycle for K = 4 and convergence for K = 2.
- van der Pol (mu = 1) slowed down by the positive factor 1/(1 + x^2): the same orbits
  (common practice: a positive factor changes only the speed along the orbits), so its
  cycle has the published amplitude 2.0086 (Hairer & Wanner, shared list): the disc
  x^2 + y^2 <= 16 holds it, the disc x^2 + y^2 <= 1/4 holds none.
- Strogatz's Dulac example dx/dt = y, dy/dt = -x - y + x^2 + y^2 (published: Strogatz,
  Nonlinear Dynamics and Chaos, section 7.2; no periodic orbit at all), divided by
  x - 3 < 0 on the disc x^2 + y^2 <= 9/25: the same orbits traversed backwards, so none there.
"""

from __future__ import annotations

import pytest

import proofkit
from proofkit.audit import FormatError, audit_text
from proofkit.proofs import ProveRun, prove_model


def predator_prey(k: str, y_star: str, claims: str) -> str:
    return (
        "system predator_prey\nstate x, y\n"
        f"parameter K = {k}\n"
        "dx/dt = x*(1 - x/K) - x*y/(1 + x)\n"
        "dy/dt = y*(2*x/(1 + x) - 1)\n"
        f"equilibrium coexist at x = 1, y = {y_star}\n" + claims
    )


# K = 2: x* = 1 > (K - 1)/2 = 1/2, stable (no periodic orbit in the open quadrant).
STABLE = predator_prey(
    "2",
    "1",
    "claim no cycle in x >= 1/10 and x <= 3 and y >= 1/10 and y <= 3\n"
    "claim no cycle in x >= 2 and x <= 3 and y >= 1/2 and y <= 1\n"
    # x = -1 is a pole between the language's grid points in this box (x in [-11/10, -9/10])
    "claim no cycle in x >= -11/10 and x <= -9/10 and y >= 3/10 and y <= 2/5\n",
)

# K = 4: x* = 1 < (K - 1)/2 = 3/2, unstable, one limit cycle around the point.
CYCLING = predator_prey(
    "4",
    "3/2",
    "claim no cycle in (x - 1)^2 + (y - 3/2)^2 <= 1/16\n"
    "claim no cycle in x >= 1/20 and x <= 4 and y >= 1/20 and y <= 4\n"
    "claim cycle in (x - 1)^2 + (y - 3/2)^2 <= 1/16\n",
)

SLOW_VDP = """system van_der_pol_slowed
state x, y
dx/dt = y/(1 + x^2)
dy/dt = ((1 - x^2)*y - x)/(1 + x^2)
claim cycle in x^2 + y^2 <= 16
claim no cycle in x^2 + y^2 <= 1/4
"""

BACKWARDS = """system dulac_backwards
state x, y
dx/dt = y/(x - 3)
dy/dt = (-x - y + x^2 + y^2)/(x - 3)
claim no cycle in x^2 + y^2 <= 9/25
"""


def prove_text(text: str, name: str = "test.pk") -> ProveRun:
    return prove_model(proofkit.parse(text, name))


def audit_status(text: str, k: int = 0) -> str:
    try:
        return audit_text(text).claims[k].status
    except FormatError:
        return "format error"


@pytest.fixture(scope="session")
def stable_run() -> ProveRun:
    return prove_text(STABLE, "predator_prey_stable.pk")


@pytest.fixture(scope="session")
def cycling_run() -> ProveRun:
    return prove_text(CYCLING, "predator_prey_cycling.pk")


@pytest.fixture(scope="session")
def slow_vdp_run() -> ProveRun:
    return prove_text(SLOW_VDP, "van_der_pol_slowed.pk")
