"""The exact LDL' check against independent exact criteria."""

from __future__ import annotations

import flint
import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from proofkit.exact import check_gram, ldl_psd

rat = st.builds(sp.Rational, st.integers(-5, 5), st.integers(1, 4))


@st.composite
def symmetric(draw):
    n = draw(st.integers(1, 6))
    k = draw(st.integers(1, n))
    b = sp.Matrix(n, k, lambda i, j: draw(rat))
    m = b * b.T
    if draw(st.booleans()):
        i = draw(st.integers(0, n - 1))
        m[i, i] -= draw(st.sampled_from([sp.Rational(1, 100), 1, 3]))
    return m


def _psd_by_charpoly(m: sp.Matrix) -> bool:
    # common practice: a real symmetric matrix is PSD iff the coefficients of
    # det(tI - M) alternate in sign (Descartes' rule, all roots real).
    n = m.shape[0]
    coeffs = flint.fmpq_mat([[flint.fmpq(int(x.p), int(x.q)) for x in row] for row in m.tolist()])
    c = coeffs.charpoly().coeffs()  # low to high degree
    return all(c[i] * (-1) ** (n - i) >= 0 for i in range(n + 1))


@given(symmetric())
def test_ldl_verdict_matches_charpoly_and_factors_reproduce(m) -> None:
    res = ldl_psd(m)
    assert res.psd == _psd_by_charpoly(m)
    assert res.psd == bool(m.is_positive_semidefinite)  # sympy's own exact test
    if res.psd:
        n = m.shape[0]
        lm = sp.Matrix(n, n, lambda i, j: sp.Rational(int(res.L[i][j].p), int(res.L[i][j].q)))
        dm = sp.diag(*[sp.Rational(int(d.p), int(d.q)) for d in res.D])
        assert lm * dm * lm.T == m
        assert all(d >= 0 for d in res.D)
    else:
        assert res.reason


def test_reasons_name_the_row() -> None:
    # computed by hand: [[0, 1], [1, 1]] has a zero pivot with a nonzero column;
    # [[1, 2], [2, 1]] has the pivot 1 - 4 = -3 in row 1.
    r = ldl_psd([[0, 1], [1, 1]], ["a", "b"])
    assert not r.psd and "zero pivot" in r.reason and "(a)" in r.reason
    r = ldl_psd([[1, 2], [2, 1]])
    assert not r.psd and "negative pivot" in r.reason and r.row == 1
    r = ldl_psd([[1, 2], [3, 1]])
    assert not r.psd and "symmetric" in r.reason


def test_semidefinite_with_zero_rows_is_accepted() -> None:
    # computed by hand: diag(0, 2) plus a zero row/column is PSD.
    r = ldl_psd([[0, 0, 0], [0, 2, 0], [0, 0, 0]])
    assert r.psd and not r.positive_definite


def test_check_gram_rejects_wrong_identity() -> None:
    x, y = sp.symbols("x y")
    basis = [x, y]
    assert check_gram(x**2 + y**2, [x, y], basis, sp.eye(2)).ok
    bad = check_gram(x**2 + 2 * y**2, [x, y], basis, sp.eye(2))
    assert not bad.ok and "identity" in bad.reason
    neg = check_gram(x**2 - y**2, [x, y], basis, sp.diag(1, -1))
    assert not neg.ok and "not PSD" in neg.reason
