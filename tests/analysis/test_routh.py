"""Routh arrays and exact root counts against published examples and numpy.roots."""

from __future__ import annotations

import numpy as np
import pytest
import sympy as sp
from hypothesis import assume, given
from hypothesis import strategies as st

from proofkit.analysis import routh_array
from proofkit.analysis.routh import EPSILON

S = sp.Symbol("s")


def test_ogata_example_first_column_and_two_rhp_roots() -> None:
    # published: Ogata, Modern Control Engineering, 4th ed., Example 5-13
    r = routh_array([1, 2, 3, 4, 5])
    assert r.first_column == (1, 2, 1, -6, 5)
    assert r.rhp_count == 2 and r.imag_count == 0
    assert r.regular and r.sign_changes == 2


def test_zero_in_first_column_epsilon_method() -> None:
    # memory: a textbook example of the epsilon rule (book not confirmed); computed: numpy.roots
    # finds two roots with positive real part, which is what is checked
    r = routh_array([1, 2, 3, 6, 5, 3])
    assert int(np.sum(np.roots([1, 2, 3, 6, 5, 3]).real > 0)) == 2
    assert r.rhp_count == 2 and r.imag_count == 0
    assert any("zero in first column at row s^3" in e for e in r.special)
    assert r.first_column[2] == EPSILON  # the zero replaced by epsilon
    # computed by hand: s^2 entry (6 eps - 7)/eps -> -inf, s^1 entry -> 7/2 as eps -> 0+
    assert sp.limit(r.first_column[3], EPSILON, 0, "+") == -sp.oo
    assert sp.limit(r.first_column[4], EPSILON, 0, "+") == sp.Rational(7, 2)
    assert r.first_column_signs == (1, 1, 1, -1, 1, 1)  # computed: signs as epsilon -> 0+
    assert r.sign_changes == 2


def test_row_of_zeros_auxiliary_polynomial() -> None:
    # memory: a course exercise (source not confirmed); computed: sympy.roots gives 2, -2,
    # -1, -4 (one root in the right half plane)
    r = routh_array([1, 5, 0, -20, -16])
    assert sp.roots(sp.Poly([1, 5, 0, -20, -16], S)) == {2: 1, -2: 1, -1: 1, -4: 1}
    assert r.auxiliary == ((2, 4 * S**2 - 16),)
    # computed by hand: rows s^4..s^0; the zero row s^1 becomes A'(s) = 8 s
    assert r.rows == ((1, 0, -16), (5, -20), (4, -16), (8,), (-16,))
    assert any("row of zeros at row s^1" in e and "4*s**2 - 16" in e for e in r.special)
    assert r.rhp_count == 1 and r.imag_count == 0
    assert sorted(np.roots([1, 5, 0, -20, -16]).real.round(9)) == [-4, -2, -1, 2]


def test_imaginary_axis_roots_counted_exactly() -> None:
    # computed by hand: (s^2 + 1)^2 (s + 1) has 4 roots on the imaginary axis, none to the right
    coeffs = sp.Poly(sp.expand((S**2 + 1) ** 2 * (S + 1)), S).all_coeffs()
    r = routh_array(coeffs)
    assert (r.rhp_count, r.imag_count) == (0, 4)
    # computed by hand: s^2 (s - 1) -> a double zero root and one RHP root
    r = routh_array([1, -1, 0, 0])
    assert (r.rhp_count, r.imag_count) == (1, 2)


def test_algebraic_coefficients_decided_exactly() -> None:
    # computed by hand: s^2 + (1 - 2 sqrt 2) s - 2 sqrt 2 = (s + 1)(s - 2 sqrt 2): one RHP root
    r = routh_array([1, 1 - 2 * sp.sqrt(2), -2 * sp.sqrt(2)])
    assert r.rhp_count == 1 and r.first_column_signs == (1, -1, -1)
    # computed by hand: the sign of sqrt(2) - 1414213562373095/10^15 is +, a float cannot tell
    tiny = sp.sqrt(2) - sp.Rational(1414213562373095, 10**15)
    r = routh_array([1, tiny, 1])
    assert r.first_column_signs == (1, 1, 1) and r.rhp_count == 0
    r = routh_array([1, -tiny, 1])
    assert r.rhp_count == 2


def test_refuses_floats() -> None:
    with pytest.raises(ValueError):
        routh_array([1, sp.Float(0.5), 1])


def _np_counts(coeffs: list[int]) -> tuple[int, float]:
    roots = np.roots(np.array(coeffs, dtype=float))
    return int(np.sum(roots.real > 0)), float(np.min(np.abs(roots.real))) if len(roots) else 1.0


@given(st.lists(st.integers(-9, 9), min_size=1, max_size=8), st.integers(1, 5))
def test_rhp_count_matches_numpy_on_random_integer_polynomials(tail: list[int], lead: int) -> None:
    # computed: numpy.roots is the reference; cases within 1e-6 of the axis are skipped here
    coeffs = [lead, *tail]
    rhp_np, gap = _np_counts(coeffs)
    assume(gap > 1e-6)
    r = routh_array(coeffs)
    assert r.rhp_count == rhp_np
    assert r.imag_count == 0
    assert r.sign_changes == r.rhp_count


@given(st.lists(st.fractions(min_value=-5, max_value=5, max_denominator=7), min_size=1, max_size=8))
def test_rhp_count_matches_numpy_on_random_rational_polynomials(tail: list) -> None:
    # computed: numpy.roots is the reference; cases within 1e-6 of the axis are skipped here
    coeffs = [sp.Integer(1)] + [sp.Rational(f.numerator, f.denominator) for f in tail]
    rhp_np, gap = _np_counts([float(c) for c in coeffs])
    assume(gap > 1e-6)
    r = routh_array(coeffs)
    assert r.rhp_count == rhp_np and r.imag_count == 0


_factor = st.one_of(
    st.tuples(st.just("real"), st.integers(-4, 4)),  # (s - r), r = 0 puts a root at 0
    st.tuples(st.just("imag"), st.integers(1, 5)),  # s^2 + a: roots +-i sqrt(a)
    st.tuples(st.just("pair"), st.integers(-3, 3), st.integers(1, 3)),  # (s-c)^2 + d^2
    st.tuples(st.just("mirror"), st.integers(1, 4)),  # s^2 - a: roots +-sqrt(a)
)


@given(st.lists(_factor, min_size=1, max_size=4))
def test_counts_exact_on_polynomials_built_from_known_roots(factors: list) -> None:
    # computed by hand from the factors: every root and its half plane is known exactly
    p, rhp, imag = sp.Integer(1), 0, 0
    for f in factors:
        if f[0] == "real":
            p *= S - f[1]
            rhp += f[1] > 0
            imag += f[1] == 0
        elif f[0] == "imag":
            p *= S**2 + f[1]
            imag += 2
        elif f[0] == "pair":
            p *= (S - f[1]) ** 2 + f[2] ** 2
            rhp += 2 if f[1] > 0 else 0
            imag += 2 if f[1] == 0 else 0
        else:
            p *= S**2 - f[1]
            rhp += 1
    coeffs = sp.Poly(sp.expand(p), S).all_coeffs()
    assume(len(coeffs) <= 9)
    r = routh_array(coeffs)
    assert (r.rhp_count, r.imag_count) == (rhp, imag)
    if imag == 0:
        assert r.sign_changes == rhp  # the array itself counts right without axis roots
