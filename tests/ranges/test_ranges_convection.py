"""The convection loop with an uncertain heating number rho: proved, refuted, not proved.

Reference (published): Sparrow, The Lorenz Equations (1982); Strogatz, Nonlinear
Dynamics and Chaos, section 9.2: with sigma = 10, beta = 8/3 the convecting
equilibria (+-sqrt(beta (rho - 1)), +-sqrt(beta (rho - 1)), rho - 1) are stable
exactly for 1 < rho < rho_H = sigma (sigma + beta + 3)/(sigma - beta - 1) = 470/19.
Derived here as well (computed, sympy): the characteristic polynomial is
s^3 + (sigma + beta + 1) s^2 + beta (sigma + rho) s + 2 sigma beta (rho - 1); its
Routh array's only sign-changing first-column entry is Delta_2 = a1 a2 - a3, which is
zero exactly at rho = 470/19.
"""

from __future__ import annotations

import json
from fractions import Fraction

import numpy as np
import sympy as sp

from .helpers import RHO, certify, convection, reaudit

RHO_H = Fraction(470, 19)  # published (Sparrow 1982; Strogatz 9.2)


def test_hopf_value_from_the_routh_conditions() -> None:
    # computed: sympy, from the characteristic polynomial stated in REFERENCES.md
    sigma, beta = 10, sp.Rational(8, 3)
    a1, a2, a3 = sigma + beta + 1, beta * (sigma + RHO), 2 * sigma * beta * (RHO - 1)
    delta2 = sp.expand(a1 * a2 - a3)
    assert sp.solve(delta2, RHO) == [sp.Rational(470, 19)]
    _, attempts, _ = certify(convection(2, 20))
    cp = attempts[0].entry["evidence"]["characteristic_polynomial"]
    assert cp == [
        [[[0, 0], "1"]],
        [[[0, 0], "41/3"]],
        [[[1, 0], "8/3"], [[0, 0], "80/3"]],
        [[[1, 0], "160/3"], [[0, 0], "-160/3"]],
    ]  # the radical cancels: no sqrt_g term is left


def test_range_wholly_below_is_proved_and_audits() -> None:
    text, attempts, verdicts = certify(
        convection(2, 20, claims=[("stable", "cp"), ("stable", "cm")])
    )
    assert [v.status for v in verdicts] == ["proved", "proved"]
    assert "rho in [2, 20]" in verdicts[0].sentence
    margin = attempts[0].entry["evidence"]["margins"][0]
    hi = Fraction(margin["range"][1])
    assert hi <= RHO_H and RHO_H - hi < Fraction(1, 100)  # bisection comes close to 470/19
    lo = Fraction(margin["range"][0])
    assert 1 < lo < Fraction(11, 10)  # and to rho = 1, where the point meets the origin
    assert json.loads(text)["proofkit_certificate"] == 2


def test_range_crossing_is_refuted_above_the_hopf_value() -> None:
    _, attempts, verdicts = certify(convection(20, 30))
    assert verdicts[0].status == "refuted"
    value = Fraction(attempts[0].entry["evidence"]["parameters"]["rho"])
    assert value == 25  # the simplest value in the failing part: "it breaks at rho = 25"
    assert RHO_H < value <= 30
    assert f"rho = {value}" in attempts[0].detail
    # computed: numpy eigenvalues of the Jacobian at that value have a positive real part
    r = float(value)
    x = np.sqrt(8 / 3 * (r - 1))
    jac = np.array([[-10, 10, 0], [r - (r - 1), -1, -x], [x, x, -8 / 3]])
    assert max(np.linalg.eigvals(jac).real) > 0


def test_range_touching_is_not_proved() -> None:
    _, attempts, verdicts = certify(convection(10, Fraction(470, 19)))
    assert verdicts[0].status == "not proved"
    assert "imaginary axis" in attempts[0].entry["reason"]


def test_range_down_to_one_is_not_proved() -> None:
    # at rho = 1 the convecting point meets the origin: a zero root, nothing decided
    _, _, verdicts = certify(convection(1, 10))
    assert verdicts[0].status == "not proved"


def test_origin_unstable_for_every_rho_above_one() -> None:
    # computed by hand: at the origin det(sI - J) = (s + 8/3)(s^2 + 11 s + 10 - 10 rho), whose
    # constant term 80/3 (1 - rho) is negative for rho > 1: a positive real root
    _, attempts, verdicts = certify(convection(2, 30, claims=[("unstable", "origin")]))
    assert verdicts[0].status == "proved"
    assert attempts[0].entry["evidence"]["cover"][0]["signs"][-1] == -1


def test_mutated_certificates_are_rejected() -> None:
    text, _, verdicts = certify(convection(2, 20))
    assert verdicts[0].status == "proved"
    base = json.loads(text)

    def mutate(fn) -> str:
        cert = json.loads(json.dumps(base))
        fn(cert["claims"][0])
        return reaudit(cert)[0].status

    def widen(c):  # a changed bound: the sub-box no longer lies in the range
        c["evidence"]["cover"][0]["box"][0][1] = "21"

    def shrink(c):  # a sub-box that no longer reaches the end of the range
        c["evidence"]["cover"][0]["box"][0][1] = "19"

    def radical(c):
        c["claim"]["equilibrium"]["moving"]["radicand"] = [[[1], "3"], [[0], "-3"]]

    def margin(c):
        c["evidence"]["margins"][0]["range"][1] = "25"
        c["evidence"]["margins"][0]["cover"][-1]["box"][0][1] = "25"

    def sign(c):
        c["evidence"]["cover"][0]["signs"][1] = 0

    for fn in (widen, shrink, radical, margin, sign):
        assert mutate(fn) == "rejected", fn.__name__


def test_refutation_mutations_are_rejected() -> None:
    text, _, verdicts = certify(convection(20, 30))
    assert verdicts[0].status == "refuted"
    base = json.loads(text)

    def check(fn) -> str:
        cert = json.loads(json.dumps(base))
        fn(cert["claims"][0]["evidence"])
        return reaudit(cert)[0].status

    def outside(ev):  # a value outside the range
        ev["parameters"]["rho"] = "31"

    def below(ev):  # a value where the loop is stable: the stated array no longer matches
        ev["parameters"]["rho"] = "20"

    def radical(ev):
        ev["radical"] = "1"

    for fn in (outside, below, radical):
        assert check(fn) == "rejected", fn.__name__
