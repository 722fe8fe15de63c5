"""Model texts shared by the interface tests, with where their check values come from."""

from __future__ import annotations

from tests.models import DUFFING

__all__ = [
    "CONVECTION",
    "DUFFING",
    "DUFFING_POINTS",
    "PENDULUM",
    "STRIP",
    "VAN_DER_POL",
    "VDP_PERIOD",
]

# The equilibria of DUFFING (tests/models.py) and their types, computed by hand there.
DUFFING_POINTS = {(-1.0, 0.0): "saddle", (0.0, 0.0): "stable", (1.0, 0.0): "saddle"}

# The van der Pol oscillator, mu = 1 (REFERENCES.md): period 6.6632868593231301897
# (published: Hairer & Wanner, Solving ODE II, reference values); the origin is an
# unstable focus (computed by hand: J = [[0, 1], [-1, 1]], trace 1 > 0, det 1, disc -3).
VAN_DER_POL = """\
system van_der_pol
state x, y
dx/dt = y
dy/dt = (1 - x^2)*y - x
equilibrium rest at x = 0, y = 0
claim rest unstable
"""
VDP_PERIOD = 6.6632868593231301897  # published (Hairer & Wanner)

# The convection loop of REFERENCES.md with rho = 10 (< rho_H = 470/19): the convecting
# equilibria (+-sqrt(24), +-sqrt(24), 9) are stable, the origin is unstable
# (published: Sparrow 1982; Strogatz, section 9.2; beta (rho - 1) = 8/3 * 9 = 24).
CONVECTION = """\
system convection
constant sigma = 10
constant beta = 8/3
parameter rho = 10
state x, y, z
dx/dt = sigma*(y - x)
dy/dt = x*(rho - z) - y
dz/dt = x*y - beta*z
"""

# Two decoupled states: dx/dt = -x + x^3 has equilibria x in {-1, 0, 1} and the region of
# attraction of the origin is the strip |x| < 1 (computed by hand: sign of -x + x^3).
STRIP = """\
system strip
state x, y
dx/dt = -x + x^3
dy/dt = -y
equilibrium origin at x = 0, y = 0
"""

# A damped pendulum with a bounded domain (invented numbers, a classic shape): equilibria at
# th = k pi, w = 0; those at +-pi are saddles (common practice: the inverted pendulum).
PENDULUM = """\
system pendulum
constant g = 981/100
state th, w
dth/dt = w
dw/dt = -g*sin(th) - w/2
domain th^2 <= 16 and w^2 <= 36
"""
