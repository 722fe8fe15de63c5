"""Cycle claims on rational fields: proved when true, never when false or when a pole interferes.

The facts and their sources are listed in conftest.py (predator-prey with a saturating
response, the slowed van der Pol oscillator, Strogatz's Dulac example run backwards).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
import sympy as sp
from scipy.integrate import solve_ivp

from .conftest import BACKWARDS, audit_status, predator_prey, prove_text


def _field(k: float):
    def f(_t: float, z: np.ndarray) -> list[float]:
        x, y = z
        return [x * (1 - x / k) - x * y / (1 + x), y * (2 * x / (1 + x) - 1)]

    return f


def test_hump_criterion() -> None:
    # computed (sympy): trace of the Jacobian at the coexistence point, J22 = 0 there
    x, y, k = sp.symbols("x y K", positive=True)
    f1 = x * (1 - x / k) - x * y / (1 + x)
    f2 = y * (2 * x / (1 + x) - 1)
    at = {x: 1, y: (1 - 1 / k) * 2}
    trace = sp.simplify((sp.diff(f1, x) + sp.diff(f2, y)).subs(at))
    assert sp.simplify(trace - (k - 3) / (2 * k)) == 0  # x*(K - 1 - 2x*)/(K(1 + x*)), x* = 1
    assert trace.subs(k, 2) < 0 < trace.subs(k, 4)


def test_simulations_agree_with_the_facts() -> None:
    # computed (scipy solve_ivp, rtol 1e-9): K = 2 converges to (1, 1); K = 4 keeps
    # oscillating through the box of the false claim, outside the small disc
    ok = solve_ivp(_field(2.0), (0, 200), [2.5, 0.3], rtol=1e-9, atol=1e-12)
    assert np.hypot(ok.y[0, -1] - 1, ok.y[1, -1] - 1) < 1e-4
    osc = solve_ivp(_field(4.0), (0, 300), [1.1, 1.5], rtol=1e-9, atol=1e-12, max_step=0.05)
    late = osc.y[:, osc.t > 200]
    assert late[0].min() > 1 / 20 and late[0].max() < 4 and late[1].max() < 4
    assert late[0].max() - late[0].min() > 2  # a sustained oscillation
    assert np.hypot(late[0] - 1, late[1] - 1.5).min() > 1 / 4  # it avoids the small disc


def test_no_cycle_proved_where_the_point_is_stable(stable_run) -> None:
    big, off, _pole = stable_run.outcomes
    assert big.status == "proved" and big.method == "dulac-rational", big.detail
    assert off.status == "proved" and off.method in ("dulac-rational", "no-equilibrium-rational")
    assert "Q = x + 1 > 0" in big.detail
    assert stable_run.audit.claims[0].status == "proved"
    assert stable_run.provenance.ok


def test_a_set_reaching_a_pole_is_never_proved(stable_run) -> None:
    pole = stable_run.outcomes[2]
    assert pole.status == "not proved"
    assert "reaches a pole" in pole.detail


def test_false_claims_never_proved_when_a_cycle_exists(cycling_run) -> None:
    small, big, cycle = cycling_run.outcomes
    # the unstable focus: div(G) != 0 near it, so the small disc is cycle free (Bendixson)
    assert small.status == "proved" and small.method == "dulac-rational", small.detail
    # the box holds the limit cycle (Cheng 1981; simulation above): never proved
    assert big.status == "not proved"
    assert "periodic orbit" in big.detail
    # the small disc holds no cycle (the cycle avoids it): never proved
    assert cycle.status == "not proved"


def test_slowed_van_der_pol_cycle_proved(slow_vdp_run) -> None:
    cycle, quiet = slow_vdp_run.outcomes
    assert cycle.status == "proved" and cycle.method == "annulus-rational", cycle.detail
    assert quiet.status == "proved" and quiet.method == "dulac-rational"
    assert {v.status for v in slow_vdp_run.audit.claims} == {"proved"}
    assert slow_vdp_run.provenance.ok


def test_negative_denominator_is_turned_positive() -> None:
    run = prove_text(BACKWARDS, "backwards.pk")
    outcome = run.outcomes[0]
    assert outcome.status == "proved" and outcome.method == "dulac-rational", outcome.detail
    ev = json.loads(run.text)["claims"][0]["evidence"]
    assert ev["denominator"]["sign"] == -1  # Q = -(x - 3) = 3 - x > 0 on the disc


@pytest.mark.parametrize("fixture", ["stable_run", "cycling_run", "slow_vdp_run"])
def test_every_certificate_audits(fixture: str, request) -> None:
    run = request.getfixturevalue(fixture)
    assert run.audit.accepted
    for k, outcome in enumerate(run.outcomes):
        expected = "proved" if outcome.status == "proved" else "not proved"
        assert audit_status(run.text, k) == expected


def test_claims_over_parameter_ranges_say_why() -> None:
    text = (
        "system ranged\nstate x, y\nparameter k = 3/2 in [1, 2]\n"
        "dx/dt = -k*x/(1 + y^2) + y\ndy/dt = -y - x\n"
        "claim no cycle in x^2 + y^2 <= 1\n"
        "claim cycle in x^2 + y^2 <= 1\n"
    )
    run = prove_text(text, "ranged.pk")
    for outcome in run.outcomes:
        assert outcome.status == "not proved"
        assert "nominal parameter values only" in outcome.detail
    assert run.audit.accepted


@pytest.mark.slow
def test_predator_prey_limit_cycle_proved_left_of_the_hump() -> None:
    # K = 7/2: x* = 1 < (K - 1)/2 = 5/4, so the point is unstable and one limit cycle
    # surrounds it (memory: Cheng 1981; computed: proofkit orbit and scipy, above for K = 4)
    text = predator_prey(
        "7/2", "10/7", "claim cycle in x >= 1/100 and y >= 1/100 and x <= 6 and y <= 6\n"
    )
    run = prove_text(text, "predator_prey_cycle.pk")
    outcome = run.outcomes[0]
    assert outcome.status == "proved" and outcome.method == "annulus-rational", outcome.detail
    assert run.audit.claims[0].status == "proved" and run.provenance.ok
