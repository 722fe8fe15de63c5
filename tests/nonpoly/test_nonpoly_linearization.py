"""Linearization verdicts on rational fields and fields with elementary functions, audited."""

from __future__ import annotations

import json
from fractions import Fraction

import sympy as sp

from .conftest import CULTURE, full_audit_ok, prove_text


def _by_claim(run):
    return {o.claim: o for o in run.outcomes}


def test_culture_linearization_proved_exactly(culture_run) -> None:
    outcomes = _by_claim(culture_run)
    assert outcomes["coexist stable"].status == "proved"
    assert outcomes["washout unstable"].status == "proved"
    assert {o.method for o in culture_run.outcomes} == {"linearization-rational"}
    assert full_audit_ok(culture_run.text)
    cert = json.loads(culture_run.text)
    assert cert["model"]["field"]["denominators"] is not None  # N/D carried, not expanded away
    # computed (sympy, the published chemostat form above): the Jacobian at coexistence
    s, b = sp.symbols("s b")
    f = sp.Matrix([sp.Rational(1, 2) * (4 - s) - s / (1 + s) * b, s / (1 + s) * b - b / 2])
    jac = f.jacobian([s, b]).subs({s: 1, b: 3})
    stated = cert["claims"][0]["evidence"]["jacobian"]
    assert [[sp.Rational(v) for v in row] for row in stated] == jac.tolist()
    # computed by hand from the published form: eigenvalues -D = -1/2 and -b* ks/(ks+s*)^2 = -3/4
    assert sorted(jac.eigenvals()) == [sp.Rational(-3, 4), sp.Rational(-1, 2)]


def test_culture_false_claims_refuted() -> None:
    run = prove_text(
        CULTURE.replace("claim coexist stable", "claim coexist unstable").replace(
            "claim washout unstable", "claim washout stable"
        )
    )
    assert [o.status for o in run.outcomes] == ["refuted", "refuted"]
    assert full_audit_ok(run.text)


def test_swing_stable_point_proved_by_enclosure(swing_run) -> None:
    outcomes = _by_claim(swing_run)
    assert outcomes["op stable"].status == "proved"
    assert outcomes["op stable"].method == "linearization-enclosure"
    assert full_audit_ok(swing_run.text)
    ev = json.loads(swing_run.text)["claims"][0]["evidence"]
    # computed (sympy): J = [[0, 1], [-cos(pi/3), -1/2]] = [[0, 1], [-1/2, -1/2]]
    want = [[0, 1], [-0.5, -0.5]]
    for row, wrow in zip(ev["jacobian"], want, strict=True):
        for (lo, hi), w in zip(row, wrow, strict=True):
            assert Fraction(lo) <= Fraction(w) <= Fraction(hi)
            assert Fraction(hi) - Fraction(lo) <= Fraction(2, 2 ** ev["precision"])
    assert ev["routh_signs"] == [1, 1, 1]


def test_swing_saddle_at_an_exactly_known_point_proved(swing_run) -> None:
    saddle = _by_claim(swing_run)["saddle unstable"]
    assert saddle.status == "proved", saddle.detail
    entry = json.loads(swing_run.text)["claims"][1]
    assert entry["claim"]["equilibrium"]["exact"][0] == ["*", "1/3", ["pi"]]
    ev = entry["evidence"]
    # computed (sympy): J = [[0, 1], [-cos(2 pi/3), -1/2]] = [[0, 1], [1/2, -1/2]]:
    # det(sI - J) = s^2 + s/2 - 1/2, eigenvalues 1/2 and -1 (a saddle)
    (lo, hi) = ev["jacobian"][1][0]
    assert Fraction(lo) <= Fraction(1, 2) <= Fraction(hi)
    assert ev["routh_signs"] == [1, 1, -1]
    lo_box, hi_box = (Fraction(v) for v in ev["box"][0])
    assert lo_box < sp.Rational(1, 3) * sp.pi < hi_box


def test_false_claims_on_elementary_fields_never_proved() -> None:
    # the stable operating point claimed unstable: refuted with the audited evidence
    text = (
        "state x1, x2\ndx1/dt = x2\ndx2/dt = -x2/2 - (sin(x1 + pi/3) - sin(pi/3))\n"
        "equilibrium op at x1 = 0, x2 = 0\nclaim op unstable\n"
    )
    run = prove_text(text)
    assert run.outcomes[0].status == "refuted"
    assert full_audit_ok(run.text)
    # frictionless pendulum (common practice): eigenvalues +-i sqrt(10), a centre of the
    # linearization; "stable" (asymptotic) is false, "unstable" is false: neither is proved
    run = prove_text(
        "state x1, x2\ndx1/dt = x2\ndx2/dt = -10*sin(x1)\n"
        "equilibrium o at x1 = 0, x2 = 0\nclaim o stable\nclaim o unstable\n"
    )
    assert [o.status for o in run.outcomes] == ["not proved", "not proved"]
    assert "undecided" in run.outcomes[1].detail


def test_other_functions_exp_log_sqrt_tanh_tan() -> None:
    # computed by hand: at x = 0, y = 0 the Jacobian is [[-1, 1/2], [-1, -1]] (stable) for
    # dx = tanh(y)/2 - exp(x) + 1, dy = -log(1 + x) - sqrt(4 + y) + 2 - tan(y)/2 ... see below
    text = (
        "state x, y\ndx/dt = tanh(y)/2 - exp(x) + 1\n"
        "dy/dt = -log(1 + x) - 4*(sqrt(4 + y) - 2) - tan(y)\n"
        "equilibrium o at x = 0, y = 0\nclaim o stable\n"
    )
    run = prove_text(text)
    assert run.outcomes[0].status == "proved", run.outcomes[0].detail
    assert full_audit_ok(run.text)
    ev = json.loads(run.text)["claims"][0]["evidence"]
    # computed (sympy): d/dy [-4 sqrt(4+y) - tan y] = -1 - 1 = -2 at 0; d/dx[-log(1+x)] = -1
    want = [[-1, Fraction(1, 2)], [-1, -2]]
    for row, wrow in zip(ev["jacobian"], want, strict=True):
        for (lo, hi), w in zip(row, wrow, strict=True):
            assert Fraction(lo) <= w <= Fraction(hi)


def test_pendulum_with_friction_stable(pendulum_run) -> None:
    assert pendulum_run.outcomes[0].status == "proved"
    assert full_audit_ok(pendulum_run.text)


def test_condition_lost_by_simplification_blocks_the_proof() -> None:
    # exp(log(x)) is written x by the algebra, yet the model is defined only for x > 0;
    # the certificate's trees would not show it, so the claim is not proved (not unsound)
    run = prove_text(
        "state x, y\ndx/dt = -sin(exp(log(x)) - 1)\ndy/dt = -y\n"
        "equilibrium o at x = 1, y = 0\nclaim o stable\n"
    )
    assert run.outcomes[0].status == "not proved"
    assert "x > 0" in run.outcomes[0].detail
