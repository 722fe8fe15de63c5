"""Property tests: random sums of squares are certified; negative polynomials never are.

Honest statements: sums of squares WITH an interior point are always certified;
low-rank ones (no interior point) are never certified wrongly, and at least
99 % of a fixed seeded corpus are certified (measured, not "always").
"""

from __future__ import annotations

import random

import pytest
import sympy as sp
from hypothesis import given
from hypothesis import strategies as st

from proofkit.exact import decompose, solve_exactly
from proofkit.sos import SearchProgram, full_basis

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


@given(random_sos(interior=False))
def test_low_rank_sums_of_squares_never_get_a_wrong_certificate(case) -> None:
    # common practice: a sum of rational squares has a rational PSD Gram matrix, but when the
    # squares share real zeros (also at infinity) every Gram matrix is singular and the search
    # may fail (measured: under 1 % of a fixed corpus, see the corpus tests below). What holds
    # for every case is soundness: whatever is certified re-checks independently here.
    p, xs = case
    res = decompose(p, xs)
    if res.found and p != 0:
        _rechecked(p, res)


def _corpus_rate(seed: int, count: int, start: int = 0) -> tuple[int, list[int]]:
    """Certified cases ``start..count-1`` of the fixed seeded corpus of measure_low_rank.py."""
    from .measure_low_rank import random_case

    rng = random.Random(seed)
    failed = []
    for i in range(count):
        p, xs = random_case(rng)
        if i < start:
            continue
        res = decompose(p, xs)
        if res.found:
            if p != 0:
                _rechecked(p, res)
        else:
            failed.append(i)
    return count - start - len(failed), failed


def test_low_rank_corpus_fast_case() -> None:
    # computed (measure_low_rank.py, seed 2): cases 20..39 of the corpus, all certified when
    # measured (two need facial reduction); one may fail under heavy load (wall-clock budgets).
    ok, failed = _corpus_rate(2, 40, start=20)
    assert ok >= 19, failed


@pytest.mark.slow
def test_low_rank_corpus_certifies_at_least_99_percent() -> None:
    # computed (measure_low_rank.py, seeds 1, 2, 3; 700 cases): 3 to 5 not certified when
    # measured (0.4-0.7 %, depending on machine load); the property is: at least 99 %.
    total, failed_all = 0, []
    for seed, count in ((1, 200), (2, 200), (3, 300)):
        ok, failed = _corpus_rate(seed, count)
        total += ok
        failed_all += [(seed, i) for i in failed]
    assert total >= 0.99 * 700, failed_all


A, B, C = SYMS[:3]

# computed: each p below was built as the weighted sum of squares in its comment; all
# failed before iterated facial reduction (kept as named regressions).
REGRESSIONS = {
    # a reported failure; computed by hand: a^4/4 + 24a^2 + 10ab^2 + b^4 + 1 =
    # (b^2 + 5a)^2 + (a^2/2 - 1)^2, real zeros
    # at a = -sqrt(2), b^2 = 5 sqrt(2).
    "irrational_zeros_two_squares": (
        A**4 / 4 + 24 * A**2 + 10 * A * B**2 + B**4 + 1,
        [A, B],
    ),
    # 5 (1 - 4c^3/3)^2 + 5 (6b^2)^2 + 2 (3b^3/2)^2: zero at b = 0, c = (3/4)^(1/3);
    # the variable a does not occur.
    "cube_root_zero_unused_variable": (
        5 * (1 - sp.Rational(4, 3) * C**3) ** 2
        + 5 * (6 * B**2) ** 2
        + 2 * (sp.Rational(3, 2) * B**3) ** 2,
        [A, B, C],
    ),
    # 2 (a^2 b/2 + 2 a^2 c - 5a^2/3 + c)^2 + 5 (-5a^3/2 - 2a^2 b/3 - a^2 + a c^2/4 - a c)^2
    #   + (-2a^2 c/3 + 3a^2/4 + 3abc/4 - 3/2)^2: one irrational real zero, singularity degree 2.
    "three_squares_singularity_degree_two": (
        2 * (A**2 * B / 2 + 2 * A**2 * C - sp.Rational(5, 3) * A**2 + C) ** 2
        + 5
        * (-sp.Rational(5, 2) * A**3 - sp.Rational(2, 3) * A**2 * B - A**2 + A * C**2 / 4 - A * C)
        ** 2
        + (
            -sp.Rational(2, 3) * A**2 * C
            + sp.Rational(3, 4) * A**2
            + sp.Rational(3, 4) * A * B * C
            - sp.Rational(3, 2)
        )
        ** 2,
        [A, B, C],
    ),
    # (3ab - 5ac/3 + 6a - 2c^3 - 3c/2)^2/3 + (-ab^2 + 3bc^2/2 - 5bc/3)^2
    #   + 2 (ab^2 + 6ac^2 - 2c^2)^2: vanishes on the whole line a = c = 0.
    "zero_line_three_squares": (
        (3 * A * B - sp.Rational(5, 3) * A * C + 6 * A - 2 * C**3 - sp.Rational(3, 2) * C) ** 2 / 3
        + (-A * B**2 + sp.Rational(3, 2) * B * C**2 - sp.Rational(5, 3) * B * C) ** 2
        + 2 * (A * B**2 + 6 * A * C**2 - 2 * C**2) ** 2,
        [A, B, C],
    ),
}


@pytest.mark.parametrize("name", sorted(REGRESSIONS))
def test_reported_low_rank_failures_are_certified(name: str) -> None:
    p, xs = REGRESSIONS[name]
    p = sp.expand(p)
    res = _certified_and_rechecked(p, xs)
    if name != "zero_line_three_squares":
        # p has a real zero z and 1 is in the basis, so Q b(z) = 0 for every Gram matrix Q
        assert res.gram.rank() < len(res.basis)


def _certified_and_rechecked(p: sp.Expr, xs: list[sp.Symbol]):
    res = decompose(p, xs)
    assert res.found, (p, res.reason)
    if p == 0:
        return res
    return _rechecked(p, res)


def _rechecked(p: sp.Expr, res):
    assert gram_identity_holds(p, res.basis, res.gram)
    assert is_psd_exact(res.gram)
    assert sp.expand(sum(w * q**2 for w, q in res.squares()) - p) == 0
    assert all(w > 0 for w, _q in res.squares())
    return res


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
