"""No periodic orbit in a set, for sin/cos fields, by a Dulac function in recast variables.

Facts used:
- damped pendulum x' = y, y' = -sin x - y/2: div f = -1/2 < 0 everywhere (computed by hand),
  so by Bendixson's criterion no periodic orbit lies in any simply connected set;
- Strogatz's Dulac example with the x-terms replaced, x' = y, y' = h(x) - y + y^2 (published:
  Strogatz, Nonlinear Dynamics and Chaos, section 7.2, for h(x) = -x + x^2): with B = exp(-2x),
  div(B f) = -exp(-2x) whatever h is (computed by hand: -2 B y + B (-1 + 2y) = -B), so for
  h(x) = -sin x + sin(x)^2 no periodic orbit exists at all;
- x' = y, y' = -sin x + (1 - x^2) y (a van der Pol damping with a sine restoring force):
  computed (scipy solve_ivp, rtol 1e-9): a trajectory started near the origin settles on an
  oscillation with |x| up to about 2, inside x^2 + y^2 <= 16 and outside x^2 + y^2 <= 1/4;
  div f = 1 - x^2 >= 3/4 on the small disc (computed by hand: Bendixson there).
The audit's chain-rule divergence is compared with sympy's derivative of B(z(x)) f(x).
"""

from __future__ import annotations

import copy
import json
import math
from fractions import Fraction

import numpy as np
import pytest
import sympy as sp
from scipy.integrate import solve_ivp

import proofkit
from proofkit.audit._recast_cycles import atom_rules, recast_divergence
from proofkit.audit._recast_field import derive
from proofkit.audit.enclosures import read_expressions
from proofkit.audit.numbers import Num
from proofkit.certificate import model_section

from .conftest import audit_status, prove_text

PENDULUM = """system damped_pendulum
state x, y
dx/dt = y
dy/dt = -sin(x) - y/2
equilibrium down at x = 0, y = 0
claim no cycle in x^2 + y^2 <= 4
claim no cycle in x >= -10 and x <= 10
"""

SINE_DULAC = """system strogatz_sine
state x, y
dx/dt = y
dy/dt = -sin(x) + sin(x)^2 - y + y^2
claim no cycle in x^2 + y^2 <= 9/25
"""

SINE_VDP = """system sine_van_der_pol
state x, y
dx/dt = y
dy/dt = -sin(x) + (1 - x^2)*y
claim no cycle in x^2 + y^2 <= 1/4
claim no cycle in x^2 + y^2 <= 16
claim cycle in x^2 + y^2 <= 16
"""


@pytest.fixture(scope="module")
def pendulum_run():
    return prove_text(PENDULUM, "damped_pendulum.pk")


@pytest.fixture(scope="module")
def sine_run():
    return prove_text(SINE_DULAC, "strogatz_sine.pk")


def test_damped_pendulum_has_no_cycle(pendulum_run) -> None:
    for outcome in pendulum_run.outcomes:
        assert outcome.status == "proved" and outcome.method == "dulac-recast", outcome.detail
    assert pendulum_run.audit.accepted and pendulum_run.provenance.ok


def test_sine_dulac_example_proved_and_audited(sine_run) -> None:
    outcome = sine_run.outcomes[0]
    assert outcome.status == "proved" and outcome.method == "dulac-recast", outcome.detail
    assert audit_status(sine_run.text) == "proved"
    verdict = sine_run.audit.claims[0]
    assert verdict.theorem == "bendixson-dulac-recast"
    assert any("chain rule" in line for line in verdict.checked)


def test_false_and_true_claims_with_a_cycle() -> None:
    # computed (scipy solve_ivp): the oscillation exists and lies in the big disc only
    sol = solve_ivp(
        lambda _t, z: [z[1], -math.sin(z[0]) + (1 - z[0] ** 2) * z[1]],
        (0, 100),
        [0.1, 0.0],
        rtol=1e-9,
        atol=1e-12,
        max_step=0.05,
    )
    late = sol.y[:, sol.t > 60]
    radius = np.hypot(late[0], late[1])
    assert radius.max() < 4 and radius.min() > 1 / 2 and np.abs(late[0]).max() > 1.5
    run = prove_text(SINE_VDP, "sine_vdp.pk")
    small, big, cycle = run.outcomes
    assert small.status == "proved" and small.method == "dulac-recast"
    assert big.status == "not proved"
    assert cycle.status == "not proved" and "polynomial and rational" in cycle.detail
    assert run.audit.accepted


SWING = """system swing
state x1, x2
dx1/dt = x2
dx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))
equilibrium op at x1 = 0, x2 = 0
claim no cycle in x1^2 + x2^2 <= 4
"""


def test_swing_equation_constants_in_q_sqrt_3() -> None:
    # computed by hand: div f = -1/2, so Bendixson (a constant B) at both ends of the
    # enclosure of sqrt 3 (sin(pi/3) = sqrt(3)/2 enters the field)
    run = prove_text(SWING, "swing.pk")
    outcome = run.outcomes[0]
    assert outcome.status == "proved" and outcome.method == "dulac-recast", outcome.detail
    cert = json.loads(run.text)
    ev = cert["claims"][0]["evidence"]
    lo, hi = (Fraction(v) for v in ev["recast"]["enclosure"])
    assert lo * lo <= 3 <= hi * hi and {"divergence lo", "divergence hi"} <= set(ev["squares"])
    assert audit_status(run.text) == "proved"
    ev["recast"]["enclosure"] = [str(hi), str(hi + 1)]  # no longer encloses sqrt 3
    assert audit_status(json.dumps(cert)) == "rejected"


def _mutated(cert: dict) -> dict[str, dict]:
    ev = cert["claims"][0]["evidence"]
    out = {}
    edits = {
        "B": lambda e: e["B"].append([[0, 0, 2, 0], "5"]),
        "eps": lambda e: e["numbers"].__setitem__("eps", "2"),
        "origin": lambda e: e.__setitem__("origin", ["1", "0"]),
        "circle": lambda e: e["free"].pop("divergence * circle 1"),
        "order": lambda e: e["recast"].__setitem__("taylor_order", 9),
        "extra": lambda e: e["free"].__setitem__("divergence * circle 7", [[[0, 0, 0, 0], "1"]]),
    }
    for name, edit in edits.items():
        bad = copy.deepcopy(cert)
        edit(bad["claims"][0]["evidence"])
        out[name] = bad
    assert "divergence * circle 1" in ev["free"]
    return out


def test_mutated_recast_dulac_rejected(sine_run) -> None:
    cert = json.loads(sine_run.text)
    for name, bad in _mutated(cert).items():
        assert audit_status(json.dumps(bad)) in ("rejected", "format error"), name
    nonconvex = copy.deepcopy(cert)
    nonconvex["claims"][0]["claim"]["set"][0]["g"] = [[[2, 0], "1"], [[0, 0], "-1"]]
    assert audit_status(json.dumps(nonconvex)) in ("rejected", "format error")


X, Y = sp.symbols("x y", real=True)
# (model text, recast names, the recast variables as functions of (x, y), the field)
CHAINS = {
    "trig": (
        "dx/dt = y + sin(x + y)*y\ndy/dt = -sin(x + y) - y/2 + (cos(x + y) - 1)*x\n",
        ("y1", "y2", "S1", "C1"),
        (X, Y, sp.sin(X + Y), sp.cos(X + Y) - 1),
        (Y + sp.sin(X + Y) * Y, -sp.sin(X + Y) - Y / 2 + (sp.cos(X + Y) - 1) * X),
    ),
    "exp tanh": (
        "dx/dt = y + (exp(x) - 1)*y\ndy/dt = -tanh(x - y) - y/2\n",
        ("y1", "y2", "E1", "T1"),
        (X, Y, sp.exp(X) - 1, sp.tanh(X - Y)),
        (Y + (sp.exp(X) - 1) * Y, -sp.tanh(X - Y) - Y / 2),
    ),
}


@pytest.mark.parametrize("case", sorted(CHAINS))
def test_chain_rule_divergence_against_sympy(case: str) -> None:
    # computed (sympy): div(B(z(x)) f(x)) by symbolic differentiation, compared at points
    text, names, z, f = CHAINS[case]
    model = proofkit.parse("system chain\nstate x, y\n" + text, "chain.pk")
    section = model_section(model)
    exprs = read_expressions(section["expressions"], section["states"], [])
    point = [Num.of(0), Num.of(0)]
    rc = derive(exprs, point, [], {"taylor_order": 0, "enclosure": None}, "test")
    assert rc.names == names
    b_terms = {(0, 0, 0, 0): 1, (1, 0, 1, 0): 2, (0, 1, 0, 1): -3, (0, 0, 2, 0): 1, (0, 1, 1, 0): 5}
    b = {e: Num.of(c) for e, c in b_terms.items()}
    div = recast_divergence(rc, atom_rules(exprs, point, [], rc), b)
    bx = sum(c * sp.Mul(*[v**k for v, k in zip(z, e, strict=True)]) for e, c in b_terms.items())
    truth = sp.lambdify((X, Y), sp.diff(bx * f[0], X) + sp.diff(bx * f[1], Y))
    zf = sp.lambdify((X, Y), z)
    for px, py in [(1 / 3, -2 / 5), (-7 / 4, 3 / 2), (2.0, 1.0)]:
        zx = zf(px, py)
        value = sum(
            float(c.a) * math.prod(float(v) ** k for v, k in zip(zx, e, strict=True))
            for e, c in div.items()
        )
        assert value == pytest.approx(truth(px, py), rel=1e-11, abs=1e-11)
