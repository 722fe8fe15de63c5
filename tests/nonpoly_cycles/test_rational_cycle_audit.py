"""The audit of the rational cycle schemas: it builds G = f Q and Q itself and checks Q > 0.

Tampered denominator evidence, a flipped sign, the model's denominators changed under
the evidence, and polynomial cycle evidence for G on a set reaching a pole (with the
positivity part copied from another claim) are all rejected; the audit's G satisfies
G_i D_i = N_i Q exactly (computed: sympy, on random rational fields).
"""

from __future__ import annotations

import copy
import json
from fractions import Fraction

import pytest
import sympy as sp
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from proofkit import parse
from proofkit.audit import audit_certificate
from proofkit.audit._rational_cycles import field_times_denominator
from proofkit.audit.algebra import poly_mul
from proofkit.audit.numbers import Num
from proofkit.audit.schemas import ModelData, Rejected
from proofkit.certificate import model_section
from proofkit.proofs._cycles_search import Planar, dulac_program
from proofkit.proofs._nonpoly_cycles import field_times_denominator as prover_g

from .conftest import STABLE, audit_status

X, Y = sp.symbols("x y", real=True)


def _verdict(cert: dict, k: int):
    return audit_certificate(cert).claims[k]


def _mutations(entry: dict) -> dict[str, dict]:
    """Meaning-changing edits of the denominator part of one claim entry."""
    out = {}
    den = entry["evidence"]["denominator"]
    names = [n for n in den["squares"] if n != "denominator"]
    edits = {
        "gram": lambda d: d["squares"]["denominator"]["gram"][0].__setitem__(0, "1000"),
        "eps": lambda d: d["numbers"].__setitem__("eps", "1000"),
        "eps zero": lambda d: d["numbers"].__setitem__("eps", "0"),
        "sign": lambda d: d.__setitem__("sign", -d["sign"]),
        "multiplier": lambda d: d["multipliers"].__setitem__(names[0], [[[0, 0], "7"]]),
    }
    for name, edit in edits.items():
        bad = copy.deepcopy(entry)
        edit(bad["evidence"]["denominator"])
        out[name] = bad
    gone = copy.deepcopy(entry)
    del gone["evidence"]["denominator"]
    out["missing"] = gone
    return out


@pytest.mark.parametrize("fixture, k", [("stable_run", 0), ("slow_vdp_run", 0)])
def test_tampered_denominator_evidence_rejected(fixture: str, k: int, request) -> None:
    run = request.getfixturevalue(fixture)
    cert = json.loads(run.text)
    assert _verdict(cert, k).status == "proved"
    for name, bad in _mutations(cert["claims"][k]).items():
        changed = copy.deepcopy(cert)
        changed["claims"][k] = bad
        assert audit_status(json.dumps(changed), k) in ("rejected", "format error"), name


def test_denominator_step_is_shown(stable_run) -> None:
    verdict = _verdict(json.loads(stable_run.text), 0)
    assert any("Q >= " in line and "no pole" in line for line in verdict.checked)
    assert verdict.theorem == "bendixson-dulac-rational-field"


def test_changed_denominators_in_the_model_rejected(stable_run) -> None:
    # the audit builds G from the model's field: another denominator, another G
    cert = json.loads(stable_run.text)
    dens = cert["model"]["field"]["denominators"]
    text = json.dumps(dens)
    assert '[[1, 0], "1"]' in text
    cert["model"]["field"]["denominators"] = json.loads(
        text.replace('[[0, 0], "1"]', '[[0, 0], "2"]')
    )
    assert audit_status(json.dumps(cert), 0) in ("rejected", "format error")


def test_dulac_evidence_for_g_on_a_set_through_a_pole_rejected(stable_run) -> None:
    """G = f Q is a polynomial, defined at the pole: a Dulac function for G alone is not
    enough; the positivity part copied from another claim must fail."""
    model = parse(STABLE, "predator_prey_stable.pk")
    g_model, _q = prover_g(model, model_section(model)["field"], 1)
    pole_set = (
        (X + sp.Rational(11, 10), False),
        (-X - sp.Rational(9, 10), False),
        (Y - sp.Rational(3, 10), False),
        (sp.Rational(2, 5) - Y, False),
    )
    field = tuple(sp.expand(e.rhs) for e in g_model.equations)
    found = None
    for degree in (0, 1, 2):
        found = dulac_program(Planar((X, Y), field, pole_set), degree)
        if found.evidence is not None:
            break
    assert found is not None and found.evidence is not None
    cert = json.loads(stable_run.text)
    forged = cert["claims"][2]  # the claim on the box around x = -1 (not proved by the prover)
    assert forged["status"] == "not proved"
    forged.update(
        status="proved",
        method="dulac-rational",
        theorem="bendixson-dulac-rational-field",
        evidence={
            "reparametrized": found.evidence,
            "denominator": copy.deepcopy(cert["claims"][0]["evidence"]["denominator"]),
        },
    )
    forged.pop("reason", None)
    verdict = _verdict(cert, 2)
    assert verdict.status == "rejected"
    assert "denominator" in (verdict.message or "")
    # the G part alone was accepted before the denominator failed
    assert any("div(B f)" in line for line in verdict.checked)


def _sympy_to_poly(p: sp.Expr) -> dict:
    poly = sp.Poly(p, X, Y)
    return {e: Num.of(Fraction(int(c.p), int(c.q))) for e, c in poly.terms() if c != 0}


def _poly_to_sympy(p: dict) -> sp.Expr:
    return sum(
        (sp.Rational(c.a.numerator, c.a.denominator) * X ** e[0] * Y ** e[1] for e, c in p.items()),
        sp.Integer(0),
    )


small = st.integers(-3, 3)
linear = st.tuples(small, small, small).map(lambda c: c[0] + c[1] * X + c[2] * Y)


@settings(max_examples=40, deadline=None)
@given(n1=linear, n2=linear, d1=linear, d2=linear, sign=st.sampled_from([1, -1]))
def test_audit_field_times_denominator_against_sympy(n1, n2, d1, d2, sign) -> None:
    # computed (sympy): G_i D_i = N_i Q with Q = sign * the product of the distinct
    # denominators up to constant factors; every denominator divides Q
    assume(d1 != 0 and d2 != 0 and n1 != 0 and n2 != 0)
    nums = (_sympy_to_poly(n1), _sympy_to_poly(n2))
    dens = (_sympy_to_poly(d1), _sympy_to_poly(d2))
    conditions = tuple((poly_mul(d, d), True) for d in dens)
    model = ModelData(("x", "y"), (), ("x", "y"), nums, dens, conditions, None)
    view, q = field_times_denominator(model, sign)
    qs = _poly_to_sympy(q)
    for g, n, d in zip(view.numerators or (), (n1, n2), (d1, d2), strict=True):
        assert sp.expand(_poly_to_sympy(g) * d - n * qs) == 0
    assert sp.degree(qs, X) + sp.degree(qs, Y) <= 4
    if sp.simplify(d1 / d2).is_number:  # proportional denominators count once
        assert sp.Poly(qs, X, Y).total_degree() == sp.Poly(d1, X, Y).total_degree()


def test_a_condition_that_is_not_a_denominator_rejected() -> None:
    one, x = {(0, 0): Num.of(1)}, {(1, 0): Num.of(1)}
    den = {(1, 0): Num.of(1), (0, 0): Num.of(1)}
    model = ModelData(
        ("x", "y"), (), ("x", "y"), (x, x), (den, den), ((poly_mul(x, x), True),), None
    )
    with pytest.raises(Rejected, match="not a nonzero denominator"):
        field_times_denominator(model, 1)
    fine = ModelData(
        ("x", "y"), (), ("x", "y"), (x, one), (den, den), ((poly_mul(den, den), True),), None
    )
    view, q = field_times_denominator(fine, 1)
    assert q == den and view.numerators == (x, one)
