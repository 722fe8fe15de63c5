"""Models and shared runs for the region-of-attraction tests.

Reference values (labels as in ../shared/REFERENCES.md):

* reversed-time oscillator ``dx1/dt = -x2, dx2/dt = x1 + (x1^2 - 1) x2``: the
  textbook ``V = 3/2 x1^2 - x1 x2 + x2^2`` (published: Khalil, Nonlinear
  Systems, 3rd ed., section 8.2; also computed with
  scipy.linalg.solve_continuous_lyapunov), its best level ``c* = 2.3044776``
  (computed: REFERENCES.md, polar sweep), the area of the true region
  ``13.72222`` (computed: REFERENCES.md, area inside the limit cycle).
* ``DISC``: in polar coordinates ``dr/dt = -r (1 - r^2)``, ``dtheta/dt = 1``
  (derived by hand: x dx/dt + y dy/dt = -(x^2 + y^2)(1 - x^2 - y^2)); every
  trajectory with r < 1 tends to 0, r = 1 is a periodic orbit, r > 1 grows
  without bound in finite time. The region of attraction is exactly the open
  unit disc, area pi.
* ``STRIP``: ``dx/dt = -x (1 - x^2)`` does not involve y and ``dy/dt = -y``; x tends
  to 0 exactly when |x| < 1 (the scalar equation's equilibria are 0, +-1, and
  the sign of x' is -x on (-1, 1)), y always tends to 0. The region of
  attraction is exactly the strip |x| < 1 (derived by hand).
"""

from __future__ import annotations

import pytest

import proofkit

OSCILLATOR = """\
system reversed_oscillator
state x1, x2
dx1/dt = -x2
dx2/dt = x1 + (x1^2 - 1)*x2
equilibrium origin at x1 = 0, x2 = 0
"""
C_STAR = 2.3044776  # computed (REFERENCES.md)
TRUE_AREA = 13.72222  # computed (REFERENCES.md)

DISC = """\
system disc
state x, y
dx/dt = -x*(1 - x^2 - y^2) - y
dy/dt = x - y*(1 - x^2 - y^2)
equilibrium origin at x = 0, y = 0
"""

STRIP = """\
system strip
state x, y
dx/dt = -x*(1 - x^2)
dy/dt = -y
equilibrium origin at x = 0, y = 0
equilibrium right at x = 1, y = 0
"""


@pytest.fixture(scope="session")
def oscillator() -> proofkit.Model:
    return proofkit.parse(OSCILLATOR, "oscillator.pk")


@pytest.fixture(scope="session")
def oscillator_run(oscillator):
    from proofkit.proofs.basin import estimate_basin

    return estimate_basin(oscillator, "origin", degree=2, seconds_per_degree=3)
