"""Property tests: random sums of squares are certified; negative polynomials never are."""

from __future__ import annotations

import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from proofkit.sos import SearchProgram, decompose, full_basis, solve_exactly

from .helpers import gram_identity_holds, is_psd_exact

SYMS = sp.symbols("a b c d", real=True)


@st.composite
def random_sos(draw, max_squares: int = 4, interior: bool = True):
    """(polynomial, variables): weighted squares, 2..4 variables, degree <= 6.

    With ``interior`` a positive multiple of the squares of every monomial used is
    added, so that a positive definite Gram matrix exists; without it the squares
    alone may force singular Gram matrices (facial reduction needed).
    """
    nv = draw(st.integers(2, 4))
    half = draw(st.integers(1, 3))
    xs = list(SYMS[:nv])
    monos = [sp.Mul(*[v**e for v, e in zip(xs, row, strict=True)]) for row in full_basis(nv, half)]
    coef = st.builds(sp.Rational, st.integers(-6, 6), st.integers(1, 4))
    total = sp.Integer(0)
    used: set[sp.Expr] = set()
    for _ in range(draw(st.integers(1, max_squares))):
        picks = draw(st.lists(st.sampled_from(monos), min_size=1, max_size=5, unique=True))
        used.update(picks)
        q = sum(draw(coef) * m for m in picks)
        w = sp.Rational(draw(st.integers(1, 5)), draw(st.integers(1, 3)))
        total += w * q**2
    if interior:
        eps = sp.Rational(1, draw(st.sampled_from([1, 10, 100])))
        total += eps * sum(m**2 for m in used)
    return sp.expand(total), xs


@given(random_sos())
def test_random_sums_of_squares_are_certified_exactly(case) -> None:
    # common practice: a sum of squares of rational polynomials has a rational Gram matrix
    # in its Newton-polytope basis; each certificate is re-checked independently here.
    _certified_and_rechecked(*case)


@given(random_sos(max_squares=1, interior=False))
def test_single_squares_are_certified_exactly(case) -> None:
    # common practice: q^2 has the rank-one Gram matrix c c' (c = coefficients of q); no
    # interior point exists, so this exercises facial reduction and exact range recovery.
    _certified_and_rechecked(*case)


def _certified_and_rechecked(p: sp.Expr, xs: list[sp.Symbol]) -> None:
    res = decompose(p, xs)
    assert res.found, (p, res.reason)
    if p == 0:
        return
    assert gram_identity_holds(p, res.basis, res.gram)
    assert is_psd_exact(res.gram)
    assert sp.expand(sum(w * q**2 for w, q in res.squares()) - p) == 0


@given(random_sos(), st.integers(1, 50))
def test_polynomials_negative_somewhere_are_never_certified(case, shift) -> None:
    # common practice: p(z) < 0 at a point z rules out any SOS certificate. The shifted
    # polynomial p - p(z) - shift/7 is negative at z; both the public entry point and the
    # raw program (no sample-point pre-check) must refuse it.
    p, xs = case
    z = {v: sp.Rational(i + 1, 2) for i, v in enumerate(xs)}
    bad = sp.expand(p - p.subs(z) - sp.Rational(shift, 7))
    assert bad.subs(z) < 0
    assert not decompose(bad, xs).found
    prog = SearchProgram(xs)
    deg = sp.Poly(bad, *xs).total_degree()
    prog.require_sos(prog.poly(bad), "g", basis=full_basis(len(xs), max(deg, 2) // 2))
    assert not solve_exactly(prog).found


def test_indefinite_and_odd_polynomials_are_refused() -> None:
    # common practice: x^2 - y^2 is indefinite; odd degree polynomials change sign.
    x, y = SYMS[:2]
    for p in (x**2 - y**2, x**3 + y**2 + 1, x * y, x**4 * y**2 - 1, -(x**2) - 1):
        res = decompose(p, [x, y])
        assert not res.found
        assert res.reason
    res = decompose(x**3 + y**2 + 1, [x, y])
    assert "odd" in res.reason
