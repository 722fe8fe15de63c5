"""Linearization certificates against outside check values (REFERENCES.md)."""

from __future__ import annotations

import json
from fractions import Fraction

import numpy as np
import scipy.linalg
import sympy as sp

from proofkit.audit.algebra import routh_rows, sign_changes
from proofkit.audit.numbers import Num

from .conftest import companion_text, full_audit_ok, prove_text


def _claim(run, k=0):
    return run.certificate["claims"][k]


def _first_column(entry):
    return [r[0] for r in entry["evidence"]["routh"]["rows"]]


def test_ogata_routh_first_column_and_rhp_count() -> None:
    # published: Ogata, Modern Control Engineering, 4th ed., Example 5-13:
    # s^4 + 2s^3 + 3s^2 + 4s + 5 has first column 1, 2, 1, -6, 5 and two RHP roots.
    rows = routh_rows([Num.of(c) for c in (1, 2, 3, 4, 5)])
    assert rows is not None
    assert [r[0] for r in rows] == [Num.of(c) for c in (1, 2, 1, -6, 5)]
    assert sign_changes([r[0] for r in rows]) == 2
    run = prove_text(companion_text(["2", "3", "4", "5"], "unstable"))
    entry = _claim(run)
    assert run.outcomes[0].status == "proved"
    assert entry["evidence"]["characteristic_polynomial"] == ["1", "2", "3", "4", "5"]
    assert _first_column(entry) == ["1", "2", "1", "-6", "5"]
    assert entry["evidence"]["routh"]["sign_changes"] == 2
    assert full_audit_ok(run.text)


def test_ogata_polynomial_claimed_stable_is_a_counterexample() -> None:
    # published: Ogata Example 5-13 (two RHP roots), so "stable" is false.
    run = prove_text(companion_text(["2", "3", "4", "5"], "stable"))
    assert run.outcomes[0].status == "refuted"
    assert _claim(run)["status"] == "refuted"
    assert full_audit_ok(run.text)


def test_zero_in_first_column_example_is_certified_unstable() -> None:
    # memory: a textbook example (book not confirmed); computed: numpy.roots of
    # s^5 + 2s^4 + 3s^3 + 6s^2 + 5s + 3
    # has a zero in the first column and two right-half-plane roots.
    coeffs = [Num.of(c) for c in (1, 2, 3, 6, 5, 3)]
    assert routh_rows(coeffs) is None  # the plain array hits the special case
    run = prove_text(companion_text(["2", "3", "6", "5", "3"], "unstable"))
    entry = _claim(run)
    assert run.outcomes[0].status == "proved"
    ro = entry["evidence"]["routh"]
    assert (ro["shift"], ro["multiplier_power"]) != ("0", 0)
    if ro["shift"] == "0":  # the (s+1) multiplier keeps the RHP count exactly
        assert ro["sign_changes"] == 2
    # computed: numpy.roots agrees that two roots have positive real part
    assert sum(r.real > 0 for r in np.roots([1, 2, 3, 6, 5, 3])) == 2
    assert full_audit_ok(run.text)


def test_row_of_zeros_example_is_certified_unstable() -> None:
    # memory: a course exercise; computed: sympy.roots gives 2, -2, -1, -4, and
    # s^4 + 5s^3 - 20s - 16 has a row of zeros
    # (auxiliary polynomial 4s^2 - 16) and one RHP root, s = 2.
    run = prove_text(companion_text(["5", "0", "-20", "-16"], "unstable"))
    entry = _claim(run)
    assert run.outcomes[0].status == "proved"
    ro = entry["evidence"]["routh"]
    assert ro["sign_changes"] == 1  # the shifted polynomial keeps exactly the root at s = 2
    shift = Fraction(ro["shift"])
    assert 0 < shift < 2
    assert sp.roots(sp.Poly([1, 5, 0, -20, -16], sp.Symbol("s"))) == {2: 1, -2: 1, -1: 1, -4: 1}
    assert full_audit_ok(run.text)


def test_reversed_oscillator_linearization_and_lyapunov_matrix(reversed_run) -> None:
    # published: Khalil, Nonlinear Systems, 3rd ed., sec. 8.2: A = [[0, -1], [1, -1]],
    # with Q = I the Lyapunov equation gives P = [[3/2, -1/2], [-1/2, 1]].
    entry = _claim(reversed_run)
    ev = entry["evidence"]
    assert reversed_run.outcomes[0].status == "proved"
    assert ev["jacobian"] == [["0", "-1"], ["1", "-1"]]
    assert ev["lyapunov"]["P"] == [["3/2", "-1/2"], ["-1/2", "1"]]
    assert ev["lyapunov"]["Q"] == [["1", "0"], ["0", "1"]]
    # computed: scipy.linalg.solve_continuous_lyapunov(A', -Q) solves A'P + PA = -Q
    a = np.array([[0.0, -1.0], [1.0, -1.0]])
    p_ref = scipy.linalg.solve_continuous_lyapunov(a.T, -np.eye(2))
    p = np.array([[float(Fraction(x)) for x in r] for r in ev["lyapunov"]["P"]])
    assert np.allclose(p, p_ref, atol=1e-12)
    assert full_audit_ok(reversed_run.text)


def test_irrational_equilibria_in_a_quadratic_field(sqrt_run) -> None:
    # computed by hand: dx/dt = x^2 - 2, dy/dt = -y; J(+-sqrt 2) = diag(+-2 sqrt 2, -1).
    plus, minus = sqrt_run.certificate["claims"]
    assert [o.status for o in sqrt_run.outcomes] == ["proved", "proved"]
    assert plus["number_field"] == {"sqrt": "2"}
    assert plus["claim"]["equilibrium"]["point"] == [["0", "1"], "0"]
    assert plus["evidence"]["jacobian"] == [[["0", "2"], "0"], ["0", "-1"]]
    assert minus["evidence"]["jacobian"] == [[["0", "-2"], "0"], ["0", "-1"]]
    # computed by hand: P = diag(1/(4 sqrt 2), 1/2) = diag(sqrt(2)/8, 1/2)
    assert minus["evidence"]["lyapunov"]["P"] == [[["0", "1/8"], "0"], ["0", "1/2"]]
    assert full_audit_ok(sqrt_run.text)


def test_cubic_irrational_point_is_not_proved() -> None:
    # x = cube root of 2 lies outside every quadratic field: the prover must decline.
    text = (
        "state x, y\ndx/dt = x^3 - 2\ndy/dt = -y\n"
        "equilibrium c at x = 2^(1/3), y = 0\nclaim c unstable\n"
    )
    run = prove_text(text)  # the language accepts 2^(1/3); any crash here is a failure
    assert run.outcomes[0].status == "not proved"
    assert "quadratic field" in run.outcomes[0].detail


def test_centre_type_linearization_is_not_proved() -> None:
    # common practice: eigenvalues +-i (dx/dt = y, dy/dt = -x - x^2 y) leave the linear test
    # undecided.
    run = prove_text(
        "state x, y\ndx/dt = y\ndy/dt = -x - x^2*y\nequilibrium o at x = 0, y = 0\n"
        "claim o stable\nclaim o unstable\n"
    )
    # The linear test decides neither claim; a Lyapunov method may still prove "stable"
    # (x'' + x^2 x' + x = 0 is asymptotically stable), never by linearization.
    assert run.outcomes[1].status == "not proved"
    assert "does not decide" in run.outcomes[1].detail
    assert run.outcomes[0].method != "linearization"
    claims = json.loads(run.text)["claims"]
    assert claims[1]["status"] == "not proved"
    assert claims[0]["status"] == "not proved" or claims[0]["method"] != "linearization"


def test_non_polynomial_model_linearization_by_enclosure() -> None:
    # a non-rational field has no polynomial form: it is carried as expression trees and
    # its linearization is proved from interval enclosures the audit recomputes
    run = prove_text(
        "state x, y\ndx/dt = y\ndy/dt = -sin(x) - y\n"
        "equilibrium o at x = 0, y = 0\nclaim o stable\n"
    )
    assert run.outcomes[0].status == "proved"
    assert run.outcomes[0].method == "linearization-enclosure"
    assert run.certificate["model"]["field"] is None
    assert run.certificate["model"]["expressions"]["components"][0] == ["var", 1]
    assert full_audit_ok(run.text)


def test_irrational_parameter_coefficient_is_not_proved() -> None:
    # a coefficient pi is exact but not rational: outside the certificate format for now
    run = prove_text(
        "parameter a = pi\nstate x\ndx/dt = -a*x\nequilibrium o at x = 0\nclaim o stable\n"
    )
    assert run.outcomes[0].status == "not proved"
    assert run.certificate["model"]["field"] is None
    assert "rational" in run.certificate["model"]["field_note"]
    assert full_audit_ok(run.text)
