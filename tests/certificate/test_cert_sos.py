"""Certificates from the sum-of-squares engine audit; impossible ones are never issued."""

from __future__ import annotations

import sympy as sp

from proofkit.audit import audit_text
from proofkit.certificate import certificate_from_sos, dumps
from proofkit.exact import decompose

X, Y = sp.symbols("x y", real=True)


def test_lecture_note_polynomial_gets_an_audited_certificate() -> None:
    # published: MIT 6.972 lecture notes (Parrilo): x1^2 - x1 x2^2 + x2^4 + 1 is SOS.
    p = X**2 - X * Y**2 + Y**4 + 1
    result = decompose(p, [X, Y])
    assert result.found
    report = audit_text(dumps(certificate_from_sos(p, [X, Y], result)))
    assert report.claims[0].status == "proved"


def test_motzkin_polynomial_gets_no_certificate() -> None:
    # published: Motzkin (1967): nonnegative but not a sum of squares.
    p = X**4 * Y**2 + X**2 * Y**4 - 3 * X**2 * Y**2 + 1
    result = decompose(p, [X, Y])
    cert = certificate_from_sos(p, [X, Y], result)
    assert cert["claims"][0]["status"] == "not proved"
    assert audit_text(dumps(cert)).claims[0].status == "not proved"
