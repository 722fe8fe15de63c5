"""The audit's exact kernel against sympy, an independent exact implementation."""

from __future__ import annotations

from fractions import Fraction

import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from proofkit.audit.algebra import char_poly, ldl_pivots, shift_and_multiply
from proofkit.audit.numbers import Num

small = st.fractions(min_value=-20, max_value=20, max_denominator=9)
radicands = st.sampled_from([2, 3, 5, 6, 7, 10, 13])


def _sym(x: Num) -> sp.Expr:
    return sp.Rational(x.a.numerator, x.a.denominator) + sp.Rational(
        x.b.numerator, x.b.denominator
    ) * sp.sqrt(x.d if x.d else 0)


@given(a=small, b=small, d=radicands)
def test_sign_in_a_quadratic_field_matches_sympy(a, b, d) -> None:
    # computed: sympy decides the sign of a + b*sqrt(d) exactly
    x = Num(a, b, d)
    expected = sp.sign(
        sp.Rational(a.numerator, a.denominator)
        + sp.Rational(b.numerator, b.denominator) * sp.sqrt(d)
    )
    assert x.sign() == int(expected)


@given(a=small, b=small, c=small, e=small, d=radicands)
def test_field_arithmetic_matches_sympy(a, b, c, e, d) -> None:
    x, y = Num(a, b, d), Num(c, e, d)
    for got, want in ((x * y, _sym(x) * _sym(y)), (x - y, _sym(x) - _sym(y))):
        assert sp.expand(_sym(got) - want) == 0
    if not y.is_zero():
        assert sp.expand(sp.radsimp(_sym(x / y) - _sym(x) / _sym(y))) == 0


@given(entries=st.lists(st.integers(-5, 5), min_size=16, max_size=16))
def test_characteristic_polynomial_matches_sympy(entries) -> None:
    # computed: sympy Matrix.charpoly (Berkowitz), highest degree first
    m = sp.Matrix(4, 4, entries)
    ours = char_poly([[Num.of(m[i, j]) for j in range(4)] for i in range(4)])
    assert [c.a for c in ours] == [Fraction(int(c)) for c in m.charpoly().all_coeffs()]


@given(entries=st.lists(st.integers(-3, 3), min_size=9, max_size=9), rank=st.integers(1, 3))
def test_ldl_psd_decision_matches_sympy(entries, rank) -> None:
    # computed: sympy's exact is_positive_semidefinite on B'B (PSD) and on B'B - I (often not)
    b = sp.Matrix(3, 3, entries)[:rank, :]
    for m in (b.T * b, b.T * b - sp.eye(3)):
        ours = ldl_pivots([[Num.of(int(m[i, j])) for j in range(3)] for i in range(3)])
        assert (not isinstance(ours, str)) == bool(m.is_positive_semidefinite)


@given(coeffs=st.lists(st.integers(-5, 5), min_size=2, max_size=5), h=small, k=st.integers(0, 2))
def test_shift_and_multiply_matches_sympy(coeffs, h, k) -> None:
    s = sp.Symbol("s")
    p = sp.Poly([1, *coeffs], s).as_expr()
    hh = sp.Rational(h.numerator, h.denominator)
    want = sp.Poly(sp.expand((s + 1) ** k * p.subs(s, s + hh)), s).all_coeffs()
    got = shift_and_multiply([Num.of(c) for c in [1, *coeffs]], Num.of(h), k)
    assert [sp.Rational(x.a.numerator, x.a.denominator) for x in got] == want
