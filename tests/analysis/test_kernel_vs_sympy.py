"""Both exact kernels over Q(sqrt d) against sympy and numpy.

The search side (``proofkit.analysis.linear``) and the audit
(``proofkit.audit.algebra``, read here, never changed) each compute the
characteristic polynomial, the Routh array, LDL' pivots and the Lyapunov
solution with their own arithmetic. Each is compared with an outside
computation, so a slip shared by both (say a sign in the sqrt(d) part of the
characteristic polynomial) fails here rather than passing as "the audit
accepted it".

References: computed (sympy ``DomainMatrix.charpoly`` and ``det`` over sympy's
own algebraic field ``QQ<sqrt(d)>``; sympy ``expand`` for the Lyapunov
residual; numpy ``eigvals`` for root counts away from the imaginary axis).
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import pytest
import sympy as sp
from hypothesis import assume, given
from hypothesis import strategies as st
from sympy.polys.matrices import DomainMatrix

from proofkit.analysis.linear import (
    characteristic_polynomial,
    jacobian_at,
    leading_minors,
    quadratic_element,
    quadratic_field,
    routh_array_in,
    routh_rows,
    sign_changes,
    solve_lyapunov_in,
    sqrt_parts,
)
from proofkit.audit.algebra import char_poly, ldl_pivots
from proofkit.audit.algebra import routh_rows as audit_routh_rows
from proofkit.audit.algebra import sign_changes as audit_sign_changes
from proofkit.audit.numbers import Num

S = sp.Symbol("s")
RADICANDS = (2, 3, 5, 7, 10)

Pair = tuple[int, int]


def _pairs(n: int) -> st.SearchStrategy[list[list[Pair]]]:
    entry = st.tuples(st.integers(-3, 3), st.integers(-2, 2))
    return st.lists(st.lists(entry, min_size=n, max_size=n), min_size=n, max_size=n)


@st.composite
def matrices(draw: st.DrawFn, symmetric: bool = False) -> tuple[int, list[list[Pair]]]:
    d = draw(st.sampled_from(RADICANDS))
    n = draw(st.integers(1, 4))
    m = draw(_pairs(n))
    if symmetric:
        m = [[m[min(i, j)][max(i, j)] for j in range(n)] for i in range(n)]
    return d, m


def _sympy(d: int, m: list[list[Pair]]) -> sp.Matrix:
    return sp.Matrix([[a + b * sp.sqrt(d) for a, b in row] for row in m])


def _kernel(d: int, m: list[list[Pair]]):
    K = quadratic_field(d)
    return K, [[K(a) + K.gen * b for a, b in row] for row in m]


def _audit(d: int, m: list[list[Pair]]) -> list[list[Num]]:
    return [[Num(Fraction(a), Fraction(b), d) for a, b in row] for row in m]


def _parts(e: sp.Expr, d: int) -> tuple[Fraction, Fraction]:
    """(a, b) with e = a + b sqrt(d), read off sympy's exact expansion."""
    e = sp.expand(e)
    b = e.coeff(sp.sqrt(d))
    a = sp.expand(e - b * sp.sqrt(d))
    assert a.is_Rational and b.is_Rational, e
    return Fraction(int(a.p), int(a.q)), Fraction(int(b.p), int(b.q))


def _sympy_charpoly(d: int, m: list[list[Pair]]) -> list[tuple[Fraction, Fraction]]:
    """sympy's characteristic polynomial over its own algebraic field QQ<sqrt(d)>."""
    field = sp.QQ.algebraic_field(sp.sqrt(d))
    dm = DomainMatrix.from_Matrix(_sympy(d, m)).convert_to(field)
    return [_parts(field.to_sympy(c), d) for c in dm.charpoly()]


@given(matrices())
def test_characteristic_polynomials_match_sympy(case) -> None:
    d, m = case
    expected = _sympy_charpoly(d, m)  # computed: sympy DomainMatrix.charpoly
    K, J = _kernel(d, m)
    assert [sqrt_parts(c) for c in characteristic_polynomial(J, K)] == expected
    assert [(c.a, c.b) for c in char_poly(_audit(d, m))] == expected


def _open_rhp(d: int, m: list[list[Pair]]) -> int | None:
    """Roots of det(sI - M) with Re > 0 from numpy, None when one is near the axis."""
    f = np.array([[a + b * np.sqrt(d) for a, b in row] for row in m], dtype=float)
    ev = np.linalg.eigvals(f)
    if np.min(np.abs(ev.real)) < 1e-6:
        return None
    return int(np.sum(ev.real > 0))


@given(matrices())
def test_routh_counts_match_numpy_eigenvalues(case) -> None:
    d, m = case
    rhp = _open_rhp(d, m)
    assume(rhp is not None)
    K, J = _kernel(d, m)
    cp = characteristic_polynomial(J, K)
    ra = routh_array_in(cp, K)
    assert (ra.rhp_count, ra.imag_count) == (rhp, 0)  # computed: numpy eigvals
    rows = routh_rows(cp, K)
    audit_rows = audit_routh_rows(char_poly(_audit(d, m)))
    assert (rows is None) == (audit_rows is None)
    if rows is not None:
        assert audit_rows is not None
        assert sign_changes([r[0] for r in rows]) == rhp
        assert audit_sign_changes([r[0] for r in audit_rows]) == rhp
        assert [[sqrt_parts(x) for x in r] for r in rows] == [
            [(x.a, x.b) for x in r] for r in audit_rows
        ]


def test_imaginary_axis_roots_are_counted_exactly() -> None:
    # computed by hand: J = [[0, sqrt 2], [-sqrt 2, 0]] has eigenvalues +-i sqrt 2
    K, J = _kernel(2, [[(0, 0), (0, 1)], [(0, -1), (0, 0)]])
    ra = routh_array_in(characteristic_polynomial(J, K), K)
    assert (ra.rhp_count, ra.imag_count) == (0, 2)
    assert routh_rows(characteristic_polynomial(J, K), K) is None  # a row of zeros


@given(matrices(symmetric=True))
def test_leading_minors_and_ldl_pivots_match_sympy(case) -> None:
    d, m = case
    M = _sympy(d, m)
    n = M.rows
    field = sp.QQ.algebraic_field(sp.sqrt(d))
    dm = DomainMatrix.from_Matrix(M).convert_to(field)
    minors = [_parts(field.to_sympy(dm[:k, :k].det()), d) for k in range(1, n + 1)]
    K, P = _kernel(d, m)
    assert [sqrt_parts(x) for x in leading_minors(P, K)] == minors  # computed: sympy det
    signs = [int(sp.sign(sp.Rational(a) + sp.Rational(b) * sp.sqrt(d))) for a, b in minors]
    assert [x.sign() for x in leading_minors(P, K)] == signs
    factors = ldl_pivots(_audit(d, m))
    if all(s > 0 for s in signs):  # Sylvester: positive definite, every pivot positive
        assert not isinstance(factors, str)
        pivots, _lower = factors
        prod = Num.of(1, d)
        for k, p in enumerate(pivots):
            prod = prod * p
            assert (prod.a, prod.b) == minors[k]
    elif any(s < 0 for s in signs) and signs[0] != 0 and all(s != 0 for s in signs):
        assert isinstance(factors, str)  # indefinite with nonzero minors: not PSD


@given(matrices())
def test_lyapunov_solution_satisfies_the_equation_in_sympy(case) -> None:
    d, m = case
    rhp = _open_rhp(d, m)
    assume(rhp == 0)  # Hurwitz: a unique, positive definite solution exists
    K, A = _kernel(d, m)
    n = len(A)
    eye = [[K.one if i == j else K.zero for j in range(n)] for i in range(n)]
    P, minors = solve_lyapunov_in(A, eye, K)
    Ps = sp.Matrix([[a + b * sp.sqrt(d) for a, b in (sqrt_parts(x) for x in row)] for row in P])
    As = _sympy(d, m)
    residual = (As.T * Ps + Ps * As + sp.eye(n)).applyfunc(sp.expand)
    assert residual == sp.zeros(n, n)  # computed: sympy exact arithmetic
    assert all(x.sign() > 0 for x in minors)


def test_jacobian_at_an_irrational_point_matches_sympy() -> None:
    # computed: sympy jacobian of f = (x^2 - 2 + x y, 3 x - y^3) at x = sqrt 2, y = 1 - sqrt 2
    x, y = sp.symbols("x y")
    f = [x**2 - 2 + x * y, 3 * x - y**3]
    K = quadratic_field(2)
    point = [quadratic_element(sp.sqrt(2), K), quadratic_element(1 - sp.sqrt(2), K)]
    J = jacobian_at(f, [x, y], point)
    expected = sp.Matrix(f).jacobian([x, y]).subs({x: sp.sqrt(2), y: 1 - sp.sqrt(2)})
    for i in range(2):
        for j in range(2):
            assert sqrt_parts(J[i][j]) == _parts(expected[i, j], 2)


def test_quadratic_field_refuses_what_it_cannot_hold() -> None:
    with pytest.raises(ValueError):
        quadratic_field(4)  # a perfect square: sqrt(4) is rational
    with pytest.raises(ValueError):
        quadratic_element(sp.sqrt(3), quadratic_field(2))
    assert quadratic_field(5) is quadratic_field(5)
    assert quadratic_field(0).is_rational
