"""Recasting tanh saturations: T = tanh(delta), dT/dt = (1 - T^2) D, sector bounds.

Check values and their sources are written beside each check.
"""

from __future__ import annotations

import copy
from fractions import Fraction

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import proofkit
from proofkit.audit import audit_certificate
from proofkit.certificate import model_section, new_certificate
from proofkit.proofs import prove_model
from proofkit.proofs.recast import attempt

SATURATED = """system saturated
state x, v
dx/dt = v
dv/dt = -tanh(2*x) - v
equilibrium rest at x = 0, v = 0
claim rest attracts x^2 + v^2 <= 1/4
"""

# x = 2 tanh(x) has the roots 0 and +-1.9150 (computed: scipy brentq on [1, 3]); the
# origin is stable (J21 = 1 - 2 = -1), the other two are saddles.
TWO_WELLS = """system two_wells
state x, v
dx/dt = v
dv/dt = -v + x - 2*tanh(x)
equilibrium rest at x = 0, v = 0
claim rest attracts x^2 + v^2 <= 4
"""


@pytest.fixture(scope="module")
def saturated():
    model = proofkit.parse(SATURATED, "saturated.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["status"] == "proved", found
    return model, found.entry


def test_tanh_sector_bounds_hold_for_every_argument() -> None:
    # computed (numpy): the inequalities the audit derives for T = tanh(delta)
    d = np.linspace(-30.0, 30.0, 200_001)
    t = np.tanh(d)
    assert np.all(d * t - t * t >= -1e-15)
    assert np.all(d * t - d**2 + d**4 / 3 >= -1e-12)


def test_saturated_oscillator_basin_is_audited_and_agrees_with_simulation(saturated) -> None:
    model, entry = saturated
    report = audit_certificate(new_certificate(model_section(model), [entry]))
    assert report.claims[0].status == "proved", report.claims[0].message
    # computed (scipy solve_ivp, rtol 1e-9): starts on the claim's circle converge
    for th in np.linspace(0, 2 * np.pi, 12, endpoint=False):
        sol = solve_ivp(
            lambda _t, z: [z[1], -np.tanh(2 * z[0]) - z[1]],
            (0, 40),
            [0.5 * np.cos(th), 0.5 * np.sin(th)],
            rtol=1e-9,
            atol=1e-12,
        )
        assert np.hypot(*sol.y[:, -1]) < 1e-5


def test_changed_lyapunov_coefficient_is_rejected(saturated) -> None:
    model, entry = saturated
    bad = copy.deepcopy(entry)
    exps, coef = bad["evidence"]["V"][0]
    bad["evidence"]["V"][0] = [exps, str(2 * Fraction(coef) + 1)]
    report = audit_certificate(new_certificate(model_section(model), [bad]))
    assert report.claims[0].status == "rejected"


def test_a_set_holding_a_saddle_is_never_proved() -> None:
    run = prove_model(proofkit.parse(TWO_WELLS, "two_wells.pk"))
    assert run.outcomes[0].status != "proved"
