"""Hand-written certificates: true ones audit, false ones are rejected at the right step."""

from __future__ import annotations

import copy

import pytest
import sympy as sp

from proofkit.audit import FormatError, audit_certificate
from proofkit.certificate import dumps, new_certificate, nonnegative_entry, sos_evidence

from .conftest import full_audit_ok

X, Y = sp.symbols("x y", real=True)
X1, X2 = sp.symbols("x1 x2", real=True)


def _sos_certificate(p, variables, basis, gram) -> dict:
    entry = nonnegative_entry(
        "p >= 0 for all real " + ", ".join(map(str, variables)),
        "proved",
        method="sum-of-squares",
        theorem="sum-of-squares",
        number_field=None,
        evidence=sos_evidence(p, variables, basis, sp.Matrix(gram)),
    )
    return new_certificate(None, [entry])


def parrilo_lecture_certificate() -> dict:
    # published: MIT 6.972 lecture notes (Parrilo):
    # x1^2 - x1 x2^2 + x2^4 + 1 = 3/4 (x1 - x2^2)^2 + 1/4 (x1 + x2^2)^2 + 1,
    # i.e. basis (1, x1, x2^2) with Gram [[1, 0, 0], [0, 1, -1/2], [0, -1/2, 1]].
    p = X1**2 - X1 * X2**2 + X2**4 + 1
    half = sp.Rational(1, 2)
    return _sos_certificate(
        p, [X1, X2], [sp.Integer(1), X1, X2**2], [[1, 0, 0], [0, 1, -half], [0, -half, 1]]
    )


def gram_from_squares(squares, variables):
    """Basis and Gram matrix of sum w_i q_i^2 (exact, sympy)."""
    polys = [sp.Poly(q, *variables) for _, q in squares]
    monoms = sorted({m for pq in polys for m in pq.monoms()}, reverse=True)
    basis = [sp.Mul(*[v**e for v, e in zip(variables, m, strict=True)]) for m in monoms]
    gram = sp.zeros(len(basis), len(basis))
    for (w, _), pq in zip(squares, polys, strict=True):
        c = sp.Matrix([pq.coeff_monomial(m) for m in monoms])
        gram += w * c * c.T
    return basis, gram


def motzkin_times_certificate() -> dict:
    # memory: attributed to Parrilo's thesis (2000), not confirmed from the text;
    # computed (sympy expansion, tests/sos/test_sos_references.py): (x^2 + y^2 + 1) * Motzkin is
    # (x^2 y - y)^2 + (x y^2 - x)^2 + (x^2 y^2 - 1)^2 + 1/4 (x y^3 - x^3 y)^2
    # + 3/4 (x y^3 + x^3 y - 2 x y)^2; the identity itself is verified exactly here.
    motzkin = X**4 * Y**2 + X**2 * Y**4 - 3 * X**2 * Y**2 + 1
    squares = [
        (1, X**2 * Y - Y),
        (1, X * Y**2 - X),
        (1, X**2 * Y**2 - 1),
        (sp.Rational(1, 4), X * Y**3 - X**3 * Y),
        (sp.Rational(3, 4), X * Y**3 + X**3 * Y - 2 * X * Y),
    ]
    basis, gram = gram_from_squares(squares, [X, Y])
    return _sos_certificate(sp.expand((X**2 + Y**2 + 1) * motzkin), [X, Y], basis, gram)


def _verdict(cert):
    return audit_certificate(cert).claims[0]


def test_published_sos_identities_audit() -> None:
    for cert in (parrilo_lecture_certificate(), motzkin_times_certificate()):
        v = _verdict(cert)
        assert v.status == "proved", v.message
        assert full_audit_ok(dumps(cert))


def test_non_psd_gram_matrix_is_rejected() -> None:
    # common practice: x^2 + 4xy + y^2 is indefinite (negative at (1, -1)); the Gram
    # matrix [[1, 2], [2, 1]] makes the identity hold but has a negative eigenvalue.
    cert = _sos_certificate(X**2 + 4 * X * Y + Y**2, [X, Y], [X, Y], [[1, 2], [2, 1]])
    v = _verdict(cert)
    assert v.status == "rejected" and v.failed_step == "squares"
    assert "negative pivot" in (v.message or "")


def test_zero_diagonal_with_nonzero_column_is_rejected() -> None:
    # [[0, 1], [1, 1]] has determinant -1: not PSD although no diagonal entry is negative.
    cert = _sos_certificate(2 * X * Y + Y**2, [X, Y], [X, Y], [[0, 1], [1, 1]])
    v = _verdict(cert)
    assert v.status == "rejected" and "zero pivot" in (v.message or "")


def test_identity_off_by_one_coefficient_is_rejected() -> None:
    cert = parrilo_lecture_certificate()
    p = cert["claims"][0]["evidence"]["p"]
    for term in p:
        if term[0] == [0, 0]:
            term[1] = "2"  # x1^2 - x1 x2^2 + x2^4 + 2 is not the stated Gram form
    v = _verdict(cert)
    assert v.status == "rejected" and v.failed_step == "squares"


def test_unstable_routh_array_claimed_stable_is_rejected(bistable_run) -> None:
    cert = copy.deepcopy(bistable_run.certificate)
    saddle = cert["claims"][1]
    saddle["claim"]["kind"] = "stable"
    saddle["theorem"] = "indirect-method-stability"
    v = audit_certificate(cert).claims[1]
    assert v.status == "rejected" and v.failed_step == "theorem"


def test_lyapunov_matrix_not_positive_definite_is_rejected(bistable_run) -> None:
    cert = copy.deepcopy(bistable_run.certificate)
    lyap = cert["claims"][0]["evidence"]["lyapunov"]
    neg = {"1": "-1", "0": "0"}
    lyap["Q"] = [[neg.get(x, x) for x in r] for r in lyap["Q"]]
    lyap["P"] = [
        [x[1:] if x.startswith("-") else ("-" + x if x != "0" else x) for x in r] for r in lyap["P"]
    ]
    v = audit_certificate(cert).claims[0]  # A'(-P) + (-P)A = -(-Q) holds, but -P < 0
    assert v.status == "rejected" and v.failed_step == "lyapunov"


def test_point_that_is_not_an_equilibrium_is_rejected(bistable_run) -> None:
    cert = copy.deepcopy(bistable_run.certificate)
    cert["claims"][0]["claim"]["equilibrium"]["point"] = ["1/2", "0"]
    v = audit_certificate(cert).claims[0]
    assert v.status == "rejected" and v.failed_step == "equilibrium"


def test_wrong_theorem_name_is_rejected(bistable_run) -> None:
    cert = copy.deepcopy(bistable_run.certificate)
    cert["claims"][0]["theorem"] = "sum-of-squares"
    assert audit_certificate(cert).claims[0].status == "rejected"


@pytest.mark.parametrize("bad", ["0.5", "2/4", "-0", "1/0", "+3", " 1", 1.5, None])
def test_inexact_or_non_canonical_numbers_are_malformed(bistable_run, bad) -> None:
    cert = copy.deepcopy(bistable_run.certificate)
    cert["claims"][0]["evidence"]["jacobian"][0][0] = bad
    with pytest.raises(FormatError):
        audit_certificate(cert)


def test_not_proved_claim_with_evidence_is_malformed(bistable_run) -> None:
    cert = copy.deepcopy(bistable_run.certificate)
    cert["claims"][0]["status"] = "not proved"
    cert["claims"][0]["reason"] = "x"
    with pytest.raises(FormatError):
        audit_certificate(cert)


def test_polynomial_certificate_without_model_has_no_system_claims() -> None:
    from proofkit.provenance import check_provenance

    cert = parrilo_lecture_certificate()
    cert["claims"][0]["claim"]["kind"] = "stable"
    assert not check_provenance(cert).ok
    with pytest.raises(FormatError):
        audit_certificate(cert)


@pytest.mark.parametrize(
    "where",
    [
        (),
        ("claims", 0),
        ("claims", 0, "evidence"),
        ("claims", 0, "claim"),
        ("claims", 0, "claim", "equilibrium"),
        ("claims", 0, "evidence", "routh"),
        ("claims", 0, "evidence", "lyapunov"),
        ("model",),
    ],
)
def test_unknown_fields_are_refused(bistable_run, where) -> None:
    # a field the audit does not check must not carry a number a reader would rely on
    cert = copy.deepcopy(bistable_run.certificate)
    obj = cert
    for k in where:
        obj = obj[k]
    obj["margin"] = "1/2"
    with pytest.raises(FormatError):
        audit_certificate(cert)


def test_derived_polynomial_names_cannot_be_stated() -> None:
    # targets such as lie(V) are computed by the audit's schema from the vector field;
    # a certificate must not be able to supply its own value under any name.
    cert = parrilo_lecture_certificate()
    ev = cert["claims"][0]["evidence"]
    ev["lie(p)"] = ev["p"]
    with pytest.raises(FormatError):
        audit_certificate(cert)
    cert = parrilo_lecture_certificate()
    squares = cert["claims"][0]["evidence"]["squares"]
    squares["lie(p)"] = squares["p"]  # an obligation the theorem does not have
    v = audit_certificate(cert).claims[0]
    assert v.status == "rejected" and "not hypotheses" in (v.message or "")


def test_lie_derivative_identity_is_recomputed_from_the_vector_field(reversed_run) -> None:
    # computed (REFERENCES.md): for V = x'Px with P = [[3/2, -1/2], [-1/2, 1]] on the
    # reversed-time oscillator, Vdot = -(x1^2 + x2^2) - x1^3 x2 + 2 x1^2 x2^2.
    from proofkit.audit.core import _model
    from proofkit.audit.lyapunov import lie_derivative
    from proofkit.audit.read import read_poly
    from proofkit.audit.schemas import nominal_field

    field = nominal_field(_model(reversed_run.certificate["model"]))
    vdot = [[[2, 0], "-1"], [[0, 2], "-1"], [[3, 1], "-1"], [[2, 2], "2"]]
    v = read_poly([[[2, 0], "3/2"], [[1, 1], "-1"], [[0, 2], "1"]], 2, 0, "V")
    assert lie_derivative(v, field) == read_poly(vdot, 2, 0, "W")
    assert lie_derivative(v, field) != read_poly([*vdot[:3], [[2, 2], "3"]], 2, 0, "W")
